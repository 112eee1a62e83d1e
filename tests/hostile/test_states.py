"""Every player is in exactly one state after an update: rated (on Ratings, with games), no longer rated
(results all removed: named once, never ranked), or not rated yet (on Players only: on neither list)."""
from __future__ import annotations

import datetime as dt
import re
from pathlib import Path

import openpyxl

from secretary.pipeline import notice_pdf_path
from tests.bench.make_league import make_league_workbook
from tests.report.poppler import needs_poppler, pdf_text, squeeze
from tests.workbook.league_books import D, good_results, write_book

PLAYERS = [["Ada Finch", "Premier", None, ""], ["Bram Oak", "Premier", None, ""],
           ["Cleo Marsh", "Premier", None, ""], ["Dev Pike", "Premier", None, ""],
           ["Eli Rook", "Premier", 1900, ""], ["Fay Nook", "Second", None, ""]]


def _players_with_games(path: Path) -> set[str]:
    """Who has a rated result in the Results sheet, read independently of the tool."""
    ws = openpyxl.load_workbook(path, read_only=True)["Results"]
    rows = [tuple(row) + (None,) * 8 for row in ws.iter_rows(min_row=2, max_col=8, values_only=True)]
    return {name for row in rows if row[2] and not str(row[7] or "").lower().startswith("void") for name in row[2:4]}


def _ratings(path: Path) -> dict[str, tuple]:
    """The players' table of the Ratings sheet (down to the first blank row; the divisions table follows)."""
    ws = openpyxl.load_workbook(path, read_only=True)["Ratings"]
    rows = []
    for row in ws.iter_rows(min_row=2, values_only=True):
        if row[1] is None:
            break
        rows.append(row)
    return {row[1]: row for row in rows}


def _division_players(path: Path) -> int:
    """The sum of the divisions table's Players column (0 without the table)."""
    ws = openpyxl.load_workbook(path, read_only=True)["Ratings"]
    rows = list(ws.iter_rows(values_only=True))
    head = next((k for k, row in enumerate(rows) if "Division level" in row), None)
    if head is None:
        return 0
    col = rows[head].index("Players")
    return sum(row[col] for row in rows[head + 1:] if isinstance(row[col], int))


def _no_longer_rated(path: Path) -> set[str]:
    """The names on the Why it changed sheet's "No longer rated" line (without their last ratings)."""
    ws = openpyxl.load_workbook(path, read_only=True)["Why it changed"]
    for row in ws.iter_rows(values_only=True):
        text = str(row[0] or "")
        if text.startswith("No longer rated"):
            return set(re.findall(r"(?:: |, )([^,(]+?) \(last -?\d+\)", text))
    return set()


def _check_one_state_each(path: Path, rated_before: set[str]) -> None:
    played = _players_with_games(path)
    ratings = _ratings(path)
    assert set(ratings) == played  # rated exactly when they have a rated game
    assert all(row[5] > 0 and row[0] is not None for row in ratings.values())
    gone = _no_longer_rated(path)
    assert gone == rated_before - played and not gone & set(ratings)
    assert _division_players(path) in (0, len(ratings))  # the divisions table counts the same players


@needs_poppler
def test_a_player_whose_results_were_all_removed_is_no_longer_rated_and_not_ranked(tmp_path, run):
    league = write_book(tmp_path / "league.xlsx", good_results() + [
        [D + dt.timedelta(days=8), "Premier", "Eli Rook", "Ada Finch", 5, 4, "", ""]], players=PLAYERS)
    code, out = run("update", league)
    assert code == 0, out
    assert set(_ratings(league)) == {"Ada Finch", "Bram Oak", "Cleo Marsh", "Dev Pike", "Eli Rook"}
    wb = openpyxl.load_workbook(league)
    wb["Results"].delete_rows(6)  # Eli Rook's only result was a mistake
    wb["Results"].append([D + dt.timedelta(days=14), "Premier", "Ada Finch", "Dev Pike", 5, 1])
    wb.save(league)
    code, out = run("update", league)
    assert code == 0, out
    _check_one_state_each(league, {"Ada Finch", "Bram Oak", "Cleo Marsh", "Dev Pike", "Eli Rook"})
    assert _division_players(league) == 4  # Premier and Fay Nook's Second: the four rated players
    assert "4 players rated" in out
    note = next(line for line in out.splitlines() if "No rated games yet" in line)
    assert "Fay Nook" in note and "Eli Rook" not in note  # never rated: named as such, once
    board = squeeze(pdf_text(notice_pdf_path(league)))
    assert squeeze("No longer listed (no rated games left): Eli Rook.") in board
    assert board.count("EliRook") == 1 and "FayNook" not in board  # neither is ranked on the board


def test_a_large_league_after_a_weekly_update_has_no_player_in_two_states(tmp_path, run):
    league = tmp_path / "large.xlsx"
    make_league_workbook(league, n_rows=1500, n_players=2500, seed=3)  # about 300 listed players never play
    before_first = _players_with_games(league)
    assert len(set(_ratings_names_listed(league)) - before_first) > 200
    code, out = run("update", league)
    assert code == 0, out
    _check_one_state_each(league, set())
    rated_before = set(_ratings(league))
    wb = openpyxl.load_workbook(league)
    ws = wb["Results"]
    dropped = next(ws.cell(r, 3).value for r in range(2, ws.max_row + 1)
                   if ws.cell(r, 3).value not in ("Ada Ashley", "Bram Ashley"))  # all their results go
    for r in range(ws.max_row, 1, -1):
        if dropped in (ws.cell(r, 3).value, ws.cell(r, 4).value):
            ws.delete_rows(r)
    ws.append([dt.date(2026, 4, 23), "Division 1", "Ada Ashley", "Bram Ashley", 5, 2, "League night", None])
    wb.save(league)
    code, out = run("update", league)
    assert code == 0, out
    _check_one_state_each(league, rated_before)
    assert dropped in _no_longer_rated(league)


def _ratings_names_listed(path: Path) -> list[str]:
    ws = openpyxl.load_workbook(path, read_only=True)["Players"]
    return [row[0] for row in ws.iter_rows(min_row=2, values_only=True)]
