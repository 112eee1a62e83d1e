"""Division levels: the joint MAP over (u, L) and its Laplace posterior (docs/model.md, section 1)."""
import datetime as dt

import numpy as np
import pytest
from scipy.special import expit
from sklearn.linear_model import LogisticRegression

from secretary.model import fit as fit_module
from secretary.model import uncertainty
from secretary.model.fit import LaplacianPattern, Levels, fit_map, pair_curvature
from secretary.model.league import fit_league
from secretary.model.pairs import age_weights, aggregate
from secretary.model.records import Player, Result, Settings
from secretary.model.scale import points_per_logodds

START = dt.date(2025, 1, 6)
DIVISIONS = ("Hill", "Town", "Valley")


def tiered_league(seed, size=12, cross=20, weeks=30, isolated=()):
    """Three tiers a log-odds apart; mostly games inside a division, ``cross`` between (none for ``isolated``)."""
    rng = np.random.default_rng(seed)
    step = {"Hill": 1.0, "Town": 0.0, "Valley": -1.0}
    players = [(f"{d} {k}", d) for d in DIVISIONS for k in range(size)]
    skill = {name: step[d] + rng.normal(0, 0.6) for name, d in players}
    by_division = {d: [name for name, dd in players if dd == d] for d in DIVISIONS}
    rows = []
    for week in range(weeks):
        day = START + dt.timedelta(days=7 * week)
        for d in DIVISIONS:
            a, b = rng.choice(by_division[d], 2, replace=False)
            for _ in range(2):
                a, b = rng.choice(by_division[d], 2, replace=False)
                won = int(rng.binomial(7, expit(skill[a] - skill[b])))
                rows.append(Result(day, a, b, won, 7 - won, d))
    linked = [d for d in DIVISIONS if d not in isolated]
    for _ in range(cross):
        da, db = rng.choice(linked, 2, replace=False)
        a, b = rng.choice(by_division[da]), rng.choice(by_division[db])
        won = int(rng.binomial(7, expit(skill[a] - skill[b])))
        rows.append(Result(START + dt.timedelta(days=int(rng.integers(0, 7 * weeks))), a, b, won, 7 - won, "Cup"))
    return rows, [Player(name, d) for name, d in players]


def levels_of(fit):
    return Levels(fit.group, np.zeros(len(fit.group_names)), fit.settings.division_spread / points_per_logodds(400))


@pytest.mark.parametrize("seed, spread, half_life", [(1, 100.0, 200.0), (2, 60.0, 0.0), (3, 250.0, 90.0)])
def test_level_map_equals_scikit_learn_with_scaled_division_columns(seed, spread, half_life):
    # Outside check: scikit-learn's LogisticRegression (no intercept, L2, C = s^2) on rows
    # x = [e_i - e_j, (e_d(i) - e_d(j)) tau / s] gives the MAP of r = u + B L with
    # u ~ N(0, s^2), L ~ N(0, tau^2): one penalty |beta|^2 / (2 s^2) is both priors when
    # L = beta_L tau / s.  Pairs map to rows as in docs/checks.md section 2: each
    # match twice, label 1 weighted by games A won, label 0 by games B won (times the age weight).
    rows, players = tiered_league(seed)
    settings = Settings(division_spread=spread, half_life_days=half_life)
    fit = fit_league(rows, settings, players=players, with_uncertainty=False)
    ppl = points_per_logodds(settings.scale)
    s, tau = settings.skill_spread / ppl, spread / ppl
    n, D = len(fit.names), len(fit.group_names)
    index = {name: k for k, name in enumerate(fit.names)}
    division = {p.name: fit.group_names.index(p.division) for p in players}
    reference = max(r.date for r in rows)
    X = np.zeros((len(rows), n + D))
    for m, res in enumerate(rows):
        X[m, index[res.player_a]] += 1.0
        X[m, index[res.player_b]] -= 1.0
        X[m, n + division[res.player_a]] += tau / s
        X[m, n + division[res.player_b]] -= tau / s
    weight = age_weights([(reference - r.date).days for r in rows], half_life)
    won_a = np.array([r.games_a for r in rows]) * weight
    won_b = np.array([r.games_b for r in rows]) * weight
    keep = np.r_[won_a, won_b] > 0
    model = LogisticRegression(fit_intercept=False, C=s**2, tol=1e-12, max_iter=10_000, solver="newton-cholesky")
    model.fit(np.r_[X, X][keep], np.r_[np.ones(len(rows)), np.zeros(len(rows))][keep],
              sample_weight=np.r_[won_a, won_b][keep])
    beta = model.coef_.ravel()
    level = beta[n:] * tau / s
    strength = beta[:n] + level[[division[name] for name in fit.names]]
    assert np.abs((fit.r - strength) * ppl).max() <= 0.01
    assert np.abs((fit.level - level) * ppl).max() <= 0.01
    assert fit.level_points("Hill") > fit.level_points("Town") > fit.level_points("Valley")


def test_division_spread_zero_is_the_one_pool_model_exactly():
    rows, players = tiered_league(4)
    zero = fit_league(rows, Settings(division_spread=0.0), players=players)
    s = zero.prior_sd
    today = fit_map(zero.pairs, np.zeros(len(zero.names)), s)
    assert np.abs(zero.r - today.r).max() <= 1e-12
    assert np.abs(zero.var - uncertainty.strength_variance(zero.pairs, today.r, s)).max() <= 1e-12
    assert np.all(zero.level == 0.0) and np.all(zero.level_var == 0.0) and zero.levels is None
    # Starting levels with spread 0 are fixed prior means: the one-pool model centred on mu + m.
    start = {"Hill": 150.0, "Town": 0.0, "Valley": -150.0}
    fixed = fit_league(rows, Settings(division_spread=0.0), players=players, starting_levels=start)
    ppl = points_per_logodds(400)
    mean = np.array([start[fixed.division(name)] / ppl for name in fixed.names])
    assert np.abs(fixed.r - fit_map(fixed.pairs, mean, s).r).max() <= 1e-12
    assert fixed.level_points("Hill") == pytest.approx(150.0, abs=1e-9)


def test_a_division_without_cross_games_keeps_its_starting_level_and_tau_as_its_sd():
    rows, players = tiered_league(5, isolated=("Valley",))
    settings = Settings(division_spread=120.0)
    fit = fit_league(rows, settings, players=players, starting_levels={"Valley": -200.0, "Hill": 100.0})
    # Games inside Valley see only its players' differences: the level moves only with its prior, and its
    # ± is the prior's against the levels' average (the anchor): Var(L_v - mean L) = tau^2 (1 - 1/D).
    D = len(fit.group_names)
    assert fit.level_points("Valley") == pytest.approx(-200.0, abs=1e-6)
    assert fit.level_sd("Valley") == pytest.approx(120.0 * np.sqrt(1 - 1 / D), rel=1e-6)
    assert fit.level_sd("Hill") < 100.0  # the linked levels are pinned down by the cross games
    assert fit.level_points("Hill") != pytest.approx(100.0, abs=1.0)


def joint_u_l_covariance(fit):
    """The posterior covariance over (u, L) from its own Hessian ``A^T K A + diag(1/s^2, 1/tau^2)``, A = [I | B]."""
    n, D = len(fit.names), len(fit.group_names)
    K = LaplacianPattern(fit.pairs).matrix(pair_curvature(fit.pairs, fit.r), np.inf).toarray()
    A = np.hstack([np.eye(n), np.eye(D)[fit.group]])
    H = A.T @ K @ A + np.diag(np.r_[np.full(n, 1 / fit.prior_sd**2), np.full(D, 1 / fit.levels.sd**2)])
    return np.linalg.inv(H), A


def test_sd_is_from_the_joint_posterior_with_the_level_covariance_counted():
    rows, players = tiered_league(6)
    fit = fit_league(rows, Settings(division_spread=100.0), players=players)
    cov, A = joint_u_l_covariance(fit)
    n = len(fit.names)
    d = n + fit.group
    k = np.arange(n)
    var_u_plus_l = cov[k, k] + cov[d, d] + 2 * cov[k, d]
    assert np.any(cov[k, d] < 0)  # the covariance is not zero: adding variances would be wrong
    # Against the levels' average, which no game sees (docs/model.md 1, Uncertainty): x - mean(L) over (u, L).
    D = len(fit.group_names)
    mean_level = np.r_[np.zeros(n), np.full(D, 1.0 / D)]
    strengths = A - mean_level[None, :]  # row i: r_i - mean(L) = u_i + L_d(i) - mean(L)
    levels = np.hstack([np.zeros((D, n)), np.eye(D)]) - mean_level[None, :]
    quad = lambda M: np.einsum("mi,ij,mj->m", M, cov, M)  # noqa: E731
    assert np.allclose(fit.var, quad(strengths), rtol=1e-9, atol=0)
    assert np.allclose(fit.level_var, quad(levels), rtol=1e-9, atol=0)
    # ... which is the whole posterior variance less the common mode's prior, tau^2 / D.
    assert np.allclose(fit.var, var_u_plus_l - fit.levels.sd**2 / D, rtol=1e-9, atol=0)
    # contrast_variance: a contrast c over the strengths is [c, B^T c] over (u, L), less (sum c)^2 tau^2 / D.
    rng = np.random.default_rng(0)
    C = rng.normal(size=(4, n))
    C[0] -= C[0].mean()  # a difference: the anchor drops out
    anchored = quad(C @ A) - C.sum(axis=1) ** 2 * fit.levels.sd**2 / D
    assert np.allclose(fit.contrast_variance(C), anchored, rtol=1e-9)
    assert np.allclose(fit.contrast_variance(C[:1]), quad(C[:1] @ A), rtol=1e-9)


def test_large_league_paths_agree_with_the_exact_ones(monkeypatch):
    rows, players = tiered_league(7, size=40, cross=60)
    settings = Settings(division_spread=100.0)
    exact = fit_league(rows, settings, players=players)
    monkeypatch.setattr(fit_module, "DENSE_LIMIT", 0)  # Newton steps by CG on the Schur complement
    monkeypatch.setattr(uncertainty, "EXACT_LIMIT", 10)  # the block-inverse ± with approximate diag(P^-1)
    large = fit_league(rows, settings, players=players)
    ppl = points_per_logodds(400)
    assert np.abs((large.r - exact.r) * ppl).max() <= 1e-4  # both stop on the gradient test
    # The ± above EXACT_LIMIT: the probe-corrected approximation of the joint Hessian's inverse diagonal.
    # Measured: levels' ± within 0.3 %, players' median 0.3 %.
    assert np.abs(np.sqrt(large.level_var / exact.level_var) - 1).max() <= 0.01
    assert np.median(np.abs(np.sqrt(large.var / exact.var) - 1)) <= 0.01


def test_home_division_rules_are_recorded():
    rows = [
        Result(START, "Ann", "Bea", 3, 1, "Hill"),
        Result(START + dt.timedelta(days=7), "Ann", "Cal", 3, 2, "Town"),
        Result(START + dt.timedelta(days=14), "Ann", "Bea", 3, 0, ""),
    ]
    fit = fit_league(rows, Settings(), players=[Player("Cal", "Hill"), Player("Dee")])
    assert fit.division("Ann") == "Town"  # her most recent result with a division (a row without one counts last)
    assert fit.division("Bea") == "Hill"
    assert fit.division("Cal") == "Hill"  # the Players sheet, though her only result was in Town
    rule = dict(zip(fit.names, fit.home_rule))
    assert rule == {"Ann": "latest results", "Bea": "latest results", "Cal": "Players sheet", "Dee": "no results"}


def test_a_players_row_with_no_division_and_no_results_changes_nobodys_rating_or_sd():
    # Without the rule it made a division named "" with a free level of its own: the levels' average (the
    # anchor of every ±) then counted four divisions instead of three, and every ± shed tau^2/4, not tau^2/3.
    rows, players = tiered_league(5)
    without = fit_league(rows, Settings(), players=players)
    with_row = fit_league(rows, Settings(), players=[*players, Player("Newt Ashdown")])
    assert with_row.group_names == without.group_names == DIVISIONS
    assert dict(zip(with_row.names, with_row.home_rule))["Newt Ashdown"] == "no results"
    k = [with_row.index(name) for name in without.names]
    assert np.abs(with_row.r[k] - without.r).max() <= 1e-9
    assert np.abs(with_row.var[k] / without.var - 1).max() <= 1e-9
    assert np.abs(with_row.level_var / without.level_var - 1).max() <= 1e-9
    # Nor any division's count or mean rating on the watch list: the row is in the fit, not among the rated.
    from secretary.model.linkage import watch_list

    def counted(fit):
        return {d.division: (d.players, d.mean_rating, d.relative_level) for d in watch_list(fit, rows).divisions}

    before, after = counted(without), counted(with_row)
    assert before.keys() == after.keys()
    for name, (players, mean, gap) in before.items():
        assert after[name][0] == players and abs(after[name][1] - mean) <= 1e-6 and abs(after[name][2] - gap) <= 1e-6
    assert sum(players for players, _, _ in after.values()) == len(without.names)


def test_a_player_who_changed_division_is_counted_in_the_one_they_play_in_now():
    day = [START + dt.timedelta(days=7 * k) for k in range(6)]
    rows = [Result(day[k], "Moe", f"Low{k}", 3, 1, "Lower") for k in range(4)]  # most of Moe's games
    rows += [Result(day[4], "Moe", "Top0", 1, 3, "Upper"), Result(day[5], "Top1", "Moe", 3, 2, "Upper")]
    # Same date: the row further down the sheet is the more recent one.
    rows += [Result(day[5], "Sal", "Low0", 3, 0, "Upper"), Result(day[5], "Sal", "Low1", 3, 0, "Lower")]
    fit = fit_league(rows, Settings())
    assert fit.division("Moe") == "Upper" and fit.division("Low2") == "Lower"
    assert fit.division("Sal") == "Lower"
    assert dict(zip(fit.names, fit.home_rule))["Moe"] == "latest results"
    # A doubles partner's seat counts like any other: Low3's latest game was as Moe's partner in Upper.
    rows.append(Result(day[5] + dt.timedelta(days=1), "Moe", "Top0", 3, 2, "Upper", partner_a="Low3",
                       partner_b="Top1"))
    assert fit_league(rows, Settings()).division("Low3") == "Upper"


def test_api_rates_with_division_levels_and_without_them_as_one_pool():
    import secretary

    rows, players = tiered_league(8)
    tuples = [(r.date, r.player_a, r.player_b, r.games_a, r.games_b) for r in rows]
    divisions = {p.name: p.division for p in players}
    rated = secretary.rate(tuples, divisions=divisions, division_spread=100.0, starting_levels={"Hill": 50.0})
    fit = fit_league([Result(r.date, r.player_a, r.player_b, r.games_a, r.games_b) for r in rows],
                     Settings(division_spread=100.0), players=players, starting_levels={"Hill": 50.0})
    for name in fit.names:
        assert rated.rating(name) == pytest.approx(fit.rating(name), abs=1e-9)
    assert rated.level("Hill") == pytest.approx(fit.level_points("Hill"), abs=1e-9)
    assert rated.level_sd("Valley") == pytest.approx(fit.level_sd("Valley"), rel=1e-9)
    plain = secretary.rate(tuples)  # no divisions: one pool, today's model
    one_pool = fit_league([Result(r.date, r.player_a, r.player_b, r.games_a, r.games_b) for r in rows])
    assert np.abs(np.array([plain.rating(n) for n in one_pool.names]) - one_pool.ratings).max() <= 1e-9
