"""Fitting a whole league from records: weights, priors, order, recovery, failure."""
import datetime as dt
import random

import numpy as np
import pytest
from scipy.special import expit

from secretary.errors import FitFailed
from secretary.model import fit as fit_module
from secretary.model.league import fit_league
from secretary.model.pairs import aggregate, age_weights
from secretary.model.records import Player, Result, Settings
from secretary.model.scale import to_points, to_strength

D0 = dt.date(2026, 1, 5)


def synthetic_results(seed=0, n=60, weeks=30, race=5):
    rng = np.random.default_rng(seed)
    true = rng.normal(0, 1.0, n)
    names = [f"P{k:02d}" for k in range(n)]
    out = []
    for w in range(weeks):
        order = rng.permutation(n)
        for a, b in order.reshape(-1, 2):
            p = expit(true[a] - true[b])
            wins = rng.random(2 * race - 1) < p
            ga = gb = 0
            for won in wins:
                ga, gb = ga + won, gb + (not won)
                if ga == race or gb == race:
                    break
            out.append(Result(D0 + dt.timedelta(days=7 * w), names[a], names[b], int(ga), int(gb)))
    return out, dict(zip(names, true))


def test_recovers_known_skills_with_honest_uncertainty():
    results, true = synthetic_results()
    settings = Settings(half_life_days=0, skill_spread=400 / np.log(10))  # prior sd = 1 log-odds = the truth's spread
    fit = fit_league(results, settings)
    est = np.array([fit.r[fit.index(n)] for n in true])
    truth = np.array(list(true.values()))
    assert np.corrcoef(est, truth)[0, 1] > 0.95
    z = (est - truth) / np.sqrt(fit.var[[fit.index(n) for n in true]])
    assert 0.5 < np.mean(np.abs(z) < 1) < 0.85  # about 68 % within one SD
    assert np.all(fit.sds > 0)


def test_same_ratings_whatever_the_row_order():
    results, _ = synthetic_results(1, n=20, weeks=10)
    shuffled = results[:]
    random.Random(7).shuffle(shuffled)
    a, b = fit_league(results), fit_league(shuffled)
    for name in a.names:
        assert a.rating(name) == pytest.approx(b.rating(name), abs=1e-9)
        assert a.sd(name) == pytest.approx(b.sd(name), abs=1e-9)


def test_ages_are_measured_from_the_newest_result_not_the_clock():
    results, _ = synthetic_results(2, n=10, weeks=6)
    fit = fit_league(results, Settings(half_life_days=14))
    newest = max(r.date for r in results)
    assert fit.reference_date == newest
    # Shifting every date by a year changes nothing: only relative ages matter.
    moved = [Result(r.date + dt.timedelta(days=365), r.player_a, r.player_b, r.games_a, r.games_b) for r in results]
    fit2 = fit_league(moved, Settings(half_life_days=14))
    assert np.allclose(fit.r, fit2.r, atol=1e-12)


def test_age_weights_halve_at_the_half_life():
    assert age_weights([0, 30, 60], 30) == pytest.approx([1, 0.5, 0.25])
    assert age_weights([0, 1000], 0) == pytest.approx([1, 1])


def test_starting_rating_sets_the_prior_mean_and_players_without_games_sit_there():
    results, _ = synthetic_results(3, n=10, weeks=3)
    players = [Player("Transfer", starting=1700.0), Player("Newcomer")]
    fit = fit_league(results, Settings(), players=players)
    assert fit.rating("Transfer") == pytest.approx(1700.0)
    assert fit.rating("Newcomer") == pytest.approx(1500.0)
    assert fit.sd("Newcomer") == pytest.approx(Settings().skill_spread)
    assert list(fit.diagnosis.no_games) == [fit.index("Transfer"), fit.index("Newcomer")]


def test_void_results_are_not_rated():
    results, _ = synthetic_results(4, n=6, weeks=2)
    void = Result(D0, results[0].player_a, results[0].player_b, 9, 0, void=True)
    assert np.allclose(fit_league(results).r, fit_league(results + [void]).r)


def test_display_scale_is_applied_only_at_the_edges():
    results, _ = synthetic_results(5, n=8, weeks=4)
    base = fit_league(results, Settings(skill_spread=200))
    wide = fit_league(results, Settings(centre=1000, scale=200, skill_spread=100))
    # Same prior in log-odds (200/400 = 100/200), so the same strengths; only the points differ.
    assert np.allclose(base.r, wide.r, atol=1e-12)
    assert np.allclose(wide.ratings, 1000 + (base.ratings - 1500) / 2)
    assert to_strength(to_points(0.7)) == pytest.approx(0.7)


def test_a_fit_that_cannot_converge_raises_instead_of_returning_a_half_answer(monkeypatch):
    results, _ = synthetic_results(6, n=8, weeks=4)
    with pytest.raises(FitFailed, match="did not settle"):
        fit_module.fit_map(fit_league(results).pairs, np.zeros(8), 1.0, max_iter=1, gtol=1e-15)


def test_divisions_come_from_players_sheet_else_most_played():
    r = [Result(D0, "Ann", "Bob", 5, 3, division="Premier"), Result(D0, "Ann", "Cy", 5, 1, division="Open night"),
         Result(D0, "Ann", "Bob", 5, 2, division="Premier")]
    fit = fit_league(r, players=[Player("Cy", division="Valley")])
    assert fit.division("Ann") == "Premier" and fit.division("Cy") == "Valley"


def test_large_league_uses_the_sparse_path_and_agrees_with_dense(monkeypatch):
    rng = np.random.default_rng(9)
    n, m = 400, 6000
    a = rng.integers(0, n, m)
    b = (a + rng.integers(1, n, m)) % n
    ga = rng.integers(0, 6, m)
    pairs = aggregate(a, b, ga, 5 - ga + (ga == 5) * 0, n)
    dense = fit_module.fit_map(pairs, np.zeros(n), 1.0).r
    monkeypatch.setattr(fit_module, "DENSE_LIMIT", 10)
    sparse = fit_module.fit_map(pairs, np.zeros(n), 1.0).r
    assert np.max(np.abs(dense - sparse)) < 1e-8


def test_an_empty_league_fits_to_nothing_without_an_error():
    fit = fit_league([])
    assert fit.names == () and len(fit.var) == 0 and fit.reference_date is None
