"""Doubles games in the breakdown and the watch list: each player's seat in a pair of sides.

A doubles game between sides ``a`` and ``b`` is won by ``a`` with chance
``sigmoid(d)``, ``d = (r_a0 + r_a1 - r_b0 - r_b1) / 2`` (``pairs.Doubles``).
Player ``p`` on side ``s`` (+1 for ``a``, -1 for ``b``) sits in it with the
difference ``s d``; everything here is a per-seat pass of numpy.

- Best response (``alone``): with everyone else frozen at ``x``, player ``p``
  at ``y`` has ``d_seat = s d(x) + (y - x_p) / 2``; their 1-D objective's
  slope gains ``(n sigmoid(d_seat) - won_seat) / 2`` and its curvature
  ``n p (1 - p) / 4`` per seat.
- Attribution (``link_shares``): ``dBR_p / dx_q = -c n p (1 - p) / (4 curv_p)``
  with ``c = +1`` for a partner (a partner rated higher takes a share of the
  side's wins away from you) and ``c = -1`` for an opponent (an opponent rated
  higher makes your wins worth more).
"""
from __future__ import annotations

import numpy as np
from scipy.special import expit

from secretary.model.pairs import Doubles


def seats(doubles: Doubles) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Every seat: (row, player, side sign), the four seats of each row in turn (a0, a1, b0, b1)."""
    m = len(doubles)
    row = np.repeat(np.arange(m), 4)
    player = np.column_stack([doubles.a, doubles.b]).ravel()
    sign = np.tile([1.0, 1.0, -1.0, -1.0], m)
    return row, player, sign


def _seat_chance(doubles: Doubles, y, x):
    """Each seat's chance of winning with its player at ``y`` and everyone else at ``x``."""
    row, player, sign = seats(doubles)
    d = sign * doubles.difference(x)[row] + 0.5 * (np.take(y, player) - np.take(x, player))
    return row, player, sign, expit(d)


def alone(doubles: Doubles, y, x) -> tuple[np.ndarray, np.ndarray]:
    """The doubles part of each player's 1-D slope and curvature, others frozen at ``x`` (best response)."""
    row, player, sign, p = _seat_chance(doubles, y, x)
    total = doubles.total[row]
    won = np.where(sign > 0, doubles.won_a[row], doubles.won_b[row])
    n = doubles.n_players
    return (np.bincount(player, 0.5 * (total * p - won), n),
            np.bincount(player, 0.25 * total * p * (1.0 - p), n))


def links(doubles: Doubles) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Every (seat, other player) link: seat index, the seat's player, the other player, partner or not."""
    row, player, _ = seats(doubles)
    table = np.column_stack([doubles.a, doubles.b])  # (m, 4): a0 a1 b0 b1
    others = np.array([[1, 2, 3], [0, 2, 3], [3, 0, 1], [2, 0, 1]])  # partner first, then the two opponents
    seat = np.repeat(np.arange(len(row)), 3)
    other = table[row[seat], others[seat % 4, np.tile([0, 1, 2], len(row))]]
    partner = np.tile([True, False, False], len(row))
    return seat, player[seat], other, partner


def link_shares(doubles: Doubles, y, x, curvature, delta) -> np.ndarray:
    """Per link (``links``): ``dBR_p/dx_q * delta_q`` at the frozen values ``x`` and best responses ``y``.

    ``curvature`` : each player's whole 1-D curvature (singles, doubles and the prior's ``1/sd^2``).
    """
    row, player, _, p = _seat_chance(doubles, y, x)
    h = 0.25 * doubles.total[row] * p * (1.0 - p)
    seat, who, other, partner = links(doubles)
    sign = np.where(partner, -1.0, 1.0)
    return sign * h[seat] / curvature[who] * np.asarray(delta)[other]


def expected_wins(doubles: Doubles, r) -> np.ndarray:
    """Weighted doubles games each player's side would win at the strengths ``r``."""
    p = expit(doubles.difference(r))
    return doubles.per_player(doubles.total * p, doubles.total * (1.0 - p))
