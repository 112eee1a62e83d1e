"""Doubles frames on the Results and Fixtures sheets: Partner A / Partner B, read and checked (real workbooks)."""
from __future__ import annotations

import datetime as dt

import pytest

from secretary.model.records import Fixture, Result
from secretary.workbook.read import read_workbook
from tests.workbook.league_books import FIXTURES_HEADERS, RESULTS_HEADERS, D, good_results, write_book

HEADERS = RESULTS_HEADERS + ("Partner A", "Partner B")
LATER = D + dt.timedelta(days=7)


def rows_with(*extra):
    """The four good singles rows (no partners) and the given rows (sheet rows 6 on)."""
    return [row + [None, None] for row in good_results()] + [list(row) for row in extra]


def test_a_row_with_both_partners_is_a_doubles_result(tmp_path):
    path = write_book(tmp_path / "league.xlsx", rows_with(
        [LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "Team night", "", "bram oak", " Dev  Pike "]),
        results_headers=HEADERS, players=[["Ada Finch", "Premier", None, "Ada F"], ["Bram Oak", "Premier", None, None],
                                          ["Cleo Marsh", "Premier", None, None], ["Dev Pike", "Premier", None, None]])
    book = read_workbook(path)
    # partners are names like any other: a spelling that differs only in capitals or spaces is read as the
    # player's and warned about, as in Player A
    assert [(p.severity, p.row, p.column) for p in book.problems] == [("warning", 6, "Partner A"),
                                                                       ("warning", 6, "Partner B")]
    assert book.results[-1] == Result(LATER, "Ada Finch", "Cleo Marsh", 3, 1, "Premier", "Team night", False, 6,
                                      "Bram Oak", "Dev Pike")
    assert book.results[-1].is_doubles and not book.results[0].is_doubles
    assert book.results[0].partner_a == "" and book.layouts["Results"].columns["partner_a"] == 9


def test_partners_go_through_aliases_and_the_players_sheet_like_any_name(tmp_path):
    path = write_book(tmp_path / "league.xlsx", rows_with(
        [LATER, "Premier", "Ada F", "Cleo Marsh", 3, 1, "", "", "Bram Oak", "Eli Rowe"]),
        results_headers=HEADERS, players=[["Ada Finch", "Premier", None, "Ada F"], ["Bram Oak", "Premier", None, None],
                                          ["Cleo Marsh", "Premier", None, None], ["Dev Pike", "Premier", None, None]])
    book = read_workbook(path)
    assert book.results[-1].player_a == "Ada Finch"
    [warning] = book.problems
    assert (warning.severity, warning.sheet, warning.row, warning.column, warning.found) == (
        "warning", "Results", 6, "Partner B", "Eli Rowe")
    assert "not in Players" in warning.problem


@pytest.mark.parametrize("row, column, found, says", [
    ([LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "", "Bram Oak", None],
     "Partner B", "", "Partner A is 'Bram Oak' but Partner B is blank"),
    ([LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "", None, "Dev Pike"],
     "Partner A", "", "Partner B is 'Dev Pike' but Partner A is blank"),
    ([LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "", "ada finch", "Dev Pike"],
     "Partner A", "ada finch", "'ada finch' is written twice on side A (Player A and Partner A)"),
    ([LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "", "Bram Oak", "Bram Oak"],
     "Partner B", "Bram Oak", "'Bram Oak' is on both sides (Partner A and Partner B)"),
    ([LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "", "Bram Oak", "Ada Finch"],
     "Partner B", "Ada Finch", "'Ada Finch' is on both sides (Player A and Partner B)"),
])
def test_a_bad_doubles_row_is_an_error_naming_sheet_row_column_and_value(tmp_path, row, column, found, says):
    path = write_book(tmp_path / "league.xlsx", rows_with(row), results_headers=HEADERS)
    before = path.read_bytes()
    book = read_workbook(path)
    [error] = book.errors
    assert (error.sheet, error.row, error.column, error.found) == ("Results", 6, column, found)
    assert says in error.problem and error.fix
    assert path.read_bytes() == before


def test_every_bad_doubles_row_is_reported_at_once_and_a_void_one_only_warns(tmp_path):
    path = write_book(tmp_path / "league.xlsx", rows_with(
        [LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "", "Bram Oak", None],
        [LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "", "Bram Oak", "Ada Finch"],
        [LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "void: replayed", "Ada Finch", "Dev Pike"]),
        results_headers=HEADERS)
    book = read_workbook(path)
    assert [(p.severity, p.row) for p in book.problems] == [("error", 6), ("error", 7), ("warning", 8)]


def test_an_alias_that_puts_one_player_twice_in_a_doubles_row_is_an_error(tmp_path):
    path = write_book(tmp_path / "league.xlsx", rows_with(
        [LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "", "A. Finch", "Dev Pike"]),
        results_headers=HEADERS, players=[["Ada Finch", "Premier", None, "A. Finch"]])
    [error] = read_workbook(path).errors
    assert (error.row, error.column, error.found) == (6, "Partner A", "A. Finch")
    assert "the same player (Ada Finch) by 'Also known as'" in error.problem


def test_doubles_fixtures_are_read_and_checked(tmp_path):
    headers = FIXTURES_HEADERS + ("Partner A", "Partner B")
    path = write_book(tmp_path / "league.xlsx", fixtures_headers=headers, fixtures=[
        [LATER, "Ada Finch", "Cleo Marsh", 3, 3, "Bram Oak", "Dev Pike"],
        [LATER, "Ada Finch", "Cleo Marsh", None, None, None, None],
        [LATER, "Ada Finch", "Cleo Marsh", None, None, "Bram Oak", None],
        [LATER, "Ada Finch", "Cleo Marsh", None, None, "Cleo Marsh", "Dev Pike"],
    ])
    book = read_workbook(path)
    assert book.fixtures == (Fixture(LATER, "Ada Finch", "Cleo Marsh", 3, 3, 2, "Bram Oak", "Dev Pike"),
                             Fixture(LATER, "Ada Finch", "Cleo Marsh", None, None, 3))
    assert [(p.sheet, p.row, p.column) for p in book.errors] == [("Fixtures", 4, "Partner B"), ("Fixtures", 5, "Player B")]
    assert book.fixtures[0].label_a == "Ada Finch & Bram Oak"


def test_the_template_has_the_partner_columns():
    import openpyxl

    from secretary.workbook.template import PACKAGED_TEMPLATE

    wb = openpyxl.load_workbook(PACKAGED_TEMPLATE)
    for sheet in ("Results", "Fixtures"):
        headers = [c.value for c in wb[sheet][1]]
        assert "Partner A" in headers and "Partner B" in headers
