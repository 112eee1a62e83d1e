"""The cross-division loss breakdown (tests/bench/levels_where.py): its bins add back to the whole, and its
per-match features are what the walk saw."""
import numpy as np
import pytest
from scipy.special import expit

from secretary.model.evaluate import evaluate, prepare
from secretary.model.league import fit_league
from tests.bench.levels_where import (EXPERIENCE, CrossVariance, NewcomerOffset, breakdown, experience_bin, features,
                                      level_gap, match_loss, recent_form, walk_chances)
from tests.model.test_evaluate_levels import SETTINGS, tiered_league


def test_the_bins_add_back_to_the_whole():
    rng = np.random.default_rng(3)
    m = 200
    won, lost = rng.integers(0, 4, m).astype(float), rng.integers(0, 4, m).astype(float)
    won[lost + won == 0] = 1.0
    p0, p1 = rng.uniform(0.05, 0.95, m), rng.uniform(0.05, 0.95, m)
    loss0, loss1, games = match_loss(p0, won, lost), match_loss(p1, won, lost), won + lost
    labels = rng.choice(["a", "b", "c"], m)
    rows = breakdown(labels, loss0, loss1, games)
    assert [r[0] for r in rows] == ["a", "b", "c"]
    assert sum(r[1] for r in rows) == m and sum(r[2] for r in rows) == pytest.approx(games.sum())
    whole = (-(won @ np.log(p0) + lost @ np.log(1 - p0)) + (won @ np.log(p1) + lost @ np.log(1 - p1))) / games.sum()
    assert sum(r[5] for r in rows) == pytest.approx(whole, rel=1e-12)
    b = labels == "b"
    assert rows[1][3] == pytest.approx(-(won[b] @ np.log(p0[b]) + lost[b] @ np.log(1 - p0[b])) / games[b].sum())


def test_experience_bins_at_their_edges():
    bins = experience_bin([0.0, 0.01, 9.99, 10.0, 29.9, 30.0, 400.0])
    assert [EXPERIENCE[k] for k in bins] == ["0", "1-9", "1-9", "10-29", "10-29", "30+", "30+"]


def test_features_are_what_the_walk_saw():
    results = tiered_league(seed=2)
    walk = prepare(results)
    f = features(walk, SETTINGS.half_life_days)
    ev = evaluate(walk, SETTINGS)
    done = ~np.isnan(ev.p[walk.order])
    # The homes reproduce the walk's own cross-division flags.
    assert np.array_equal((f.home_a != f.home_b)[done], ev.cross_division[walk.order][done])
    # Newcomers: not in any match dated before the match's step (weeks here), and then no games.
    first = {}
    for k in range(len(walk.day)):
        for x in (walk.names[walk.a[k]], walk.names[walk.b[k]]):
            first.setdefault(x, walk.day[k])
    week = walk.day // 7
    new = np.array([first[walk.names[i]] // 7 == w for i, w in zip(walk.a, week)])
    assert np.array_equal(f.new_a[done], new[done]) and f.new_a[done].sum() >= 6
    assert np.all(f.games_a[done][f.new_a[done]] == 0)
    # Weighted games: a late match's player counted directly from the earlier results' half-life weights.
    k = int(np.flatnonzero(done & ~f.new_a)[-1])
    x, start = walk.a[k], walk.bounds[week[k]]
    earlier = np.arange(start)
    age = walk.day[start - 1] - walk.day[earlier]
    w = 0.5 ** (age / SETTINGS.half_life_days) * (walk.games_a[earlier] + walk.games_b[earlier])
    assert f.games_a[k] == pytest.approx(w[(walk.a[earlier] == x) | (walk.b[earlier] == x)].sum(), rel=1e-12)


def test_recording_the_levels_leaves_the_walk_unchanged():
    results = tiered_league(seed=2)
    walk = prepare(results)
    c = walk_chances(walk, SETTINGS)
    ev = evaluate(walk, SETTINGS)
    assert np.array_equal(c.point, ev.p[walk.order], equal_nan=True)
    assert np.array_equal(c.predictive, ev.p_predictive[walk.order], equal_nan=True)
    f = features(walk, SETTINGS.half_life_days)
    gap = level_gap(walk, f, c.levels)
    done = ~np.isnan(c.point)
    assert np.all(gap[done & ~c.cross] == 0)
    # The last step's gaps are the update's levels fitted on the results before it.
    start = int(walk.bounds[-2])
    before = [results[k] for k in walk.order[:start]]
    fit = fit_league(before, SETTINGS, with_uncertainty=False)
    level = dict(zip(fit.group_names, fit.level))
    homes = fit.homes()
    last = [k for k in range(start, len(walk.day)) if c.cross[k] and not (f.new_a[k] or f.new_b[k])]
    assert len(last) >= 2
    expected = [level[homes[walk.names[walk.a[k]]]] - level[homes[walk.names[walk.b[k]]]] for k in last]
    assert gap[last] == pytest.approx(expected, abs=1e-5) and min(np.abs(expected)) > 0.3


def test_newcomer_offset_design_and_estimate():
    results = tiered_league(seed=2)
    walk = prepare(results)
    f = features(walk, SETTINGS.half_life_days)
    k = int(np.argmax(f.new_a | f.new_b))  # the first step with a newcomer after step 0
    step = slice(int(walk.bounds[walk.day[k] // 7]), int(walk.bounds[walk.day[k] // 7 + 1]))
    X = NewcomerOffset.design(walk, step, walk.seen(step.start))
    expected = np.zeros_like(X)
    rows = np.arange(X.shape[0])
    np.add.at(expected, (rows[f.new_a[step]], f.home_a[step][f.new_a[step]]), 1.0)
    np.add.at(expected, (rows[f.new_b[step]], f.home_b[step][f.new_b[step]]), -1.0)
    assert np.array_equal(X, expected) and np.abs(X).sum() >= 2
    # The estimate is the MAP: planted offsets come back from many games, and the gradient vanishes.
    rng = np.random.default_rng(5)
    m, truth = 4000, np.array([-0.6, 0.3])
    X = np.zeros((m, 2))
    X[np.arange(m), rng.integers(0, 2, m)] = rng.choice([-1.0, 1.0], m)
    mean = rng.normal(0.0, 1.0, m)
    won = rng.binomial(3, expit(mean + X @ truth)).astype(float)
    off = NewcomerOffset(walk, SETTINGS)
    off.delta = np.zeros(2)
    off.rows = [(X, mean, won, 3.0 - won, np.zeros(m))]
    delta = off.estimate(0.0)
    assert delta == pytest.approx(truth, abs=0.1)
    p = expit(mean + X @ delta)
    grad = X.T @ (won - 3.0 * p) - delta / off.sd2
    assert np.max(np.abs(grad)) < 1e-6


def test_offset_at_zero_leaves_the_walk_unchanged():
    results = tiered_league(seed=2)
    walk = prepare(results)

    class Zero(NewcomerOffset):
        def estimate(self, today):
            return np.zeros_like(self.delta)

    shipped, zero = walk_chances(walk, SETTINGS), walk_chances(walk, SETTINGS, Zero(walk, SETTINGS))
    assert np.array_equal(shipped.predictive, zero.predictive, equal_nan=True)


def test_cross_variance_recovers_a_planted_variance():
    rng = np.random.default_rng(6)
    m, v = 20000, 0.8
    mean, var = rng.normal(0.0, 1.2, m), np.full(m, 0.1)
    won = rng.binomial(1, expit(mean + rng.normal(0.0, np.sqrt(var + v)))).astype(float)
    cv = CrossVariance(None, SETTINGS)
    cv.rows = [(mean, var, won, 1.0 - won, np.zeros(m))]
    assert cv.estimate(0.0) == pytest.approx(v, abs=0.25)
    calibrated = rng.binomial(1, expit(mean)).astype(float)  # the chances' own model: little or no extra
    cv.rows = [(mean, var, calibrated, 1.0 - calibrated, np.zeros(m))]
    assert cv.estimate(0.0) < 0.15


def test_recent_form_counts_the_window_before_the_step():
    results = tiered_league(seed=2)
    walk = prepare(results)
    p = np.full(len(walk.day), 0.5)
    form = recent_form(walk, p, window=21)
    k = len(walk.day) - 1
    start = int(walk.bounds[walk.day[k] // 7])
    past = np.flatnonzero((walk.day >= walk.day[start] - 21) & (np.arange(len(walk.day)) < start))
    x = walk.a[k]
    mine = past[(walk.a[past] == x) | (walk.b[past] == x)]
    surplus = np.where(walk.a[mine] == x, 1.0, -1.0) * (walk.games_a[mine] - walk.games_b[mine]) / 2
    assert len(mine) >= 2
    assert form[k, 0] == pytest.approx(surplus.sum() / (walk.games_a[mine] + walk.games_b[mine]).sum())
