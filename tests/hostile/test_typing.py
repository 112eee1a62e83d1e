"""Typing slips are stopped with the row, the column and the fix; hostile sizes are refused cheaply."""
from __future__ import annotations

import datetime as dt
import json
import subprocess
import sys
import unicodedata

import openpyxl
import pytest

from tests.hostile.conftest import digest
from tests.workbook.league_books import D, PLAYERS_HEADERS, good_results, write_book

PLAYERS = [["Ada Finch", "Premier", None, ""], ["Bram Oak", "Premier", None, ""],
           ["Cleo Marsh", "Premier", None, ""], ["Dev Pike", "Premier", None, ""]]
LATER = D + dt.timedelta(days=14)


def _refused(run, path, *expected: str) -> str:
    before = digest(path)
    code, out = run("update", path)
    assert code == 1, out
    for text in expected:
        assert text in out, out
    assert digest(path) == before and not (path.parent / "backups").exists()
    return out


@pytest.mark.parametrize("score", [(55, 3), (1_000_000, 0)])
def test_a_score_above_the_longest_race_is_refused_by_row(tmp_path, run, score):
    league = write_book(tmp_path / "league.xlsx", good_results() + [[LATER, "Premier", "Ada Finch", "Dev Pike", *score]])
    _refused(run, league, "Results, row 6, column Games A",
             f"{score[0]} games won in one match is more than the Longest race (9)",
             "raise 'Longest race' on the Settings sheet")


def test_a_result_dated_after_today_is_refused_by_row(tmp_path, run):
    tomorrow = dt.date.today() + dt.timedelta(days=1)
    league = write_book(tmp_path / "league.xlsx", good_results() + [[tomorrow, "Premier", "Ada Finch", "Dev Pike", 5, 2]])
    _refused(run, league, "Results, row 6, column Date", "this date is after today", "Check the date")


def test_a_lone_result_dated_far_after_all_others_is_refused(tmp_path, run):
    old = [[D.replace(year=2024), *row[1:]] for row in good_results()]
    league = write_book(tmp_path / "league.xlsx", old + [[D.replace(year=2025) + dt.timedelta(days=30),
                                                          "Premier", "Ada Finch", "Dev Pike", 5, 2]])
    _refused(run, league, "Results, row 6, column Date", "more than a year after every other result")


def test_a_name_one_letter_off_a_listed_player_is_an_error_offering_the_listed_spelling(tmp_path, run):
    league = write_book(tmp_path / "league.xlsx", good_results() + [[LATER, "Premier", "Ada Fitch", "Dev Pike", 5, 2]],
                        players=PLAYERS)
    out = _refused(run, league, "Results, row 6, column Player A", "spelled like 'Ada Finch'", "Write 'Ada Finch' if it is that player")
    line = next(line for line in out.splitlines() if "Ada Fitch" in line)
    assert len(line) <= 180, line  # short enough to be read in full


def test_two_unicode_forms_and_an_invisible_character_are_one_player(tmp_path, run):
    composed = "Zoë Ōtake"
    decomposed = unicodedata.normalize("NFD", composed)
    hidden = "Zo\u200bë Ōtake"
    assert len({composed, decomposed, hidden}) == 3
    rows = good_results() + [[LATER, "Premier", composed, "Dev Pike", 5, 2],
                             [LATER, "Premier", decomposed, "Ada Finch", 5, 4],
                             [LATER + dt.timedelta(days=7), "Premier", hidden, "Bram Oak", 5, 1]]
    league = write_book(tmp_path / "league.xlsx", rows)
    code, out = run("update", league)
    assert code == 0, out
    names = [r[1] for r in openpyxl.load_workbook(league)["Ratings"].iter_rows(min_row=2, values_only=True)]
    assert names.count(composed) == 1 and len(names) == 5


# The child's own peak memory: VmHWM belongs to the address space the child got when it started the
# interpreter (ru_maxrss would also count the parent's pages at the fork).
_PEAK = """
import json, re, sys
from pathlib import Path
from secretary.cli import main
code = main(sys.argv[1:])
peak = int(re.search(r"VmHWM:\\s+(\\d+) kB", Path("/proc/self/status").read_text()).group(1)) / 1024
print(json.dumps({"code": code, "peak_mb": peak}))
"""
PEAK_MB = 200  # measured 139 MB for the 40 MB name and 145 MB for the 100 MB setting (the tool itself, loaded,
#                takes about 130 MB); before the texts were measured in the package: 251 MB and 432 MB


def _crafted(path, placeholder: str, value: str) -> None:
    """Put a value no spreadsheet program would write (longer than a cell may hold) in place of a text."""
    import zipfile

    with zipfile.ZipFile(path) as z:
        parts = {i.filename: z.read(i) for i in z.infolist()}
    part = next(n for n, data in parts.items() if n.startswith("xl/worksheets/") and b"<t>HUGE</t>" in data)
    assert parts[part].count(f"<t>{placeholder}</t>".encode()) == 1
    parts[part] = parts[part].replace(f"<t>{placeholder}</t>".encode(), f"<t>{value}</t>".encode())
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for name, data in parts.items():
            z.writestr(name, data)


def _peak(league, command="update") -> tuple[dict, str]:
    done = subprocess.run([sys.executable, "-c", _PEAK, command, str(league)], capture_output=True, text=True,
                          timeout=600)
    return json.loads(done.stdout.strip().splitlines()[-1]), done.stdout + done.stderr


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads the peak memory from /proc")
def test_a_40_mb_name_is_refused_without_running_out_of_memory(tmp_path):
    league = write_book(tmp_path / "league.xlsx", good_results() + [[LATER, "Premier", "HUGE", "Dev Pike", 5, 2]])
    _crafted(league, "HUGE", "A" * (40 * 2**20))
    before = digest(league)
    report, out = _peak(league)
    assert report["code"] == 1, out[-2000:]
    assert "in the sheet 'Results', cell C6, a text longer than any cell can hold" in out
    assert len(out) < 2000  # the name is never echoed
    assert report["peak_mb"] < PEAK_MB, report
    assert digest(league) == before


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads the peak memory from /proc")
def test_a_100_mb_setting_value_is_refused_in_seconds_and_never_echoed(tmp_path):
    import base64
    import os

    league = write_book(tmp_path / "league.xlsx", good_results(), settings=[["Longest race", "HUGE"]])
    _crafted(league, "HUGE", base64.b64encode(os.urandom(75 * 2**20)).decode())  # 100 MB, compresses little
    report, out = _peak(league, "check")
    assert report["code"] == 1, out[-2000:]
    assert "in the sheet 'Settings', cell B2, a text longer than any cell can hold" in out and len(out) < 2000
    assert report["peak_mb"] < PEAK_MB, report


def test_a_huge_setting_value_is_cut_in_the_message(tmp_path, run):
    league = write_book(tmp_path / "league.xlsx", good_results(), settings=[["Longest race", "HUGE"]])
    _crafted(league, "HUGE", "9" * 2**20)
    code, out = run("update", league)
    assert code == 1 and "Longest race" in out
    assert len(out) < 2000 and "(1,048,576 characters)" in out


@pytest.mark.parametrize("sheet", ["Players", "Results", "Also known as"])
def test_a_name_of_101_characters_is_refused_by_row_and_one_of_100_is_not(tmp_path, run, sheet):
    at_limit, over = "Ada " + "C" * 96, "Ada " + "B" * 97
    assert (len(at_limit), len(over)) == (100, 101)
    for name, refused in ((at_limit, False), (over, True)):
        players = [list(p) for p in PLAYERS]
        rows = good_results()
        if sheet == "Also known as":
            players[0][3] = f"Ada F; {name}"
        else:
            players.append([name, "Premier", None, ""])
            rows = rows + [[LATER, "Premier", name, "Dev Pike", 5, 2]]
        if sheet == "Results":
            players.pop()  # named in Results only
        (tmp_path / str(len(name))).mkdir()
        league = write_book(tmp_path / str(len(name)) / "league.xlsx", rows, players=players)
        if not refused:
            code, out = run("update", league)
            assert code == 0, out
            continue
        row, column = {"Players": (6, "Player"), "Results": (6, "Player A"), "Also known as": (2, "Also known as")}[sheet]
        where = "Results" if sheet == "Results" else "Players"
        out = _refused(run, league, f"{where}, row {row}, column {column}: this name is 101 characters long; "
                                    "a player's name has at most 100", "... (101 characters)")
        assert over not in out  # cut in the message


MEGA = "Q" * 2**20


@pytest.mark.parametrize("where", ["Results Division", "Players Division", "Fixtures Player A", "Setting name",
                                   "League name"])
def test_a_megabyte_value_anywhere_is_cut_in_every_message(tmp_path, run, where):
    rows, players, settings, fixtures = good_results(), [list(p) for p in PLAYERS], None, None
    if where == "Results Division":
        rows[0] = [rows[0][0], MEGA, *rows[0][2:]]
    elif where == "Players Division":
        players[0][1] = MEGA
    elif where == "Fixtures Player A":
        fixtures = [[LATER, MEGA, "Ada Finch", None, None]]
    else:
        settings = [[MEGA, "5"]] if where == "Setting name" else [["League name", MEGA]]
    league = write_book(tmp_path / "league.xlsx", rows, players=players, settings=settings, fixtures=fixtures)
    out = _refused(run, league, " characters)")  # shown as its start and its length
    assert len(out) < 2000 and "Q" * 61 not in out, out[:3000]


@pytest.mark.parametrize("score", [(7, 3), (9, 0)])
def test_a_score_up_to_the_longest_race_passes(tmp_path, run, score):
    league = write_book(tmp_path / "league.xlsx", good_results() + [[LATER, "Premier", "Ada Finch", "Dev Pike", *score]])
    code, out = run("update", league)
    assert code == 0, out


@pytest.mark.parametrize("far_rows, refused", [(5, True), (6, False)])
def test_up_to_five_results_far_after_all_others_are_refused(tmp_path, run, far_rows, refused):
    old = [[D.replace(year=2024), *row[1:]] for row in good_results()]
    far = [[D.replace(year=2025) + dt.timedelta(days=30 + k), "Premier", "Ada Finch", "Dev Pike", 5, 2]
           for k in range(far_rows)]
    league = write_book(tmp_path / "league.xlsx", old + far)
    if refused:
        out = _refused(run, league, "more than a year after every other result")
        assert out.count("more than a year after every other result") == far_rows
    else:  # six or more: a league that paused for a year, not a typing slip
        code, out = run("update", league)
        assert code == 0, out


def test_a_save_measures_again_every_text_it_did_not_copy_as_stored(tmp_path):
    """The check of a grafted save leaves out only the parts copied as stored from the workbook it read."""
    from secretary.errors import FileRefused
    from secretary.workbook import guard, oversized

    league = write_book(tmp_path / "league.xlsx", good_results() + [[LATER, "Premier", "HUGE", "Dev Pike", 5, 2]])
    checked = guard.member_keys(league)
    _crafted(league, "HUGE", "A" * oversized.SCAN_FROM)  # the Results sheet changed: not the one checked
    assert guard.member_keys(league) != checked
    with pytest.raises(FileRefused, match="longer than any cell"):
        guard.check_readable(league, checked=checked)
    huge = guard.member_keys(league)
    guard.check_readable(league, checked=huge)  # the very parts given as checked: not measured again
    with pytest.raises(FileRefused, match="longer than any cell"):  # any other part of theirs is
        guard.check_readable(league, checked=frozenset(k for k in huge if not k[0].startswith("xl/worksheets/")))
