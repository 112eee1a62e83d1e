"""The optional Divisions sheet: starting levels reach the fit, bad rows are named, through the real command line.

The checks lean on one exact property of the model (README, "Division levels"):
games inside a division only compare its players with each other, so a
division that plays no other keeps its starting level, and its players'
average strength is then exactly that level (a shift of the whole division
changes no game's likelihood, and the prior is centred on the level).  So
with no games between divisions each division's average rating is
``Centre + Starting level``, whatever the games inside it say.
"""
from __future__ import annotations

import datetime as dt
import hashlib
import itertools
import shutil
from pathlib import Path

import openpyxl
import pytest

from secretary.cli import main
from secretary.model.records import Division
from secretary.workbook.read import read_workbook
from tests.workbook.league_books import D, write_book

TOP = ("Ada Finch", "Bram Oak", "Cleo Marsh", "Dev Pike")
BOTTOM = ("Eve Stone", "Fay Reed", "Gus Hale", "Hal Crane")


def tiered_results(cross: int = 0) -> list[list]:
    """Two divisions, a round robin in each for three weeks, uneven scores; ``cross`` games between them."""
    rows = []
    for week in range(3):
        day = D + dt.timedelta(days=7 * week)
        for division, players in (("Top", TOP), ("Bottom", BOTTOM)):
            for k, (a, b) in enumerate(itertools.combinations(players, 2)):
                rows.append([day, division, a, b, 5, (k + week) % 5, "", ""])
    for k in range(cross):
        rows.append([D + dt.timedelta(days=21), "Cup", TOP[k % 4], BOTTOM[k % 4], 5, 2, "", ""])
    return rows


def division_averages(path: Path) -> dict[str, float]:
    """Each division's average rating on the Ratings sheet as written."""
    rows = list(openpyxl.load_workbook(path, read_only=True)["Ratings"].iter_rows(values_only=True))
    header = rows[0]
    name, division, rating = header.index("Player"), header.index("Division"), header.index("Rating")
    by: dict[str, list[float]] = {}
    for row in rows[1:]:
        if row[name] in TOP + BOTTOM:
            by.setdefault(row[division], []).append(row[rating])
    return {d: sum(v) / len(v) for d, v in by.items()}


def _players() -> list[list]:
    return [[p, "Top", None, None] for p in TOP] + [[p, "Bottom", None, None] for p in BOTTOM]


def test_starting_levels_set_the_level_of_divisions_that_play_no_other(tmp_path, capsys):
    path = write_book(tmp_path / "league.xlsx", tiered_results(), players=_players(),
                      divisions=[["top", 150, "the strong tier"], ["Bottom", "-150", ""]])
    assert main(["update", str(path)]) == 0, capsys.readouterr().out
    averages = division_averages(path)
    # Centre + Starting level; the ratings are written unrounded, the solver's tolerance is far below 0.01.
    assert averages == pytest.approx({"Top": 1650.0, "Bottom": 1350.0}, abs=0.01)


def test_a_blank_level_is_0_and_without_the_sheet_every_level_starts_at_0(tmp_path, capsys):
    blank = write_book(tmp_path / "blank.xlsx", tiered_results(), players=_players(),
                       divisions=[["Top", 200, ""], ["Bottom", None, "no idea yet"]])
    none = write_book(tmp_path / "none.xlsx", tiered_results(), players=_players())
    assert main(["update", str(blank)]) == 0 and main(["update", str(none)]) == 0, capsys.readouterr().out
    assert division_averages(blank) == pytest.approx({"Top": 1700.0, "Bottom": 1500.0}, abs=0.01)
    assert division_averages(none) == pytest.approx({"Top": 1500.0, "Bottom": 1500.0}, abs=0.01)


def test_games_between_divisions_move_the_levels_from_their_starting_levels(tmp_path, capsys):
    # Top wins every cross-division game 5-2 from equal starting levels: Top's level rises above Bottom's.
    path = write_book(tmp_path / "league.xlsx", tiered_results(cross=8), players=_players(),
                      divisions=[["Top", 0, ""], ["Bottom", 0, ""]])
    assert main(["update", str(path)]) == 0, capsys.readouterr().out
    averages = division_averages(path)
    assert averages["Top"] - averages["Bottom"] > 50


def test_the_sheet_is_read_under_the_results_spelling_and_a_note_only_row_is_a_remark(tmp_path):
    path = write_book(tmp_path / "league.xlsx", tiered_results(), players=_players(),
                      divisions=[[" TOP ", "+150", ""], [None, None, "levels agreed at the AGM"]])
    book = read_workbook(path)
    assert not book.problems
    assert [(d.name, d.starting_level, d.row) for d in book.divisions] == [("Top", 150.0, 2)]


def test_every_bad_row_is_named_at_once_and_the_file_is_untouched(tmp_path, capsys):
    results = tiered_results()
    results[2][4] = "five"  # Results row 4, Games A
    path = write_book(tmp_path / "league.xlsx", results, players=_players(), divisions=[
        ["Top", 150, ""],
        ["Botom", -150, ""],       # row 3: unknown (a typing slip)
        ["top", 100, ""],          # row 4: listed twice
        ["Bottom", "strong", ""],  # row 5: text
        ["Cup", 5000, ""],         # row 6: absurd (and Cup has no results: unknown too, but the level is read first)
    ])
    before = hashlib.sha256(path.read_bytes()).hexdigest()
    assert main(["update", str(path)]) == 1
    text = capsys.readouterr().out
    for where in ("Results, row 4, column Games A", "Divisions, row 3, column Division",
                  "Divisions, row 4, column Division", "Divisions, row 5, column Starting level",
                  "Divisions, row 6, column Starting level"):
        assert where in text, text
    assert "close spellings: Bottom" in text and "twice (also row 2)" in text and "-1200 to +1200" in text
    assert "Traceback" not in text
    assert hashlib.sha256(path.read_bytes()).hexdigest() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["league.xlsx"]  # no backup, no temporary file


def test_a_level_typed_as_a_rating_is_told_what_to_write(tmp_path):
    path = write_book(tmp_path / "league.xlsx", tiered_results(), divisions=[["Top", 1650, ""]])
    [problem] = read_workbook(path).problems
    assert "looks like a rating" in problem.fix and "+150" in problem.fix


def test_changing_only_the_divisions_sheet_is_something_new(tmp_path, capsys):
    path = write_book(tmp_path / "league.xlsx", tiered_results(), players=_players(),
                      divisions=[["Top", 150, ""], ["Bottom", -150, ""]])
    assert main(["update", str(path)]) == 0
    assert main(["update", str(path)]) == 0
    assert "Nothing new" in capsys.readouterr().out
    wb = openpyxl.load_workbook(path)
    wb["Divisions"]["B2"] = 250
    wb.save(path)
    assert main(["update", str(path)]) == 0
    assert "Nothing new" not in capsys.readouterr().out
    assert division_averages(path) == pytest.approx({"Top": 1750.0, "Bottom": 1350.0}, abs=0.01)


@pytest.mark.slow
@pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice (soffice) is not on PATH")
def test_a_divisions_sheet_saved_by_libreoffice_reads_the_same(tmp_path):
    from tests.workbook.test_libreoffice import _convert

    source = write_book(tmp_path / "league.xlsx", tiered_results(), players=_players(),
                        divisions=[["Top", 150, "the strong tier"], ["Bottom", -150.5, ""]])
    out = tmp_path / "lo"
    _convert(source, out, "xlsx:Calc MS Excel 2007 XML", tmp_path / "profile")
    saved = out / "league.xlsx"
    assert saved.exists(), sorted(p.name for p in out.glob("*"))
    mine, theirs = read_workbook(source), read_workbook(saved)
    assert not theirs.problems
    assert theirs.divisions == mine.divisions == (
        Division("Top", 150.0, "the strong tier", 2), Division("Bottom", -150.5, "", 3))
