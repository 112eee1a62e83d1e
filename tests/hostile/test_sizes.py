"""The tool's own sheets never push a workbook over the tool's own unpack limits.

A league of 1,048,576 results would need a workbook of about 400 MB unpacked; building one takes
longer than a test may, so the limits (``guard.LIMITS``, the very object every command checks) are
set just above what the secretary's own parts of a small league unpack to: the same boundary, the
same code paths."""
from __future__ import annotations

import datetime as dt
import zipfile
from pathlib import Path

import openpyxl

from secretary.workbook import guard
from tests.bench.make_league import make_league_workbook
from tests.hostile.conftest import digest
from tests.workbook.league_books import good_results, write_book

MARGIN = 64 * 1024  # bytes: one more result row (about 360) and the shared parts the update edits


def _unpacked(path: Path) -> int:
    with zipfile.ZipFile(path) as z:
        return sum(i.file_size for i in z.infolist())


def _add_result(path: Path) -> None:
    wb = openpyxl.load_workbook(path)
    wb["Results"].append([dt.date(2026, 4, 23), "Division 1", "Ada Ashley", "Bram Ashley", 5, 2, "League night"])
    wb.save(path)


def test_the_tools_own_sheets_never_push_a_workbook_over_the_unpack_limit(tmp_path, run, monkeypatch):
    league = tmp_path / "league.xlsx"
    make_league_workbook(league, n_rows=3000, n_players=150, seed=5)
    _add_result(league)  # saved by openpyxl, as every later version of the secretary's parts is
    mine = _unpacked(league)
    monkeypatch.setattr(guard, "LIMITS", guard.Limits(unpacked=mine + MARGIN))
    assert run("check", league)[0] == 0
    code, out = run("update", league)
    assert code == 0, out
    _add_result(league)  # next week: the record now holds this update and the one before
    code, out = run("update", league)
    assert code == 0, out
    assert _unpacked(league) > mine + 2 * MARGIN  # counted with the secretary's parts, it would be refused
    for command in (("check",), ("update", "--force"), ("notice",), ("restore", "--list")):
        code, out = run(*command, league)
        assert code == 0, (command, out)
        assert "refused to protect this computer" not in out


def test_a_save_the_next_command_would_refuse_is_never_swapped_in(tmp_path, run, monkeypatch):
    league = write_book(tmp_path / "league.xlsx", good_results())
    before = digest(league)
    monkeypatch.setattr(guard, "LIMITS", guard.Limits(tool_unpacked=4096))  # the tool's sheets need more
    code, out = run("update", league)
    assert code == 1, out
    assert "the next command would refuse it" in out and "the tool's own sheets of league.xlsx" in out
    assert "league.xlsx was not changed" in out
    assert digest(league) == before and not (league.parent / "backups").exists()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".~secretary")]


def test_a_large_sheet_marked_as_the_tools_is_held_to_the_tools_limit(tmp_path, run, monkeypatch):
    """A crafted marker cannot smuggle a large part past the limits: the tool's parts have their own."""
    league = write_book(tmp_path / "league.xlsx", good_results())
    wb = openpyxl.load_workbook(league)
    big = wb.create_sheet("Ratings")
    for r in range(1, 2001):
        big.append([f"row {r} " + "x" * 200])
    from secretary.workbook import toolsheets

    toolsheets.mark(wb, "Ratings", "Ratings")
    wb.save(league)
    assert toolsheets.of_package(league) == {"Ratings": "Ratings"}
    monkeypatch.setattr(guard, "LIMITS", guard.Limits(unpacked=_unpacked(league) // 2,
                                                      tool_unpacked=_unpacked(league) // 2))
    code, out = run("check", league)
    assert code == 1
    assert "the tool's own sheets of league.xlsx would unpack" in out
