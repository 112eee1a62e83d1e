"""The benchmark league generator: seeded, well-formed, fast, and races won as the formula says."""
from __future__ import annotations

import datetime as dt
import importlib.util
import sys
import time
from pathlib import Path

import numpy as np
import pytest
from openpyxl import load_workbook
from scipy.special import betainc


def _load():
    path = Path(__file__).resolve().parent / "make_league.py"
    spec = importlib.util.spec_from_file_location("make_league", path)
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module
    spec.loader.exec_module(module)
    return module


ml = _load()


def test_races_are_complete_and_between_two_players():
    g = ml.make_games(50_000, 400, seed=3)
    assert all(a.shape == (50_000,) for a in (g.idx_a, g.idx_b, g.games_a, g.games_b, g.age_days))
    assert np.all(g.idx_a != g.idx_b)
    assert np.all(np.maximum(g.games_a, g.games_b) == 5)
    assert np.all(np.minimum(g.games_a, g.games_b) < 5)
    cross = np.mean(g.division[g.idx_a] != g.division[g.idx_b])
    assert cross == pytest.approx(ml.CROSS_SHARE, abs=0.005)
    assert g.strengths.shape == (400,) and set(np.unique(g.division)) == {0, 1, 2, 3}
    assert np.all(g.age_days >= 0) and np.all(g.age_days % 7 == 0)


def test_same_seed_same_games_other_seed_other_games():
    one, two, other = ml.make_games(1000, 50, 7), ml.make_games(1000, 50, 7), ml.make_games(1000, 50, 8)
    assert all(np.array_equal(x, y) for x, y in zip(one, two))
    assert not np.array_equal(one.games_a, other.games_a)


def test_simulated_race_matches_the_textbook_value():
    # S. Ross, A First Course in Probability, problem 4.72: p = 0.6, first to 4 -> 0.7102.
    a, b = ml.simulate_races(np.random.default_rng(0), np.full(200_000, 0.6), race=4)
    assert np.mean(a == 4) == pytest.approx(0.7102, abs=0.004)  # 4 SE of 200k draws


def test_race_wins_follow_the_incomplete_beta_formula():
    # docs/model.md section 3 / docs/checks.md section 4: P(A wins a race to 5) = I_p(5, 5).
    g = ml.make_games(200_000, 200, seed=5)
    p = 1 / (1 + np.exp(g.strengths[g.idx_b] - g.strengths[g.idx_a]))
    expected = betainc(5, 5, p)
    won = (g.games_a == 5).astype(float)
    se = np.sqrt(np.sum(expected * (1 - expected))) / len(p)
    assert abs(won.mean() - expected.mean()) < 4 * se


def test_a_million_matches_take_seconds_not_minutes():
    start = time.perf_counter()
    ml.make_games(1_000_000, 5_000, seed=1)
    assert time.perf_counter() - start < 10  # measured 0.25 s on the 2-core CI machine


def test_workbook_is_a_plain_league_workbook(tmp_path):
    path = tmp_path / "league.xlsx"
    games = ml.make_league_workbook(path, 2_000, 80, seed=2)
    wb = load_workbook(path)
    assert wb.sheetnames == ["Results", "Players", "Settings"]
    rows = list(wb["Results"].iter_rows(values_only=True))
    assert list(rows[0]) == ["Date", "Division", "Player A", "Player B", "Games A", "Games B", "Event", "Note"]
    assert len(rows) == 2_001
    assert all(isinstance(r[0], dt.datetime) for r in rows[1:])
    assert [r[0] for r in rows[1:]] == sorted(r[0] for r in rows[1:])
    assert max(r[0] for r in rows[1:]).date() <= ml.REFERENCE_DATE
    # The returned arrays are the sheet's rows in order.
    names = [r[0] for r in wb["Players"].iter_rows(min_row=2, values_only=True)]
    assert len(names) == len(set(names)) == 80
    assert [r[2] for r in rows[1:6]] == [names[i] for i in games.idx_a[:5]]
    assert [r[4] for r in rows[1:6]] == games.games_a[:5].tolist()
    assert dict(wb["Settings"].iter_rows(min_row=2, values_only=True))["League name"]


def test_names_stay_unique_past_the_name_lists():
    n = len(ml.FIRST) * len(ml.STEMS) * len(ml.ENDINGS) + 50
    assert len({ml.player_name(i) for i in range(n)}) == n
