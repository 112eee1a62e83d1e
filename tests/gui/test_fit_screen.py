"""The window on small and ordinary laptop screens (real Tk under Xvfb): it fits, and nothing is clipped.

A widget is clipped when the room it got (``winfo_width``) is less than the room its text asks for
(``winfo_reqwidth``); labels that wrap ask only for their wrap length, so they pass.
"""
from __future__ import annotations

import shutil
import threading
import tkinter as tk
from tkinter import ttk

import pytest

from secretary.gui import views
from tests.gui.conftest import LAPTOP_SCREENS
from tests.gui.helpers import RecordingDialogs, screenshot, settle

TASKBAR = 48  # pixels a laptop's taskbar may take at the bottom of the screen
TITLE_BAR = 32
CHECKED = (ttk.Label, ttk.Button, ttk.Checkbutton, tk.Label, tk.Button)


SCREENS = LAPTOP_SCREENS


@pytest.fixture(scope="module")
def demo_league(tmp_path_factory):
    """The command line's demo (two updates), made once for these tests."""
    from secretary.pipeline import run_demo

    folder = tmp_path_factory.mktemp("demo") / "demo"
    run_demo(folder)
    return folder


def mapped_widgets(widget):
    for child in widget.winfo_children():
        if child.winfo_ismapped():
            yield child
            yield from mapped_widgets(child)


def clipped(root) -> list[str]:
    """Every shown label, button and check box narrower than its text needs."""
    root.update()
    return [f"{w.winfo_class()} {w.cget('text')!r}: {w.winfo_width()} < {w.winfo_reqwidth()}"
            for w in mapped_widgets(root)
            if isinstance(w, CHECKED) and w.winfo_width() + 1 < w.winfo_reqwidth()]


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


@pytest.mark.parametrize("screen", SCREENS)
def test_the_window_fits_the_screen_and_nothing_is_clipped(screen, display, demo_league, tmp_path, tk_errors):
    from secretary.gui.app import App

    folder = tmp_path / "league"
    shutil.copytree(demo_league, folder)
    root = tk.Tk(screenName=f"{display}.{SCREENS.index(screen) + 1}")
    app = App(root, dialogs=RecordingDialogs())
    app.errors = tk_errors
    try:
        root.update()
        assert root.winfo_width() <= screen[0]
        assert root.winfo_rooty() + root.winfo_height() <= screen[1] - TASKBAR - TITLE_BAR + 32
        app.open_workbook(folder / "league.xlsx")
        settle(app, 300)
        assert app.session.updated and app.updated.changes  # the last update, shown
        size = f"{screen[0]}x{screen[1]}"
        problems = []
        for tab, name in ((app.problems, "problems"), (app.ratings, "ratings"), (app.changes, "what-changed"),
                          (app.watch, "watch"), (app.fixtures, "fixtures")):
            app.notebook.select(tab.frame)
            settle(app)
            problems += [f"{name}: {c}" for c in clipped(root)]
            screenshot(root, f"gui-{size}-{name}")
        assert not problems, "\n".join(problems)
        assert tabs_fit(app.notebook)
        # The status line and Cancel are on the screen, above the taskbar.
        bottom = app.cancel_button.winfo_rooty() + app.cancel_button.winfo_height()
        assert bottom <= screen[1] - TASKBAR
        if screen[0] >= 1366:  # the Ratings table needs no sideways scrolling on an ordinary laptop
            tree = app.ratings.table.tree
            assert sum(tree.column(c, "width") for c in tree["columns"]) <= tree.winfo_width() + 2
        assert all(b.cget("text")[3:] in (*views.STEPS, *sum(views.SHORT_STEPS, ())) for b in app.step_buttons)
    finally:
        app.worker.cancel.set()
        app.worker.join(300)
        if not app.closed:
            app.close()
    assert not [t for t in threading.enumerate() if t.name.startswith("secretary-")]
