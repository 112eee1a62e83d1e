"""Helpers for driving the real window in tests: wait for the event loop, record dialogs, take screenshots."""
from __future__ import annotations

import os
import time
import tkinter as tk
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]
ARTIFACTS = REPO / "test-artifacts"
DEMO = REPO / "secretary" / "data" / "demo-league.xlsx"


def wait_until(root: tk.Misc, predicate, timeout: float = 60.0, errors: list | None = None) -> None:
    """Run the event loop until ``predicate()`` holds; fails on timeout or on a Tk callback error."""
    deadline = time.monotonic() + timeout
    while True:
        root.update()
        if errors:
            raise AssertionError(f"a Tk callback raised: {errors[0]!r}")
        if predicate():
            return
        if time.monotonic() > deadline:
            raise AssertionError(f"timed out after {timeout} s waiting for {predicate}")
        time.sleep(0.01)


class RecordingDialogs:
    """Stands in for the dialog seam: records every call and gives scripted answers."""

    def __init__(self):
        self.calls: list[tuple] = []
        self.answers: dict[str, object] = {}

    def _record(self, name, *args):
        self.calls.append((name, *args))
        return self.answers.get(name)

    def info(self, title, message):
        self._record("info", title, message)

    def error(self, title, message):
        self._record("error", title, message)

    def ask_yes_no(self, title, message):
        return bool(self._record("ask_yes_no", title, message))

    def choose(self, title, message, options):
        return self._record("choose", title, message, options)

    def ask_open_workbook(self, folder=None):
        return self._record("ask_open_workbook", folder)

    def ask_new_workbook(self, folder=None):
        return self._record("ask_new_workbook", folder)

    def ask_folder(self, title, folder=None):
        return self._record("ask_folder", title, folder)

    def open_externally(self, path):
        answer = self._record("open_externally", path)
        return True if answer is None else answer

    def named(self, name):
        return [c for c in self.calls if c[0] == name]


def settle(app, timeout: float = 120.0) -> None:
    """Wait until the window has finished its background work and filled its tables."""
    wait_until(app.root, lambda: app.idle, timeout, app.errors)


def screenshot(root: tk.Misc, name: str) -> Path:
    """Save the window as test-artifacts/<name>.png (the pointer moved away so that no tooltip shows)."""
    from PIL import ImageGrab

    root.event_generate("<Motion>", warp=True, x=root.winfo_screenwidth() - 5, y=root.winfo_screenheight() - 5)
    for _ in range(10):
        root.update()
        time.sleep(0.02)
    x, y = root.winfo_rootx(), root.winfo_rooty()
    image = ImageGrab.grab(bbox=(x, y, x + root.winfo_width(), y + root.winfo_height()),
                           xdisplay=root.winfo_screen())
    ARTIFACTS.mkdir(exist_ok=True)
    path = ARTIFACTS / f"{name}.png"
    image.save(path)
    return path




def finished(worker, timeout: float = 10.0) -> list:
    """Poll a worker as the window does until its job's result or failure arrives; returns every message."""
    seen = []
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        seen += worker.poll()
        if any(m.kind != "progress" for m in seen):
            worker.join(timeout)
            return seen
        time.sleep(0.01)
    raise AssertionError("the job did not finish")
