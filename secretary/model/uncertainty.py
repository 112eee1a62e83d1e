"""Laplace uncertainty: the posterior covariance is ``H^-1`` at the optimum.

Each player's ± is ``sqrt((H^-1)_kk)`` (log-odds; convert to points at the
edge).  Exact (dense Cholesky inverse) up to ``EXACT_LIMIT`` players; above
that a two-level approximation (documented in ``approximate_variance``) whose
error against the exact value is measured in the tests.
"""
from __future__ import annotations

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
import scipy.sparse.linalg as spla
from scipy.linalg import lapack

from secretary.model.fit import LaplacianPattern, pair_curvature
from secretary.model.pairs import Pairs

EXACT_LIMIT = 3000


def exact_variance(H) -> np.ndarray:
    """``diag(H^-1)`` by a dense Cholesky factor and its inverse (O(n^3), exact)."""
    dense = H.toarray() if sp.issparse(H) else np.array(H, dtype=float)
    if dense.size == 0:  # a league with nobody in it yet
        return np.zeros(0)
    c, info = lapack.dpotrf(dense, lower=1, clean=1, overwrite_a=1)
    if info != 0:
        raise np.linalg.LinAlgError("Hessian is not positive definite")
    inv, info = lapack.dpotri(c, lower=1, overwrite_c=1)
    if info != 0:
        raise np.linalg.LinAlgError("Hessian inverse failed")
    return np.diag(inv).copy()


def approximate_variance(pairs: Pairs, h, prior_sd: float, groups) -> np.ndarray:
    """``diag(H^-1)`` approximated in two levels, O(pairs + groups^3).

    ``Var r_k ~ 1/H_kk  +  sum_j h_kj^2 / (H_kk^2 H_jj)  +  w_k^T C w_k``:
    the player's own conditional variance, the local uncertainty of the
    players they met, and the uncertainty of the group levels those players
    belong to, where ``w_kg = sum_{j in g} h_kj / H_kk`` and
    ``C = (B^T H B)^-1`` is the covariance of rigid group shifts (``B`` the
    group indicator matrix).  Groups should be the divisions (or the
    connected pools): the slow, poorly determined directions of ``H``.
    """
    n = pairs.n_players
    groups = np.asarray(groups, dtype=np.int64)
    diag = np.bincount(pairs.i, h, n) + np.bincount(pairs.j, h, n) + 1.0 / prior_sd**2
    local = 1.0 / diag
    neighbours = np.bincount(pairs.i, h**2 * local[pairs.j], n) + np.bincount(pairs.j, h**2 * local[pairs.i], n)
    neighbours *= local**2
    n_groups = int(groups.max()) + 1 if n else 0
    # Coarse precision B^T H B: prior mass on the diagonal, cross-group pair weights as a Laplacian.
    gi, gj = groups[pairs.i], groups[pairs.j]
    cross = gi != gj
    link = np.bincount(gi[cross] * n_groups + gj[cross], h[cross], n_groups * n_groups).reshape(n_groups, n_groups)
    coarse = -(link + link.T).astype(float)
    coarse[np.diag_indices(n_groups)] -= coarse.sum(axis=1)
    coarse[np.diag_indices(n_groups)] += np.bincount(groups, minlength=n_groups) / prior_sd**2
    cov = sla.inv(coarse)
    # w_k: share of player k's curvature coming from each group's players (dense n x groups when small).
    if n * n_groups <= 5_000_000:
        share = (np.bincount(pairs.i * n_groups + gj, h, n * n_groups)
                 + np.bincount(pairs.j * n_groups + gi, h, n * n_groups)).reshape(n, n_groups)
        share *= local[:, None]
        level = np.einsum("kg,kg->k", share @ cov, share)
    else:
        rows = np.concatenate([pairs.i, pairs.j])
        share = sp.csr_matrix((np.concatenate([h, h]) * local[rows], (rows, np.concatenate([gj, gi]))),
                              shape=(n, n_groups))
        level = np.asarray(share.multiply(share @ cov).sum(axis=1)).ravel()
    return local + neighbours + level


def strength_variance(pairs: Pairs, r, prior_sd: float, groups=None) -> np.ndarray:
    """Posterior variance of every strength (log-odds squared): exact up to ``EXACT_LIMIT`` players."""
    h = pair_curvature(pairs, r)
    if pairs.n_players <= EXACT_LIMIT:
        return exact_variance(LaplacianPattern(pairs).matrix(h, prior_sd))
    if groups is None:
        groups = np.zeros(pairs.n_players, dtype=np.int64)
    return approximate_variance(pairs, h, prior_sd, groups)


DENSE_CONTRASTS = 1000  # players up to which a dense Cholesky factor is quicker than a sparse LU


def contrast_variance(H, coefficients) -> np.ndarray:
    """``c_i^T H^-1 c_i`` for each row ``c_i`` of ``coefficients`` (exact).

    ``H`` is the SPD Hessian (n x n, sparse or dense), ``coefficients`` an
    (m, n) array or sparse matrix, e.g. rows ``e_a - e_b`` for the variance of
    a strength difference.  Dense Cholesky up to ``DENSE_CONTRASTS`` players
    (``|L^-1 c|^2``), above that a sparse LU of ``H`` (SuperLU, symmetric mode).
    """
    C = sp.csr_matrix(coefficients) if sp.issparse(coefficients) else np.atleast_2d(np.asarray(coefficients, float))
    n, m = H.shape[0], C.shape[0]
    if m == 0 or n == 0:
        return np.zeros(m)
    rhs = C.T.toarray() if sp.issparse(C) else C.T
    if n <= DENSE_CONTRASTS:
        dense = H.toarray() if sp.issparse(H) else np.asarray(H, float)
        y = sla.solve_triangular(sla.cholesky(dense, lower=True), rhs, lower=True, check_finite=False)
        return np.einsum("ij,ij->j", y, y)
    lu = spla.splu(sp.csc_matrix(H), permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                   options={"SymmetricMode": True})
    return np.einsum("ij,ij->j", rhs, lu.solve(rhs))


def difference_coefficients(a, b, n: int) -> sp.csr_matrix:
    """Rows ``e_a - e_b`` (one per pair of player indices), for ``contrast_variance``.

    An index outside ``0 .. n - 1`` (e.g. -1 for a player the fit has not met) gets no column.
    """
    a, b = np.asarray(a, np.int64), np.asarray(b, np.int64)
    rows = np.arange(len(a))
    in_a, in_b = (a >= 0) & (a < n), (b >= 0) & (b < n)
    values = np.r_[np.ones(in_a.sum()), -np.ones(in_b.sum())]
    return sp.csr_matrix((values, (np.r_[rows[in_a], rows[in_b]], np.r_[a[in_a], b[in_b]])), shape=(len(a), max(n, 1)))
