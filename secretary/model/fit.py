"""The joint estimate: MAP of a Bradley-Terry model with a Gaussian prior.

Minimises, over strengths ``r`` (natural log-odds),

    F(r) = - sum_pairs [ won_i log s(r_i - r_j) + won_j log s(r_j - r_i) ]
           + sum_k (r_k - mu_k)^2 / (2 sd^2),          s = logistic sigmoid

F is strictly convex; its Hessian is a weighted graph Laplacian
(``n_ij p (1 - p)`` per pair) plus ``I / sd^2``.  Solved by safeguarded Newton
steps (backtracking line search) on the sparse Hessian, stopped on the
gradient's largest component.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
from scipy.special import expit, log_expit

from secretary.errors import FitFailed
from secretary.model.pairs import Pairs

DENSE_LIMIT = 1500  # below this many players, Newton steps use a dense Cholesky


@dataclass(frozen=True)
class Fit:
    """The optimum and how it was reached.

    Attributes
    ----------
    r : strengths at the optimum, natural log-odds
    prior_mean : the prior means used, log-odds
    prior_sd : the prior SD used, log-odds
    iterations : Newton steps taken
    grad_max : largest |dF/dr_k| at the optimum (per weighted game)
    """

    r: np.ndarray
    prior_mean: np.ndarray
    prior_sd: float
    iterations: int
    grad_max: float


def objective(pairs: Pairs, r, prior_mean, prior_sd: float) -> float:
    """``F(r)``: negative log posterior up to a constant."""
    d = r[pairs.i] - r[pairs.j]
    nll = -(pairs.won_i @ log_expit(d) + pairs.won_j @ log_expit(-d))
    return float(nll + np.sum((r - prior_mean) ** 2) / (2.0 * prior_sd**2))


def gradient(pairs: Pairs, r, prior_mean, prior_sd: float) -> np.ndarray:
    """``dF/dr``: expected minus actual weighted wins, plus the prior's pull ``(r - mu) / sd^2``."""
    d = r[pairs.i] - r[pairs.j]
    g = pairs.total * expit(d) - pairs.won_i  # d(nll)/d(r_i) per pair
    n = pairs.n_players
    return np.bincount(pairs.i, g, n) - np.bincount(pairs.j, g, n) + (r - prior_mean) / prior_sd**2


def pair_curvature(pairs: Pairs, r) -> np.ndarray:
    """``n_ij p (1 - p)`` per pair: the pair's weight in the Hessian's Laplacian."""
    p = pair_chance(pairs, r)
    return pairs.total * p * (1.0 - p)


class LaplacianPattern:
    """``H`` for a fixed set of pairs: the structure is built once, each Newton step only refills values.

    ``H = D + U + U^T`` with ``U`` the strictly upper triangle (``-h`` at ``(i, j)``)
    and ``D`` the diagonal; aggregated pairs arrive sorted by ``(i, j)``, so ``U``
    is a CSR matrix without any reordering.
    """

    def __init__(self, pairs: Pairs):
        n = pairs.n_players
        self.n = n
        self.pairs = pairs
        key = pairs.i.astype(np.int64) * max(n, 1) + pairs.j
        self.order = None if np.all(key[1:] >= key[:-1]) else np.argsort(key, kind="stable")
        rows = pairs.i if self.order is None else pairs.i[self.order]
        self.indices = (pairs.j if self.order is None else pairs.j[self.order]).astype(np.int32)
        self.indptr = np.concatenate([[0], np.cumsum(np.bincount(rows, minlength=n))]).astype(np.int32)

    def diagonal(self, h, prior_sd: float) -> np.ndarray:
        """``diag(H)``: each player's summed pair weights plus ``1 / sd^2``."""
        n = self.n
        return np.bincount(self.pairs.i, h, n) + np.bincount(self.pairs.j, h, n) + 1.0 / prior_sd**2

    def upper(self, h) -> sp.csr_matrix:
        """The strictly upper triangle ``U`` of ``H`` for pair weights ``h``."""
        values = -h if self.order is None else -h[self.order]
        return sp.csr_matrix((values, self.indices, self.indptr), shape=(self.n, self.n))

    def matvec(self, h, diag):
        """The function ``v -> H v``, without forming the symmetric matrix."""
        upper = self.upper(h)
        lower = upper.T
        return lambda v: diag * v + upper @ v + lower @ v

    def dense(self, h, prior_sd: float) -> np.ndarray:
        """``H`` as a dense array (small leagues: cheaper than building the sparse matrix first)."""
        H = np.zeros((self.n, self.n))
        H[self.pairs.i, self.pairs.j] = -h  # pairs are distinct, so plain assignment is exact
        H[self.pairs.j, self.pairs.i] = -h
        H[np.diag_indices(self.n)] = self.diagonal(h, prior_sd)
        return H

    def matrix(self, h, prior_sd: float) -> sp.csr_matrix:
        """``H`` as a sparse matrix for pair weights ``h``."""
        upper = self.upper(h)
        return (upper + upper.T + sp.diags(self.diagonal(h, prior_sd))).tocsr()


def hessian(pairs: Pairs, r, prior_sd: float) -> sp.csr_matrix:
    """``H = sum_pairs n p (1 - p) (e_i - e_j)(e_i - e_j)^T + I / sd^2`` (sparse, SPD)."""
    return LaplacianPattern(pairs).matrix(pair_curvature(pairs, r), prior_sd)


def pair_chance(pairs: Pairs, r) -> np.ndarray:
    """``p = sigmoid(r_i - r_j)`` per pair, as ``(1 + tanh(d / 2)) / 2`` in place (several times faster than expit)."""
    p = np.take(r, pairs.i)
    p -= np.take(r, pairs.j)
    p *= 0.5
    np.tanh(p, out=p)
    p += 1.0
    p *= 0.5
    return p


def _gradient_and_curvature(pairs: Pairs, r, mu, prior_sd: float):
    """``dF/dr`` and the pair weights ``n p (1 - p)`` from one pass over the pairs."""
    p = pair_chance(pairs, r)
    total = pairs.total
    g = total * p
    g -= pairs.won_i
    n = pairs.n_players
    grad = np.bincount(pairs.i, g, n) - np.bincount(pairs.j, g, n) + (r - mu) / prior_sd**2
    np.subtract(1.0, p, out=g)
    g *= p
    g *= total
    return grad, g


def _newton_step(pattern: LaplacianPattern, h, prior_sd: float, g: np.ndarray, gmax: float) -> np.ndarray:
    diag = pattern.diagonal(h, prior_sd)
    if pattern.n <= DENSE_LIMIT:
        H = pattern.dense(h, prior_sd)
        return -sla.cho_solve(sla.cho_factor(H, check_finite=False), g, check_finite=False)
    # Inexact Newton: Jacobi-preconditioned CG, solved more tightly as the gradient shrinks.
    rtol = min(0.1, np.sqrt(gmax)) * 0.1
    return -conjugate_gradient(pattern.matvec(h, diag), g, 1.0 / diag, rtol, 10 * pattern.n)


def _dot(a: np.ndarray, b: np.ndarray) -> float:
    # einsum runs in this thread: BLAS would wake its thread pool for every short vector.
    return float(np.einsum("i,i->", a, b))


def conjugate_gradient(matvec, b: np.ndarray, inv_diag: np.ndarray, rtol: float, maxiter: int) -> np.ndarray:
    """Solve ``H x = b`` (``H`` SPD, given as ``matvec``) by CG preconditioned with ``diag(H)^-1``.

    Stops when ``|b - H x| <= rtol |b|``; raises ``FitFailed`` if ``H`` is not
    positive definite along a search direction or ``maxiter`` is exhausted.
    """
    x = np.zeros_like(b)
    r = b.copy()
    z = r * inv_diag
    p = z.copy()
    rz = _dot(r, z)
    stop = rtol * np.sqrt(_dot(b, b))
    for _ in range(maxiter):
        if np.sqrt(_dot(r, r)) <= stop:
            return x
        q = matvec(p)
        curvature = _dot(p, q)
        if not curvature > 0.0:
            break
        alpha = rz / curvature
        x += alpha * p
        r -= alpha * q
        np.multiply(r, inv_diag, out=z)
        rz, rz_old = _dot(r, z), rz
        p *= rz / rz_old
        p += z
    else:
        if np.sqrt(_dot(r, r)) <= stop:
            return x
    raise FitFailed("the rating calculation did not settle; no ratings were changed. "
                    "Please report this with the workbook.")


def fit_map(
    pairs: Pairs,
    prior_mean,
    prior_sd: float,
    *,
    start=None,
    gtol: float = 1e-9,
    max_iter: int = 100,
) -> Fit:
    """The MAP strengths by safeguarded Newton.

    Parameters
    ----------
    pairs : aggregated weighted games
    prior_mean : array (n,), prior means ``mu`` in log-odds
    prior_sd : prior SD ``sd`` in log-odds (> 0)
    start : optional starting point (defaults to ``prior_mean``)
    gtol : stop when ``max_k |dF/dr_k| <= gtol * max(1, mean weighted games)``

    Raises
    ------
    FitFailed
        if the gradient test is not met within ``max_iter`` steps; no partial
        answer is returned.
    """
    mu = np.asarray(prior_mean, dtype=float)
    if prior_sd <= 0 or not np.isfinite(prior_sd):
        raise FitFailed(f"the skill spread must be a positive number (got {prior_sd!r})")
    r = mu.copy() if start is None else np.array(start, dtype=float)
    n = pairs.n_players
    if n == 0:
        return Fit(r, mu, prior_sd, 0, 0.0)
    pattern = LaplacianPattern(pairs)
    tol = gtol * max(1.0, float(pairs.games_per_player().mean()))
    g, h = _gradient_and_curvature(pairs, r, mu, prior_sd)
    gmax = float(np.max(np.abs(g)))
    for it in range(max_iter + 1):
        if not np.isfinite(gmax):
            break
        if gmax <= tol:
            return Fit(r, mu, prior_sd, it, gmax)
        if it == max_iter:
            break
        step = _newton_step(pattern, h, prior_sd, g, gmax)
        # Safeguard: F is convex along the step, so dF/dt <= 0 at the accepted t proves a decrease.
        # The full step is taken when dF/dt(1) <= 0; otherwise the line minimum lies in (0, 1) and
        # is bracketed by regula falsi on dF/dt until it has lost half of its initial size.
        slope0 = float(g @ step)
        lo, hi, s_lo, s_hi, t = 0.0, 1.0, slope0, None, 1.0
        for _ in range(60):
            g_new, h_new = _gradient_and_curvature(pairs, r + t * step, mu, prior_sd)
            slope = float(g_new @ step)
            if slope <= 0.0 and (t == 1.0 or slope >= 0.5 * slope0):
                break
            if slope < 0.0:
                lo, s_lo = t, slope
                if s_hi is not None:
                    s_hi *= 0.5  # Illinois: stop one end from sticking
            else:
                hi, s_hi = t, slope
                s_lo *= 0.5 if lo > 0 else 1.0
            t = lo + (hi - lo) * s_lo / (s_lo - s_hi) if s_hi is not None else 0.5 * (lo + hi)
            t = min(max(t, lo + 1e-3 * (hi - lo)), hi - 1e-3 * (hi - lo))
        r = r + t * step
        g, h = g_new, h_new
        gmax = float(np.max(np.abs(g)))
    raise FitFailed(
        "the rating calculation did not settle (largest gradient "
        f"{gmax:.3g} after {max_iter} steps); no ratings were changed. "
        "Check the Results sheet for impossible scores and report this if it persists."
    )
