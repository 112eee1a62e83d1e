"""The bundle's tests use the window tests' private X server."""
from tests.gui.conftest import display  # noqa: F401  (a fixture)
