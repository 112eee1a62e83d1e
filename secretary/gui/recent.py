"""What the window remembers in the tool's user folder: the workbooks opened lately, and its own size."""
from __future__ import annotations

import json
from pathlib import Path

from secretary.userdirs import user_folder

KEEP = 8


def _file() -> Path:
    return user_folder() / "recent-workbooks.json"


def recent() -> list[Path]:
    """Recently opened workbooks that still exist, newest first."""
    try:
        names = json.loads(_file().read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return []  # a missing or damaged list only means nothing is remembered
    if not isinstance(names, list):
        return []
    return [Path(n) for n in names if isinstance(n, str) and Path(n).exists()][:KEEP]


def remember(path: str | Path) -> list[Path]:
    """Put ``path`` first in the list; returns the new list."""
    path = Path(path).resolve()
    paths = [path] + [p for p in recent() if p.resolve() != path]
    try:
        _file().write_text(json.dumps([str(p) for p in paths[:KEEP]], indent=1), encoding="utf-8")
    except OSError:
        pass  # not being able to remember is no reason to stop the secretary's work
    return paths[:KEEP]


def _settings_file() -> Path:
    return user_folder() / "window.json"


def saved_size() -> tuple[int, int] | None:
    """The window's size when it was last closed, or None."""
    try:
        size = json.loads(_settings_file().read_text(encoding="utf-8")).get("size")
        width, height = (int(v) for v in size)
    except (OSError, ValueError, TypeError, AttributeError):
        return None  # nothing (or nothing sensible) remembered: the window picks a size for the screen
    return width, height


def remember_size(width: int, height: int) -> None:
    """Keep the window's size for next time."""
    try:
        _settings_file().write_text(json.dumps({"size": [int(width), int(height)]}), encoding="utf-8")
    except OSError:
        pass
