"""The walk forward's fast paths give the numbers of the straightforward ones.

The walk fits each step by Newton steps solved with conjugate gradients
(``walkforward.DENSE_LIMIT``) and takes each step's predictive variances from
one dense Cholesky factor with the touched unknowns ordered last
(``uncertainty.touched_last_variance``).  Each is checked here against its
plain definition computed another way: ``c^T H^-1 c`` from numpy's dense
inverse, each step's fit by dense Newton steps to a tight tolerance, and the
previous path (dense Newton steps up to 1,500 players, a sparse LU above 1,000
unknowns for the variances) on real results.
"""
import datetime as dt

import numpy as np
import pytest
import scipy.sparse as sp

from secretary.model import walkforward
from secretary.model.evaluate import evaluate, prepare
from secretary.model.fit import DENSE_LIMIT
from secretary.model.records import Result, Settings
from secretary.model.tune import tune
from secretary.model.uncertainty import DENSE_CONTRASTS, contrast_variance, schur_onto, touched_last_variance
from tests.model.test_evaluate_levels import SETTINGS, tiered_league

D0 = dt.date(2025, 9, 1)


def spd_with_levels(rng, n=120, levels=3):
    """A sparse graph Laplacian plus a ridge, bordered by a few dense "level" rows (as the joint Hessian)."""
    m = sp.random(n, n, density=3 / n, random_state=rng, data_rvs=rng.random)
    lap = -(m + m.T)
    lap.setdiag(0)
    K = lap - sp.diags(np.asarray(lap.sum(axis=1)).ravel()) + sp.eye(n) * 0.4
    group = rng.integers(0, levels, n)
    B = sp.csr_matrix((np.full(n, -0.4), (np.arange(n), group)), shape=(n, levels))
    return sp.bmat([[K, B], [B.T, sp.diags(np.bincount(group, minlength=levels) * 0.4 + 1.0)]], format="csr")


def dense_inverse_variance(H, C):
    """Source: ``c^T H^-1 c`` with numpy.linalg.inv of the same matrix."""
    C = C.toarray() if sp.issparse(C) else np.asarray(C, float)
    return np.einsum("ij,jk,ik->i", C, np.linalg.inv(H.toarray()), C)


def test_touched_last_variance_is_the_dense_inverse_contrast():
    rng = np.random.default_rng(5)
    H = spd_with_levels(rng)
    n = H.shape[0]
    rows = []
    for k in range(60):  # singles differences, doubles sides (halves), a newcomer's level, a lone strength
        c = np.zeros(n)
        picks = rng.choice(n - 3, 4, replace=False)
        if k % 3 == 0:
            c[picks[:2]] = (1.0, -1.0)
        elif k % 3 == 1:
            c[picks] = (0.5, 0.5, -0.5, -0.5)
        else:
            c[picks[0]], c[n - 1 - k % 3] = 1.0, -1.0
        rows.append(c)
    rows.append(np.zeros(n))  # a match between two newcomers of one division: nothing fitted enters
    C = sp.csr_matrix(np.array(rows))
    C.data[:3] = 0.0  # an explicitly stored zero is no touch
    expected = dense_inverse_variance(H, C)
    for got in (touched_last_variance(H, C), contrast_variance(H, C, dense_limit=10**6),
                contrast_variance(H, C.toarray(), dense_limit=10**6), touched_last_variance(H.toarray(), C),
                contrast_variance(H, C, dense_limit=0)):  # the last one the sparse LU
        assert got == pytest.approx(expected, rel=1e-11, abs=1e-14)
    assert touched_last_variance(H, sp.csr_matrix((2, n))).tolist() == [0.0, 0.0]


@pytest.mark.parametrize("graph", ["chain", "random"])
def test_the_sparse_elimination_is_the_inverse_restricted_to_the_kept_unknowns(graph):
    # Source: numpy.linalg.inv of the whole matrix, restricted to the unknowns left.
    rng = np.random.default_rng(8)
    if graph == "chain":  # eliminated over several rounds, down to the two kept ends
        n = 41
        lap = sp.diags([np.full(n - 1, -1.0), np.full(n - 1, -1.0)], [-1, 1])
        H = (lap + sp.diags(-np.asarray(lap.sum(axis=1)).ravel() + 0.3)).tocsr()
        keep = np.zeros(n, bool)
        keep[[0, n - 1]] = True
    else:
        H = spd_with_levels(rng, n=300)
        n = H.shape[0]
        keep = rng.random(n) < 0.2
    S, kept = schur_onto(H, keep)
    assert set(np.flatnonzero(keep)) <= set(kept.tolist()) and len(kept) < 0.6 * n
    if graph == "chain":
        assert kept.tolist() == [0, n - 1]
    inverse = np.linalg.inv(H.toarray())[np.ix_(kept, kept)]
    assert np.linalg.inv(S.toarray()) == pytest.approx(inverse, rel=1e-11, abs=1e-14)


def straightforward(monkeypatch):
    """The walk with dense Newton steps at every size and variances from the dense inverse."""
    monkeypatch.setattr(walkforward, "DENSE_LIMIT", 10**9)
    monkeypatch.setattr(walkforward, "contrast_variance", lambda H, C, **_: dense_inverse_variance(H, C))


def doubles_league(seed=3, weeks=8, names=16):
    rng = np.random.default_rng(seed)
    people = [f"Player {k:02d}" for k in range(names)]
    rows = []
    for w in range(weeks):
        day = D0 + dt.timedelta(days=7 * w)
        here = people[: 10 + w]  # a newcomer or two each week
        for _ in range(6):
            a, b, c, d = rng.choice(here, 4, replace=False)
            rows.append(Result(day, str(a), str(b), int(rng.integers(0, 4)), 3, "North" if w % 2 else "South",
                               partner_a=str(c), partner_b=str(d)))
        for _ in range(5):
            a, b = rng.choice(here, 2, replace=False)
            rows.append(Result(day, str(a), str(b), 3, int(rng.integers(0, 4)), "North"))
    return rows


@pytest.mark.parametrize("league", ["tiered", "doubles"])
def test_every_step_mean_and_variance_are_the_straightforward_ones(league, monkeypatch):
    results = tiered_league(seed=4) if league == "tiered" else doubles_league()
    walk = prepare(results)
    tight = walkforward.walk_steps(walk, SETTINGS, None, 1e-10, True)
    usual = walkforward.walk_steps(walk, SETTINGS, None, 1e-7, True)  # evaluate's tolerance
    straightforward(monkeypatch)
    plain = walkforward.walk_steps(walk, SETTINGS, None, 1e-12, True)
    done = ~np.isnan(plain.mean)
    assert done.sum() > 70 and np.array_equal(done, ~np.isnan(tight.mean))
    # measured at gtol 1e-10: means within 6e-10, variances within 7e-11 relative
    assert tight.mean[done] == pytest.approx(plain.mean[done], abs=3e-9)
    assert tight.var[done] == pytest.approx(plain.var[done], rel=5e-10)
    # at the walk's gtol 1e-7: within 6.1e-7 and 7e-8 (the previous dense Newton steps: 6.1e-7 and 6e-8)
    assert usual.mean[done] == pytest.approx(plain.mean[done], abs=1.5e-6)
    assert usual.var[done] == pytest.approx(plain.var[done], rel=2e-7)
    assert np.array_equal(tight.few, plain.few) and np.array_equal(tight.cross, plain.cross)


def test_a_step_whose_conjugate_gradients_do_not_settle_is_fitted_by_dense_steps(monkeypatch):
    from secretary.errors import FitFailed
    from secretary.model import fit as fit_module

    walk = prepare(tiered_league(seed=4, weeks=8))
    monkeypatch.setattr(walkforward, "DENSE_LIMIT", 10**9)
    dense = walkforward.walk_steps(walk, SETTINGS, None, 1e-7, True)
    monkeypatch.setattr(walkforward, "DENSE_LIMIT", 0)

    def unsettled(*args, **kwargs):
        raise FitFailed("the rating calculation did not settle")

    monkeypatch.setattr(fit_module, "conjugate_gradient", unsettled)
    fallback = walkforward.walk_steps(walk, SETTINGS, None, 1e-7, True)
    assert np.array_equal(fallback.mean, dense.mean, equal_nan=True)
    assert np.array_equal(fallback.var, dense.var, equal_nan=True)


def test_tuning_chooses_and_scores_as_the_straightforward_walk(monkeypatch):
    results = tiered_league(seed=6, weeks=12)
    grid = dict(half_lives=(0.0, 60.0, 240.0), spreads=(60.0, 120.0, 240.0), division_spreads=(0.0, 150.0),
                refine=4)
    fast = tune(results, SETTINGS, **grid)
    straightforward(monkeypatch)
    plain = tune(results, SETTINGS, **grid)
    assert fast.settings == plain.settings
    assert [t[:3] for t in fast.tried] == [t[:3] for t in plain.tried]
    # both at the walk's gtol 1e-7: measured within 2.1e-9 (the scores the search compares differ by 1e-4 here)
    assert [t[3] for t in fast.tried] == pytest.approx([t[3] for t in plain.tried], abs=6e-9)


@pytest.mark.slow
def test_real_tennis_scores_are_those_of_the_per_step_lu_path(monkeypatch):
    # The first 13,700 matches of the tennis season (tests/realdata.py; the season tests/bench/bench_tune.py
    # tunes): steps above 1,000 unknowns, where the previous path took a sparse LU per step for the variances,
    # and above 1,500 players, where it took CG Newton steps too.  Measured: scores within 2.8e-10, chances
    # within 6e-8 (both fits stop at gtol 1e-7).
    from tests import realdata

    results = sorted(realdata.tennis(), key=lambda r: r.date)[:13_700]
    walk = prepare(results)
    settings = Settings(half_life_days=120.0, skill_spread=134.0, division_spread=100.0)
    fast = evaluate(walk, settings)
    monkeypatch.setattr(walkforward, "DENSE_LIMIT", DENSE_LIMIT)
    monkeypatch.setattr(walkforward, "DENSE_CONTRASTS", DENSE_CONTRASTS)
    before = evaluate(walk, settings)
    assert len(walk.names) > DENSE_LIMIT
    for name in ("predictive", "predictive_race", "predictive_cross", "race", "cross"):
        assert getattr(fast, name).log_loss == pytest.approx(getattr(before, name).log_loss, abs=1e-9)
    assert fast.log_loss == pytest.approx(before.log_loss, abs=1e-9)
    assert np.nanmax(np.abs(fast.p_predictive - before.p_predictive)) < 2e-7
    assert np.nanmax(np.abs(fast.p - before.p)) < 2e-7
