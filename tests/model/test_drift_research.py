"""The drift research bench (tests/bench/levels_drift.py): its fit against the shipped one, its Hessian, its walk."""
import datetime as dt

import numpy as np
import pytest
from scipy.special import expit

from secretary.model.evaluate import evaluate
from secretary.model.fit import LaplacianPattern, Levels, fit_map
from secretary.model.league import fit_league
from secretary.model.records import Result, Settings
from secretary.model.scale import points_per_logodds
from secretary.model.walkforward import Homes, prepare, training_pairs
from tests.bench import levels_drift as drift
from tests.bench.demo_league import demo_league
from tests.bench.levels_mix import score

SETTINGS = Settings()  # Skill spread 175, Half-life 480, Division spread 300


@pytest.fixture(scope="module")
def demo():
    results, players = demo_league()
    return results, players, prepare(results, players=players)


def step_fit(walk, stop: int, model: drift.Drift, gtol: float = 1e-12):
    """The drift MAP on the first ``stop`` matches: (blocks, z, players seen, homes)."""
    ppl = points_per_logodds(SETTINGS.scale)
    blocks = drift.make_blocks(walk, model.block_days)
    n, nb, home = walk.seen(stop), blocks.seen(stop), Homes(walk).at(stop)
    mu, level_mean = drift.prior_means(walk, SETTINGS), walk.starting_level / ppl
    prior = drift.make_prior(blocks, nb, home, mu[:n], model.s, model.w, level_mean, model.tau)
    start = np.concatenate([drift.warm_start(blocks, nb, np.zeros(0), home, mu, level_mean), level_mean])
    z = drift.fit_drift(drift.block_pairs(walk, blocks, stop, model.half_life), prior, blocks, start, gtol)
    return blocks, z, n, home


def shipped_fit(walk, stop: int, home):
    ppl = points_per_logodds(SETTINGS.scale)
    pairs = training_pairs(walk, stop, SETTINGS.half_life_days)
    levels = Levels(home, walk.starting_level / ppl, SETTINGS.division_spread / ppl)
    return fit_map(pairs, drift.prior_means(walk, SETTINGS)[:pairs.n_players], SETTINGS.skill_spread / ppl,
                   levels=levels, gtol=1e-12)


def test_one_block_per_player_numbers_blocks_as_players(demo):
    _, _, walk = demo
    blocks = drift.make_blocks(walk, None)
    for seat, players in zip(blocks.seats, (walk.a, walk.b, walk.pa, walk.pb)):
        assert np.array_equal(seat, players)
    assert np.array_equal(blocks.player, np.arange(len(walk.names))) and np.all(blocks.prev == -1)


def test_without_drift_the_map_is_the_shipped_fit_and_fit_league(demo):
    results, players, walk = demo
    stop = int(walk.bounds[50])
    _, z, n, home = step_fit(walk, stop, drift.Drift.of(SETTINGS, 0.0, 28))
    shipped = shipped_fit(walk, stop, home)
    assert np.max(np.abs(z[:n] - shipped.r)) < 1e-6 and np.max(np.abs(z[n:] - shipped.level)) < 1e-6
    cut = walk.first_date + dt.timedelta(days=int(walk.day[stop]))
    league = fit_league([r for r in results if r.date < cut], SETTINGS, players=players, with_uncertainty=False)
    theirs = np.array([league.r[league.index(name)] for name in walk.names[:n]])
    assert np.max(np.abs(z[:n] - theirs)) < 1e-6


def test_a_tiny_drift_gives_every_block_the_shipped_strength(demo):
    _, _, walk = demo
    stop = int(walk.bounds[50])
    blocks, z, n, home = step_fit(walk, stop, drift.Drift.of(SETTINGS, 0.1, 28), gtol=1e-8)
    nb = blocks.seen(stop)
    assert nb > 2 * n  # most players have several blocks
    shipped = shipped_fit(walk, stop, home)
    assert np.max(np.abs(z[:nb] - shipped.r[blocks.player[:nb]])) < 1e-6


def test_gradient_and_hessian_against_finite_differences(demo):
    _, _, walk = demo
    stop = int(walk.bounds[20])
    model = drift.Drift.of(SETTINGS, 100.0, 28)
    blocks, z, n, home = step_fit(walk, stop, model)
    ppl = points_per_logodds(SETTINGS.scale)
    prior = drift.make_prior(blocks, blocks.seen(stop), home, drift.prior_means(walk, SETTINGS)[:n], model.s,
                             model.w, walk.starting_level / ppl, model.tau)
    pairs = drift.block_pairs(walk, blocks, stop, model.half_life)
    x = z + np.random.default_rng(3).normal(0, 0.3, len(z))
    H = drift.hessian(LaplacianPattern(pairs), drift.likelihood(pairs, x[:pairs.n_players])[1], prior.Q).toarray()
    eps, numeric, slope = 1e-5, np.empty_like(H), np.empty(len(x))
    for k in range(len(x)):
        e = np.zeros(len(x))
        e[k] = eps
        numeric[:, k] = (drift.gradient(pairs, prior, x + e)[0] - drift.gradient(pairs, prior, x - e)[0]) / (2 * eps)
        slope[k] = (drift.objective(pairs, prior, x + e) - drift.objective(pairs, prior, x - e)) / (2 * eps)
    assert np.max(np.abs(numeric - H)) < 1e-6 * np.max(np.abs(H))
    assert np.max(np.abs(slope - drift.gradient(pairs, prior, x)[0])) < 1e-5
    assert np.count_nonzero(prior.Q.toarray()[:blocks.seen(stop), :blocks.seen(stop)] - np.diag(np.diag(
        prior.Q.toarray()[:blocks.seen(stop), :blocks.seen(stop)]))) > 0  # the walk's links are in it


def test_without_drift_the_walk_is_evaluate(demo):
    _, _, walk = demo
    ev = evaluate(walk, SETTINGS)
    got = score(walk, drift.walk_drift(walk, SETTINGS, drift.Drift.of(SETTINGS, 0.0, 28)))
    want = (ev.log_loss, ev.predictive.log_loss, ev.cross.log_loss, ev.predictive_cross.log_loss, ev.cross.count)
    assert np.allclose(got, want, rtol=0, atol=1e-7)


def test_the_latest_block_follows_a_rising_player():
    """One player wins ever more often over a year: with drift their latest block sits above their static strength."""
    rng = np.random.default_rng(5)
    start, rows = dt.date(2025, 1, 6), []
    for week in range(52):
        skill = -1.0 + 2.0 * week / 51
        for rival in ("Ash", "Birch", "Cedar"):
            won = int(rng.binomial(5, expit(skill)))
            rows.append(Result(start + dt.timedelta(days=7 * week), "Rowan", rival, won, 5 - won, "Town"))
            rows.append(Result(start + dt.timedelta(days=7 * week), rival, "Elm", 3, 2, "Town"))
    walk = prepare(rows)
    static = step_fit(walk, len(rows), drift.Drift.of(SETTINGS, 0.0, 28))[1][0]
    blocks, z, n, _ = step_fit(walk, len(rows), drift.Drift.of(SETTINGS, 200.0, 28))
    rising = z[blocks.latest(len(rows), n)[0]]
    assert rising > static + 0.5  # about the last month's level, where the static fit sees the year's average
