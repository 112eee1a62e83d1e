"""The Watch list's "Average rating" is its players' mean rating, also when divisions have levels.

Through the real update on a workbook written with openpyxl (the three-division league of
test_two_division_pm): each division's Average rating on the Watch list sheet against the mean of its
players' ratings read from the Ratings sheet.  Before, with division levels, the column held the Centre
plus the division level, several points away from the players' mean (about 6 for the Valley here).
"""
from __future__ import annotations

import statistics

import pytest

from secretary.pipeline import run_update
from tests.workbook.league_books import write_book
from tests.workbook.test_two_division_pm import DIVISIONS, _rows, _rows_of, _table_after

MEAN_RATING = "Average rating"  # the Watch list heading (watch_sentences.MEAN_RATING)


@pytest.fixture(scope="module")
def league(tmp_path_factory):
    players = [[p, d, None, None] for d, names in DIVISIONS.items() for p in names]
    path = write_book(tmp_path_factory.mktemp("mean") / "league.xlsx", _rows(), players=players)
    return path, run_update(path)


def test_average_rating_is_the_players_mean_rating(league):
    path, outcome = league
    _, ratings = _table_after(_rows_of(path, "Ratings"), "Weighted games")
    by_division: dict[str, list[float]] = {}
    for row in ratings:
        by_division.setdefault(row["Division"], []).append(row["Rating"])
    header, divisions = _table_after(_rows_of(path, "Watch list"), "Gap to the rest")
    assert MEAN_RATING in header
    shown = {r["Division"]: r[MEAN_RATING] for r in divisions}
    assert set(shown) == set(DIVISIONS) and all(len(v) == 4 for v in by_division.values())
    for division, values in by_division.items():
        assert shown[division] == pytest.approx(statistics.fmean(values), abs=1e-6), division
    # Not the Centre plus the level: the two differ by about 6 points for Top and the Valley (0.3 for Middle).
    level = {d.division: 1500 + d.level for d in outcome.levels}
    assert all(abs(shown[d] - level[d]) > 5 for d in ("Top", "Valley")), (shown, level)


def test_the_sheet_says_what_the_average_rating_is(league):
    path, _ = league
    notes = [r[0] for r in _rows_of(path, "Watch list") if r and isinstance(r[0], str)]
    assert any(n.startswith("Average rating: the mean rating of the division's players") for n in notes)
