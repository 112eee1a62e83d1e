"""The Why it changed sentences against the sheet's own figures, on the demo and on a real result set.

Through the real pipeline: ``secretary demo`` (two updates), and the badminton set of docs/real-data.md
turned into a workbook, updated, given its last ten days of results and updated again.  Each sentence
must agree with its row: the figures it quotes add up to the Change cell, or it says the total
("(-5 in all)"), and a Change of 0 is never left looking like a change; a player who played is told so.
"""
from __future__ import annotations

import datetime as dt
import re

import openpyxl
import pytest

from secretary.model.notice import forecast_note
from secretary.pipeline import run_demo, run_update
from tests import realdata

FIGURE = re.compile(r"(?<![\w(])[+-]\d+(?!\d* in all)")  # a part's figure; not the "(-5 in all)" total
TOTAL = re.compile(r"\(([+-]\d+) in all\)")


def _why(path) -> dict[str, dict]:
    rows = list(openpyxl.load_workbook(path, read_only=True)["Why it changed"].iter_rows(values_only=True))
    return {row[0]: dict(zip(rows[0], row)) for row in rows[1:] if row[0]}


def _disagreements(why: dict[str, dict]) -> list[tuple]:
    """Rows whose sentence's figures do not come to the Change cell."""
    out = []
    for name, row in why.items():
        text, change = row["Why"], row["Change"]
        total = TOTAL.findall(text)
        if change == 0:
            ok = "no change" in text or "stays where it was" in text
        elif total:
            ok = total == [f"{change:+d}"]
        else:
            ok = sum(int(f) for f in FIGURE.findall(text)) == change
        if not ok:
            out.append((name, change, text))
    return out


def _untold(why: dict[str, dict], players) -> list[str]:
    """Players (not new) whose sentence does not say whether they played this week."""
    out = []
    for pc in players:
        text = why[pc.name]["Why"]
        told = ("You won" in text or text.startswith("Back after")) if pc.played else \
            ("did not play" in text or "have not played" in text)
        if not told:
            out.append(pc.name)
    return out


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    folder = tmp_path_factory.mktemp("demo")
    _, second = run_demo(folder)
    return _why(folder / "league.xlsx"), second


def test_every_demo_sentence_agrees_with_its_change(demo):
    why, _ = demo
    assert not _disagreements(why)
    # Before, a player who had not played for a year read "+7" beside a Change of 0.
    assert why["Vince Lamplugh"]["Change"] == 0 and why["Vince Lamplugh"]["Why"] == (
        "You have not played for 12 months. Division Two as a whole moved up this week, which lifts "
        "everyone in it: +7 (no change in all).")
    # A part left unsaid (opponents re-rated, -1): the total is given.
    assert why["Nico Fairweather"]["Why"].endswith(
        "The Premier division as a whole moved down, which lowers everyone in it: -3 (-4 in all).")


def test_a_demo_player_who_played_is_told_so_even_when_the_division_moved_them_most(demo):
    why, second = demo
    assert not _untold(why, second.breakdown.players)
    assert why["Eamon Brackley"]["Why"] == (
        "You won 1 of 6 games this week, about as many as your rating expected. "
        "The Premier division as a whole moved down, which lowers everyone in it: -3.")


def test_no_demo_sentence_says_this_week_twice(demo):
    # Before: "You did not play this week. Division One as a whole moved down this week, ..." and
    # "The Premier division as a whole moved down this week, ... You won 5 of 7 games this week, ...".
    why, _ = demo
    assert not [(name, row["Why"]) for name, row in why.items() if row["Why"].count("this week") > 1]
    assert why["Bartley Hoskins"]["Why"] == (
        "You did not play this week. Division One as a whole moved down, which lowers everyone in it: -3.")
    # The division first: "this week" goes with it, and the own results follow without it.
    assert why["Gareth Elphick"]["Why"] == (
        "The Premier division as a whole moved down this week, which lowers everyone in it: -4. "
        "You won 5 of 7 games, about 1 fewer than your rating expected: -2.")
    assert sum("this week" in row["Why"] for row in why.values()) == len(why)  # and every sentence still says when


def test_the_notice_board_sheet_prints_the_same_sentence_and_change(demo, tmp_path_factory):
    why, second = demo
    rows = openpyxl.load_workbook(second.written, read_only=True)["Notice board"].iter_rows(values_only=True)
    board = {row[1]: row for row in rows if len(row) > 5 and isinstance(row[0], int)}
    assert len(board) == len(why)
    for name, row in board.items():
        assert (row[4], row[5]) == (why[name]["Change"], why[name]["Why"]), name


@pytest.mark.realdata
def test_every_sentence_on_a_real_set_agrees_with_its_change(tmp_path):
    realdata.need(realdata.BADMINTON)
    results = realdata.badminton()
    cut = max(r.date for r in results) - dt.timedelta(days=10)
    path = realdata.write_results_workbook([r for r in results if r.date <= cut], tmp_path / "badminton.xlsx")
    run_update(path)
    wb = openpyxl.load_workbook(path)
    for r in results:
        if r.date > cut:
            wb["Results"].append([r.date, r.division, r.player_a, r.player_b, r.games_a, r.games_b])
    wb.save(path)
    outcome = run_update(path)
    why = _why(path)
    assert len(why) > 500
    assert not _disagreements({n: row for n, row in why.items() if not row["Why"].startswith("First rating")})
    assert not _untold(why, [pc for pc in outcome.breakdown.players if not pc.is_new])


def test_a_forecast_note_counts_its_games_in_the_right_number():
    from types import SimpleNamespace

    def note(games):
        return forecast_note(SimpleNamespace(no_division=(), not_rated=(), least_known=("Ann Pike", games),
                                             care="far off"))

    assert note(1.2) == "Ann Pike has 1 game: this chance could be far off"
    assert note(0.4) == "Ann Pike has under 1 game: this chance could be far off"
    assert note(7.0) == "Ann Pike has 7 games: this chance could be far off"
