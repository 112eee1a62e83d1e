"""Why every rating changed: the exact four-part breakdown (model.md, section 2).

With ``D0`` = last update's rows as they stand now, ``D1`` = every rated row
now, ``t0``/``t1`` their reference dates and ``P`` the published ratings
(converted to strengths with today's centre and scale)::

    R0 = solve(D0, t0)  and  R1 = solve(D1, t1)       (both with today's settings)
    corrections = R0 - P
    own         = BR(R0, D1, t1) - R0
    group       = BR(R0 + d_group, D1, t1) - BR(R0, D1, t1),  d_g = mean_{j in g} (R1_j - R0_j)
    opponents   = R1 - R0 - own - group

so ``R1 - P = corrections + own + opponents + group`` holds exactly (the
opponents part is the remainder).  ``BR_i(x, D, t)`` is player i's best
strength with every other player frozen at ``x``: a one-dimensional convex
problem, solved for all players at once (``best_response``).

Choices made here (the contract leaves them open):

- Both fits share one player order (the current fit's), so ``R0`` gives a
  player with no row in ``D0`` exactly their starting rating: a newcomer's
  "previous" rating is their prior mean and their corrections part is 0.
  ``R0``'s fit starts from ``P`` (warm start).
- Groups are the current fit's divisions (Players sheet, else the division
  played most); ``d_g`` averages over every player counted in the division.
- The first update (or a missing record) runs the same arithmetic with
  ``D0`` empty and ``P`` = the starting ratings; ``Breakdown.first_update``
  tells writers to show first ratings only.
- This week's games, games won and expected games count the new rows only;
  "expected" is the sum over those games of the chance at the pre-week
  strengths ``R0`` (last week's rows, today's settings), the point from which
  the own part is measured.
- Opponents: the linearisation ``dBR_i/dr_j`` integrated along the path from
  ``R0 + d`` to ``R1`` (3-point Gauss-Legendre), so that each opponent's
  share is exact up to the quadrature error and the shares add up to the
  opponents part (measured: within 1e-6 points on a 500-player league).
- ``ageing`` (part of ``own``): ``BR(R0, D0, t1) - R0``, what the older games
  losing weight alone would do; for a player who did not play it *is* the
  own part.

Everything inside is in natural log-odds; ``PlayerChange`` carries points.
"""
from __future__ import annotations

import datetime as dt
import math
from collections import Counter
from dataclasses import dataclass, replace
from typing import Mapping, Sequence

import numpy as np
from scipy.special import expit

from secretary.model.changes import DataChanges, all_new, compare_rows
from secretary.model.league import LeagueFit, fit_league
from secretary.model.pairs import Pairs, age_weights, aggregate
from secretary.model.records import Player, PublishedState, Result, Settings
from secretary.model.scale import points_per_logodds, to_points, to_strength
from secretary.model.sentences import Context, sentence

# Settings whose change moves ratings (the rest only change what is printed).
RATING_SETTINGS = ("centre", "scale", "skill_spread", "half_life_days")
GAUSS_NODES = 3  # quadrature nodes for attributing the opponents part to opponents
TOP_OPPONENTS = 3
OPPONENT_SHARE = 0.2  # an opponent is named when they moved the part by >= 20 % of the largest mover


@dataclass(frozen=True)
class PlayerChange:
    """One player's change since the previous update, in points, with its four parts.

    ``before + own + opponents + group + corrections == after`` (to float
    precision); ``shown`` holds the whole-point figures for display,
    ``(before, after, change, own, opponents, group, corrections)``, whose
    parts add up to the shown change.  ``new_games``/``new_won`` count this
    update's new games (unweighted) and ``new_expected`` the games the
    pre-week strengths (``R0``) expected the player to win in them.
    """

    name: str
    division: str
    before: float
    after: float
    change: float
    own: float
    opponents: float
    group: float
    corrections: float
    shown: tuple[int, ...]
    new_games: int
    new_won: int
    new_expected: float
    played: bool
    is_new: bool
    top_opponents: tuple[tuple[str, float], ...]
    sentence: str
    games: int = 0  # every rated game now, unweighted
    ageing: float = 0.0  # points of ``own`` that the ageing of older games alone would give (no new games)
    days_away: int | None = None  # days since the previous game: before this week's first game, or to the reference date

    @property
    def parts(self) -> tuple[float, float, float, float]:
        """``(own, opponents, group, corrections)`` in points."""
        return (self.own, self.opponents, self.group, self.corrections)


@dataclass(frozen=True)
class Breakdown:
    """Every player's change and what caused it.

    Attributes
    ----------
    players : one ``PlayerChange`` per player with rated games now
    removed_players : ``(name, last published rating)`` of published players with no rated game left
    changes : which rows are new, edited, removed
    first_update : no previous record: these are first ratings, with no comparison
    state_missing : the record of the previous update was missing (treated as a first update)
    settings_changed : names of the rating settings that differ from the previous update
    note : one plain sentence about the whole update ("" when nothing special)
    names, before_r ... corrections_r : the same figures as arrays in log-odds, in the fit's player order
    group_shift : ``d_g`` per division, points
    """

    players: tuple[PlayerChange, ...]
    removed_players: tuple[tuple[str, float], ...]
    changes: DataChanges
    first_update: bool
    state_missing: bool
    settings_changed: tuple[str, ...]
    note: str
    reference_date: dt.date | None
    previous_reference_date: dt.date | None
    names: tuple[str, ...]
    before_r: np.ndarray
    after_r: np.ndarray
    own_r: np.ndarray
    opponents_r: np.ndarray
    group_r: np.ndarray
    corrections_r: np.ndarray
    group_shift: Mapping[str, float]

    def player(self, name: str) -> PlayerChange:
        """One player's change; KeyError when they have no rated game."""
        for pc in self.players:
            if pc.name == name:
                return pc
        raise KeyError(name)


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
    lo = mu - lost / prec - 1.0
    hi = mu + wins / prec + 1.0
    y = np.clip(x, lo, hi)
    for _ in range(max_iter):
        pa = expit(y[pairs.i] - x[pairs.j])
        pb = expit(y[pairs.j] - x[pairs.i])
        g = np.bincount(pairs.i, tot * pa, n) + np.bincount(pairs.j, tot * pb, n) - wins + (y - mu) * prec
        h = np.bincount(pairs.i, tot * pa * (1 - pa), n) + np.bincount(pairs.j, tot * pb * (1 - pb), n) + prec
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


def opponent_shares(pairs: Pairs, start, end, prior_mean, prior_sd: float):
    """Each pair's share of ``BR(end) - BR(start)`` for both players, by integrating the linearisation.

    ``dBR_i/dx_j = n_ij p(1-p) / (sum_k n_ik p(1-p) + 1/sd^2)`` with
    ``p = sigmoid(BR_i(x) - x_j)``, integrated along the straight path from
    ``start`` to ``end`` by Gauss-Legendre quadrature: the shares of player i
    then add up to ``BR_i(end) - BR_i(start)`` up to the quadrature error
    (small: the path is short and smooth).  Returns ``(to_i, to_j)`` per pair:
    what j moved i by, and what i moved j by.
    """
    n = pairs.n_players
    delta = end - start
    to_i = np.zeros(len(pairs.i))
    to_j = np.zeros(len(pairs.i))
    nodes, weights = np.polynomial.legendre.leggauss(GAUSS_NODES)
    for node, weight in zip((nodes + 1) / 2, weights / 2):
        x = start + node * delta
        y = best_response(pairs, x, prior_mean, prior_sd)
        pa = expit(y[pairs.i] - x[pairs.j])
        pb = expit(y[pairs.j] - x[pairs.i])
        ha = pairs.total * pa * (1 - pa)
        hb = pairs.total * pb * (1 - pb)
        curv = np.bincount(pairs.i, ha, n) + np.bincount(pairs.j, hb, n) + 1.0 / prior_sd**2
        to_i += weight * ha / curv[pairs.i] * delta[pairs.j]
        to_j += weight * hb / curv[pairs.j] * delta[pairs.i]
    return to_i, to_j


def _top_opponents(pairs: Pairs, to_i, to_j, opponents, names) -> list[tuple[tuple[str, float], ...]]:
    """Per player, the (up to 3) opponents that moved the opponents part most, in its direction."""
    player = np.concatenate([pairs.i, pairs.j])
    other = np.concatenate([pairs.j, pairs.i])
    share = np.concatenate([to_i, to_j])
    # Only movers in the part's own direction explain it; sort each player's by size.
    keep = np.sign(share) == np.sign(opponents[player])
    player, other, share = player[keep], other[keep], share[keep]
    order = np.lexsort((-np.abs(share), player))
    player, other, share = player[order], other[order], share[order]
    bounds = np.searchsorted(player, np.arange(len(names) + 1))
    out = []
    for k in range(len(names)):
        lo, hi = bounds[k], min(bounds[k + 1], bounds[k] + TOP_OPPONENTS)
        top = [(names[other[m]], float(share[m])) for m in range(lo, hi)]
        if top:
            top = [t for t in top if abs(t[1]) >= OPPONENT_SHARE * abs(top[0][1])]
        out.append(tuple(top))
    return out


def shown_round(value: float) -> int:
    """Whole points as a spreadsheet shows them: halves away from zero."""
    return int(math.copysign(math.floor(abs(value) + 0.5), value))


def displayed_parts(before: float, after: float, parts: Sequence[float]) -> tuple[int, ...]:
    """``(before, after, change, *parts)`` in whole points, the parts adding up to the change.

    The shown change is ``round(after) - round(before)``; each part starts at
    its floor and the missing points go to the parts with the largest
    remainders (largest-remainder rounding), or are taken from the smallest.
    """
    b, a = shown_round(before), shown_round(after)
    target = a - b
    shown = [math.floor(p) for p in parts]
    while sum(shown) < target:
        k = max(range(len(parts)), key=lambda m: parts[m] - shown[m])
        shown[k] += 1
    while sum(shown) > target:
        k = min(range(len(parts)), key=lambda m: parts[m] - shown[m])
        shown[k] -= 1
    return (b, a, target, *shown)


def settings_changed(previous: Settings, now: Settings) -> tuple[str, ...]:
    """Names of the settings that move ratings and differ between the two updates."""
    return tuple(f for f in RATING_SETTINGS if float(getattr(previous, f)) != float(getattr(now, f)))


def _order_players(fit: LeagueFit, players: Sequence[Player]) -> list[Player]:
    """Players in the fit's order, carrying their starting ratings, so a second fit shares the order."""
    starting = {p.name: p.starting for p in players}
    return [Player(name, starting=starting.get(name)) for name in fit.names]


def _rows_pairs(rows: Sequence[Result], index: Mapping[str, int], reference_date=None, half_life_days: float = 0.0) -> Pairs:
    """Games per pair for ``rows`` in a given player order; age-weighted from ``reference_date`` when a half-life is given."""
    a = np.array([index[res.player_a] for res in rows], dtype=np.int64)
    b = np.array([index[res.player_b] for res in rows], dtype=np.int64)
    ga = np.array([res.games_a for res in rows], dtype=float)
    gb = np.array([res.games_b for res in rows], dtype=float)
    age = np.array([max((reference_date - res.date).days, 0) if half_life_days else 0 for res in rows], dtype=float)
    return aggregate(a, b, ga, gb, len(index), age_weights(age, half_life_days))


def _week_games(rows: Sequence[Result], index: Mapping[str, int], r0):
    """This update's new games per player (unweighted): played, won, and expected at the strengths ``r0``."""
    week = _rows_pairs(rows, index)
    p = expit(r0[week.i] - r0[week.j])
    n = week.n_players
    expected = np.bincount(week.i, week.total * p, n) + np.bincount(week.j, week.total * (1 - p), n)
    return week.games_per_player(), week.wins_per_player(), expected


def _group_events(new_rows: Sequence[Result], home: Mapping[str, str]) -> tuple[dict[str, str], set[str]]:
    """Per division: the usual event name of its new games against other divisions, and which divisions had any."""
    events: dict[str, Counter] = {}
    for res in new_rows:
        ga, gb = home.get(res.player_a, ""), home.get(res.player_b, "")
        if ga != gb and not res.void:
            for g in (ga, gb):
                events.setdefault(g, Counter())[res.event.strip()] += 1
    named = {g: next((e for e, _ in c.most_common() if e), "") for g, c in events.items()}
    return named, set(events)


def explain_changes(
    results_now: Sequence[Result],
    published: PublishedState | None,
    settings: Settings,
    players: Sequence[Player] = (),
    *,
    state_missing: bool = False,
    current: LeagueFit | None = None,
) -> Breakdown:
    """Break every player's change since the previous update into its four exact parts.

    Parameters
    ----------
    results_now : every Results row now (void ones included), in sheet order
    published : what the previous update published; None on the first update
        or when its record is missing (then every rating is a first rating)
    settings : today's settings
    players : the Players sheet (home divisions, starting ratings)
    state_missing : the previous update's record was deleted (says so in ``note``)
    current : the plain update's fit of ``results_now`` with the same settings
        and players, to avoid fitting it twice
    """
    results_now = list(results_now)
    fit1 = current if current is not None else fit_league(results_now, settings, players=players, with_uncertainty=False)
    names = fit1.names
    n = len(names)
    index = {name: k for k, name in enumerate(names)}
    mu = fit1.prior_mean
    sd = fit1.prior_sd
    ppl = points_per_logodds(settings.scale)
    r1 = fit1.r

    first = published is None
    if first:
        changes = all_new(results_now)
        previous = ()
        r0 = mu.copy()
        p = mu.copy()
        was_published = np.zeros(n, dtype=bool)
        changed = ()
        t0 = None
    else:
        changes = compare_rows(results_now, published.rows)
        was_published = np.array([name in published.ratings for name in names])
        p = np.array([
            to_strength(published.ratings[name], settings.centre, settings.scale) if was_published[k] else mu[k]
            for k, name in enumerate(names)
        ])
        t0 = published.reference_date
        previous = changes.previous_data
        if previous:
            fit0 = fit_league(
                previous, settings, players=_order_players(fit1, players), reference_date=t0,
                start=dict(zip(names, p)), with_uncertainty=False,
            )
            r0 = fit0.r
        else:
            r0 = mu.copy()
        changed = settings_changed(published.settings, settings)

    pairs = fit1.pairs
    group = fit1.group
    br0 = best_response(pairs, r0, mu, sd)
    members = np.bincount(group, minlength=len(fit1.group_names))
    d = np.bincount(group, r1 - r0, len(fit1.group_names)) / np.maximum(members, 1)
    shifted = r0 + d[group]
    br_shift = best_response(pairs, shifted, mu, sd)
    corrections = r0 - p
    own = br0 - r0
    group_part = br_shift - br0
    opponents = r1 - r0 - own - group_part

    # The ageing share of the own part: last update's rows weighed at today's reference date, no new games.
    if not previous:
        ageing = np.zeros(n)
    else:
        old_pairs = _rows_pairs(previous, index, fit1.reference_date, settings.half_life_days)
        ageing = best_response(old_pairs, r0, mu, sd) - r0

    to_i, to_j = opponent_shares(pairs, shifted, r1, mu, sd)
    top = _top_opponents(pairs, to_i * ppl, to_j * ppl, opponents, names)

    played_all = np.zeros(n)  # every rated game now, unweighted
    last_before: dict[str, dt.date] = {}  # each player's latest game among last update's rows
    first_new: dict[str, dt.date] = {}  # each player's first new game
    for rows, book, pick in ((previous, last_before, max), (changes.new, first_new, min)):
        for res in rows:
            for name in (res.player_a, res.player_b):
                played_all[index[name]] += res.games_a + res.games_b
                book[name] = pick(book.get(name, res.date), res.date)
    new_played, new_won, new_expected = _week_games(changes.new, index, r0)

    home = {name: fit1.group_names[group[k]] for k, name in enumerate(names)}
    events, crossed = _group_events(changes.new, home)
    t1 = fit1.reference_date
    published_ratings = published.ratings if published is not None else {}
    context_base = Context(
        first_update=first,
        settings_changed=changed,
        edited_rows=changes.edited_rows,
        removed_rows=changes.removed_rows,
        dates_moved_back=bool(t0 and t1 and t1 < t0),
    )

    out = []
    for k, name in enumerate(names):
        if played_all[k] == 0:
            continue
        before = float(published_ratings[name]) if was_published[k] else float(to_points(p[k], settings.centre, settings.scale))
        after = float(to_points(r1[k], settings.centre, settings.scale))
        parts = [float(v[k] * ppl) for v in (own, opponents, group_part, corrections)]
        played = new_played[k] > 0
        if played:
            away = (first_new[name] - last_before[name]).days if name in last_before else None
        else:
            away = (t1 - last_before[name]).days if name in last_before and t1 else None
        pc = PlayerChange(
            name=name,
            division=home[name],
            before=before,
            after=after,
            change=after - before,
            own=parts[0],
            opponents=parts[1],
            group=parts[2],
            corrections=parts[3],
            shown=displayed_parts(before, after, parts),
            new_games=int(new_played[k]),
            new_won=int(new_won[k]),
            new_expected=float(new_expected[k]),
            played=bool(played),
            is_new=not bool(was_published[k]),
            top_opponents=top[k],
            sentence="",
            games=int(played_all[k]),
            days_away=away,
            ageing=float(ageing[k] * ppl),
        )
        context = replace(
            context_base,
            group_event=events.get(home[name], ""),
            group_played_others=home[name] in crossed,
        )
        out.append(replace(pc, sentence=sentence(pc, context)))

    removed_players = tuple(
        (name, float(rating)) for name, rating in published_ratings.items()
        if name not in index or played_all[index[name]] == 0
    )
    if state_missing:
        note = "The record of the previous update was missing, so these are shown as first ratings with no breakdown."
    elif first:
        note = "First update: these are first ratings, so there is nothing to compare with yet."
    elif changed:
        note = "The league's settings changed since the previous update; the effect is in the corrections column."
    else:
        note = ""
    return Breakdown(
        players=tuple(out),
        removed_players=removed_players,
        changes=changes,
        first_update=first,
        state_missing=bool(state_missing and first),
        settings_changed=changed,
        note=note,
        reference_date=t1,
        previous_reference_date=t0,
        names=names,
        before_r=p,
        after_r=r1,
        own_r=own,
        opponents_r=opponents,
        group_r=group_part,
        corrections_r=corrections,
        group_shift={g: float(d[k] * ppl) for k, g in enumerate(fit1.group_names)},
    )
