"""Big tables fill a batch per turn of the event loop and end complete and correct; an update fills a tab per turn.

Real Tk under Xvfb. The expected contents are worked out here from the rows
themselves (texts, and the order by the number they show), not by the
window's own sorting; no test looks at a clock.
"""
from __future__ import annotations

import shutil
import tkinter as tk

import openpyxl
import pytest

from secretary.gui import views
from secretary.gui.look import style_window
from secretary.gui.widgets import BATCH_ROWS, Scheduler, Table
from tests.bench.make_league import make_league_workbook
from tests.gui.helpers import settle, wait_until

ROWS = 2 * BATCH_ROWS + 57  # three batches, the last one part-full


def rows(n: int, offset: int = 0) -> list[views.Row]:
    """Ratings-table rows with a rating that is not in name order, so that sorting moves them."""
    out = []
    for k in range(n):
        rating = 1000 + (37 * (k + offset)) % 1001
        values = (k + 1, f"Player {k + offset:04d}", float(rating), None, "Division 1", 40.0, 12.0, None, "")
        shown = (str(k + 1), values[1], str(rating), "", "Division 1", "40", "12", "", "")
        out.append(views.Row(values[1], values, shown))
    return out


@pytest.fixture
def table(display, tk_errors):
    root = tk.Tk()
    style_window(root)  # the window's fonts, which the table's headings use
    scheduler = Scheduler(root)
    yield root, Table(root, views.RATING_COLUMNS, scheduler, "rows")
    scheduler.cancel_all()
    root.destroy()


def filled(root, table) -> list[tuple[str, ...]]:
    wait_until(root, lambda: not table.filling, 60)
    return table.shown_values()


def test_a_big_table_fills_one_batch_at_a_time_and_ends_with_every_row_once_in_order(table):
    root, t = table
    given = rows(ROWS)
    t.show(given)
    assert len(t.tree.get_children()) == BATCH_ROWS and t.filling  # the rest waits for later turns
    root.update_idletasks()  # drawing the first batch does not run the timers that insert the next
    assert len(t.tree.get_children()) == BATCH_ROWS
    shown = filled(root, t)
    assert shown == [r.shown for r in given]
    assert list(t.tree.get_children()) == [r.iid for r in given]


def test_sorting_or_new_rows_while_a_table_fills_give_exactly_the_new_contents(table):
    root, t = table
    given = rows(ROWS)
    t.show(given)
    t.sort_by(2)  # by rating, while only the first batch is in
    by_rating = sorted(given, key=lambda r: int(r.shown[2]))
    assert filled(root, t) == [r.shown for r in by_rating]
    t.sort_by(2)  # the same heading again: highest first
    assert filled(root, t) == [r.shown for r in reversed(by_rating)]
    newer = rows(BATCH_ROWS + 3, offset=500)
    t.show(given)
    t.show(newer)  # replaces a fill that has only begun: none of the older rows may stay
    assert filled(root, t) == [r.shown for r in sorted(newer, key=lambda r: -int(r.shown[2]))]
    t.show([])
    assert filled(root, t) == [] and not t.filling


def test_the_update_fills_its_tabs_in_later_turns_and_a_new_workbook_drops_the_rest(app):
    ran = []
    app._in_turns(lambda: ran.append("first"), lambda: ran.append("second"), lambda: ran.append("third"))
    assert ran == ["first"] and not app.idle  # the first now, the others once the window has answered
    wait_until(app.root, lambda: app.idle, 30, app.errors)
    assert ran == ["first", "second", "third"]
    app._in_turns(lambda: ran.append("again"), lambda: ran.append("stale"))
    app._clear()  # what opening another workbook does first
    app.root.update()
    wait_until(app.root, lambda: app.idle, 30, app.errors)
    assert ran[-1] == "again" and "stale" not in ran


def test_a_league_of_several_batches_shows_every_player_as_the_ratings_sheet_has_them(app, tmp_path):
    source = tmp_path / "source.xlsx"
    make_league_workbook(source, 4000, 2 * BATCH_ROWS + 50, seed=3)
    path = tmp_path / "league.xlsx"
    shutil.copyfile(source, path)
    app.open_workbook(path)
    settle(app, 300)
    app.update()
    settle(app, 600)
    assert app.session.updated, app.status.cget("text")
    wb = openpyxl.load_workbook(path, read_only=True, data_only=True)
    try:
        sheet = [(r[0], r[1], round(r[3])) for r in wb["Ratings"].iter_rows(min_row=2, values_only=True)
                 if isinstance(r[0], int)]
    finally:
        wb.close()
    tree = [(int(v[0]), v[1], int(v[2])) for v in app.ratings.table.shown_values()]
    assert len(sheet) == 2 * BATCH_ROWS + 50 and tree == sheet
    assert app.ratings.count.cget("text").startswith(f"{len(sheet)} of ")
    assert {v[0] for v in app.watch.tables[0].shown_values()} == set(app.updated.divisions)


def test_rows_made_from_items_are_made_a_batch_at_a_time_and_the_table_ends_the_same(table):
    root, t = table
    given = rows(ROWS)
    made = []

    def make(k: int) -> views.Row:
        made.append(k)
        return given[k]

    t.show(range(ROWS), make=make)
    assert made == list(range(BATCH_ROWS))  # only the first batch so far
    assert filled(root, t) == [r.shown for r in given] and made == list(range(ROWS))  # each made once
    made.clear()
    t.show(range(ROWS), make=make)
    t.sort_by(2)  # sorting needs every row: the rest are made now, once
    assert sorted(made) == list(range(ROWS))
    assert filled(root, t) == [r.shown for r in sorted(given, key=lambda r: int(r.shown[2]))]


def test_the_problems_tab_lists_every_problem_errors_first_from_rows_made_as_they_go_in(display, tk_errors):
    from secretary.gui.tabs.problems import ProblemsTab
    from secretary.model.records import Problem

    root = tk.Tk()
    style_window(root)
    scheduler = Scheduler(root)
    try:
        problems = [Problem("warning" if k % 3 else "error", "Results", k + 2, "Games A", str(k), "odd", "fix it")
                    for k in range(ROWS)]
        tab = ProblemsTab(root, scheduler, lambda: None)
        tab.show(problems)
        shown = filled(root, tab.table)
        rows_in_sheet = [str(k + 2) for k in range(ROWS)]
        errors = [("Error", r) for r in rows_in_sheet[0::3]]
        warnings = [("Warning", r) for k, r in enumerate(rows_in_sheet) if k % 3]
        assert [(v[0], v[2]) for v in shown] == errors + warnings
    finally:
        scheduler.cancel_all()
        root.destroy()


# ------------------------------------------------------------------ sorting a big table on a heading click

SORTED_ROWS = 3 * views.SORT_CHUNK + 41  # four chunks of sorting, the last one part-full


def click(t: Table, key: str) -> None:
    """What a click on the column heading runs: the heading's own command."""
    t.tree.tk.call(t.tree.heading(key, "command"))


def mixed_rows(n: int) -> list[views.Row]:
    """Ratings-table rows whose names differ in capitals and whose Change is often equal and sometimes blank."""
    out = []
    for k in range(n):
        name = f"{('ada', 'Ada', 'ADA', 'bram', 'Bram', 'cleo')[(k * 7) % 6]} {(k * 7919) % 10007:05d}"
        change = None if k % 9 == 0 else float((37 * k) % 201 - 100)
        values = (k + 1, name, 1500.0, change, "Division 1", 40.0, 12.0, None, "")
        shown = (str(k + 1), name, "1500", views.signed(change), "Division 1", "40", "12", "", "")
        out.append(views.Row(name, values, shown))
    return out


def test_a_heading_click_sorts_names_without_regard_to_capitals_numbers_by_size_blanks_last(table):
    root, t = table
    given = mixed_rows(SORTED_ROWS)
    t.show(given)
    filled(root, t)
    chosen = given[1234].iid
    t.tree.selection_set(chosen)
    click(t, "player")
    assert t.tree.heading("player", "text") == "Player \u25b2"
    assert filled(root, t) == [r.shown for r in sorted(given, key=lambda r: r.values[1].casefold())]
    assert t.tree.selection() == (chosen,) and t.tree.yview()[0] == 0.0  # still chosen; the top in sight
    changed = [r for r in given if r.values[3] is not None]
    blank = [r for r in given if r.values[3] is None]
    click(t, "change")
    assert t.tree.heading("change", "text") == "Change \u25b2" and t.tree.heading("player", "text") == "Player"
    assert filled(root, t) == [r.shown for r in sorted(changed, key=lambda r: r.values[3]) + blank]
    click(t, "change")  # again: the reverse, blanks still last, equal changes still in the order given
    assert t.tree.heading("change", "text") == "Change \u25bc"
    assert filled(root, t) == [r.shown for r in sorted(changed, key=lambda r: -r.values[3]) + blank]
    assert t.tree.selection() == (chosen,)


def test_the_window_answers_while_a_big_table_is_being_sorted(table):
    root, t = table
    given = rows(SORTED_ROWS)
    t.show(given)
    filled(root, t)
    first = min(given, key=lambda r: r.values[2]).iid  # lowest rating: the top row once sorted
    clicked, answered = [], []

    def probe() -> None:  # an after() callback, as any other the window has
        if clicked:
            answered.append(t.tree.get_children()[:1] == (first,))
        if t.filling or not clicked:
            root.after(1, probe)

    root.after(0, lambda: clicked.append(click(t, "rating")))
    root.after(1, probe)
    wait_until(root, lambda: clicked and not t.filling, 60)
    assert answered and not answered[0]  # it answered before the sorted rows were in
    assert t.shown_values() == [r.shown for r in sorted(given, key=lambda r: r.values[2])]


def test_the_problems_of_a_real_workbook_sort_as_the_sheet_s_values_do(app, tmp_path):
    path = tmp_path / "league.xlsx"
    make_league_workbook(path, SORTED_ROWS, 60, seed=4, copies=2)  # every result twice: a warning per result
    app.open_workbook(path)
    settle(app, 300)
    table = app.problems.table
    given = [int(v[2]) for v in table.shown_values()]
    assert len(given) >= SORTED_ROWS
    wb = openpyxl.load_workbook(path, read_only=True)
    try:  # the sheet's own values: Player A, Games A-Games B, Player B
        sheet = {k: f"{r[2]} {r[4]}-{r[5]} {r[3]}"
                 for k, r in enumerate(wb["Results"].iter_rows(min_row=1, values_only=True), start=1)}
    finally:
        wb.close()
    click(table, "found")
    by_text = sorted(given, key=lambda k: sheet[k].casefold())
    assert [(int(v[2]), v[4]) for v in filled(app.root, table)] == [(k, sheet[k]) for k in by_text]
    click(table, "row")
    click(table, "row")  # again: the highest row number first, as numbers ("1000" after "999")
    assert [int(v[2]) for v in filled(app.root, table)] == sorted(given, reverse=True)
    assert app.idle
