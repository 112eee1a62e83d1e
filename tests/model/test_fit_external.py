"""The engine against published worked examples and general-purpose libraries (sources named beside each check)."""

import numpy as np
import pytest
from scipy.optimize import check_grad
from scipy.special import expit, log_expit

from secretary.model.fit import LaplacianPattern, Levels, fit_map, gradient, hessian, objective, pair_curvature
from secretary.model.pairs import aggregate
from secretary.model.scale import game_chance
from secretary.model.uncertainty import exact_variance

# Agresti, Categorical Data Analysis, 2nd ed. (2002), section 10.6, Table 10.11
# (also BradleyTerry2's data/baseball.csv): home, away, home wins, away wins.
BASEBALL = """Milwaukee,Detroit,4,3 Milwaukee,Toronto,4,2 Milwaukee,New York,4,3 Milwaukee,Boston,6,1
Milwaukee,Cleveland,4,2 Milwaukee,Baltimore,6,0 Detroit,Milwaukee,3,3 Detroit,Toronto,4,2
Detroit,New York,4,3 Detroit,Boston,6,0 Detroit,Cleveland,6,1 Detroit,Baltimore,4,3
Toronto,Milwaukee,2,5 Toronto,Detroit,4,3 Toronto,New York,2,4 Toronto,Boston,4,3
Toronto,Cleveland,4,2 Toronto,Baltimore,6,0 New York,Milwaukee,3,3 New York,Detroit,5,1
New York,Toronto,2,5 New York,Boston,4,3 New York,Cleveland,4,2 New York,Baltimore,6,1
Boston,Milwaukee,5,1 Boston,Detroit,2,5 Boston,Toronto,3,3 Boston,New York,4,2
Boston,Cleveland,5,2 Boston,Baltimore,6,0 Cleveland,Milwaukee,2,5 Cleveland,Detroit,3,3
Cleveland,Toronto,3,4 Cleveland,New York,4,3 Cleveland,Boston,4,2 Cleveland,Baltimore,2,4
Baltimore,Milwaukee,2,5 Baltimore,Detroit,1,5 Baltimore,Toronto,1,6 Baltimore,New York,2,4
Baltimore,Boston,1,6 Baltimore,Cleveland,3,4"""
TEAMS = ["Baltimore", "Boston", "Cleveland", "Detroit", "Milwaukee", "New York", "Toronto"]


def baseball_rows():
    rows = []
    for line in BASEBALL.split("\n"):
        for chunk in line.replace("New York", "New_York").split():
            h, a, hw, aw = chunk.replace("New_York", "New York").split(",")
            rows.append((TEAMS.index(h), TEAMS.index(a), int(hw), int(aw)))
    assert len(rows) == 42
    return np.array(rows)


def baseball_pairs():
    rows = baseball_rows()
    return rows, aggregate(rows[:, 0], rows[:, 1], rows[:, 2], rows[:, 3], len(TEAMS))


def test_baseball_maximum_likelihood_agresti_table_10_11():
    # Source: Agresti (2002) Table 10.11 / BradleyTerry2 tests/baseball.Rout.save; Baltimore fixed at 0.
    rows, pairs = baseball_pairs()
    s = 1e3  # a negligible prior: the MAP is the maximum-likelihood estimate up to a shift
    fit = fit_map(pairs, np.zeros(7), s, gtol=1e-12)
    est = fit.r - fit.r[0]
    expected = {"Boston": 1.1077, "Cleveland": 0.6839, "Detroit": 1.4364, "Milwaukee": 1.5814,
                "New York": 1.2476, "Toronto": 1.2945}
    for team, value in expected.items():
        assert est[TEAMS.index(team)] == pytest.approx(value, abs=1e-4)
    # Standard errors of r_k - r_Baltimore from the analytic Hessian: Var = (e_k - e_0)^T H^-1 (e_k - e_0).
    cov = np.linalg.inv(hessian(pairs, fit.r, s).toarray())
    ses = {"Boston": 0.3339, "Cleveland": 0.3319, "Detroit": 0.3396, "Milwaukee": 0.3433,
           "New York": 0.3359, "Toronto": 0.3367}
    for team, value in ses.items():
        k = TEAMS.index(team)
        assert np.sqrt(cov[k, k] + cov[0, 0] - 2 * cov[k, 0]) == pytest.approx(value, abs=1e-4)
    # Residual deviance 44.053 on 36 df (same source), one binomial row per home/away fixture.
    p = expit(fit.r[rows[:, 0]] - fit.r[rows[:, 1]])
    w, l = rows[:, 2].astype(float), rows[:, 3].astype(float)
    n = w + l
    with np.errstate(divide="ignore", invalid="ignore"):
        dev = 2 * np.sum(np.where(w > 0, w * np.log(w / (n * p)), 0) + np.where(l > 0, l * np.log(l / (n * (1 - p))), 0))
    assert dev == pytest.approx(44.053, abs=1e-3)


@pytest.mark.parametrize(
    "alpha, expected, sd_baltimore",
    [
        (1.0, [-0.9875, 0.0530, -0.3491, 0.3651, 0.5022, 0.1859, 0.2304], 0.4380),
        (0.25, [-1.0336, 0.0563, -0.3619, 0.3806, 0.5235, 0.1944, 0.2406], 0.7900),
    ],
)
def test_baseball_map_with_gaussian_prior(alpha, expected, sd_baltimore):
    # Source: docs/checks.md section 1, MAP table (computed independently, prior N(0, 1/alpha)).
    _, pairs = baseball_pairs()
    s = 1 / np.sqrt(alpha)
    fit = fit_map(pairs, np.zeros(7), s)
    assert fit.r == pytest.approx(expected, abs=1e-4)
    assert abs(fit.r.sum()) < 1e-8
    var = exact_variance(hessian(pairs, fit.r, s))
    assert np.sqrt(var[0]) == pytest.approx(sd_baltimore, abs=1e-4)


def random_league(seed, n=40, m=600):
    rng = np.random.default_rng(seed)
    true = rng.normal(0, 1, n)
    a = rng.integers(0, n, m)
    b = (a + rng.integers(1, n, m)) % n
    p = expit(true[a] - true[b])
    ga = rng.binomial(7, p)
    return a, b, ga, 7 - ga, true


def test_same_map_as_scikit_learn():
    # Source: docs/checks.md section 2 - L2 logistic regression with rows e_i - e_j, C = s^2.
    from sklearn.linear_model import LogisticRegression

    a, b, ga, gb, _ = random_league(3)
    n, s = 40, 0.8
    pairs = aggregate(a, b, ga, gb, n)
    ours = fit_map(pairs, np.zeros(n), s, gtol=1e-12).r
    X = np.zeros((2 * len(pairs.i), n))
    rows = np.arange(len(pairs.i))
    for block in (0, 1):
        X[block * len(rows) + rows, pairs.i] = 1
        X[block * len(rows) + rows, pairs.j] = -1
    y = np.r_[np.ones(len(rows)), np.zeros(len(rows))]
    weight = np.r_[pairs.won_i, pairs.won_j]
    keep = weight > 0
    model = LogisticRegression(fit_intercept=False, C=s**2, solver="newton-cholesky", tol=1e-12, max_iter=200)
    model.fit(X[keep], y[keep], sample_weight=weight[keep])
    assert np.max(np.abs(model.coef_.ravel() - ours)) <= 1e-6


def test_same_map_as_choix():
    # Source: docs/checks.md section 2 - choix opt_pairwise penalty alpha * sum(r^2) = prior variance 1/(2 alpha).
    import choix

    a, b, ga, gb, _ = random_league(4, n=30, m=300)
    n, s = 30, 1.2
    data = []
    for x, y, wx, wy in zip(a, b, ga, gb):
        data += [(int(x), int(y))] * int(wx) + [(int(y), int(x))] * int(wy)
    theirs = choix.opt_pairwise(n, data, alpha=1 / (2 * s**2), method="BFGS", tol=1e-12)
    ours = fit_map(aggregate(a, b, ga, gb, n), np.zeros(n), s).r
    assert np.max(np.abs(theirs - ours)) <= 1e-6


def test_gradient_and_hessian_match_finite_differences():
    # scipy.optimize.check_grad: analytic derivatives against finite differences.
    a, b, ga, gb, _ = random_league(5, n=12, m=80)
    pairs = aggregate(a, b, ga, gb, 12, weights=np.linspace(0.2, 1, 80))
    mu = np.linspace(-0.5, 0.5, 12)
    x = np.random.default_rng(0).normal(0, 1, 12)
    err = check_grad(lambda r: objective(pairs, r, mu, 0.9), lambda r: gradient(pairs, r, mu, 0.9), x)
    assert err < 1e-5
    H = hessian(pairs, x, 0.9).toarray()
    eps = 1e-6
    fd = np.column_stack([(gradient(pairs, x + eps * e, mu, 0.9) - gradient(pairs, x - eps * e, mu, 0.9)) / (2 * eps)
                          for e in np.eye(12)])
    assert np.max(np.abs(H - fd)) < 1e-6
    assert np.allclose(H, H.T)


def test_joint_gradient_and_hessian_with_levels_match_finite_differences():
    # F(r, L) written here from its definition (docs/model.md section 1, division levels), over the raw
    # matches rather than the aggregated pairs: nll + |r - B L - mu|^2 / 2 s^2 + |L - m|^2 / 2 tau^2.
    # The solver's gradient (fit.gradient is the one fit_map steps with) and the joint Hessian must be
    # its derivatives, by central differences (measured: 4e-9 and 2e-9).
    rng = np.random.default_rng(4)
    n, m, s, tau = 12, 80, 0.9, 0.6
    a = rng.integers(0, n, m)
    b = (a + rng.integers(1, n, m)) % n
    ga, gb, w = rng.integers(0, 6, m).astype(float), rng.integers(0, 6, m).astype(float), np.linspace(0.2, 1, m)
    mu, group, start = np.linspace(-0.5, 0.5, n), np.arange(n) % 3, np.array([0.3, 0.0, -0.4])
    levels = Levels(group, start, tau)
    pairs = aggregate(a, b, ga, gb, n, weights=w)

    def F(x):
        r, L = x[:n], x[n:]
        d = r[a] - r[b]
        nll = -np.sum(w * (ga * log_expit(d) + gb * log_expit(-d)))
        return nll + np.sum((r - L[group] - mu) ** 2) / (2 * s**2) + np.sum((L - start) ** 2) / (2 * tau**2)

    def central(f, x, eps=1e-5):
        return np.array([(f(x + eps * e) - f(x - eps * e)) / (2 * eps) for e in np.eye(len(x))])

    x = np.concatenate([rng.normal(0, 1, n), rng.normal(0, 0.5, 3)])
    assert objective(pairs, x, mu, s, levels) == pytest.approx(F(x), abs=1e-9)
    assert np.abs(central(F, x) - gradient(pairs, x, mu, s, levels)).max() < 2e-8
    H = hessian(pairs, x[:n], s, levels).toarray()
    fd = central(lambda y: gradient(pairs, y, mu, s, levels), x, 1e-6).T
    assert np.abs(H - fd).max() < 1e-8
    fit = fit_map(pairs, mu, s, levels=levels)
    assert np.abs(central(F, np.concatenate([fit.r, fit.level]))).max() < 1e-8  # the solver stops at F's optimum


def test_isolated_unbeaten_pair_is_held_finite_by_the_prior():
    # Source: docs/checks.md section 1 - solve w (1 - sigmoid(2t)) = t / s^2: w=10 -> 1.0640, w=30 -> 1.4795.
    for w, expected in ((10, 1.0640), (30, 1.4795)):
        fit = fit_map(aggregate([0], [1], [w], [0], 2), np.zeros(2), 1.0)
        assert fit.r[0] == pytest.approx(expected, abs=1e-4)
        assert fit.r[1] == pytest.approx(-expected, abs=1e-4)


def test_expected_score_on_the_400_point_scale():
    # Source: US Chess Federation rating system (Glickman), E = 1 / (1 + 10 ** (-D / 400)).
    assert game_chance(1600, 1500) == pytest.approx(0.6401, abs=1e-4)
    assert game_chance(1700, 1500) == pytest.approx(0.7597, abs=1e-4)
    assert game_chance(1900, 1500) == pytest.approx(0.9091, abs=1e-4)


def test_rule_of_thumb_sd_after_n_games_against_equal_opponents():
    # docs/checks.md section 5 (derivation, Bishop 2006 eqs. 4.132-4.134): SD ~ (400/ln 10)/sqrt(n/4).
    # One player meets many equal, well-known opponents: 100 games -> ~35 points.
    n_opp = 50
    a = np.zeros(n_opp, dtype=int)
    b = np.arange(1, n_opp + 1)
    pairs = aggregate(a, b, np.full(n_opp, 1.0), np.full(n_opp, 1.0), n_opp + 1)
    # Opponents pinned down tightly by their own prior (sd 0.01) so only player 0 is uncertain.
    H = LaplacianPattern(pairs).matrix(pair_curvature(pairs, np.zeros(n_opp + 1)), 1e3).toarray()
    H[np.arange(1, n_opp + 1), np.arange(1, n_opp + 1)] += 1e4
    sd_points = np.sqrt(np.linalg.inv(H)[0, 0]) * 400 / np.log(10)
    assert sd_points == pytest.approx(34.7, abs=0.5)
