"""Races: the chance of winning a first-to-N match, and the fairest handicap race.

If A wins each game with probability ``p``, and A needs ``a`` games while B
needs ``b``, then ``P(A wins) = sum_{k<b} C(a-1+k, k) p^a (1-p)^k = I_p(a, b)``,
the regularised incomplete beta function.
"""
from __future__ import annotations

import numpy as np
from scipy.special import betainc

from secretary.model.scale import game_chance


def race_chance(p, a, b):
    """Chance that a player winning each game with probability ``p`` gets ``a`` games before the opponent gets ``b``."""
    p_arr, a_arr, b_arr = np.asarray(p, dtype=float), np.asarray(a), np.asarray(b)
    if np.any((p_arr < 0) | (p_arr > 1)):
        raise ValueError(f"p must be between 0 and 1 (got {p!r})")
    if np.any(a_arr < 1) or np.any(b_arr < 1):
        raise ValueError(f"races must need at least one game each (got a={a!r}, b={b!r})")
    out = betainc(a_arr.astype(float), b_arr.astype(float), p_arr)
    return float(out) if np.ndim(out) == 0 else out


def fair_race_for_chance(p: float, longest: int = 9) -> tuple[int, int]:
    """The race ``(a, b)``, each 1..longest, whose ``P(A wins)`` is closest to one half; longer races win ties."""
    if longest < 1:
        raise ValueError(f"the longest race must be at least 1 (got {longest!r})")
    a, b = np.meshgrid(np.arange(1, longest + 1), np.arange(1, longest + 1), indexing="ij")
    gap = np.abs(race_chance(p, a, b) - 0.5).ravel()
    a, b = a.ravel(), b.ravel()
    ties = np.flatnonzero(gap <= gap.min() + 1e-12)
    # Among (near-)equal gaps prefer the longest race (more games = less luck), then the longer for A.
    pick = ties[np.lexsort((a[ties], a[ties] + b[ties]))[-1]]
    return int(a[pick]), int(b[pick])


def fair_race(rating_a: float, rating_b: float, *, longest: int = 9, scale: float = 400.0) -> tuple[int, int]:
    """The ``(a, b)`` race closest to an even match between players rated ``rating_a`` and ``rating_b`` (points)."""
    return fair_race_for_chance(game_chance(rating_a, rating_b, scale), longest)
