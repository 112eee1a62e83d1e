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

import numpy as np
import openpyxl
import pytest

from secretary.cli import main
from secretary.model.records import Division, Settings
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
    for k in range(cross):  # on different days, so that their ages differ
        rows.append([D + dt.timedelta(days=1 + 5 * k), "Cup", TOP[k % 4], BOTTOM[k % 4], 5, 2, "", ""])
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


# ------------------------------------------------------------------ the divisions table on the Ratings sheet


def levels_table(path: Path) -> dict[str, tuple]:
    """The divisions table under the players on the Ratings sheet: division -> (level, ±, games, players, note)."""
    rows = list(openpyxl.load_workbook(path, read_only=True)["Ratings"].iter_rows(values_only=True))
    start = next(k for k, r in enumerate(rows) if r[2] == "Division" and r[3] == "Division level")
    assert rows[start][2:7] + rows[start][8:9] == (
        "Division", "Division level", "± of the level", "Games against other divisions", "Players", "Note")
    out = {}
    for r in rows[start + 1:]:
        if r[2] is None:
            break
        assert r[0] is None and r[1] is None  # Rank and Player stay blank: players only there
        out[r[2]] = (r[3], r[4], r[5], r[6], r[8])
    return out


def test_a_division_that_plays_no_other_keeps_its_starting_level_with_the_division_spread_as_its_pm(tmp_path):
    path = write_book(tmp_path / "league.xlsx", tiered_results(), players=_players(),
                      divisions=[["Top", 150, ""], ["Bottom", -150, ""]])
    assert main(["update", str(path)]) == 0
    table = levels_table(path)
    # No game sees a division's level here, so its posterior is its prior: N(starting level, spread^2), its ±
    # against the two levels' average (the anchor, docs/model.md 1) spread * sqrt(1 - 1/2).
    pm = Settings().division_spread * np.sqrt(0.5)
    assert table["Top"][:4] == (pytest.approx(150, abs=0.01), pytest.approx(pm, abs=1e-6), 0, 4)
    assert table["Bottom"][:4] == (pytest.approx(-150, abs=0.01), pytest.approx(pm, abs=1e-6), 0, 4)
    assert "no games against other divisions" in table["Top"][4]
    assert list(table) == ["Top", "Bottom"]  # strongest first


def test_games_against_other_divisions_are_the_age_weighted_games_between_them(tmp_path):
    rows = tiered_results(cross=8)
    path = write_book(tmp_path / "league.xlsx", rows, players=_players(), divisions=[["Top", 100, ""]])
    assert main(["update", str(path)]) == 0
    table = levels_table(path)
    newest = max(r[0] for r in rows)
    top = set(TOP)
    # Each game weighs 0.5 ** (age / half-life) (the default half-life), age from the newest result.
    half_life = Settings().half_life_days
    weighted = sum((r[4] + r[5]) * 0.5 ** ((newest - r[0]).days / half_life) for r in rows
                   if (r[2] in top) != (r[3] in top))
    assert 0 < weighted < 8 * 7  # some games are older than the newest result, so they weigh less
    assert table["Top"][2] == pytest.approx(weighted, rel=1e-12)
    assert table["Bottom"][2] == pytest.approx(weighted, rel=1e-12)
    assert table["Top"][4] == "started at +100 (Divisions sheet)"
    assert 0 < table["Top"][1] < 100  # the games narrow the level's ± below the Division spread


def test_with_division_spread_0_the_levels_are_fixed_and_one_division_has_no_table(tmp_path):
    fixed = write_book(tmp_path / "fixed.xlsx", tiered_results(cross=4), players=_players(),
                       divisions=[["Top", 150, ""]], settings=[["Division spread", 0]])
    assert main(["update", str(fixed)]) == 0
    table = levels_table(fixed)
    assert table["Top"][:2] == (150, None) and table["Bottom"][:2] == (0, None)
    assert "Division spread is 0" in table["Top"][4]
    single = write_book(tmp_path / "single.xlsx")
    assert main(["update", str(single)]) == 0
    rows = list(openpyxl.load_workbook(single, read_only=True)["Ratings"].iter_rows(values_only=True))
    assert not any("Division levels" in map(str, r) for r in rows)


def test_a_division_not_given_by_the_players_sheet_is_marked_as_taken_from_the_latest_result(tmp_path):
    rows = tiered_results()
    # Hal Crane, not on the Players sheet, played most in Bottom but last in Top: counted in Top.
    rows.append([D + dt.timedelta(days=28), "Top", "Hal Crane", "Ada Finch", 2, 5, "", ""])
    players = [p for p in _players() if p[0] != "Hal Crane"]
    path = write_book(tmp_path / "league.xlsx", rows, players=players)
    assert main(["update", str(path)]) == 0
    sheet = list(openpyxl.load_workbook(path, read_only=True)["Ratings"].iter_rows(values_only=True))
    header = sheet[0]
    by_name = {r[1]: r for r in sheet[1:] if isinstance(r[0], int)}
    note, division = header.index("Note"), header.index("Division")
    assert by_name["Hal Crane"][division] == "Top"
    assert "division from latest result" in by_name["Hal Crane"][note]
    assert not any("division from latest result" in (r[note] or "") for n, r in by_name.items() if n != "Hal Crane")
    assert "most recent result" in " ".join(str(v) for r in sheet for v in r if v)  # the rule, named


@pytest.mark.slow
@pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice (soffice) is not on PATH")
def test_libreoffice_shows_the_divisions_table_as_written(tmp_path):
    import csv

    from tests.workbook.test_libreoffice import CSV_EVERY_SHEET, _convert

    path = write_book(tmp_path / "league.xlsx", tiered_results(), players=_players(),
                      divisions=[["Top", 150, ""], ["Bottom", -150, ""]])
    assert main(["update", str(path)]) == 0
    _convert(path, tmp_path / "csv", CSV_EVERY_SHEET, tmp_path / "profile")
    with (tmp_path / "csv" / "league-Ratings.csv").open(encoding="utf-8") as f:
        shown = list(csv.reader(f))
    start = next(k for k, row in enumerate(shown) if row[2:4] == ["Division", "Division level"])
    assert shown[start - 3][2] == "Division levels" and "A division level is" in shown[start - 2][2]
    rows = {row[2]: row for row in shown[start + 1:start + 3]}
    for name, level in (("Top", 150), ("Bottom", -150)):
        assert float(rows[name][3]) == pytest.approx(level, abs=0.01)
        pm = Settings().division_spread * np.sqrt(0.5)  # the prior's ± against the two levels' average
        assert float(rows[name][4]) == pytest.approx(pm, abs=1e-6) and rows[name][6] == "4"
    players = [row for row in shown[1:] if row[0].isdigit()]
    assert len(players) == 8 and not any(row[1] for row in shown[start - 3:])  # no Player below the players


def test_the_last_update_is_rebuilt_with_the_levels_it_used_after_the_sheet_is_edited(tmp_path, capsys):
    from secretary.pipeline import last_update

    path = write_book(tmp_path / "league.xlsx", tiered_results(), players=_players(),
                      divisions=[["Top", 150, ""], ["Bottom", -150, ""]])
    assert main(["update", str(path)]) == 0
    published = division_averages(path)
    wb = openpyxl.load_workbook(path)
    wb["Divisions"]["B2"] = 250  # edited, not yet updated
    wb.save(path)
    shown = {d.division: d.level for d in last_update(path).levels}
    assert shown == pytest.approx({"Top": 150.0, "Bottom": -150.0}, abs=0.01)  # what was published
    assert published == pytest.approx({"Top": 1650.0, "Bottom": 1350.0}, abs=0.01)
    assert main(["update", str(path)]) == 0  # the update itself reads the sheet as it is now
    assert {d.division: round(d.level) for d in last_update(path).levels} == {"Top": 250, "Bottom": -150}
