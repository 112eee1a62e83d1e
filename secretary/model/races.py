"""Races: the chance of winning a first-to-N match, and the fairest handicap race.

If A wins each game with probability ``p``, and A needs ``a`` games while B
needs ``b``, then ``P(A wins) = sum_{k<b} C(a-1+k, k) p^a (1-p)^k = I_p(a, b)``,
the regularised incomplete beta function.

The chances shown to a secretary are *predictive*: the strength difference
``d = r_A - r_B`` (log-odds) is not known exactly but has the Laplace
posterior ``N(mean, var)``, so the chance is ``E[I_sigmoid(d)(a, b)]``.
Since ``I_p(a, b) = P(B <= p)`` for ``B ~ Beta(a, b)``, that is
``P(logit B <= d)``, integrated with ``NODES`` nodes over whichever of the
two is the narrower: Gauss-Hermite over ``d``,

    E f(d) = pi^-1/2 sum_k w_k f(mean + sqrt(2 var) x_k),

or Gauss-Jacobi over ``B``.  ``NODES = 48``: the largest error measured
against adaptive quadrature (``scipy.integrate.quad``) over races up to 50
games and difference SDs up to 3 log-odds is 1.6e-5 (32 nodes: 6.4e-5;
24: 1.6e-4), see ``tests/model/test_predictive.py``.
"""
from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy.special import betainc, expit, ndtr, polygamma, roots_jacobi

from secretary.model.scale import game_chance

NODES = 48
FAIR_ENOUGH = 0.01  # races within 1 percentage point of the fairest count as fair (a rule of thumb)
_X, _W = np.polynomial.hermite.hermgauss(NODES)


def race_chance(p, a, b):
    """Chance that a player winning each game with probability ``p`` gets ``a`` games before the opponent gets ``b``."""
    p_arr, a_arr, b_arr = np.asarray(p, dtype=float), np.asarray(a), np.asarray(b)
    if np.any((p_arr < 0) | (p_arr > 1)):
        raise ValueError(f"p must be between 0 and 1 (got {p!r})")
    if np.any(a_arr < 1) or np.any(b_arr < 1):
        raise ValueError(f"races must need at least one game each (got a={a!r}, b={b!r})")
    out = betainc(a_arr.astype(float), b_arr.astype(float), p_arr)
    return float(out) if np.ndim(out) == 0 else out


def _nodes(mean, var, nodes: int):
    """Quadrature points ``d`` (shape ``mean.shape + (nodes,)``) and weights summing to one."""
    x, w = (_X, _W) if nodes == NODES else np.polynomial.hermite.hermgauss(nodes)
    mean = np.asarray(mean, float)[..., None]
    sd = np.sqrt(2.0 * np.maximum(np.asarray(var, float), 0.0))[..., None]
    return mean + sd * x, w / np.sqrt(np.pi)


@lru_cache(maxsize=4096)
def _beta_nodes(a: int, b: int, nodes: int) -> tuple[np.ndarray, np.ndarray]:
    """Gauss-Jacobi nodes on (0, 1) as ``logit(B)`` with weights summing to one, ``B ~ Beta(a, b)``."""
    x, w = roots_jacobi(nodes, b - 1.0, a - 1.0)  # weight (1 - x)^(b-1) (1 + x)^(a-1), B = (1 + x) / 2
    return np.log1p(x) - np.log1p(-x), w / w.sum()


def _over_beta(mean, sd, a: int, b: int, nodes: int):
    """``P(logit B <= d) = E_B[Phi((mean - logit B) / sd)]``: the same chance, integrated over the race's side."""
    y, w = _beta_nodes(int(a), int(b), nodes)
    return ndtr((np.asarray(mean)[..., None] - y) / np.asarray(sd)[..., None]) @ w


def predictive_race_chance(mean, var, a, b, *, nodes: int = NODES, spread: bool = False):
    """``E[I_p(a, b)]`` with ``p = sigmoid(d)``, ``d ~ N(mean, var)`` (log-odds; ``var = 0``: the point chance).

    ``mean``, ``var``, ``a`` and ``b`` broadcast together.  ``I_p(a, b) = P(B <= p)``
    for ``B ~ Beta(a, b)``, so the chance is ``P(logit B <= d)``: it is
    integrated over whichever of ``d`` and ``logit B`` is the narrower
    (Gauss-Hermite over ``d``, Gauss-Jacobi over ``B``), so that the other's
    distribution function, the integrand, is smooth.  With ``spread`` returns
    ``(chance, sd)``, ``sd`` the posterior standard deviation of the race
    chance itself (Gauss-Hermite over ``d``; a guide to how far off the
    chance could be).
    """
    mean, var, a, b = np.broadcast_arrays(*(np.asarray(x, float) for x in (mean, var, a, b)))
    d, w = _nodes(mean, var, nodes)
    chance = betainc(a[..., None], b[..., None], expit(d))
    out = chance @ w
    sd_d = np.sqrt(np.maximum(var, 0.0))
    wide = sd_d**2 > polygamma(1, a) + polygamma(1, b)  # Var(logit B) = trigamma(a) + trigamma(b)
    if np.any(wide):
        out = np.array(out, ndmin=1)
        flat = np.flatnonzero(wide.ravel())
        keys = a.ravel()[flat] * 100003 + b.ravel()[flat]
        for key in np.unique(keys):
            at = flat[keys == key]
            out.ravel()[at] = _over_beta(mean.ravel()[at], sd_d.ravel()[at], a.ravel()[at[0]], b.ravel()[at[0]], nodes)
        out = out.reshape(mean.shape)
    if not spread:
        return float(out) if np.ndim(out) == 0 else out
    sd = np.sqrt(np.maximum(chance**2 @ w - (chance @ w) ** 2, 0.0))
    return (float(out), float(sd)) if np.ndim(out) == 0 else (out, sd)


def predictive_game_chance(mean, var, *, nodes: int = NODES):
    """``E[sigmoid(d)]``, ``d ~ N(mean, var)``: the chance of winning one game, uncertainty included."""
    d, w = _nodes(mean, var, nodes)
    out = expit(d) @ w
    return float(out) if np.ndim(out) == 0 else out


def _race_grid(shortest: int, longest: int):
    if shortest < 1 or longest < shortest:
        raise ValueError(f"races run from the shortest ({shortest!r}, at least 1) to the longest ({longest!r})")
    return np.meshgrid(np.arange(shortest, longest + 1), np.arange(shortest, longest + 1), indexing="ij")


def _fairest(a, b, chances, usual: int | None = None) -> tuple[int, int]:
    """The ``(a, b)`` whose chance is closest to one half; among (near-)ties the longest race, then the longer for A.

    With ``usual``, every race within ``FAIR_ENOUGH`` of the fairest's closeness to one half counts as fair,
    and the one nearest the usual race (``|a - usual| + |b - usual|``) is taken, then the longest.  Without it
    two near-even players (say 51 % per game) would be sent to the shortest race, since every longer even
    race lets the slightly stronger player's edge grow: a 2-2 for a league of races to 5.
    """
    gap = np.abs(chances - 0.5).ravel()
    a, b = a.ravel(), b.ravel()
    ties = np.flatnonzero(gap <= gap.min() + (1e-12 if usual is None else FAIR_ENOUGH))
    far = np.zeros(len(ties)) if usual is None else np.abs(a[ties] - usual) + np.abs(b[ties] - usual)
    pick = ties[np.lexsort((a[ties], a[ties] + b[ties], -far))[-1]]
    return int(a[pick]), int(b[pick])


def fair_race_for_chance(p: float, longest: int = 9, shortest: int = 1, usual: int | None = None) -> tuple[int, int]:
    """The race ``(a, b)``, each shortest..longest, whose ``P(A wins)`` is closest to one half; longer races win ties.

    With ``usual``, the race nearest the usual race among those within ``FAIR_ENOUGH`` of as fair (``_fairest``).
    """
    a, b = _race_grid(shortest, longest)
    return _fairest(a, b, race_chance(p, a, b), usual)


def fair_race_predictive(mean: float, var: float, longest: int = 9, shortest: int = 1,
                         usual: int | None = None) -> tuple[int, int]:
    """``fair_race_for_chance`` with predictive chances: ``d ~ N(mean, var)`` (log-odds)."""
    a, b = _race_grid(shortest, longest)
    return _fairest(a, b, predictive_race_chance(mean, var, a, b), usual)


def fair_race(rating_a: float, rating_b: float, *, longest: int = 9, shortest: int = 2,
              scale: float = 400.0) -> tuple[int, int]:
    """The ``(a, b)`` race closest to an even match between players rated ``rating_a`` and ``rating_b`` (points)."""
    return fair_race_for_chance(game_chance(rating_a, rating_b, scale), longest, shortest)
