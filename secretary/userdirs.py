"""Where the tool keeps its own files on this computer (log, recent workbooks): never beside the data."""
from __future__ import annotations

import os
import sys
from pathlib import Path


def user_folder() -> Path:
    """The per-user folder for the tool's own files, created when first needed."""
    override = os.environ.get("SECRETARY_HOME")
    if override:
        base = Path(override)
    elif sys.platform == "win32":
        base = Path(os.environ.get("APPDATA", Path.home())) / "secretary"
    elif sys.platform == "darwin":
        base = Path.home() / "Library" / "Application Support" / "secretary"
    else:
        base = Path(os.environ.get("XDG_STATE_HOME", Path.home() / ".local" / "state")) / "secretary"
    base.mkdir(parents=True, exist_ok=True)
    return base


def documents_folder() -> Path:
    """A folder the secretary can find with their file manager (not hidden): Documents, else the home folder.

    Under ``SECRETARY_HOME`` (tests, portable use) it is that folder, so that nothing lands elsewhere.
    """
    override = os.environ.get("SECRETARY_HOME")
    if override:
        return Path(override)
    documents = Path.home() / "Documents"
    return documents if documents.is_dir() else Path.home()


DEMO_FOLDER = "League secretary demo"


def demo_folder() -> Path:
    """Where File > Open the demo league makes the demo (a second one goes beside it, numbered)."""
    return documents_folder() / DEMO_FOLDER


def log_file() -> Path:
    """The log of unexpected errors (with their tracebacks), for a bug report."""
    return user_folder() / "secretary.log"


def log_exception(context: str) -> Path:
    """Append the current exception's traceback to the log; returns the log's path."""
    import datetime as dt
    import traceback

    path = log_file()
    with open(path, "a", encoding="utf-8") as handle:
        handle.write(f"\n--- {dt.datetime.now().isoformat(timespec='seconds')} {context}\n")
        handle.write(traceback.format_exc())
    return path
