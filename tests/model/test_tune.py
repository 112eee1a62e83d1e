"""Tuning half-life and skill spread by walk-forward predictive log-loss: better or equal, progress, cancel, speed."""
import dataclasses
import datetime as dt
import threading

import pytest

from secretary.errors import Cancelled
from secretary.model.evaluate import evaluate, prepare
from secretary.model.records import Settings, TuneCheck
from secretary.model.scale import points_per_logodds
from secretary.model.tune import (CHECK_MOST_PLAYERS, CHECK_MOST_RESULTS, SEASON_DAYS, SUGGEST_GAIN, check_tuning,
                                  tune, tune_advice, tune_due)
from tests.model.test_evaluate import synthetic_league

SMALL = dict(half_lives=(0.0, 60.0, 240.0), spreads=(60.0, 120.0, 240.0), refine=6)


@pytest.fixture(scope="module")
def walk():
    results, _ = synthetic_league(seed=21, n_players=30, weeks=30, spread=0.6, drift=0.08)
    return prepare(results)


def test_tuning_scores_better_or_equal_and_reports_true_scores(walk):
    start = Settings(half_life_days=3000.0, skill_spread=900.0)  # a poor choice on purpose
    result = tune(walk, start, **SMALL)
    assert result.old_score == pytest.approx(evaluate(walk, start).predictive.log_loss, rel=1e-12)
    assert result.new_score == pytest.approx(evaluate(walk, result.settings).predictive.log_loss, rel=1e-12)
    assert result.new_score < result.old_score and result.improved
    assert result.new_score == min(t[-1] for t in result.tried)
    # Only the two tuned fields change.
    assert result.settings.replace(half_life_days=3000.0, skill_spread=900.0) == start


def test_the_defaults_are_never_made_worse(walk):
    result = tune(walk, Settings(), **SMALL)
    assert result.new_score <= result.old_score


def test_a_league_whose_players_change_prefers_ageing_and_a_spread_near_the_truth():
    results, _ = synthetic_league(seed=22, n_players=30, weeks=30, spread=0.6, drift=0.12)
    result = tune(results, Settings(), half_lives=(0.0, 30.0, 90.0, 270.0, 810.0),
                  spreads=(50.0, 100.0, 200.0, 400.0), refine=6)
    assert 0 < result.settings.half_life_days < 270  # players move 0.12 log-odds a week: old games mislead
    # True spread 0.6 log-odds (104 points), widening as players drift: well inside the grid's range.
    assert 0.4 * points_per_logodds() < result.settings.skill_spread < 1.5 * points_per_logodds()


def test_progress_counts_up_to_a_fixed_total(walk):
    seen = []
    tune(walk, Settings(), progress=lambda done, total: seen.append((done, total)), **SMALL)
    totals = {total for _, total in seen}
    assert len(totals) == 1
    total = totals.pop()
    assert total == 1 + 9 + 6
    dones = [done for done, _ in seen]
    assert dones == sorted(dones) and dones[0] == 1 and seen[-1] == (total, total)


def test_cancel_stops_tuning():
    results, _ = synthetic_league(seed=23, n_players=20, weeks=20)
    walk = prepare(results)
    flag = threading.Event()
    calls = []

    def progress(done, total):
        calls.append(done)
        if done == 3:
            flag.set()

    with pytest.raises(Cancelled):
        tune(walk, Settings(), progress=progress, cancel=flag, **SMALL)
    assert calls == [1, 2, 3]  # nothing scored after the flag was set
    flag.set()
    with pytest.raises(Cancelled):
        tune(walk, Settings(), cancel=flag)


@pytest.mark.slow
def test_tuning_the_demo_league_never_makes_the_score_worse():
    # How long it takes is measured by tests/bench/bench_tune.py, not here (no wall-clock limits in tests).
    from tests.bench.demo_league import demo_league

    results, players = demo_league()
    result = tune(results, Settings(), players=players)
    assert result.new_score <= result.old_score


def test_a_check_is_due_once_a_season_and_only_for_leagues_it_can_check_quickly():
    first, settings = dt.date(2024, 9, 5), Settings()
    assert not tune_due(first, first + dt.timedelta(days=SEASON_DAYS - 1), None)
    assert tune_due(first, first + dt.timedelta(days=SEASON_DAYS), None)
    done = TuneCheck(dt.date(2025, 6, 1), settings, 0.0, 520.0, 145.0)
    assert not tune_due(first, dt.date(2025, 6, 1) + dt.timedelta(days=SEASON_DAYS - 1), done)
    assert tune_due(first, dt.date(2025, 6, 1) + dt.timedelta(days=SEASON_DAYS), done)
    late = first + dt.timedelta(days=2 * SEASON_DAYS)
    assert tune_due(first, late, None, players=CHECK_MOST_PLAYERS, results=CHECK_MOST_RESULTS)  # at the limits
    assert not tune_due(first, late, None, players=CHECK_MOST_PLAYERS + 1)
    assert not tune_due(first, late, None, results=CHECK_MOST_RESULTS + 1)
    assert not tune_due(None, None, None)


def test_the_check_reports_the_gain_of_its_own_tune_and_the_advice_needs_a_real_gain():
    results, _ = synthetic_league(seed=21, n_players=30, weeks=30, spread=0.6, drift=0.08)
    poor = Settings(skill_spread=40.0)
    check = check_tuning(results, poor, dt.date(2026, 4, 1))
    assert check.checked_through == dt.date(2026, 4, 1) and check.settings == poor
    found = poor.replace(half_life_days=check.half_life_days, skill_spread=check.skill_spread)
    # The gain is the difference of two walks with the check's four-week steps (evaluated again here).
    gain = evaluate(results, poor, step_days=28).score - evaluate(results, found, step_days=28).score
    assert check.gain == pytest.approx(gain, abs=1e-12)
    assert check.gain > SUGGEST_GAIN
    advice = tune_advice(check, poor, "league.xlsx")
    assert f"{check.skill_spread:g}" in advice and 'secretary tune "league.xlsx" --apply' in advice
    assert tune_advice(check, poor.replace(usual_race=4)) == ""  # the settings changed since the check
    assert tune_advice(dataclasses.replace(check, gain=SUGGEST_GAIN / 2), poor) == ""
    assert tune_advice(None, poor) == ""
