"""Posterior solves and contrasts: how well a level, or a group's average, is known against the rest.

Posterior.  The unknowns are the strengths ``r`` and, with free division
levels, the levels ``L`` (``r_i = L_d(i) + u_i``, ``L_d ~ N(m_d, tau^2)``,
``u_i ~ N(mu_i, s^2)``); ``H`` is the fit's Hessian at the optimum over them
(``fit.hessian``: ``K = A + I / s^2`` over the strengths, ``A`` the
likelihood's Laplacian with ``n p (1 - p)`` per pair, bordered by one row and
column per division).  The Laplace posterior covariance is ``H^-1``, so a
quantity ``w . x`` has variance ``w^T H^-1 w`` (``HessianSolver``, one solve
per quantity).  Under the prior alone the strengths' covariance is
``s^2 I + tau^2 B B^T`` (``B`` the player-by-division indicator); with
``tau = 0`` (one pool) the levels are fixed and ``H = K``.

A division's level against the rest (``level_contrasts``, ``tau > 0``): the
contrast ``c = e_d - (1 - e_d) / (D - 1)`` is division d's level minus the
other divisions' average level; the common mode of all levels, which games
never see, drops out of it.  It is ``[0, c]`` in the levels' rows of ``H``;
before any game ``Var(c . L) = tau^2 |c|^2``.  Its posterior ± (``level_sd``)
stays wide even for a well-linked division, because how a division's strength
splits between its level and its players' deviations is the priors' matter, so
it does not say how well the games tie the division in.

Linkage (``gap_contrasts``, ``linked_shares``).  What the games can pin down is
a division's *gap*: its players' average strength minus the rest's, the rest's
divisions weighted by the prior precision of their averages
``1 / (tau^2 + s^2 / n_k)`` (in one pool: the other players' average).  Under
that weighting the rest's average is independent, under the prior, of every
difference the other divisions' games see, so a division that played no other
keeps exactly its prior variance.  The games' precision about the gap is
``G = 1 / Var_post - 1 / Var_prior`` and the linked share
``G rho^2 / (1 + G rho^2)`` compares it with a fixed reference prior of ±rho:
not with the Division spread (a wider prior would make a handful of games look
decisive) nor with the size of the division (the prior alone pins the average
of 300 players to ``s / sqrt(300)``).  Its maths is the same in one pool and
with levels.

Separate pools and one pool's division ± (``average_contrasts``): ``u_g``
averages over a set of players g minus the average over the league;
``Var_post = u_g^T H^-1 u_g`` against ``u_g^T (s^2 I + tau^2 B B^T) u_g``.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse.linalg as spla

from secretary.model.fit import conjugate_gradient, hessian, pair_curvature

# Players up to which solves use a sparse LU factor; above, Jacobi-preconditioned CG.  Leagues
# whose divisions mix at random fill the factor in badly (10,000 players: 30 M entries, 40 s),
# while CG stays near-linear (2 s); at 1,500 players both take a fraction of a second.
FACTOR_LIMIT = 1500


# ---------------------------------------------------------------------------
# Solves with the posterior precision


class HessianSolver:
    """Solves ``K x = b`` for many right-hand sides without forming ``K^-1``.

    ``method``: "factor" (sparse LU with a symmetric ordering, exact to
    rounding), "cg" (conjugate gradients with a Jacobi preconditioner, relative
    residual ``rtol``), or "auto" (factor up to ``FACTOR_LIMIT`` players).
    """

    def __init__(self, H, method: str = "auto", rtol: float = 1e-11):
        n = H.shape[0]
        if method == "auto":
            method = "factor" if n <= FACTOR_LIMIT else "cg"
        if method not in ("factor", "cg"):
            raise ValueError(f"method must be 'auto', 'factor' or 'cg' (got {method!r})")
        self.method, self.rtol, self.n = method, rtol, n
        if method == "factor":
            self._lu = spla.splu(H.tocsc(), permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                                 options={"SymmetricMode": True})
        else:
            self._H = H.tocsr()
            self._inv_diag = 1.0 / self._H.diagonal()

    def solve(self, b) -> np.ndarray:
        """``K^-1 b`` for a vector or for each column of a matrix."""
        b = np.asarray(b, dtype=float)
        if self.n == 0:
            return b.copy()
        if self.method == "factor":
            return self._lu.solve(b)
        if b.ndim == 1:
            return self._cg(b)
        return np.column_stack([self._cg(col) for col in b.T]) if b.shape[1] else b.copy()

    def _cg(self, b: np.ndarray) -> np.ndarray:
        return conjugate_gradient(self._H.dot, b, self._inv_diag, self.rtol, 20 * self.n)


def division_spread(fit) -> float:
    """The fit's prior SD of division levels, log-odds (0 when the levels are fixed: one pool)."""
    return fit.levels.sd if fit.levels is not None else 0.0


def posterior_solver(fit, method: str = "auto"):
    """A solver for the fit's posterior precision ``H``, and the pair weights ``n p (1 - p)``.

    ``H`` is over the strengths, and with free division levels over ``(r, L)``
    (``fit.hessian``: the players' block bordered by one row per division).
    """
    h = pair_curvature(fit.pairs, fit.r)
    return HessianSolver(hessian(fit.pairs, fit.r, fit.prior_sd, fit.levels, curvature=h), method), h


# ---------------------------------------------------------------------------
# Contrasts: levels against the rest


@dataclass(frozen=True)
class Contrasts:
    """Quantities ``w . x`` over the unknowns ``x`` of ``H`` (strengths, then any free levels).

    ``prior`` is their variance under the prior alone, log-odds squared.
    """

    vectors: np.ndarray  # (n_unknowns, k)
    prior: np.ndarray  # (k,)

    def variance(self, solver) -> tuple[np.ndarray, np.ndarray]:
        """Posterior variances ``w^T H^-1 w`` (k,) and ``X = H^-1 W`` (n_unknowns, k)."""
        W = self.vectors
        X = solver.solve(W).reshape(W.shape) if W.size else W.copy()
        return np.einsum("ij,ij->j", W, X), X


def level_vectors(members: np.ndarray) -> np.ndarray:
    """Columns ``u_g``: average over group g minus average over everyone.

    Parameters
    ----------
    members : bool array (n_players, n_groups), True where a player is in a group
    """
    members = np.asarray(members, dtype=bool)
    n = members.shape[0]
    sizes = np.maximum(members.sum(axis=0), 1)
    return members / sizes - (1.0 / n if n else 0.0)


def average_contrasts(fit, members: np.ndarray) -> Contrasts:
    """Each set's average strength minus the league's; prior covariance ``s^2 I + tau^2 B B^T``.

    With free levels the vectors carry zeros in the levels' rows of ``H``.
    """
    U = level_vectors(members)
    per_division = np.zeros((len(fit.group_names), U.shape[1]))
    np.add.at(per_division, fit.group, U)
    prior = fit.prior_sd**2 * np.sum(U**2, axis=0) + division_spread(fit) ** 2 * np.sum(per_division**2, axis=0)
    if fit.levels is not None:
        U = np.vstack([U, np.zeros_like(per_division)])
    return Contrasts(U, prior)


def against_the_rest(D: int) -> np.ndarray:
    """Row d: division d's level minus the other divisions' average level (D >= 2)."""
    return (np.eye(D) * D - 1.0) / (D - 1)


def level_contrasts(fit) -> Contrasts:
    """Each division's level minus the other divisions' average level (free levels only).

    The vectors are ``c`` in the levels' rows of the joint ``H``; before any game ``Var(c . L) = tau^2 |c|^2``.
    """
    t2 = division_spread(fit) ** 2
    C = against_the_rest(len(fit.levels.sizes))
    vectors = np.vstack([np.zeros((len(fit.names), C.shape[0])), C.T])
    return Contrasts(vectors, t2 * np.sum(C**2, axis=1))


def gap_contrasts(fit) -> Contrasts:
    """Each division's average strength minus the rest of the league's (linkage: ``linked_shares``).

    The rest is the other divisions' average strengths weighted by their prior
    precision ``1 / (tau^2 + s^2 / n_k)`` (in one pool: the other players'
    average).  That weighting makes the rest's average independent, under the
    prior, of every difference between the other divisions, so games that do
    not leave division g tell nothing about its gap: its variance stays the prior's.
    With free levels the vectors carry zeros in the levels' rows of ``H``.
    """
    n, D = len(fit.names), len(fit.group_names)
    sizes = np.bincount(fit.group, minlength=D).astype(float)
    s2, t2 = fit.prior_sd**2, division_spread(fit) ** 2
    with np.errstate(divide="ignore"):
        var_mean = np.where(sizes > 0, t2 + s2 / np.maximum(sizes, 1.0), np.inf)  # prior Var of a division's average
    weight = np.where(sizes > 0, 1.0 / var_mean, 0.0)
    per_division = np.zeros((D, D))  # column g: the gap's weights on the divisions' average strengths
    for g in range(D):
        rest = np.where(np.arange(D) == g, 0.0, weight)
        if sizes[g] > 0 and rest.sum() > 0:
            per_division[:, g] = -rest / rest.sum()
            per_division[g, g] = 1.0
    W = per_division[fit.group] / np.maximum(sizes[fit.group], 1.0)[:, None] if n else np.zeros((0, D))
    prior = np.sum(per_division**2 * np.where(sizes > 0, var_mean, 0.0)[:, None], axis=0)
    if fit.levels is not None:
        W = np.vstack([W, np.zeros((len(fit.level), D))])
    return Contrasts(W, prior)


def linked_shares(var: np.ndarray, prior: np.ndarray, reference: float) -> np.ndarray:
    """The share of a gap's precision that comes from games, against a fixed reference prior ``N(0, reference^2)``.

    Games' precision ``G = 1 / Var_post - 1 / Var_prior`` (what the games add to
    the prior's); the share is ``G / (G + 1 / reference^2)``: 0 with no games
    across, 1/2 when the games alone pin the gap to ``reference`` log-odds, near
    1 well beyond.  The reference is fixed, so a wider Division spread (a weaker
    prior) does not make the same games look more decisive.  1 where the prior
    leaves nothing to pin down (a division without players, or no rest).
    """
    with np.errstate(invalid="ignore", divide="ignore"):
        games = np.where((prior > 0) & (var > 0), 1.0 / var - 1.0 / prior, np.inf)
    games = np.where(games * prior > 1e-9, games, 0.0)  # below rounding: no game reached the gap
    ref = reference**2
    return np.where(np.isinf(games), 1.0, games * ref / (1.0 + games * ref))


def division_contrasts(fit) -> Contrasts:
    """The divisions against the rest: their levels with free levels, else their average strengths."""
    if fit.levels is not None:
        return level_contrasts(fit)
    n_groups = len(fit.group_names)
    return average_contrasts(fit, fit.group[:, None] == np.arange(n_groups)[None, :])
