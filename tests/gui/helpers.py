"""Helpers for driving the real window in tests: wait for the event loop, record dialogs, take screenshots."""
from __future__ import annotations

import os
import time
import tkinter as tk
from tkinter import ttk
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]
ARTIFACTS = REPO / "test-artifacts"
DEMO = REPO / "secretary" / "data" / "demo-league.xlsx"
TASKBAR = 48  # pixels a laptop's taskbar may take at the bottom of the screen
CHECKED = (ttk.Label, ttk.Button, ttk.Checkbutton, tk.Label, tk.Button)


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


def mapped_widgets(widget):
    for child in widget.winfo_children():
        if child.winfo_ismapped():
            yield child
            yield from mapped_widgets(child)


def clipped(root) -> list[str]:
    """Every shown label, button and check box narrower or lower than its text needs (a wrapped text asks for
    its wrap length across and for all its lines down)."""
    root.update()
    return [f"{w.winfo_class()} {w.cget('text')!r}: {w.winfo_width()}x{w.winfo_height()} < "
            f"{w.winfo_reqwidth()}x{w.winfo_reqheight()}"
            for w in mapped_widgets(root)
            if isinstance(w, CHECKED) and (w.winfo_width() + 1 < w.winfo_reqwidth()
                                           or w.winfo_height() + 1 < w.winfo_reqheight())]


def tabs_fit(notebook: ttk.Notebook) -> bool:
    """Whether every tab's label is on the notebook's tab row (the last one ends inside its width)."""
    notebook.update()
    y = 10
    seen = {}
    for x in range(0, notebook.winfo_width(), 2):
        try:
            seen[int(notebook.index(f"@{x},{y}"))] = x
        except tk.TclError:
            continue
    last = notebook.index("end") - 1
    return set(seen) == set(range(last + 1)) and seen[last] < notebook.winfo_width() - 2


def on_screen(widget, screen) -> bool:
    """The widget's whole box is on the screen, above the taskbar."""
    widget.update()
    return (widget.winfo_rootx() >= 0 and widget.winfo_rootx() + widget.winfo_width() <= screen[0]
            and widget.winfo_rooty() + widget.winfo_height() <= screen[1] - TASKBAR)


CELL_PADDING = 8  # pixels a Treeview cell keeps around its text (measured under Xvfb: 4 each side)


def table_clipped(table, keys=None) -> list[str]:
    """Each heading or cell of a shown table (widgets.Table) cut short: a column narrower than its heading
    (in the heading font, with its padding) or its widest value (in the body font); a column ending right of
    the table's visible width; rows that are not all in sight (the table's height in rows, and its box).
    With ``keys``: only whether those columns are as wide as their headings and values."""
    from tkinter import font as tkfont

    tree = table.tree
    tree.update()
    body, bold = tkfont.nametofont("TkDefaultFont"), tkfont.nametofont("SecretaryBold")
    cut, right = [], 0
    shown = tree["displaycolumns"]
    for key in tree["columns"] if tuple(shown) in (("#all",), ()) else shown:
        width = int(tree.column(key, "width"))
        right += width
        heading = tree.heading(key, "text")
        values = [str(tree.set(item, key)) for item in tree.get_children()]
        need = max([bold.measure(heading)] + [body.measure(v) for v in values]) + CELL_PADDING
        if width < need and (keys is None or key in keys):
            cut.append(f"column {heading!r}: {width} < {need} pixels")
    if keys is not None:
        return cut
    if right > tree.winfo_width() + 1:
        cut.append(f"the columns take {right} pixels, {tree.winfo_width()} shown")
    rows = len(tree.get_children())
    if int(tree.cget("height")) < rows or tree.winfo_height() + 1 < tree.winfo_reqheight():
        cut.append(f"{rows} rows, {tree.cget('height')} in sight, {tree.winfo_height()} < "
                   f"{tree.winfo_reqheight()} pixels high")
    return cut


def sheet_rows(path, sheet: str, first: str) -> list[dict]:
    """The rows of a sheet's table whose heading row holds ``first``, as dictionaries (openpyxl)."""
    import openpyxl

    wb = openpyxl.load_workbook(path, read_only=True, data_only=True)
    rows = list(wb[sheet].iter_rows(values_only=True))
    wb.close()
    head = next(i for i, r in enumerate(rows) if first in r)
    return [dict(zip(rows[head], r)) for r in rows[head + 1:]]
