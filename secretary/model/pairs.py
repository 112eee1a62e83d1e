"""Games aggregated per unordered pair of players, with age weights.

The likelihood only needs, for every pair (i, j), the weighted games each side
won; aggregating first makes every later pass cost O(pairs), not O(games).

Every per-player quantity of the model is a sum over the two sides of each
pair, so it is written once here.  In design-matrix terms a pair is a row of
``X = A - B``, where ``A`` and ``B`` (pairs x players) say who is on side i
and on side j (today one player each: ``A = e_i``, ``B = e_j``):

- ``difference(x)`` is ``X x`` (side i's strength minus side j's, per pair);
- ``per_player(on_i, on_j)`` is ``A^T on_i + B^T on_j`` (a value per pair for
  each side, summed per player; ``on_j = on_i`` when omitted);
- ``per_player_difference(v)`` is ``X^T v = A^T v - B^T v`` (the gradient's form).

A side made of several players with weights (doubles) changes ``A`` and ``B``
only: callers that go through these three never index ``i`` and ``j`` themselves.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np


def age_weights(age_days, half_life_days: float | None) -> np.ndarray:
    """Weight of a game ``age_days`` old: ``0.5 ** (age / half_life)``; 1 when the half-life is 0/None."""
    age = np.asarray(age_days, dtype=float)
    if not half_life_days:
        return np.ones_like(age)
    return np.exp2(-age / float(half_life_days))


@dataclass(frozen=True)
class Pairs:
    """Weighted games between each unordered pair ``i < j``.

    Attributes
    ----------
    n_players : int
    i, j : int arrays, ``i < j``, one entry per pair that met
    won_i, won_j : float arrays, age-weighted games won by ``i`` and by ``j``
    """

    n_players: int
    i: np.ndarray
    j: np.ndarray
    won_i: np.ndarray
    won_j: np.ndarray

    @cached_property
    def total(self) -> np.ndarray:
        """Weighted games per pair."""
        return self.won_i + self.won_j

    def difference(self, x) -> np.ndarray:
        """``X x``: per pair, ``x`` of side i minus ``x`` of side j (a new array)."""
        d = np.take(x, self.i)
        d -= np.take(x, self.j)
        return d

    def per_player(self, on_i, on_j=None) -> np.ndarray:
        """``A^T on_i + B^T on_j``: per player, the sum over their pairs of their side's value.

        ``on_i``, ``on_j`` : arrays (pairs,), the value for side i and for side j
        (the same for both when ``on_j`` is None).
        """
        n = self.n_players
        return np.bincount(self.i, on_i, n) + np.bincount(self.j, on_i if on_j is None else on_j, n)

    def per_player_difference(self, v) -> np.ndarray:
        """``X^T v``: per player, ``v`` summed over the pairs where they are side i minus where side j."""
        n = self.n_players
        return np.bincount(self.i, v, n) - np.bincount(self.j, v, n)

    def games_per_player(self) -> np.ndarray:
        """Weighted games each player played."""
        return self.per_player(self.total)

    def wins_per_player(self) -> np.ndarray:
        """Weighted games each player won."""
        return self.per_player(self.won_i, self.won_j)

    def expected_wins(self, p) -> np.ndarray:
        """Weighted games each player would win with chance ``p`` for side i in every pair's games."""
        return self.per_player(self.total * p, self.total * (1.0 - p))


def aggregate(idx_a, idx_b, games_a, games_b, n_players: int, weights=None) -> Pairs:
    """Sum weighted games per unordered pair.

    Parameters
    ----------
    idx_a, idx_b : int arrays, the two players of each match (``idx_a != idx_b``)
    games_a, games_b : arrays, games won by each side
    n_players : number of players (indices run over ``0..n_players-1``)
    weights : optional per-match weight (e.g. ``age_weights``); 1 when None
    """
    a = np.asarray(idx_a)
    b = np.asarray(idx_b)
    ga = np.asarray(games_a)  # kept in their own type: bincount converts as it sums
    gb = np.asarray(games_b)
    if weights is not None:
        w = np.asarray(weights, dtype=float)
        ga, gb = ga * w, gb * w
    swap = a > b
    won_lo = np.where(swap, gb, ga)
    won_hi = np.where(swap, ga, gb)
    key = np.minimum(a, b).astype(np.int64)
    key *= n_players
    key += np.maximum(a, b)
    keys, group = _group_by_key(key, n_players)
    won_i = np.bincount(group, won_lo, len(keys))
    won_j = np.bincount(group, won_hi, len(keys))
    return Pairs(n_players, keys // n_players, keys % n_players, won_i, won_j)


def _group_by_key(key: np.ndarray, n_players: int) -> tuple[np.ndarray, np.ndarray]:
    """Sorted distinct keys and each match's position among them (``np.unique`` with inverse, faster).

    When the key and the match index fit together in 63 bits, one plain sort of
    ``key << bits | index`` replaces the much slower indirect sort.
    """
    m = len(key)
    if m == 0:
        return key, np.zeros(0, dtype=np.int64)
    bits = max(1, int(m - 1).bit_length())
    if (max(n_players, 1) ** 2).bit_length() + bits > 63:
        keys, inverse = np.unique(key, return_inverse=True)
        return keys, inverse.ravel()
    packed = np.sort((key << bits) | np.arange(m, dtype=np.int64))
    order = packed & ((1 << bits) - 1)
    sorted_key = packed >> bits
    first = np.empty(m, dtype=bool)
    first[0] = True
    np.not_equal(sorted_key[1:], sorted_key[:-1], out=first[1:])
    rank = np.cumsum(first)
    rank -= 1
    group = np.empty(m, dtype=np.int64)
    group[order] = rank
    return sorted_key[first], group
