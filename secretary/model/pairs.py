"""Games aggregated per unordered pair of players (and per pair of doubles sides), with age weights.

The likelihood only needs, for every pair (i, j), the weighted games each side
won; aggregating first makes every later pass cost O(pairs), not O(games).

Every per-player quantity of the model is a sum over the two sides of each
pair, so it is written once here.  In design-matrix terms a pair is a row of
``X = A - B``, where ``A`` and ``B`` (pairs x players) say who is on side i
and on side j (one player each in singles: ``A = e_i``, ``B = e_j``):

- ``difference(x)`` is ``X x`` (side i's strength minus side j's, per pair);
- ``per_player(on_i, on_j)`` is ``A^T on_i + B^T on_j`` (a value per pair for
  each side, summed per player; ``on_j = on_i`` when omitted);
- ``per_player_difference(v)`` is ``X^T v = A^T v - B^T v`` (the gradient's form).

Doubles games sit apart in ``Pairs.doubles`` (``Doubles``, per unordered pair
of sides, ``A = (e_a0 + e_a1) / 2``), with the same three helpers; the pairs'
own helpers cover the singles games, the per-player totals both.
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
    doubles: "Doubles | None" = None  # doubles games by pair of sides; None in a singles-only league

    @cached_property
    def total(self) -> np.ndarray:
        """Weighted singles games per pair."""
        return self.won_i + self.won_j

    def singles_games_per_player(self) -> np.ndarray:
        """Weighted singles games each player played."""
        return self.per_player(self.total)

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
        if not len(self.i):  # (bincount with no weights at all counts in integers)
            return np.zeros(n)
        return np.bincount(self.i, on_i, n) + np.bincount(self.j, on_i if on_j is None else on_j, n)

    def per_player_difference(self, v) -> np.ndarray:
        """``X^T v``: per player, ``v`` summed over the pairs where they are side i minus where side j."""
        n = self.n_players
        if not len(self.i):
            return np.zeros(n)
        return np.bincount(self.i, v, n) - np.bincount(self.j, v, n)

    def games_per_player(self) -> np.ndarray:
        """Weighted games each player played (singles and doubles)."""
        games = self.singles_games_per_player()
        return games if self.doubles is None else games + self.doubles.games_per_player()

    def wins_per_player(self) -> np.ndarray:
        """Weighted games each player won (singles and doubles)."""
        wins = self.per_player(self.won_i, self.won_j)
        return wins if self.doubles is None else wins + self.doubles.wins_per_player()

    def doubles_games_per_player(self) -> np.ndarray:
        """Weighted doubles games each player played (zeros in a singles-only league)."""
        return np.zeros(self.n_players) if self.doubles is None else self.doubles.games_per_player()

    def expected_wins(self, p) -> np.ndarray:
        """Weighted singles games each player would win with chance ``p`` for side i in every pair's games."""
        return self.per_player(self.total * p, self.total * (1.0 - p))


@dataclass(frozen=True)
class Doubles:
    """Weighted doubles games between each unordered pair of sides.

    A side's strength is the mean of its two players' strengths, so a game between
    sides ``a`` and ``b`` is won by ``a`` with chance ``sigmoid(x . r)``,
    ``x = (e_a0 + e_a1 - e_b0 - e_b1) / 2``.

    Attributes
    ----------
    n_players : int
    a, b : int arrays (m, 2), the two sides' players, each row sorted, side ``a`` the smaller
    won_a, won_b : float arrays, age-weighted games won by each side
    """

    n_players: int
    a: np.ndarray
    b: np.ndarray
    won_a: np.ndarray
    won_b: np.ndarray

    @cached_property
    def total(self) -> np.ndarray:
        """Weighted games per pair of sides."""
        return self.won_a + self.won_b

    def __len__(self) -> int:
        return len(self.won_a)

    def difference(self, r) -> np.ndarray:
        """``x . r`` per pair of sides: mean strength of side ``a`` minus that of side ``b``."""
        r = np.asarray(r)
        return 0.5 * (r[self.a[:, 0]] + r[self.a[:, 1]] - r[self.b[:, 0]] - r[self.b[:, 1]])

    def per_player(self, value_a, value_b) -> np.ndarray:
        """Per-player sums: ``value_a`` to both players of side ``a``, ``value_b`` to both of side ``b``."""
        n = self.n_players
        return (np.bincount(self.a[:, 0], value_a, n) + np.bincount(self.a[:, 1], value_a, n)
                + np.bincount(self.b[:, 0], value_b, n) + np.bincount(self.b[:, 1], value_b, n))

    def per_player_difference(self, g) -> np.ndarray:
        """``X^T g``: per player, ``g / 2`` summed where on side a minus where on side b (the gradient's form)."""
        return self.per_player(0.5 * g, -0.5 * g)

    def games_per_player(self) -> np.ndarray:
        return self.per_player(self.total, self.total)

    def wins_per_player(self) -> np.ndarray:
        return self.per_player(self.won_a, self.won_b)

    def edges(self) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """``x x^T`` as a signed Laplacian: (row of each edge, i, j, coefficient).

        ``x x^T = sum_edges c (e_i - e_j)(e_i - e_j)^T`` with ``c = 1/4`` between
        opponents and ``c = -1/4`` between partners (``x`` sums to zero).
        """
        a, b = self.a, self.b
        m = len(self)
        row = np.tile(np.arange(m), 6)
        i = np.concatenate([a[:, 0], a[:, 0], a[:, 1], a[:, 1], a[:, 0], b[:, 0]])
        j = np.concatenate([b[:, 0], b[:, 1], b[:, 0], b[:, 1], a[:, 1], b[:, 1]])
        c = np.repeat([0.25, 0.25, 0.25, 0.25, -0.25, -0.25], m)
        return row, i, j, c

    def linked(self) -> tuple[np.ndarray, np.ndarray]:
        """Every two players who met in a doubles game, as partners or opponents (``i``, ``j``)."""
        _, i, j, _ = self.edges()
        return i, j


def aggregate(idx_a, idx_b, games_a, games_b, n_players: int, weights=None,
              partner_a=None, partner_b=None) -> Pairs:
    """Sum weighted games per unordered pair (and doubles per unordered pair of sides).

    Parameters
    ----------
    idx_a, idx_b : int arrays, the two players of each match (``idx_a != idx_b``)
    games_a, games_b : arrays, games won by each side
    n_players : number of players (indices run over ``0..n_players-1``)
    weights : optional per-match weight (e.g. ``age_weights``); 1 when None
    partner_a, partner_b : optional int arrays, each side's second player, -1 in a singles match
    """
    if partner_a is not None and np.any(np.asarray(partner_a) >= 0):
        return _with_doubles(idx_a, idx_b, games_a, games_b, n_players, weights, partner_a, partner_b)
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


def _with_doubles(idx_a, idx_b, games_a, games_b, n_players, weights, partner_a, partner_b) -> Pairs:
    """``aggregate`` of a league with doubles: the singles rows as before, the doubles rows by side."""
    doubles = np.asarray(partner_a) >= 0
    single = ~doubles
    w = None if weights is None else np.asarray(weights, dtype=float)

    def pick(x, rows):
        return np.asarray(x)[rows]

    pairs = aggregate(pick(idx_a, single), pick(idx_b, single), pick(games_a, single), pick(games_b, single),
                      n_players, None if w is None else w[single])
    ga = pick(games_a, doubles).astype(float)
    gb = pick(games_b, doubles).astype(float)
    if w is not None:
        ga, gb = ga * w[doubles], gb * w[doubles]
    side_a = np.sort(np.column_stack([pick(idx_a, doubles), pick(partner_a, doubles)]), axis=1)
    side_b = np.sort(np.column_stack([pick(idx_b, doubles), pick(partner_b, doubles)]), axis=1)
    swap = (side_a[:, 0] > side_b[:, 0]) | ((side_a[:, 0] == side_b[:, 0]) & (side_a[:, 1] > side_b[:, 1]))
    lo = np.where(swap[:, None], side_b, side_a)
    hi = np.where(swap[:, None], side_a, side_b)
    sides, group = np.unique(np.column_stack([lo, hi]).astype(np.int64), axis=0, return_inverse=True)
    group = group.ravel()
    won_a = np.bincount(group, np.where(swap, gb, ga), len(sides))
    won_b = np.bincount(group, np.where(swap, ga, gb), len(sides))
    table = Doubles(n_players, sides[:, :2].copy(), sides[:, 2:].copy(), won_a, won_b)
    return Pairs(n_players, pairs.i, pairs.j, pairs.won_i, pairs.won_j, table)
