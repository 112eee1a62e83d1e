"""The ± approximation for big leagues, measured against the exact Laplace value."""
import numpy as np
import pytest
from scipy.special import expit

from secretary.model import uncertainty
from secretary.model.fit import LaplacianPattern, fit_map, pair_curvature
from secretary.model.pairs import aggregate


def divided_league(seed, n, m, groups, cross):
    rng = np.random.default_rng(seed)
    group = rng.integers(0, groups, n)
    true = rng.normal(0, 1, n) + 0.4 * group
    members = [np.flatnonzero(group == g) for g in range(groups)]
    a = rng.integers(0, n, m)
    inside = rng.random(m) > cross
    b = np.where(inside, 0, rng.integers(0, n, m))
    for k in np.flatnonzero(inside):
        b[k] = rng.choice(members[group[a[k]]])
    keep = a != b
    a, b = a[keep], b[keep]
    ga = rng.binomial(5, expit(true[a] - true[b]))
    return aggregate(a, b, ga, 5 - ga, n), group


@pytest.mark.parametrize("groups, cross", [(4, 0.05), (8, 0.01), (1, 0.0)])
def test_approximation_is_within_five_percent_of_exact_on_mid_size_leagues(groups, cross):
    pairs, group = divided_league(groups, 1500, 15000, groups, cross)
    s = 1.0
    r = fit_map(pairs, np.zeros(1500), s).r
    h = pair_curvature(pairs, r)
    exact = uncertainty.exact_variance(LaplacianPattern(pairs).matrix(h, s))
    approx = uncertainty.approximate_variance(pairs, h, s, group)
    rel = np.abs(np.sqrt(approx / exact) - 1)
    assert np.median(rel) <= 0.05
    assert np.quantile(rel, 0.9) <= 0.10


def test_exact_path_is_used_for_small_leagues():
    pairs, group = divided_league(0, 50, 400, 2, 0.1)
    r = fit_map(pairs, np.zeros(50), 1.0).r
    var = uncertainty.strength_variance(pairs, r, 1.0, group)
    H = LaplacianPattern(pairs).matrix(pair_curvature(pairs, r), 1.0).toarray()
    assert np.allclose(var, np.diag(np.linalg.inv(H)), rtol=1e-10)


@pytest.mark.realdata
def test_approximation_on_real_tennis_results_with_tiers_as_divisions():
    # Real data (JeffSackmann/tennis_atp, 2019, ~2,950 players): the exact value is still affordable here.
    from secretary.model.league import fit_league
    from secretary.model.records import Settings
    from tests import realdata

    fit = fit_league(realdata.tennis(), Settings(), with_uncertainty=False)
    h = pair_curvature(fit.pairs, fit.r)
    exact = uncertainty.exact_variance(LaplacianPattern(fit.pairs).matrix(h, fit.prior_sd))
    approx = uncertainty.approximate_variance(fit.pairs, h, fit.prior_sd, fit.group)
    rel = np.abs(np.sqrt(approx / exact) - 1)
    assert np.median(rel) <= 0.05
    assert rel.max() <= 0.10
