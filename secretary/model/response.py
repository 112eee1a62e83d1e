"""Best responses: each player's best strength with everyone else frozen, and who moved it.

``BR_i(x, D, t)`` (docs/model.md section 2) is player i's best strength on the
games ``D`` weighted at date ``t`` with every other player frozen at ``x``: a
one-dimensional convex problem per player, solved for all at once
(``best_response``).  The breakdown (``secretary.model.breakdown``) builds its
own, group and opponents parts from it; the opponents part is attributed to
the opponents (and doubles partners) that moved it by integrating the
linearisation ``dBR_i/dx_j`` along the path (``opponent_shares``), and the
largest movers are named (``top_opponents``: opponents and doubles partners apart).
Everything here is in natural log-odds.
"""
from __future__ import annotations

import numpy as np
from scipy.special import expit

from secretary.model import doubles
from secretary.model.pairs import Pairs

GAUSS_NODES = 3  # quadrature nodes for attributing the opponents part to opponents
TOP_OPPONENTS = 3
OPPONENT_SHARE = 0.2  # an opponent is named when they moved the part by >= 20 % of the largest mover


def best_response(pairs: Pairs, x, prior_mean, prior_sd: float, *, tol: float = 1e-12, max_iter: int = 200) -> np.ndarray:
    """``BR_i(x)`` for every player: the best strength with all others frozen at ``x`` (log-odds).

    Solves, independently for each i, ``sum_j n_ij sigmoid(y - x_j) - W_i +
    (y - mu_i) / sd^2 = 0`` (the derivative of player i's convex 1-D
    objective) by Newton steps kept inside a shrinking bracket (a bisection
    step whenever Newton would leave it), until every step is below ``tol``.
    The bracket ``[mu - sd^2 L_i - 1, mu + sd^2 W_i + 1]`` (W won, L lost,
    weighted) always holds the root.
    """
    x = np.asarray(x, dtype=float)
    mu = np.asarray(prior_mean, dtype=float)
    n = pairs.n_players
    tot = pairs.total
    wins = pairs.wins_per_player()
    lost = pairs.games_per_player() - wins
    prec = 1.0 / prior_sd**2
    lo = mu - lost / prec - 1.0  # (doubles games count in full here: the bracket only widens)
    hi = mu + wins / prec + 1.0
    y = np.clip(x, lo, hi)
    if pairs.doubles is not None:
        wins = wins - pairs.doubles.wins_per_player()  # the singles wins; doubles slopes come from ``alone``
    for _ in range(max_iter):
        pa, pb = _alone_chances(pairs, y, x)
        g = pairs.per_player(tot * pa, tot * pb) - wins + (y - mu) * prec
        h = pairs.per_player(tot * pa * (1 - pa), tot * pb * (1 - pb)) + prec
        if pairs.doubles is not None:
            slope, curvature = doubles.alone(pairs.doubles, y, x)
            g += slope
            h += curvature
        lo = np.where(g < 0, y, lo)
        hi = np.where(g > 0, y, hi)
        y_new = y - g / h
        outside = (y_new < lo) | (y_new > hi)
        y_new = np.where(outside, 0.5 * (lo + hi), y_new)
        step = float(np.max(np.abs(y_new - y))) if n else 0.0
        y = y_new
        if step <= tol:
            return y
    return y  # bisection halves the bracket every step: 200 steps leave it far below tol


def _alone_chances(pairs: Pairs, y, x) -> tuple[np.ndarray, np.ndarray]:
    """Per pair: side i at ``y`` against side j frozen at ``x``, and side j at ``y`` against side i at ``x``."""
    return expit(y[pairs.i] - x[pairs.j]), expit(y[pairs.j] - x[pairs.i])


def opponent_shares(pairs: Pairs, start, end, prior_mean, prior_sd: float):
    """Each pair's share of ``BR(end) - BR(start)`` for both players, by integrating the linearisation.

    ``dBR_i/dx_j = n_ij p(1-p) / (sum_k n_ik p(1-p) + 1/sd^2)`` with
    ``p = sigmoid(BR_i(x) - x_j)``, integrated along the straight path from
    ``start`` to ``end`` by Gauss-Legendre quadrature: the shares of player i
    then add up to ``BR_i(end) - BR_i(start)`` up to the quadrature error
    (small: the path is short and smooth).  Returns ``(to_i, to_j, to_seat)``:
    per pair what j moved i by and what i moved j by, and per doubles link
    (``doubles.links``) what the partner or opponent moved the seat's player by.
    """
    delta = end - start
    to_i = np.zeros(len(pairs.i))
    to_j = np.zeros(len(pairs.i))
    to_seat = np.zeros(0 if pairs.doubles is None else 12 * len(pairs.doubles))
    nodes, weights = np.polynomial.legendre.leggauss(GAUSS_NODES)
    for node, weight in zip((nodes + 1) / 2, weights / 2):
        x = start + node * delta
        y = best_response(pairs, x, prior_mean, prior_sd)
        pa, pb = _alone_chances(pairs, y, x)
        ha = pairs.total * pa * (1 - pa)
        hb = pairs.total * pb * (1 - pb)
        curv = pairs.per_player(ha, hb) + 1.0 / prior_sd**2
        if pairs.doubles is not None:
            curv += doubles.alone(pairs.doubles, y, x)[1]
            to_seat += weight * doubles.link_shares(pairs.doubles, y, x, curv, delta)
        to_i += weight * ha / curv[pairs.i] * delta[pairs.j]
        to_j += weight * hb / curv[pairs.j] * delta[pairs.i]
    return to_i, to_j, to_seat


def top_opponents(pairs: Pairs, to_i, to_j, opponents, names, to_seat=()):
    """Per player, ``(opponents, partners)``: the (up to 3 in all) movers of the opponents part, in its direction.

    A doubles partner's share is kept apart from the same player's share as an opponent
    (a partner rated up moves you down, an opponent rated up moves you up), so a player met
    both ways is named for the role that moved the part.
    """
    player = np.concatenate([pairs.i, pairs.j])
    other = np.concatenate([pairs.j, pairs.i])
    share = np.concatenate([to_i, to_j])
    partner = np.zeros(len(player), dtype=bool)
    if pairs.doubles is not None:  # one sum per (player, other, role) over all rows
        _, seat_player, seat_other, seat_partner = doubles.links(pairs.doubles)
        player, other = np.concatenate([player, seat_player]), np.concatenate([other, seat_other])
        partner = np.concatenate([partner, seat_partner])
        key, where = np.unique((player * len(names) + other) * 2 + partner, return_inverse=True)
        share = np.bincount(where.ravel(), np.concatenate([share, to_seat]), len(key))
        player, other, partner = key // (2 * len(names)), key // 2 % len(names), key % 2 == 1
    # Only movers in the part's own direction explain it; sort each player's by size.
    keep = np.sign(share) == np.sign(opponents[player])
    player, other, share, partner = player[keep], other[keep], share[keep], partner[keep]
    order = np.lexsort((-np.abs(share), player))
    player, other, share, partner = player[order], other[order], share[order], partner[order]
    bounds = np.searchsorted(player, np.arange(len(names) + 1))
    out = []
    for k in range(len(names)):
        lo, hi = bounds[k], min(bounds[k + 1], bounds[k] + TOP_OPPONENTS)
        top = [m for m in range(lo, hi) if abs(share[m]) >= OPPONENT_SHARE * abs(share[lo])]
        out.append(tuple(tuple((names[other[m]], float(share[m])) for m in top if partner[m] == role)
                         for role in (False, True)))
    return out
