"""The joint estimate: MAP of a Bradley-Terry model with a Gaussian prior.

Minimises, over strengths ``r`` (natural log-odds),

    F(r) = - sum_pairs [ won_i log s(r_i - r_j) + won_j log s(r_j - r_i) ]
           + sum_k (r_k - mu_k)^2 / (2 sd^2),          s = logistic sigmoid

F is strictly convex; its Hessian is a weighted graph Laplacian
(``n_ij p (1 - p)`` per pair) plus ``I / sd^2``.  Solved by safeguarded Newton
steps (backtracking line search) on the sparse Hessian, stopped on the
gradient's largest component.

Division levels (``Levels``): ``r = B L + u`` with ``u ~ N(mu, sd^2)`` and
``L ~ N(m, tau^2)`` (``B`` the player-by-division indicator).  The unknowns
are ``(r, L)`` (the same posterior as over ``(u, L)``, since ``u = r - B L`` is
a linear change of variables with unit Jacobian), and

    F(r, L) = nll(r) + |r - B L - mu|^2 / (2 sd^2) + |L - m|^2 / (2 tau^2).

Its Hessian gains one row and column per division and stays sparse:

    [[K + I / sd^2,   -B / sd^2                  ],
     [-B^T / sd^2,     diag(n_d / sd^2 + 1 / tau^2)]]

(``K`` the likelihood's Laplacian, ``n_d`` the division's players).  Over
``(u, L)`` it would be ``A^T K A + diag(1/sd^2, 1/tau^2)`` with ``A = [I | B]``,
whose ``K B`` block fills in; over ``(r, L)`` the level block is diagonal, so a
Newton step eliminates it exactly and solves the Schur complement
``K + I / sd^2 - B diag(beta) B^T`` (``beta_d = 1 / (sd^4 (n_d / sd^2 + 1 / tau^2))``)
over the players, by dense Cholesky or preconditioned CG as without levels.
``tau = 0`` fixes every level at ``m_d``: that is the one-pool model with prior
means ``mu + B m`` and is fitted as such.

Doubles (``Pairs.doubles``): a side's strength is the mean of its players'
strengths, ``d = x . r`` with ``x = (e_a0 + e_a1 - e_b0 - e_b1) / 2``; each pair
of sides adds ``n p (1 - p) x x^T`` to ``H``.  ``x x^T`` is a Laplacian with
weight ``1/4`` between opponents and ``-1/4`` between partners, so ``H`` keeps
the pattern of a graph (the union of singles pairs and doubles edges), stays
sparse and positive definite, and every solver path is unchanged.  The
per-row curvatures are the singles pairs' followed by the pairs of sides'
(``pair_curvature``); ``LaplacianPattern`` folds them onto the edges.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
from scipy.special import expit, log_expit

from secretary.errors import FitFailed
from secretary.model.pairs import Pairs

DENSE_LIMIT = 1500  # below this many players, Newton steps use a dense Cholesky


@dataclass(frozen=True)
class Levels:
    """Division levels ``L_d ~ N(mean_d, sd^2)`` and which division each player's level is.

    Attributes
    ----------
    group : int array (n_players,), each player's home division (0 .. D-1)
    mean : array (D,), the starting levels ``m_d``, log-odds
    sd : the Division spread ``tau`` in log-odds (> 0)
    """

    group: np.ndarray
    mean: np.ndarray
    sd: float

    @cached_property
    def sizes(self) -> np.ndarray:
        """Players per division ``n_d``."""
        return np.bincount(self.group, minlength=len(self.mean)).astype(float)

    def per_division(self, v) -> np.ndarray:
        """``B^T v``: a per-player value summed over each division."""
        return np.bincount(self.group, v, len(self.mean))

    def precision(self, prior_sd: float) -> np.ndarray:
        """The level block's diagonal ``n_d / sd^2 + 1 / tau^2``."""
        return self.sizes / prior_sd**2 + 1.0 / self.sd**2

    def beta(self, prior_sd: float) -> np.ndarray:
        """``beta_d = 1 / (sd^4 (n_d / sd^2 + 1 / tau^2))``: what eliminating the levels takes off ``H``."""
        return 1.0 / (prior_sd**4 * self.precision(prior_sd))


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
    level : division levels ``L`` at the optimum, log-odds (empty without ``Levels``)
    """

    r: np.ndarray
    prior_mean: np.ndarray
    prior_sd: float
    iterations: int
    grad_max: float
    level: np.ndarray = field(default_factory=lambda: np.zeros(0))


def objective(pairs: Pairs, x, prior_mean, prior_sd: float, levels: Levels | None = None) -> float:
    """``F(r)``, or ``F(r, L)`` for ``x = (r, L)`` with free ``levels``: negative log posterior up to a constant."""
    n = pairs.n_players
    r = np.asarray(x, dtype=float)[:n]
    d = pairs.difference(r)
    nll = -(pairs.won_i @ log_expit(d) + pairs.won_j @ log_expit(-d))
    if pairs.doubles is not None:
        dd = pairs.doubles.difference(r)
        nll -= pairs.doubles.won_a @ log_expit(dd) + pairs.doubles.won_b @ log_expit(-dd)
    if levels is None:
        return float(nll + np.sum((r - prior_mean) ** 2) / (2.0 * prior_sd**2))
    level = np.asarray(x, dtype=float)[n:]
    deviation = r - level[levels.group] - prior_mean
    return float(nll + np.sum(deviation**2) / (2.0 * prior_sd**2) + np.sum((level - levels.mean) ** 2) / (2.0 * levels.sd**2))


def gradient(pairs: Pairs, x, prior_mean, prior_sd: float, levels: Levels | None = None) -> np.ndarray:
    """``dF/dx``: the solver's own gradient (``gradient_and_curvature``) without the pair weights."""
    return gradient_and_curvature(pairs, np.asarray(x, dtype=float), prior_mean, prior_sd, levels)[0]


def gradient_and_curvature(pairs: Pairs, x, prior_mean, prior_sd: float, levels: Levels | None = None):
    """``dF/dx`` and the pair weights ``n p (1 - p)`` from one pass over the pairs.

    Without levels ``x = r`` and ``dF/dr = X^T (n p - won_i) + (r - mu) / sd^2``
    (expected minus actual weighted wins, plus the prior's pull).  With free
    ``levels``, ``x = (r, L)``: the players' prior means are ``mu + B L`` and
    ``dF/dL = (L - m) / tau^2 - B^T (r - mu - B L) / sd^2``.
    """
    if levels is None:
        return _player_gradient_and_curvature(pairs, x, prior_mean, prior_sd)
    n = pairs.n_players
    r, level = x[:n], x[n:]
    conditional = prior_mean + level[levels.group]  # each player's prior mean given the levels
    grad, h = _player_gradient_and_curvature(pairs, r, conditional, prior_sd)
    pull = levels.per_division(r - conditional) / prior_sd**2
    return np.concatenate([grad, (level - levels.mean) / levels.sd**2 - pull]), h


def doubles_terms(doubles, r) -> tuple[np.ndarray, np.ndarray]:
    """The doubles games' part of ``dF/dr`` and each pair of sides' curvature ``n p (1 - p)``."""
    p = expit(doubles.difference(r))
    return doubles.per_player_difference(doubles.total * p - doubles.won_a), doubles.total * p * (1.0 - p)


def pair_curvature(pairs: Pairs, r) -> np.ndarray:
    """``n_ij p (1 - p)`` per pair (then per pair of doubles sides): the weights ``LaplacianPattern`` takes."""
    p = pair_chance(pairs, r)
    h = pairs.total * p * (1.0 - p)
    return h if pairs.doubles is None else np.concatenate([h, doubles_terms(pairs.doubles, r)[1]])


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
        self.i, self.j, self.fold = pairs.i, pairs.j, None
        if pairs.doubles is not None:
            self._add_doubles(pairs)
        key = self.i.astype(np.int64) * max(n, 1) + self.j
        self.order = None if np.all(key[1:] >= key[:-1]) else np.argsort(key, kind="stable")
        rows = self.i if self.order is None else self.i[self.order]
        self.indices = (self.j if self.order is None else self.j[self.order]).astype(np.int32)
        self.indptr = np.concatenate([[0], np.cumsum(np.bincount(rows, minlength=n))]).astype(np.int32)

    def _add_doubles(self, pairs: Pairs) -> None:
        """Edges = singles pairs and doubles edges merged; ``fold`` sums row weights onto them."""
        n, m = self.n, len(pairs.i)
        row, i, j, c = pairs.doubles.edges()
        key = np.concatenate([pairs.i.astype(np.int64) * n + pairs.j, np.minimum(i, j).astype(np.int64) * n
                              + np.maximum(i, j)])
        keys, edge = np.unique(key, return_inverse=True)
        self.i, self.j = keys // n, keys % n
        self.fold = (edge.ravel(), np.concatenate([np.arange(m), m + row]), np.concatenate([np.ones(m), c]))

    def weights(self, h) -> np.ndarray:
        """Each edge's weight in the Laplacian from the per-row curvatures ``h`` (``pair_curvature``)."""
        if self.fold is None:
            return h
        edge, source, coefficient = self.fold
        return np.bincount(edge, coefficient * np.asarray(h)[source], len(self.i))

    def diagonal(self, h, prior_sd: float) -> np.ndarray:
        """``diag(H)``: each player's summed pair weights plus ``1 / sd^2``."""
        n, w = self.n, self.weights(h)
        return np.bincount(self.i, w, n) + np.bincount(self.j, w, n) + 1.0 / prior_sd**2

    def upper(self, h) -> sp.csr_matrix:
        """The strictly upper triangle ``U`` of ``H`` for pair weights ``h``."""
        w = self.weights(h)
        values = -w if self.order is None else -w[self.order]
        return sp.csr_matrix((values, self.indices, self.indptr), shape=(self.n, self.n))

    def matvec(self, h, diag):
        """The function ``v -> H v``, without forming the symmetric matrix."""
        upper = self.upper(h)
        lower = upper.T
        return lambda v: diag * v + upper @ v + lower @ v

    def dense(self, h, prior_sd: float) -> np.ndarray:
        """``H`` as a dense array (small leagues: cheaper than building the sparse matrix first)."""
        H = np.zeros((self.n, self.n))
        w = self.weights(h)
        H[self.i, self.j] = -w  # edges are distinct, so plain assignment is exact
        H[self.j, self.i] = -w
        H[np.diag_indices(self.n)] = self.diagonal(h, prior_sd)
        return H

    def matrix(self, h, prior_sd: float) -> sp.csr_matrix:
        """``H`` as a sparse matrix for pair weights ``h``."""
        upper = self.upper(h)
        return (upper + upper.T + sp.diags(self.diagonal(h, prior_sd))).tocsr()


def hessian(pairs: Pairs, r, prior_sd: float, levels: Levels | None = None, *, curvature=None) -> sp.csr_matrix:
    """``H = X^T diag(n p (1 - p)) X + I / sd^2`` (sparse, SPD), at the strengths ``r``.

    With ``levels`` the joint Hessian over ``(r, L)`` (see the module), of size ``n + D``.
    ``curvature``: the pair weights ``n p (1 - p)`` when already computed (``pair_curvature``).
    """
    h = pair_curvature(pairs, r) if curvature is None else curvature
    H = LaplacianPattern(pairs).matrix(h, prior_sd)
    return H if levels is None else joint_hessian(H, levels, prior_sd)


def joint_hessian(H, levels: Levels, prior_sd: float) -> sp.csr_matrix:
    """The players' Hessian ``H`` bordered by the level rows: ``[[H, -B/sd^2], [-B^T/sd^2, diag(n_d/sd^2 + 1/tau^2)]]``."""
    n, D = H.shape[0], len(levels.mean)
    coupling = sp.csr_matrix((np.full(n, -1.0 / prior_sd**2), (np.arange(n), levels.group)), shape=(n, D))
    return sp.bmat([[sp.csr_matrix(H), coupling], [coupling.T, sp.diags(levels.precision(prior_sd))]], format="csr")


def pair_chance(pairs: Pairs, r) -> np.ndarray:
    """``p = sigmoid(r_i - r_j)`` per pair, as ``(1 + tanh(d / 2)) / 2`` in place (several times faster than expit)."""
    p = pairs.difference(r)
    p *= 0.5
    np.tanh(p, out=p)
    p += 1.0
    p *= 0.5
    return p


def _player_gradient_and_curvature(pairs: Pairs, r, mu, prior_sd: float):
    """``dF/dr`` for prior means ``mu`` and the pair weights ``n p (1 - p)``, reusing one buffer."""
    p = pair_chance(pairs, r)
    total = pairs.total
    g = total * p
    g -= pairs.won_i
    grad = pairs.per_player_difference(g) + (r - mu) / prior_sd**2
    np.subtract(1.0, p, out=g)
    g *= p
    g *= total
    if pairs.doubles is not None:
        grad_doubles, h_doubles = doubles_terms(pairs.doubles, r)
        grad += grad_doubles
        g = np.concatenate([g, h_doubles])
    return grad, g


def newton_step(pattern: LaplacianPattern, h, prior_sd: float, g, gmax: float, levels: Levels | None = None,
                dense_limit: int | None = None):
    """The Newton step ``-H^-1 g`` over ``r``, or over ``(r, L)`` with free ``levels``.

    With levels the diagonal level block is eliminated exactly: the players' part
    solves the Schur complement ``K + I / sd^2 - B diag(beta) B^T`` and the levels'
    part follows from it.  ``dense_limit``: see ``_solve_players``.
    """
    if levels is None:
        return -_solve_players(pattern, h, prior_sd, g, gmax, dense_limit=dense_limit)
    n, group = pattern.n, levels.group
    g_r, g_level = g[:n], g[n:]
    precision = levels.precision(prior_sd)
    step_r = -_solve_players(pattern, h, prior_sd, g_r + (g_level / (prior_sd**2 * precision))[group], gmax, levels,
                             dense_limit)
    step_level = (levels.per_division(step_r) / prior_sd**2 - g_level) / precision
    return np.concatenate([step_r, step_level])


def _solve_players(pattern: LaplacianPattern, h, prior_sd: float, rhs, gmax: float, levels: Levels | None = None,
                   dense_limit: int | None = None):
    """``S^-1 rhs`` with ``S = K + I / sd^2`` (minus ``B diag(beta) B^T`` with levels).

    Dense Cholesky up to ``dense_limit`` players (None: ``DENSE_LIMIT``); above, inexact Newton:
    Jacobi-preconditioned CG, solved more tightly as the gradient shrinks.
    """
    if pattern.n <= (DENSE_LIMIT if dense_limit is None else dense_limit):
        S = pattern.dense(h, prior_sd)
        if levels is not None:
            group = levels.group
            S -= (group[:, None] == group[None, :]) * levels.beta(prior_sd)[group][:, None]
        return sla.cho_solve(sla.cho_factor(S, check_finite=False), rhs, check_finite=False)
    rtol = min(0.1, np.sqrt(gmax)) * 0.1
    diag = pattern.diagonal(h, prior_sd)
    players = pattern.matvec(h, diag)
    if levels is None:
        return conjugate_gradient(players, rhs, 1.0 / diag, rtol, 10 * pattern.n)
    low = levels.beta(prior_sd)[levels.group]
    return conjugate_gradient(lambda v: players(v) - low * levels.per_division(v)[levels.group],
                              rhs, 1.0 / (diag - low), rtol, 10 * pattern.n)


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
    levels: Levels | None = None,
    start=None,
    gtol: float = 1e-9,
    max_iter: int = 100,
    dense_limit: int | None = None,
) -> Fit:
    """The MAP strengths by safeguarded Newton.

    Parameters
    ----------
    pairs : aggregated weighted games
    prior_mean : array (n,), prior means ``mu`` in log-odds (of the deviations ``u`` with ``levels``)
    prior_sd : prior SD ``sd`` in log-odds (> 0)
    levels : optional division levels (``tau = levels.sd``; ``tau = 0`` fixes them at their means)
    start : optional starting point for ``r`` (defaults to ``prior_mean``, plus the starting levels); with free
        ``levels`` it may also hold the levels after the strengths (``n + D`` values: a warm start of both)
    gtol : stop when ``max_k |dF/dx_k| <= gtol * max(1, mean weighted games)``
    dense_limit : players up to which Newton steps use a dense Cholesky factor, above it CG (None:
        ``DENSE_LIMIT``; the walk forward passes 0: its warm-started fits are cheapest by CG at every size)

    Raises
    ------
    FitFailed
        if the gradient test is not met within ``max_iter`` steps; no partial
        answer is returned.
    """
    mu = np.asarray(prior_mean, dtype=float)
    if prior_sd <= 0 or not np.isfinite(prior_sd):
        raise FitFailed(f"the skill spread must be a positive number (got {prior_sd!r})")
    if levels is not None and not levels.sd > 0:  # one pool: every level stays at its starting value
        fixed = np.asarray(levels.mean, dtype=float)
        fit = fit_map(pairs, mu + fixed[levels.group], prior_sd, start=start, gtol=gtol, max_iter=max_iter,
                      dense_limit=dense_limit)
        return Fit(fit.r, mu, prior_sd, fit.iterations, fit.grad_max, fixed.copy())
    base = mu if levels is None else mu + levels.mean[levels.group]
    r = base.copy() if start is None else np.array(start, dtype=float)
    if pairs.n_players == 0:
        return Fit(r, mu, prior_sd, 0, 0.0, np.zeros(0) if levels is None else levels.mean.astype(float))
    x, it, gmax = _newton(pairs, mu, prior_sd, levels, r, gtol, max_iter, dense_limit)
    n = pairs.n_players
    return Fit(x[:n], mu, prior_sd, it, gmax, x[n:] if levels is not None else np.zeros(0))


def _newton(pairs: Pairs, mu, prior_sd: float, levels: Levels | None, r, gtol: float, max_iter: int,
            dense_limit: int | None = None):
    """Safeguarded Newton over ``x = r`` (or ``(r, L)`` with levels): the optimum, steps taken, final gradient."""
    pattern = LaplacianPattern(pairs)
    tol = gtol * max(1.0, float(pairs.games_per_player().mean()))
    warm = levels is None or len(r) == pairs.n_players + len(levels.mean)  # a start may hold the levels too
    x = r if warm else np.concatenate([r, np.asarray(levels.mean, dtype=float)])

    def evaluate(y):
        return gradient_and_curvature(pairs, y, mu, prior_sd, levels)

    g, h = evaluate(x)
    gmax = float(np.max(np.abs(g)))
    for it in range(max_iter + 1):
        if not np.isfinite(gmax):
            break
        if gmax <= tol:
            return x, it, gmax
        if it == max_iter:
            break
        step = newton_step(pattern, h, prior_sd, g, gmax, levels, dense_limit)
        t, g, h = _line_search(evaluate, x, step, g)
        x = x + t * step
        gmax = float(np.max(np.abs(g)))
    raise FitFailed(
        "the rating calculation did not settle (largest gradient "
        f"{gmax:.3g} after {max_iter} steps); no ratings were changed. "
        "Check the Results sheet for impossible scores and report this if it persists."
    )


def _line_search(evaluate, x, step, g):
    """The step length ``t`` along ``step`` and the gradient and pair weights there.

    F is convex along the step, so dF/dt <= 0 at the accepted t proves a decrease.
    The full step is taken when dF/dt(1) <= 0; otherwise the line minimum lies in (0, 1) and
    is bracketed by regula falsi on dF/dt until it has lost half of its initial size.
    """
    slope0 = float(g @ step)
    lo, hi, s_lo, s_hi, t = 0.0, 1.0, slope0, None, 1.0
    for _ in range(60):
        g_new, h_new = evaluate(x + t * step)
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
    return t, g_new, h_new
