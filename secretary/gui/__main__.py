"""``python -m secretary.gui [WORKBOOK]`` opens the window."""
import sys

from secretary.gui.app import run

sys.exit(run(sys.argv[1] if len(sys.argv) > 1 else None))
