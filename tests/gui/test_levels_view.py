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


def test_level_rows_show_signed_levels_blank_pm_when_fixed_and_mark_an_unlinked_division():
    from secretary.gui import views
    from secretary.model.division_table import DivisionLevel

    rows = views.level_rows([DivisionLevel("Top", 152.4, 31.2, 150.0, 8, 40.0, "started at +150 (Divisions sheet)"),
                             DivisionLevel("Valley", -0.4, 99.6, 0.0, 6, 0.0, "no games"),
                             DivisionLevel("", 0.0, None, 0.0, 2, 3.0, "fixed")])
    assert [r.shown[:5] for r in rows] == [("Top", "+152", "31", "8", "40"), ("Valley", "0", "100", "6", "0"),
                                           ("(no division)", "0", "", "2", "3")]
    assert [r.tags for r in rows] == [(), ("flagged",), ()]  # no games against other divisions: marked


def test_a_bad_divisions_row_is_shown_with_the_cell_to_fix(tmp_path):
    from secretary.gui import views
    from secretary.workbook.read import read_workbook
    from tests.workbook.league_books import write_book

    book = read_workbook(write_book(tmp_path / "league.xlsx", divisions=[["Premier", 100, ""], ["premier", 1, ""]]))
    [problem] = book.problems
    assert views.fix_line(problem, book.layouts) == "Fix cell Divisions!A3: Keep one of the two rows."
