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

Division linkage with levels (``tau > 0``).  The contrast ``c = e_d - (1 - e_d) / (D - 1)``
is division d's level minus the other divisions' average level; the common
mode of all levels, which games never see, drops out of it.  It is ``[0, c]``
in the levels' rows of ``H``.  Before any game ``Var(c . L) = tau^2 |c|^2``.
Even with every strength known exactly a part would remain,

    Var(c . L | r) = sum_k c_k^2 tau^2 s^2 / (s^2 + n_k tau^2)    (the offset),

because how a level splits from its players' deviations is the priors'
matter.  Games can only act on the rest, so
``linked_share = 1 - (Var_post - offset) / (Var_prior - offset)`` is the share
of that part's precision that comes from games: exactly 0 for a division that
has played no other (its contrast is then a prior-only direction, because the
other divisions enter it with equal weights), near 1 for a well-linked one,
whatever the division's size.  ``level_sd`` is the full posterior ± of ``c . L``.

Division linkage in one pool (``tau = 0``).  For a set of players g, ``u_g``
averages over g minus the average over the league; ``Var_post = u_g^T H^-1 u_g``
against ``s^2 |u_g|^2`` under the prior alone.  Separate pools always use this
form (with the prior covariance above when there are levels).
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

    ``prior`` is their variance under the prior alone and ``offset`` the part of
    it no game can reach (``Var(c . L | r)`` for a level; 0 for an average
    strength), both in log-odds squared.
    """

    vectors: np.ndarray  # (n_unknowns, k)
    offset: np.ndarray  # (k,)
    prior: np.ndarray  # (k,)

    def variance(self, solver) -> tuple[np.ndarray, np.ndarray]:
        """Posterior variances ``w^T H^-1 w`` (k,) and ``X = H^-1 W`` (n_unknowns, k)."""
        W = self.vectors
        X = solver.solve(W).reshape(W.shape) if W.size else W.copy()
        return np.einsum("ij,ij->j", W, X), X

    def shares(self, var: np.ndarray, s2: float) -> np.ndarray:
        """The share of what games can pin down that they do: ``1 - (Var_post - offset) / (Var_prior - offset)``.

        Clipped to [0, 1]; 1 where the prior leaves nothing to pin down.
        """
        seen = self.prior - self.offset
        with np.errstate(invalid="ignore", divide="ignore"):
            share = np.where(seen > 1e-12 * s2, 1.0 - (var - self.offset) / seen, 1.0)
        return np.clip(share, 0.0, 1.0)


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
    return Contrasts(U, np.zeros(U.shape[1]), prior)


def against_the_rest(D: int) -> np.ndarray:
    """Row d: division d's level minus the other divisions' average level (D >= 2)."""
    return (np.eye(D) * D - 1.0) / (D - 1)


def level_contrasts(fit) -> Contrasts:
    """Each division's level minus the other divisions' average level (free levels only).

    The vectors are ``c`` in the levels' rows of the joint ``H``; the offset is
    ``Var(c . L | r)``, the part no game can see.
    """
    s2, t2 = fit.prior_sd**2, division_spread(fit) ** 2
    sizes = fit.levels.sizes
    D = len(sizes)
    C = against_the_rest(D)
    hidden = t2 * s2 / (s2 + sizes * t2)  # Var(L_d | r)
    vectors = np.vstack([np.zeros((len(fit.names), D)), C.T])
    return Contrasts(vectors, np.sum(C**2 * hidden[None, :], axis=1), t2 * np.sum(C**2, axis=1))


def division_contrasts(fit) -> Contrasts:
    """The divisions against the rest: their levels with free levels, else their average strengths."""
    if fit.levels is not None:
        return level_contrasts(fit)
    n_groups = len(fit.group_names)
    return average_contrasts(fit, fit.group[:, None] == np.arange(n_groups)[None, :])
