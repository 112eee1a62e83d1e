"""The walk forward: what it predicts from, how it scores, and whether its chances are calibrated."""
import datetime as dt
import math
import threading

import numpy as np
import pytest
from scipy.special import expit

from secretary.errors import Cancelled
from secretary.model.evaluate import (Walk, calibration_chi_square, calibration_table, evaluate, prepare,
                                      training_pairs)
from secretary.model.league import fit_league
from secretary.model.records import Player, Result, Settings
from secretary.model.scale import points_per_logodds, to_strength
from tests.bench.make_league import simulate_races

D0 = dt.date(2025, 9, 1)  # a Monday


def synthetic_league(seed=0, n_players=40, weeks=30, spread=0.8, race=5, drift=0.0):
    """Weekly rounds: everyone plays one race per week; games won with sigmoid(r_a - r_b).

    Returns the results and the true strengths (log-odds) at the start; with
    ``drift`` the strengths take a Gaussian random-walk step of that SD each week.
    """
    rng = np.random.default_rng(seed)
    true = rng.normal(0.0, spread, n_players)
    start = true.copy()
    names = [f"Player {k:02d}" for k in range(n_players)]
    out = []
    for w in range(weeks):
        a, b = rng.permutation(n_players).reshape(-1, 2).T
        games_a, games_b = simulate_races(rng, expit(true[a] - true[b]), race)
        days = 7 * w + rng.integers(0, 3, len(a))
        out += [Result(D0 + dt.timedelta(days=int(d)), names[i], names[j], int(x), int(y))
                for i, j, x, y, d in zip(a, b, games_a, games_b, days)]
        true = true + rng.normal(0.0, drift, n_players)
    return out, start


def test_each_step_is_predicted_by_a_fit_of_the_results_before_it():
    results, _ = synthetic_league(seed=1, n_players=12, weeks=6)
    settings = Settings(half_life_days=30.0, skill_spread=150.0)
    ev = evaluate(results, settings)
    cut = min(r.date for r in results) + dt.timedelta(days=35)  # weeks count from the first result: the sixth
    before = [r for r in results if r.date < cut]
    fit = fit_league(before, settings, with_uncertainty=False)  # ages from the newest result before the week
    for k, res in enumerate(results):
        if res.date >= cut:
            expected = expit(fit.r[fit.index(res.player_a)] - fit.r[fit.index(res.player_b)])
            assert ev.p[k] == pytest.approx(expected, abs=1e-6)


def test_scores_are_the_per_game_formulas():
    results, _ = synthetic_league(seed=2, n_players=10, weeks=5)
    ev = evaluate(results)
    done = ~np.isnan(ev.p)
    ga = np.array([r.games_a for r in results], float)[done]
    gb = np.array([r.games_b for r in results], float)[done]
    p = ev.p[done]
    # Each game is one prediction: games_a * -log p + games_b * -log(1 - p), over all games.
    assert ev.log_loss == pytest.approx(float((-ga @ np.log(p) - gb @ np.log(1 - p)) / (ga + gb).sum()), rel=1e-12)
    assert ev.brier == pytest.approx(float((ga @ (1 - p) ** 2 + gb @ p**2) / (ga + gb).sum()), rel=1e-12)
    assert ev.games == (ga + gb).sum() and ev.matches == done.sum() == 20  # weeks 2-5, 5 matches each
    assert ev.steps == 4
    # The first week has no history: nothing predicted.
    assert np.isnan(ev.p[:5]).all()


def test_a_planted_future_game_cannot_change_the_week_it_is_in():
    results, _ = synthetic_league(seed=3, n_players=16, weeks=10)
    ev = evaluate(results)
    start = min(r.date for r in results) + dt.timedelta(days=7 * 6)  # the seventh week
    # An extreme result inside the predicted week and one later, both between players of that week.
    in_week = next(r for r in results if start <= r.date < start + dt.timedelta(days=7))
    planted = [Result(start + dt.timedelta(days=1), in_week.player_b, in_week.player_a, 40, 0),
               Result(start + dt.timedelta(days=20), in_week.player_b, in_week.player_a, 40, 0)]
    ev2 = evaluate(results + planted)
    upto = [k for k, r in enumerate(results) if r.date < start + dt.timedelta(days=7)]
    assert np.array_equal(ev.p[upto], ev2.p[upto], equal_nan=True)
    # ...while the weeks after it do see the planted game (the test could fail).
    later = [k for k, r in enumerate(results) if r.date >= start + dt.timedelta(days=7)
             and {r.player_a, r.player_b} & {in_week.player_a, in_week.player_b}]
    assert later and not np.allclose(ev.p[later], ev2.p[later])


def test_input_order_and_void_rows_are_respected():
    results, _ = synthetic_league(seed=4, n_players=10, weeks=4)
    shuffled = list(reversed(results))
    void = Result(D0 + dt.timedelta(days=8), results[0].player_a, results[0].player_b, 9, 0, void=True)
    ev = evaluate(results)
    ev2 = evaluate(shuffled + [void])
    # Same-day rows change order, so sums may differ in the last bits only.
    assert np.allclose(ev.p[::-1], ev2.p[:-1], equal_nan=True, rtol=0, atol=1e-9)
    assert np.isnan(ev2.p[-1]) and ev2.log_loss == pytest.approx(ev.log_loss, abs=1e-9)


def test_a_newcomer_is_predicted_at_their_starting_rating():
    results, _ = synthetic_league(seed=5, n_players=10, weeks=3)
    late = Result(min(r.date for r in results) + dt.timedelta(days=15), "New Face", results[0].player_a, 3, 5)
    settings = Settings()
    plain = evaluate(results + [late], settings)
    with_start = evaluate(results + [late], settings, players=[Player("New Face", starting=1700.0)])
    fit = fit_league(results[:10], settings, with_uncertainty=False)
    r_b = fit.r[fit.index(late.player_b)]
    assert plain.p[-1] == pytest.approx(expit(0.0 - r_b), abs=1e-6)  # the centre: prior mean 1500
    assert with_start.p[-1] == pytest.approx(expit(to_strength(1700.0) - r_b), abs=1e-6)
    assert plain.uncertain[-1] and with_start.uncertain[-1]


def test_step_length_is_an_option():
    results, _ = synthetic_league(seed=6, n_players=10, weeks=8)
    weekly, fortnightly = evaluate(results), evaluate(results, step_days=14)
    assert weekly.steps == 7 and fortnightly.steps == 3
    assert prepare(results, step_days=14).step_days == 14
    with pytest.raises(ValueError):
        prepare(results, step_days=0)


def test_training_pairs_weights_share_one_factor():
    results, _ = synthetic_league(seed=7, n_players=8, weeks=4)
    walk = prepare(results)
    stop = int(walk.bounds[3])
    pairs = training_pairs(walk, stop, 14.0)
    newest = walk.day[stop - 1]
    # A game dated d days before the newest counts 0.5 ** (d / 14).
    w = 0.5 ** ((newest - walk.day[:stop]) / 14.0)
    assert pairs.total.sum() == pytest.approx(float(w @ (walk.games_a[:stop] + walk.games_b[:stop])))
    assert isinstance(walk, Walk) and pairs.n_players == 8


def test_cancel_stops_the_walk():
    results, _ = synthetic_league(seed=8, n_players=10, weeks=5)
    flag = threading.Event()
    flag.set()
    with pytest.raises(Cancelled):
        evaluate(results, cancel=flag)


def test_few_games_table_counts_only_uncertain_predictions():
    results, _ = synthetic_league(seed=9, n_players=20, weeks=12)
    ev = evaluate(results, Settings(few_games=20.0))
    ga = np.array([r.games_a + r.games_b for r in results], float)
    assert ev.few_games == pytest.approx(float(ga[ev.uncertain].sum()))
    assert sum(b.games for b in ev.few_calibration) == pytest.approx(ev.few_games)
    assert sum(b.games for b in ev.calibration) == pytest.approx(ev.games)
    assert 0 < ev.few_games < ev.games  # early weeks are uncertain, later ones are not


def test_calibration_on_a_league_with_known_skills():
    spread = 0.8  # log-odds: the prior is told the truth
    results, _ = synthetic_league(seed=10, n_players=40, weeks=40, spread=spread)
    settings = Settings(half_life_days=0.0, skill_spread=spread * points_per_logodds(400.0))
    ev = evaluate(results, settings)
    stat, dof, p_value = calibration_chi_square(ev.calibration)
    # Predicted chances match observed frequencies band by band (chi-square test at 1 %).
    assert dof >= 7 and p_value > 0.01, (stat, dof, ev.calibration)
    # A deliberately miscalibrated forecast (too confident) fails the same test.
    done = ~np.isnan(ev.p)
    ga = np.array([r.games_a for r in results], float)[done]
    gb = np.array([r.games_b for r in results], float)[done]
    bold = expit(2.5 * np.log(ev.p[done] / (1 - ev.p[done])))
    assert calibration_chi_square(calibration_table(bold, ga, gb))[2] < 0.01


@pytest.mark.slow
@pytest.mark.realdata
def test_real_tennis_walk_beats_a_coin_toss():
    from tests.realdata import tennis

    import threadpoolctl  # a dependency of the package (secretary/threads.py)

    results = tennis()
    # One BLAS thread: on a busy shared machine threaded small solves spin and time the machine, not the walk.
    with threadpoolctl.threadpool_limits(1):
        ev = evaluate(results)
    assert ev.steps >= 45 and ev.matches > 25_000
    assert ev.log_loss < math.log(2) - 0.02  # clearly better than a coin toss


def test_calibration_does_not_depend_on_which_side_is_listed_first():
    rng = np.random.default_rng(12)
    p = rng.uniform(0.02, 0.98, 500)
    ga, gb = rng.integers(0, 6, 500).astype(float), rng.integers(0, 6, 500).astype(float)
    table, swapped = calibration_table(p, ga, gb), calibration_table(1 - p, gb, ga)
    assert [(b.low, b.high, b.games) for b in table] == [(b.low, b.high, b.games) for b in swapped]
    assert np.allclose([b.observed for b in table], [b.observed for b in swapped], equal_nan=True)
    assert table[0].low == 0.5 and table[-1].high == 1.0 and sum(b.games for b in table) == (ga + gb).sum()
    # A band's figures by their definition: the favourite's mean chance and share of games won.
    fav = np.maximum(p, 1 - p)
    inside = (fav >= 0.6) & (fav < 0.65)
    won = np.where(p >= 0.5, ga, gb)[inside]
    band = next(b for b in table if b.low == pytest.approx(0.6))
    assert band.observed == pytest.approx(won.sum() / (ga + gb)[inside].sum())
    assert band.predicted == pytest.approx((fav[inside] * (ga + gb)[inside]).sum() / (ga + gb)[inside].sum())
