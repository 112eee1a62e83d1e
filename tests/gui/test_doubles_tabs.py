"""Doubles through the window, tab by tab (real Tk under Xvfb, workbooks written with openpyxl): Problems
names the partner cell to fix, What changed names the re-rated partner and counts a week's doubles frame as
played by its four players, Fixtures shows both pairs in full with
the Fixtures sheet's chance and fair race, and the Watch list counts a doubles frame as a link between
divisions only when its two sides' divisions differ."""
from __future__ import annotations

import csv
import datetime as dt

import openpyxl
import pytest
from openpyxl.utils import get_column_letter

from secretary.gui import views
from secretary.pipeline import DATA
from tests.gui.conftest import LAPTOP_SCREENS, main_window
from tests.gui.helpers import clipped, screenshot, settle, sheet_rows, table_clipped
from tests.workbook.league_books import D, RESULTS_HEADERS, good_results, write_book

PARTNERS = ("Partner A", "Partner B")


def letter(path, sheet: str, header: str) -> str:
    """The column letter of ``header`` in the sheet's heading row, read back with openpyxl."""
    wb = openpyxl.load_workbook(path, read_only=True)
    heads = next(wb[sheet].iter_rows(max_row=1, values_only=True))
    wb.close()
    return get_column_letter(heads.index(header) + 1)


def test_partner_errors_name_the_cell_to_fix(display, tmp_path, tk_errors):
    singles = [r + ["", ""] for r in good_results()]  # rows 2-5; the partners after Note, in columns I and J
    faults = [[D, "Premier", "Ada Finch", "Bram Oak", 5, 3, "", "", "Cleo Marsh", ""],  # row 6: no Partner B
              [D, "Premier", "Ada Finch", "Bram Oak", 5, 3, "", "", "Ada Finch", "Dev Pike"],  # 7: twice on A
              [D, "Premier", "Ada Finch", "Bram Oak", 5, 3, "", "", "Cleo Marsh", "Ada Finch"]]  # 8: both sides
    later = D + dt.timedelta(days=30)
    path = write_book(tmp_path / "league.xlsx", singles + faults, results_headers=RESULTS_HEADERS + PARTNERS,
                      fixtures_headers=("Date", "Player A", "Partner A", "Player B", "Partner B"),
                      fixtures=[[later, "Ada Finch", "", "Bram Oak", "Dev Pike"],  # row 2: no Partner A
                                [later, "Ada Finch", "Cleo Marsh", "Bram Oak", "Cleo Marsh"]])  # 3: both sides
    r, f = (lambda h, s=s: f"{s}!{letter(path, s, h)}" for s in ("Results", "Fixtures"))
    wanted = {f"{r('Partner B')}6", f"{r('Partner A')}7", f"{r('Partner B')}8", f"{f('Partner A')}2",
              f"{f('Partner B')}3"}
    with main_window(tk_errors, f"{display}.1") as app:
        app.open_workbook(path)
        settle(app, 300)
        tree, seen = app.problems.table.tree, set()
        for iid in tree.get_children():
            tree.selection_set(iid)
            settle(app)
            seen.add(app.problems.fix.cget("text").split(":")[0].removeprefix("Fix cell "))
            assert app.problems.detail.cget("text").startswith("Error (stops the update)")
        assert seen == wanted
        assert not views.steps_enabled(app.session)[1]  # no update until they are fixed
        assert clipped(app.root) == []


def test_what_changed_names_the_re_rated_partner(display, demo_league, tk_errors):
    path = demo_league / "league.xlsx"
    with open(DATA / "demo-new-week.csv", newline="", encoding="utf-8") as f:
        week = list(csv.DictReader(f))
    played = {r[k] for r in week for k in ("Player A", "Player B", *PARTNERS) if r.get(k)}
    sides = {frozenset((r[a], r[b])) for r in sheet_rows(path, "Results", "Partner A") if r.get("Partner A")
             for a, b in (("Player A", "Partner A"), ("Player B", "Partner B"))}
    change = {r["Player"]: r["Change"] for r in sheet_rows(path, "Ratings", "Change") if isinstance(r["Rank"], int)}
    with main_window(tk_errors, f"{display}.2") as app:
        app.open_workbook(path)
        settle(app, 300)
        named = [(c, c.top_partners[0][0]) for c in app.updated.changes
                 if "doubles partner" in views.named_sentence(c)]
        assert named  # the demo's walk-through: a player moved because a partner was re-rated
        app.notebook.select(app.changes.frame)
        for c, partner in named:
            # Against the sheets: they did not play this week, the partner did and moved, and the two were a side.
            assert c.name not in played and partner in played and change[partner]
            assert frozenset((c.name, partner)) in sides
            app.changes.search.set(c.name)
            settle(app)
            app.root.after(100)  # the search redraws once typing has paused
            settle(app)
            texts = [app.changes.canvas.itemcget(i, "text") for i in app.changes.canvas.find_all()
                     if app.changes.canvas.type(i) == "text"]
            sentence = next(t for t in texts if t.startswith(c.name.split()[0]) and "partner" in t)
            assert f"doubles partner {partner} " in sentence and "your" not in sentence.casefold()
        assert clipped(app.root) == []


def test_a_week_of_one_doubles_frame_counts_its_four_players_as_played(display, demo_league, tk_errors):
    from secretary.cli import main
    from secretary.workbook.append import append_results

    path = demo_league / "league.xlsx"
    four = {"Player A": "Gareth Elphick", "Partner A": "Piers Jessop", "Player B": "Orla Hebblethwaite",
            "Partner B": "Dervla Quarrie"}
    append_results(path, [{"Date": "2026-04-23", "Division": "Premier", "Games A": "0", "Games B": "5",
                           "Event": "Team night", **four}])
    assert main(["update", str(path)]) == 0
    with main_window(tk_errors, f"{display}.1") as app:
        app.open_workbook(path)
        settle(app, 300)
        changes = {c.name: c for c in app.updated.changes}
        for side, name in four.items():  # each played 5 games this week: side B won them all
            won = 0 if side.endswith("A") else 5
            assert (changes[name].played, changes[name].new_games, changes[name].new_won) == (True, 5, won)
        app.notebook.select(app.changes.frame)
        app.changes.only_idle.set(True)
        app.root.after(100)
        settle(app)
        assert app.changes.shown and not {c.name for c in app.changes.shown} & set(four.values())
        app.changes.only_idle.set(False)
        app.changes.search.set("Piers Jessop")
        app.root.after(100)
        settle(app)
        texts = [app.changes.canvas.itemcget(i, "text") for i in app.changes.canvas.find_all()
                 if app.changes.canvas.type(i) == "text"]
        assert any(t.startswith("Piers won 0 of 5 games this week") for t in texts), texts  # the doubles frame


def _with_doubles_fixtures(path, fixtures) -> None:
    """Add Partner A and Partner B columns to the Fixtures sheet and these doubles fixtures (openpyxl)."""
    wb = openpyxl.load_workbook(path)
    ws = wb["Fixtures"]
    heads = [c.value for c in ws[1]]
    last = len(heads)
    ws.cell(1, last + 1, "Partner A")
    ws.cell(1, last + 2, "Partner B")
    for day, a, partner_a, b, partner_b in fixtures:
        row = ws.max_row + 1
        ws.cell(row, heads.index("Date") + 1, day)
        ws.cell(row, heads.index("Player A") + 1, a)
        ws.cell(row, heads.index("Player B") + 1, b)
        ws.cell(row, last + 1, partner_a)
        ws.cell(row, last + 2, partner_b)
    wb.save(path)


@pytest.mark.parametrize("screen", LAPTOP_SCREENS)
def test_doubles_fixtures_show_both_pairs_in_full(screen, display, demo_league, tk_errors):
    from secretary.pipeline import run_fixtures

    path = demo_league / "league.xlsx"
    day = dt.datetime(2026, 4, 30)  # after the demo's newest result: coming
    _with_doubles_fixtures(path, [(day, "Jago Kettleborough", "Orla Hebblethwaite", "Tobias Prendergast",
                                   "Lachlan Mallender"),
                                  (day, "Aled Penhaligon", "Bronwen Cotterill", "Callum Nettleship",
                                   "Dervla Quarrie")])
    run_fixtures(path)  # the Fixtures sheet's Chance A and Fair race columns, to compare with
    sheet = [r for r in sheet_rows(path, "Fixtures", "Partner A") if r.get("Partner A")]
    assert len(sheet) == 2
    with main_window(tk_errors, f"{display}.{LAPTOP_SCREENS.index(screen) + 1}") as app:
        app.open_workbook(path)
        settle(app, 300)
        app.notebook.select(app.fixtures.frame)
        settle(app)
        shown = {r[1]: r for r in app.fixtures.table.shown_values()}
        for row in sheet:
            pair_a, pair_b = f"{row['Player A']} & {row['Partner A']}", f"{row['Player B']} & {row['Partner B']}"
            cells = shown[pair_a]
            assert cells[:3] == (views.day(day.date()), pair_a, pair_b)
            assert cells[4] == f"{100 * row['Chance A']:.0f}%"
            assert cells[5] == f"{row['Fair race A']}-{row['Fair race B']}"
        screenshot(app.root, f"doubles-fixtures-{screen[0]}x{screen[1]}")
        assert table_clipped(app.fixtures.table, keys=("a", "b")) == []  # no name cut short
        assert clipped(app.root) == []


def _two_divisions(path, doubles_b) -> None:
    """North and South each play among themselves; one doubles frame North+South against ``doubles_b``."""
    north, south = ["Ada Finch", "Bram Oak", "Cleo Marsh"], ["Dev Pike", "Eli Rowe", "Fay Sand"]
    rows = []
    for week in range(3):
        for division, (x, y, z) in (("North", north), ("South", south)):
            day = D + dt.timedelta(days=7 * week)
            rows += [[day, division, x, y, 5, 3, "", "", "", ""], [day, division, y, z, 5, 4, "", "", "", ""],
                     [day, division, z, x, 5, 2, "", "", "", ""]]
    rows.append([D + dt.timedelta(days=21), "North", "Ada Finch", doubles_b[0], 5, 4, "", "", "Dev Pike",
                 doubles_b[1]])
    write_book(path, rows, results_headers=RESULTS_HEADERS + PARTNERS,
               players=[[n, "North", None, None] for n in north] + [[n, "South", None, None] for n in south])


@pytest.mark.parametrize("other_side, links", [(("Bram Oak", "Cleo Marsh"), True),  # North+South v North+North
                                               (("Bram Oak", "Eli Rowe"), False)])  # v North+South: cancels
def test_the_watch_list_counts_a_doubles_frame_between_divisions(other_side, links, display, tmp_path, tk_errors):
    from secretary.cli import main

    path = tmp_path / "league.xlsx"
    _two_divisions(path, other_side)
    assert main(["update", str(path)]) == 0
    with main_window(tk_errors, f"{display}.1") as app:
        app.open_workbook(path)
        settle(app, 300)
        app.notebook.select(app.watch.frame)
        settle(app)
        at = [c.key for c in views.DIVISION_COLUMNS].index("cross")  # by name: columns come and go
        cross = {r[0]: float(r[at]) for r in app.watch.tables[0].shown_values()}
        assert set(cross) == {"North", "South"}
        assert (min(cross.values()) > 0) is links, cross
        sheet = {r["Division"]: r for r in sheet_rows(path, "Watch list", "Games against other divisions")
                 if r.get("Division") in cross}
        assert {d: round(float(r["Games against other divisions"])) for d, r in sheet.items()} == \
            {d: round(v) for d, v in cross.items()}
        assert clipped(app.root) == []
