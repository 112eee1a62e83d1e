"""Backups keep distinct versions, restore picks any of them, and an update with nothing new writes nothing."""
from __future__ import annotations

import datetime as dt
import re

import openpyxl

from secretary.pipeline import notice_pdf_path
from secretary.workbook.save import backups_of
from tests.hostile.conftest import digest
from tests.workbook.league_books import D


def _add_week(path, week: int) -> None:
    """The secretary types in one more result (a new version of the workbook)."""
    wb = openpyxl.load_workbook(path)
    wb["Results"].append([D + dt.timedelta(days=7 * (week + 2)), "Premier", "Ada Finch", "Dev Pike", 5, week % 5])
    wb.save(path)


def _versions(out: str) -> list[tuple[int, str]]:
    return [(int(n), when) for n, when in re.findall(r"^\s+(\d+)\s+(\d{4}-\d\d-\d\d \d\d:\d\d:\d\d)", out, re.M)]


def test_updates_with_nothing_new_keep_every_distinct_version_and_restore_picks_any(league, run):
    for week in range(5):
        _add_week(league, week)
        assert run("update", league)[0] == 0
    kept = backups_of(league)
    assert len(kept) == 5 and len({digest(b) for b in kept}) == 5
    for _ in range(3):  # nothing new: no backup made, none pruned
        assert run("update", league)[0] == 0
    assert backups_of(league) == kept
    code, out = run("restore", league, "--list")
    assert code == 0 and [n for n, _ in _versions(out)] == [1, 2, 3, 4, 5]
    oldest = kept[-1]
    code, out = run("restore", league, "--pick", "5")
    assert code == 0, out
    assert digest(league) == digest(oldest)
    assert len(backups_of(league)) == 6  # the version replaced is kept, and no version was removed
    code, out = run("restore", league, "--list")
    numbered = _versions(out)
    assert len(numbered) == 6 and "(the same as the workbook now)" in out.splitlines()[-2]
    code, out = run("restore", league, "--pick", numbered[0][1][:16])  # by date and time: the newest again
    assert code == 0, out
    assert digest(league) == digest(backups_of(league)[1])


def test_restore_never_evicts_a_version_even_with_ten_kept(league, run):
    folder = league.parent / "backups"
    folder.mkdir()
    for i in range(10):  # ten distinct earlier versions
        (folder / f"league-202601{i + 1:02d}-120000.xlsx").write_bytes(league.read_bytes() + bytes([i]))
    _add_week(league, 0)
    before = set(backups_of(league))
    code, out = run("restore", league, "--pick", "10")
    assert code == 0, out
    assert before <= set(backups_of(league)) and len(backups_of(league)) == 11


def test_a_repeat_update_with_nothing_new_writes_nothing_and_keeps_last_weeks_account(league, run):
    assert run("update", league)[0] == 0
    _add_week(league, 0)
    code, first = run("update", league)
    assert code == 0 and "Since the last update: 1 new" in first
    workbook, notice = digest(league), digest(notice_pdf_path(league))
    stamp = notice_pdf_path(league).stat().st_mtime_ns
    code, out = run("update", league)
    assert code == 0, out
    assert "Nothing new since the last update" in out and "nothing was written" in out
    assert "printouts were left as they were" in out and "--force" in out
    assert digest(league) == workbook and digest(notice_pdf_path(league)) == notice
    assert notice_pdf_path(league).stat().st_mtime_ns == stamp
    assert ": 1 new, 0 edited, 0 removed" in out  # last week's account, not "No change"
    assert not re.search(r"[A-Z][a-z]+ [A-Z][a-z]+ \+0 \(", out)  # no "+0" biggest changes
    code, out = run("update", league, "--force")
    assert code == 0 and "Nothing new" not in out and digest(league) != workbook


def test_an_edited_player_counts_as_something_new(tmp_path, run):
    from tests.workbook.league_books import good_results, write_book

    league = write_book(tmp_path / "league.xlsx", good_results(),
                        players=[["Ada Finch", "Premier", None, ""], ["Bram Oak", "Premier", None, ""],
                                 ["Cleo Marsh", "Premier", None, ""], ["Dev Pike", "Premier", None, ""]])
    assert run("update", league)[0] == 0
    wb = openpyxl.load_workbook(league)
    wb["Players"]["C2"] = 1800  # a starting rating for Ada
    wb.save(league)
    code, out = run("update", league)
    assert code == 0 and "Nothing new" not in out
