"""A player new this update has a first rating, not a change: every place that shows a Change agrees.

Through the real pipeline on a workbook written with openpyxl (the league of test_still_words): a first
update, then a week in which a newcomer plays, and a second update.  Before, Why it changed gave the
newcomer a Change counted from the starting rating (e.g. +161) beside "First rating", while the Ratings
sheet left it blank.
"""
from __future__ import annotations

import openpyxl

from secretary.gui import views
from secretary.workbook.schema import NOTICE_SHEET, WHY_SHEET
from tests.workbook.test_still_words import NEW_WEEK, OTHERS, _second_update

NEWCOMER = "Nell Quarry"
FIGURES = ("Before", "Change", "Own results", "Opponents re-rated", "Group shift", "Corrections")


def _newcomer_week() -> list[list]:
    """The newcomer wins all five races: a first rating well above the starting one."""
    return [[NEW_WEEK, "Premier", NEWCOMER, opponent, 5, 1, "", ""] for opponent in OTHERS[:5]]


def _row(ws, name: str) -> dict:
    """The first row naming ``name`` in column B or A, as a dict by the header row above it."""
    header = None
    for row in ws.iter_rows(values_only=True):
        if "Player" in row:
            header = row
        elif header and name in row:
            return dict(zip(header, row))
    raise AssertionError(f"{name} not on {ws.title}")


def test_a_newcomer_has_no_change_anywhere(tmp_path):
    outcome, why, ratings = _second_update(tmp_path, _newcomer_week())
    assert why[NEWCOMER] == (None, "First rating: based on 30 games.")
    assert ratings[NEWCOMER] == (None,)
    wb = openpyxl.load_workbook(tmp_path / "league.xlsx")
    row = _row(wb[WHY_SHEET], NEWCOMER)
    assert all(row[h] is None for h in FIGURES), row
    rating = next(p for p in outcome.ratings if p.name == NEWCOMER)
    assert row["After"] == round(rating.rating) > 1600  # the first rating is there, and it is well above 1500
    assert _row(wb[NOTICE_SHEET], NEWCOMER)["Change"] == "new"  # the printed board says so in words
    # Newcomers come after every player with a change, as in the window's What changed tab.
    names = list(why)
    assert names.index(NEWCOMER) == len(names) - 1
    # The window: a blank Change on the Ratings tab and a first rating, no arrow, on What changed.
    shown = next(r for r in views.rating_rows(outcome.ratings, 3) if r.iid == NEWCOMER).shown
    assert shown[3] == "" and "new this update" in shown[-1]
    change = next(c for c in outcome.breakdown.players if c.name == NEWCOMER)
    assert views.change_headline(change) == f"{NEWCOMER}: first rating {round(rating.rating)}"
