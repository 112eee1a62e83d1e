"""Predictive chances (averaged over the posterior of the strength difference) against outside computations."""
import itertools

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.integrate import quad
from scipy.special import betainc, expit

from secretary.model.races import (fair_race_for_chance, fair_race_predictive, predictive_game_chance,
                                   predictive_race_chance, race_chance)
from secretary.model.uncertainty import contrast_variance, difference_coefficients


def chance_by_enumeration(p: float, a: int, b: int) -> float:
    """Every sequence of a + b - 1 games (enough to settle the race), played out: A wins if A reaches a first."""
    total = 0.0
    for seq in itertools.product((True, False), repeat=a + b - 1):
        won = seq.count(True)
        if won >= a:  # with a + b - 1 games exactly one side has reached its target
            total += p**won * (1 - p) ** (len(seq) - won)
    return total


@pytest.mark.parametrize("p", [0.1, 0.35, 0.5, 0.6, 0.83])
def test_race_chance_against_enumerated_game_sequences(p):
    # Source: brute-force enumeration of every game sequence (itertools.product), independent of the beta function.
    for a in range(1, 6):
        for b in range(1, 6):
            assert race_chance(p, a, b) == pytest.approx(chance_by_enumeration(p, a, b), abs=1e-12)


def test_ross_values_at_zero_uncertainty():
    # Source: S. Ross, A First Course in Probability, problem 4.72: p = 0.6, first to 4 -> 0.7102 (computed 0.710208).
    d = np.log(0.6 / 0.4)
    assert predictive_race_chance(d, 0.0, 4, 4) == pytest.approx(0.710208, abs=5e-7)
    # Source: the same problem: first to 2 -> 0.648.
    assert predictive_race_chance(d, 0.0, 2, 2) == pytest.approx(0.648, abs=1e-12)


def test_zero_uncertainty_is_the_incomplete_beta_function():
    # Source: scipy.special.betainc(a, b, p), the regularised incomplete beta function.
    rng = np.random.default_rng(3)
    d = rng.normal(0, 1.5, 200)
    a, b = rng.integers(1, 12, 200), rng.integers(1, 12, 200)
    assert np.abs(predictive_race_chance(d, 0.0, a, b) - betainc(a, b, expit(d))).max() < 1e-12
    assert np.abs(predictive_game_chance(d, 0.0) - expit(d)).max() < 1e-12


@pytest.mark.parametrize("mean, sd, a, b", [(1.15, 0.86, 5, 5), (0.0, 0.8, 5, 5), (-0.4, 1.2, 2, 7),
                                            (2.0, 0.3, 9, 3), (0.7, 1.0, 1, 1)])
def test_against_a_monte_carlo_average(mean, sd, a, b):
    # Source: Monte Carlo, the plain average of I_p(a, b) over 10^6 numpy draws of the difference (SE < 5e-4).
    draws = np.random.default_rng(11).normal(mean, sd, 1_000_000)
    mc = betainc(a, b, expit(draws)).mean()
    assert predictive_race_chance(mean, sd**2, a, b) == pytest.approx(mc, abs=1e-3)
    if a == b == 1:
        assert predictive_game_chance(mean, sd**2) == pytest.approx(expit(draws).mean(), abs=1e-3)


def test_the_issue_example_newcomer_gap_200():
    # A 200-point gap, difference ± 150 points (a newcomer ± 145 against a regular ± 40), race to 5.
    ppl = 400 / np.log(10)
    point = race_chance(expit(200 / ppl), 5, 5)
    shown = predictive_race_chance(200 / ppl, (150 / ppl) ** 2, 5, 5)
    assert point == pytest.approx(0.958, abs=5e-4) and shown == pytest.approx(0.855, abs=5e-3)


def test_quadrature_against_adaptive_integration():
    # Source: scipy.integrate.quad of I_sigmoid(d)(a, b) times the normal density (adaptive, to 1e-12).
    worst = 0.0
    for a, b in ((1, 1), (2, 2), (5, 5), (9, 9), (9, 1), (20, 20), (50, 50)):
        for mean in (-2.0, 0.0, 0.5, 1.5):
            for sd in (0.05, 0.5, 1.0, 2.0, 3.0):
                f = lambda d: betainc(a, b, expit(d)) * np.exp(-0.5 * ((d - mean) / sd) ** 2) / (sd * np.sqrt(2 * np.pi))
                ref = quad(f, mean - 12 * sd, mean + 12 * sd, limit=1000, epsabs=1e-14, epsrel=1e-12, points=[mean])[0]
                worst = max(worst, abs(predictive_race_chance(mean, sd**2, a, b) - ref))
    assert worst < 5e-5  # measured 1.6e-5 over a finer grid (races up to 50, SD up to 3)


def test_spread_of_the_chance_by_monte_carlo():
    # Source: Monte Carlo standard deviation of I_p(5, 5) over 10^6 draws.
    draws = np.random.default_rng(5).normal(0.6, 0.5, 1_000_000)
    mc = betainc(5, 5, expit(draws))
    chance, sd = predictive_race_chance(0.6, 0.25, 5, 5, spread=True)
    assert chance == pytest.approx(mc.mean(), abs=1e-3) and sd == pytest.approx(mc.std(), abs=1e-3)


def test_predictive_fair_race_is_the_closest_to_even_by_search():
    for mean, var in ((0.0, 0.0), (0.9, 0.5), (-1.3, 0.1), (2.5, 1.0)):
        a, b = fair_race_predictive(mean, var, 9, 2)
        assert 2 <= min(a, b) and max(a, b) <= 9
        gaps = {(x, y): abs(predictive_race_chance(mean, var, x, y) - 0.5) for x in range(2, 10) for y in range(2, 10)}
        assert gaps[(a, b)] == pytest.approx(min(gaps.values()), abs=1e-12)
    assert fair_race_predictive(0.9, 0.0, 9, 1) == fair_race_for_chance(float(expit(0.9)), 9, 1)


def test_shortest_race_is_respected():
    assert min(fair_race_for_chance(0.97, 9, 1)) == 1
    assert min(fair_race_for_chance(0.97, 9, 2)) == 2
    with pytest.raises(ValueError):
        fair_race_for_chance(0.5, 3, 4)


def test_contrast_variance_against_the_dense_inverse():
    # Source: numpy.linalg.inv of the same SPD matrix.
    rng = np.random.default_rng(2)
    for n in (30, 1200):  # the dense and the sparse path
        m = sp.random(n, n, density=4 / n, random_state=rng, data_rvs=rng.random)
        lap = -(m + m.T)
        lap.setdiag(0)
        H = (lap - sp.diags(np.asarray(lap.sum(axis=1)).ravel()) + sp.eye(n) * 0.5).tocsr()
        a, b = rng.integers(0, n, 40), rng.integers(0, n, 40)
        inv = np.linalg.inv(H.toarray())
        expected = inv[a, a] + inv[b, b] - 2 * inv[a, b]
        got = contrast_variance(H, difference_coefficients(a, b, n))
        assert np.abs(got - expected).max() < 1e-10 * max(1.0, np.abs(expected).max())
