"""The window's divisions table under the league table (real Tk under Xvfb)."""
from __future__ import annotations

import tkinter as tk

import pytest

from tests.gui.test_window import opened, updated


def test_closing_right_after_the_divisions_table_is_placed_closes_the_window(app, demo_copy):
    # Closing cancels every timer from the root; a timer the table had set on its own widget was then
    # left half-deleted, the window's destroy failed and a self-test hung. Close with one pending.
    updated(opened(app, demo_copy))
    levels = app.updated.levels
    assert len(levels) == 4 and app.ratings.levels.shown_values()
    app.ratings.show_levels(levels)  # places the table again, on the next turn of the event loop
    app.close()
    with pytest.raises(tk.TclError):
        app.root.winfo_exists()  # the application is gone: every widget destroyed


def test_the_table_is_hidden_for_a_league_of_one_division(app, tmp_path):
    from tests.workbook.league_books import write_book

    updated(opened(app, write_book(tmp_path / "league.xlsx")))
    assert app.updated.levels == ()
    assert str(app.ratings.levels_frame) not in map(str, app.ratings.stack.panes())
