"""Players whose rating barely moved: the Why sentence, the Why sheet's Change and the Ratings sheet's agree.

Through the real pipeline on a workbook written with openpyxl: a first update, then a week of new
results appended to the Results sheet and a second update.
"""
from __future__ import annotations

import datetime as dt
import re

import numpy as np
import openpyxl
import pytest
from scipy.special import expit

from secretary.pipeline import run_update
from secretary.workbook.schema import RATINGS_SHEET, WHY_SHEET
from tests.workbook.league_books import write_book

START = dt.date(2026, 1, 6)
TWINS = ("Ada Finch", "Bram Oak")  # the same opponents with the same scores, never each other: equal ratings
OTHERS = ("Cleo Marsh", "Dev Pike", "Esme Hart", "Fred Lowe", "Gina Bell", "Hugo Rusk", "Iris Dale",
          "Jon Sayer", "Kay Munro", "Lev Tamm")
NEW_WEEK = START + dt.timedelta(weeks=8)


def _history() -> list[list]:
    """Eight weeks of races to 5 in one division; the twins meet the same opponents with the same scores."""
    rng = np.random.default_rng(5)
    strength = dict(zip(OTHERS, rng.normal(0.0, 0.6, len(OTHERS))))
    strength[TWINS[0]] = strength[TWINS[1]] = 0.3
    rows = []
    for week in range(8):
        day = START + dt.timedelta(weeks=week)
        order = list(rng.permutation(OTHERS))
        for a, b in zip(order[::2], order[1::2]):
            rows.append(_race(rng, day, a, b, strength))
        for opponent in rng.choice(OTHERS, 2, replace=False):
            row = _race(rng, day, TWINS[0], opponent, strength)
            rows += [row, [day, "Premier", TWINS[1], *row[3:]]]
    return rows


def _race(rng, day, a, b, strength) -> list:
    p = expit(strength[a] - strength[b])
    won = 0
    lost = 0
    while won < 5 and lost < 5:
        if rng.random() < p:
            won += 1
        else:
            lost += 1
    return [day, "Premier", a, b, won, lost, "", ""]


def _second_update(tmp_path, new_rows):
    path = write_book(tmp_path / "league.xlsx", _history(), settings=[["Half-life (days)", 0]])
    run_update(path)
    wb = openpyxl.load_workbook(path)
    for row in new_rows:
        wb["Results"].append(row)
    wb.save(path)
    outcome = run_update(path)
    wb = openpyxl.load_workbook(path)
    return outcome, _table(wb[WHY_SHEET], "Player", "Change", "Why"), _table(wb[RATINGS_SHEET], "Player", "Change")


def _table(ws, *columns) -> dict:
    """Column values by player name, read from the sheet's header row down to the first blank name."""
    header = [c.value for c in ws[1]]
    at = [header.index(c) for c in columns]
    out = {}
    for row in ws.iter_rows(min_row=2, values_only=True):
        if not row[at[0]]:
            break
        out[row[at[0]]] = tuple(row[k] for k in at[1:])
    return out


def _shown(value) -> str:
    """A Change cell as its number format "+0;-0;0" shows it."""
    n = int(np.copysign(np.floor(abs(value) + 0.5), value))
    return f"{n:+d}" if n else "0"


def _assert_words_match_the_cells(why, ratings):
    for name, (change, text) in why.items():
        assert ratings[name][0] == change, name  # one figure: the Ratings sheet and Why it changed
        figures = re.findall(r"[+-]\d+", text)
        if change == 0:
            assert re.search(r"stays where it was|no change", text), (name, text)
            assert "hardly" not in text
        else:
            assert "stays where it was" not in text and "no change" not in text.casefold(), (name, text)
            if "hardly" in text:  # no cause named: the figure is the change itself
                assert figures == [_shown(change)], (name, text, change)


def test_played_as_expected_and_did_not_play_both_say_what_happened(tmp_path):
    # The twins split two races: each won 9 of 18 at equal ratings, so nothing anywhere moves.
    week = [[NEW_WEEK, "Premier", TWINS[0], TWINS[1], 5, 4, "", ""],
            [NEW_WEEK, "Premier", TWINS[1], TWINS[0], 5, 4, "", ""]]
    outcome, why, ratings = _second_update(tmp_path, week)
    assert why[TWINS[0]] == (0, "You won 9 of 18 games this week, about as many as your rating expected, "
                                "so your rating stays where it was.")
    assert why["Cleo Marsh"] == (0, "You did not play this week, and your rating stays where it was.")
    _assert_words_match_the_cells(why, ratings)
    assert all(abs(p.change) < 1e-6 for p in outcome.breakdown.players)


def test_tiny_changes_are_worded_as_the_sheets_round_them(tmp_path):
    # One close race between two established players: a fraction of a point ripples through the league.
    outcome, why, ratings = _second_update(tmp_path, [[NEW_WEEK, "Premier", "Cleo Marsh", "Dev Pike", 5, 4, "", ""]])
    _assert_words_match_the_cells(why, ratings)
    changes = {p.name: p.change for p in outcome.breakdown.players if not p.played}
    tiny = [n for n, c in changes.items() if abs(c) < 1]  # under a point: each sheet rounds both ratings
    assert len(tiny) >= 5
    # Under half a point, yet across a rounding boundary (the sheets show +-1), and over half a point
    # within one (they show 0): on the old Ratings sheet, which rounded the change itself, these disagreed.
    across = [n for n in tiny if abs(changes[n]) < 0.5 and why[n][0] != 0]
    within = [n for n in tiny if abs(changes[n]) >= 0.5 and why[n][0] == 0]
    assert across and within
    for name in tiny:
        change = why[name][0]
        assert why[name][1] == ("You did not play this week, and your rating stays where it was." if change == 0
                                else f"You did not play this week, and your rating hardly moved: {_shown(change)}.")
