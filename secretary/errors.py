"""The tool's own error types: shown to the secretary as plain text, never as a traceback."""
from __future__ import annotations

from typing import Sequence


class SecretaryError(Exception):
    """A user-facing error; its message is written for the secretary."""


class WorkbookProblems(SecretaryError):
    """The workbook has errors; nothing was written.  Carries every problem found."""

    def __init__(self, problems: Sequence, message: str | None = None):
        self.problems = tuple(problems)
        errors = sum(1 for p in self.problems if getattr(p, "is_error", True))
        from secretary.model.sentences import plural  # here: the model imports this module

        super().__init__(message or f"The workbook has {plural(errors, 'problem')} to fix; nothing was written.")


class FileRefused(SecretaryError):
    """The file cannot be read or must not be overwritten (wrong type, open elsewhere, damaged)."""


class FitFailed(SecretaryError):
    """The rating fit did not converge; no half-finished ratings are returned."""


class Cancelled(SecretaryError):
    """The secretary cancelled the update; nothing was written."""
