"""Reading a league workbook: records, names, layouts, formulas, state, speed, and real files."""
from __future__ import annotations

import datetime as dt
import shutil
import subprocess
from pathlib import Path

import openpyxl
import pytest

from tests.workbook.league_books import D, good_results, rewrite_part, write_book
from secretary.model.records import Fixture, Player, PublishedState, Result, Settings
from secretary.workbook import schema
from secretary.workbook import state as state_module
from secretary.workbook.cells import Workbook as ValuesBook
from secretary.workbook.read import read_workbook
from tests import realdata

LATER = D + dt.timedelta(days=7)


def test_good_workbook_reads_into_records(tmp_path):
    path = write_book(
        tmp_path / "league.xlsx",
        good_results() + [[LATER, "Premier", "Ada Finch", "Dev Pike", None, None, "", "Void - no show"]],
        players=[["Ada Finch", "premier", 1650, "Ada F; A. Finch"], ["Bram Oak", "Premier", None, None],
                 ["Cleo Marsh", "Premier", "", None], ["Dev Pike", "Premier", None, None]],
        settings=[["Centre", 1000], ["Date order", "month-first"], ["League name", "Riverside Cue League"],
                  ["Skill spread", None]],
        fixtures=[["03/28/2026", "a. finch", "Bram Oak", 5, 4], [None, "Cleo Marsh", "Dev Pike", None, None]],
    )
    book = read_workbook(path)
    assert book.problems == ()
    assert book.results[0] == Result(D, "Ada Finch", "Bram Oak", 5, 3, "Premier", "", False, 2)
    assert book.results[-1] == Result(LATER, "Ada Finch", "Dev Pike", 0, 0, "Premier", "", True, 6)
    assert [r.row for r in book.results] == [2, 3, 4, 5, 6]
    assert book.players[0] == Player("Ada Finch", "Premier", 1650.0, ("Ada F", "A. Finch"), 2)
    assert book.players[2].starting is None
    assert book.settings == Settings(centre=1000.0, date_order="month-first", league_name="Riverside Cue League")
    assert book.fixtures == (Fixture(dt.date(2026, 3, 28), "Ada Finch", "Bram Oak", 5, 4, 2),
                             Fixture(None, "Cleo Marsh", "Dev Pike", None, None, 3))
    assert book.layouts["Results"].columns["games_a"] == 5
    assert book.layouts["Fixtures"].header_row == 1
    assert book.sheet_names == ("Results", "Players", "Settings", "Fixtures")
    assert book.state is None and not book.has_errors


def test_headers_in_any_order_case_and_spacing_below_a_title(tmp_path):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = " results "
    ws.append(["Spring league 2026"])
    ws.append([])
    ws.append(["  GAMES b", "notes for me", "player a", "Player  B", "games A", "DATE", "division"])
    ws.append([4, "good match", "Ada Finch", "Bram Oak", 5, "2026-03-14", "Premier"])
    ws.append([None, "", None, None, None, None, None])  # a blank row is skipped
    ws.append([2, None, "Bram Oak", "Ada Finch", 5, "21/03/2026", "Premier"])
    wb.save(tmp_path / "odd.xlsx")
    book = read_workbook(tmp_path / "odd.xlsx")
    assert book.problems == ()
    assert book.results == (Result(D, "Ada Finch", "Bram Oak", 5, 4, "Premier", "", False, 4),
                            Result(LATER, "Bram Oak", "Ada Finch", 5, 2, "Premier", "", False, 6))
    layout = book.layouts["Results"]
    assert (layout.title, layout.header_row, layout.headers["player_b"]) == (" results ", 3, "Player B")


def test_every_problem_is_reported_at_once(tmp_path):
    rows = good_results() + [
        ["someday", "Premier", "Ada Finch", "Bram Oak", 5, 3],
        [LATER, "", "", "Bram Oak", "x", -2],
        [LATER, "Premier", "Cleo Marsh", "cleo marsh", 1.5, 0],
    ]
    path = write_book(tmp_path / "many.xlsx", rows, settings=[["Scale", 0], ["Colour", 1]],
                      fixtures=[[None, "Ada Finch", "Ada Finch", 3, "x"]])
    book = read_workbook(path)
    found = {(p.sheet, p.row, p.column) for p in book.errors}
    assert found == {
        ("Results", 6, "Date"), ("Results", 7, "Division"), ("Results", 7, "Player A"),
        ("Results", 7, "Games A"), ("Results", 7, "Games B"), ("Results", 8, "Player B"),
        ("Results", 8, "Games A"), ("Settings", 2, "Value"), ("Settings", 3, "Setting"),
        ("Fixtures", 2, "Player B"), ("Fixtures", 2, "Race B"),
    }
    assert [p.is_error for p in book.problems] == sorted((p.is_error for p in book.problems), reverse=True)


def test_void_rows_only_warn_and_are_kept(tmp_path):
    rows = good_results() + [[LATER, "Premier", "Ada Finch", "Dev Pike", "w/o", None, "", "VOID walkover"],
                             ["?", "Premier", "Ada Finch", "Dev Pike", 5, 0, "", "void: wrong night"]]
    book = read_workbook(write_book(tmp_path / "void.xlsx", rows))
    assert not book.has_errors
    assert [(p.sheet, p.row, p.column) for p in book.warnings] == [("Results", 7, "Date")]
    assert book.results[-1] == Result(LATER, "Ada Finch", "Dev Pike", 0, 0, "Premier", "", True, 6)


def test_aliases_give_canonical_names_and_merged_spellings_warn(tmp_path):
    rows = good_results() + [[LATER, "Premier", "ADA  FINCH", "bram oak", 5, 1],
                             [LATER, "Premier", "Dev P.", "Cleo Marsh", 5, 1]]
    players = [["Ada Finch", "Premier", None, None], ["Bram Oak", "Premier", None, None],
               ["Cleo Marsh", "Premier", None, None], ["Dev Pike", "Premier", None, "Dev P."]]
    book = read_workbook(write_book(tmp_path / "alias.xlsx", rows, players=players))
    assert {r.player_a for r in book.results} | {r.player_b for r in book.results} == {
        "Ada Finch", "Bram Oak", "Cleo Marsh", "Dev Pike"}
    assert sorted((p.row, p.column, p.found) for p in book.warnings) == [
        (6, "Player A", "ADA  FINCH"), (6, "Player B", "bram oak")]


def test_not_in_players_suggests_close_spellings(tmp_path):
    rows = good_results() + [[LATER, "Premier", "Ada Finch", "Bram Oke", 5, 1]]
    players = [["Ada Finch"], ["Bram Oak"], ["Cleo Marsh"], ["Dev Pike"]]
    book = read_workbook(write_book(tmp_path / "np.xlsx", rows, players=players, players_headers=("Player",)))
    (error,) = book.errors  # one typing slip from a listed player: an error, with the listed spelling
    assert (error.row, error.column) == (6, "Player B")
    assert "not in Players" in error.problem and "Bram Oak" in error.problem and "'Bram Oak'" in error.fix


def test_formula_with_a_saved_value_is_read_as_its_value(tmp_path):
    """LibreOffice (a real spreadsheet program) recalculates and saves the formulas' values."""
    if shutil.which("soffice") is None:
        pytest.skip("LibreOffice (soffice) is not installed")
    rows = good_results()
    rows[1][4] = "=2+2"
    rows[2][2] = '=PROPER("ada finch")'
    (tmp_path / "src").mkdir()
    source = write_book(tmp_path / "src" / "formulas.xlsx", rows)
    assert read_workbook(source).formula_cells == (("Results", 3, 5), ("Results", 4, 3))
    saved = _libreoffice_save(source, tmp_path / "out")
    book = read_workbook(saved)
    assert book.problems == () and book.formula_cells == ()
    assert book.results[1].games_a == 4 and book.results[2].player_a == "Ada Finch"


def _libreoffice_save(source: Path, folder: Path) -> Path:
    folder.mkdir()
    subprocess.run(["soffice", "--headless", "--norestore", f"-env:UserInstallation=file://{folder}/profile",
                    "--convert-to", "xlsx:Calc MS Excel 2007 XML", "--outdir", str(folder), str(source)],
                   check=True, capture_output=True, timeout=120)
    return folder / source.name


def test_fast_reader_matches_openpyxl_on_openpyxl_and_libreoffice_files(tmp_path):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["text", "A & B <c>", 3, 2.5, -1e-7, True, None, dt.datetime(2026, 3, 14, 19, 30), dt.date(2026, 3, 15)])
    ws.append([])
    ws.append(["=1+1", "'quoted", "  spaced  ", "ünïcödé ✓", 1e20, False, "#N/A as text", 0, "line\nbreak"])
    ws["K7"] = "far"
    ws["B9"].number_format = "0.00"
    ws["B9"] = 1.25
    wb.save(tmp_path / "mixed.xlsx")
    files = [tmp_path / "mixed.xlsx"]
    if shutil.which("soffice"):  # the same content as a second program writes it (shared strings, styles)
        files.append(_libreoffice_save(files[0], tmp_path / "lo"))
    for path in files:
        values = ValuesBook(path)
        fast = values.read_cells(values.sheetnames[0])
        values.close()
        reference_wb = openpyxl.load_workbook(path, read_only=True, data_only=True)
        ws = reference_wb.active
        ws.reset_dimensions()
        reference = [tuple(r) for r in ws.iter_rows(values_only=True)]
        reference_wb.close()
        assert fast is not None
        assert _trimmed(fast.rows) == _trimmed(reference), path.name
        assert [type(v) for v in _trimmed(fast.rows)[0]] == [type(v) for v in _trimmed(reference)[0]], path.name
        # openpyxl's file keeps "=1+1" unsaved; LibreOffice saves its value (and writes TRUE as a formula):
        # the formula cells are known, the same as openpyxl's (formulas kept) list them.
        formulas_wb = openpyxl.load_workbook(path)
        assert fast.formulas == {(c.row, c.column) for row in formulas_wb.active.iter_rows()
                                 for c in row if c.data_type == "f"}, path.name
        assert (3, 1) in fast.formulas
    plain = write_book(tmp_path / "plain.xlsx")
    values = ValuesBook(plain)
    assert values.read_cells("Results").formulas == set()  # no formula anywhere in the sheet
    values.close()


def test_error_values_leave_the_sheet_to_openpyxl(tmp_path):
    """calamine shows an error value (#N/A) as blank; such a sheet is read by openpyxl, as the cell says."""
    rows = good_results()
    rows[1][4] = "#N/A"  # openpyxl stores this as an error value
    path = write_book(tmp_path / "errors.xlsx", rows)
    values = ValuesBook(path)
    assert values.read_cells("Results") is None
    values.close()
    book = read_workbook(path)
    assert [(p.row, p.column, p.found, p.problem) for p in book.errors] == [
        (3, "Games A", "#N/A", "the games won are not a number")]


def _trimmed(rows) -> list[tuple]:
    out = [tuple(v for v in r) for r in rows]
    out = [r[: max((i + 1 for i, v in enumerate(r) if v is not None), default=0)] for r in out]
    while out and not out[-1]:
        out.pop()
    return out


def test_unusual_sheet_xml_reads_the_same(tmp_path):
    """Cells without a reference are legal; they read as the cell after the previous one."""
    rows = good_results()
    rows[2][4] = "=1+1"
    path = write_book(tmp_path / "plain.xlsx", rows)
    odd = rewrite_part(path, tmp_path / "noref.xlsx", "xl/worksheets/sheet1.xml", b' r="A2"', b"")
    slow, fast = read_workbook(odd), read_workbook(path)
    assert slow.results == fast.results and len(slow.results) == 3
    assert slow.problems == fast.problems
    assert [(p.row, p.column, p.problem) for p in slow.errors] == [(4, "Games A", "a formula without a saved value")]


def test_a_loaded_workbook_finds_formulas_and_is_not_changed(tmp_path):
    rows = good_results()
    rows[3][5] = "=E5-1"
    path = write_book(tmp_path / "f.xlsx", rows)
    wb = openpyxl.load_workbook(path)
    cells_before = len(wb["Results"]._cells)
    book = read_workbook(path, wb=wb)
    assert [(p.row, p.column, p.problem) for p in book.errors] == [(5, "Games B", "a formula without a saved value")]
    assert len(wb["Results"]._cells) == cells_before


def test_state_written_by_an_update_is_read_back(tmp_path):
    path = write_book(tmp_path / "s.xlsx")
    wb = openpyxl.load_workbook(path)
    state = PublishedState("2026-03-22T10:00:00", LATER, {"Ada Finch": 1550.0}, {"Ada Finch": 80.0},
                           (("id1", "fp1"),), Settings(centre=1000.0))
    state_module.write_state(wb, state)
    wb.save(path)
    book = read_workbook(path)
    assert book.state == state
    assert schema.STATE_SHEET in book.sheet_names and book.problems == ()


@pytest.mark.slow
def test_twenty_thousand_rows_read_fast(tmp_path):
    # Not write-only: such files have no size record, which costs openpyxl a whole extra pass.
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Results"
    ws.append(["Date", "Division", "Player A", "Player B", "Games A", "Games B", "Event", "Note"])
    names = [f"Player {i:04d} Example" for i in range(3000)]
    for i in range(20000):
        ws.append([D + dt.timedelta(days=i // 40), f"Division {i % 6}", names[(i * 7) % 3000],
                   names[(i * 7 + 1 + i % 11) % 3000], 5, i % 5, "", ""])
    wb.save(tmp_path / "big.xlsx")
    book = read_workbook(tmp_path / "big.xlsx")  # its speed is measured by tests/bench/bench_read.py
    assert len(book.results) == 20000


@pytest.mark.realdata
@pytest.mark.slow
def test_real_names_written_two_ways_are_merged(tmp_path):
    """Badminton world tour (shared data): one event writes surnames in capitals; reading merges them."""
    results = realdata.badminton()
    realdata.write_results_workbook(results, tmp_path / "badminton.xlsx")
    book = read_workbook(tmp_path / "badminton.xlsx")
    folded = realdata.badminton(fold_case=True)
    assert len(book.results) == len(results)
    read_names = {r.player_a for r in book.results} | {r.player_b for r in book.results}
    assert len(read_names) == len({r.player_a for r in folded} | {r.player_b for r in folded})
    case_warnings = [p for p in book.warnings if "only capitals or spaces differ" in p.problem]
    assert case_warnings and not book.has_errors


@pytest.mark.realdata
@pytest.mark.slow
def test_real_spelling_variants_are_suggested(tmp_path):
    """Tennis 2019 (shared data, ~2,950 players): the data itself writes one player two ways."""
    results = realdata.tennis()
    realdata.write_results_workbook(results, tmp_path / "tennis.xlsx")
    book = read_workbook(tmp_path / "tennis.xlsx")
    close = [p.problem for p in book.warnings if "is spelled like" in p.problem]
    assert any("'Rui Xuan Wang'" in p and "'Ruixuan Wang'" in p for p in close)
    assert len(close) < 20  # hints, not noise, on ~2,950 real names
