"""Why every rating changed: the exact four-part breakdown (docs/model.md, section 2).

With ``D0`` = last update's rows as they stand now, ``D1`` = every rated row
now, ``t0``/``t1`` their reference dates and ``P`` the published ratings
(converted to strengths with today's centre and scale)::

    R0 = solve(D0, t0)  and  R1 = solve(D1, t1)       (both with today's settings)
    corrections = R0 - P
    own         = BR(R0, D1, t1) - R0
    group       = BR(R0 + d, D1, t1) - BR(R0, D1, t1)
    opponents   = R1 - R0 - own - group

so ``R1 - P = corrections + own + opponents + group`` holds exactly (the
opponents part is the remainder; since ``BR(R1, D1, t1) = R1`` it is also
``BR(R1) - BR(R0 + d)``, what the others' own re-rating did).  ``BR_i(x, D, t)``
is player i's best strength with every other player frozen at ``x``: a
one-dimensional convex problem, solved for all players at once
(``response.best_response``).  The shift ``d_j`` moves each player with their division:
with division levels it is the change of their division's level with every
deviation frozen, ``L1_d(j) - L0_d(j)`` (their prior mean moving with it; a
player whose home division changed goes from the old division's ``L0`` to the
new one's ``L1``); in one pool it is their division's mean change
``mean_{k in g} (R1_k - R0_k)``.  ``tests/model/test_breakdown.py`` computes
each part again from these definitions.

Choices made here (the contract leaves them open):

- Both fits share one player order (the current fit's), so ``R0`` gives a
  player with no row in ``D0`` exactly their starting rating: a newcomer's
  "previous" rating is their prior mean and their corrections part is 0.
  ``R0``'s fit starts from ``P`` (warm start).
- Groups are the current fit's divisions (Players sheet, else the division
  of the player's most recent result); in one pool ``d_g`` averages over every player counted in the
  division.
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

from secretary.model import doubles
from secretary.model.changes import DataChanges, all_new, compare_rows
from secretary.model.league import LeagueFit, fit_league
from secretary.model.pairs import Pairs, age_weights, aggregate
from secretary.model.records import Player, PublishedState, Result, Settings
from secretary.model.response import best_response, opponent_shares, top_opponents
from secretary.model.scale import points_per_logodds, to_points, to_strength
from secretary.model.sentences import Context, sentence, update_note

# Settings whose change moves ratings (the rest only change what is printed).
RATING_SETTINGS = ("centre", "scale", "skill_spread", "half_life_days", "division_spread")


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
    top_partners: tuple[tuple[str, float], ...] = ()  # doubles partners who moved the opponents part (not in top_opponents)

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
    level_before : each division's level at ``R0`` (points above the centre; the starting levels in one pool)
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
    level_before: Mapping[str, float] = None

    def player(self, name: str) -> PlayerChange:
        """One player's change; KeyError when they have no rated game."""
        for pc in self.players:
            if pc.name == name:
                return pc
        raise KeyError(name)


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
    """Players in the fit's order, carrying their Players-sheet divisions and starting ratings, so a second fit shares the order."""
    sheet = {p.name: p for p in players}
    return [Player(name, division=sheet[name].division if name in sheet else "",
                   starting=sheet[name].starting if name in sheet else None) for name in fit.names]


def _rows_pairs(rows: Sequence[Result], index: Mapping[str, int], reference_date=None, half_life_days: float = 0.0) -> Pairs:
    """Games per pair for ``rows`` in a given player order; age-weighted from ``reference_date`` when a half-life is given."""
    a = np.array([index[res.player_a] for res in rows], dtype=np.int64)
    b = np.array([index[res.player_b] for res in rows], dtype=np.int64)
    ga = np.array([res.games_a for res in rows], dtype=float)
    gb = np.array([res.games_b for res in rows], dtype=float)
    age = np.array([max((reference_date - res.date).days, 0) if half_life_days else 0 for res in rows], dtype=float)
    partner_a = np.array([index[res.partner_a] if res.is_doubles else -1 for res in rows], dtype=np.int64)
    partner_b = np.array([index[res.partner_b] if res.is_doubles else -1 for res in rows], dtype=np.int64)
    return aggregate(a, b, ga, gb, len(index), age_weights(age, half_life_days), partner_a, partner_b)


def _week_games(rows: Sequence[Result], index: Mapping[str, int], r0):
    """This update's new games per player (unweighted): played, won, and expected at the strengths ``r0``."""
    week = _rows_pairs(rows, index)
    expected = week.expected_wins(expit(week.difference(r0)))
    if week.doubles is not None:
        expected += doubles.expected_wins(week.doubles, r0)
    return week.games_per_player(), week.wins_per_player(), expected


def _group_events(new_rows: Sequence[Result], home: Mapping[str, str]) -> tuple[dict[str, str], set[str]]:
    """Per division: the usual event name of its new games against other divisions, and which divisions had any."""
    events: dict[str, Counter] = {}
    for res in new_rows:
        met = {home.get(name, "") for name in res.players}
        if len(met) > 1 and not res.void:
            for g in sorted(met):
                events.setdefault(g, Counter())[res.event.strip()] += 1
    named = {g: next((e for e, _ in c.most_common() if e), "") for g, c in events.items()}
    return named, set(events)


@dataclass(frozen=True)
class _Before:
    """The previous update seen with today's settings: ``R0``, its levels and the published ``P``."""

    changes: DataChanges
    previous: tuple[Result, ...]
    r0: np.ndarray
    level0: np.ndarray  # each player's division level at R0 (log-odds; their home division then)
    division_level0: np.ndarray  # the level at R0 of each of the current fit's divisions (log-odds)
    p: np.ndarray
    was_published: np.ndarray
    settings_changed: tuple[str, ...]
    t0: dt.date | None
    first: bool


def _before(results_now: Sequence[Result], published: PublishedState | None, settings: Settings,
            players: Sequence[Player], fit1: LeagueFit) -> _Before:
    """``R0 = solve(D0, t0)`` in the current fit's player order and divisions, and the published ratings ``P``.

    A player not published before (a newcomer) has ``P = R0``: their prior mean
    (given their division's previous level), so their corrections part is 0.
    """
    names, n = fit1.names, len(fit1.names)
    deviation_mean = fit1.prior_mean - fit1.level[fit1.group]
    start0 = deviation_mean + fit1.starting_level[fit1.group]
    if published is None:
        return _Before(all_new(results_now), (), start0, fit1.starting_level[fit1.group], fit1.starting_level.copy(),
                       start0.copy(),
                       np.zeros(n, dtype=bool), (), None, True)
    changes = compare_rows(results_now, published.rows)
    was_published = np.array([name in published.ratings for name in names])
    p = np.array([to_strength(published.ratings[name], settings.centre, settings.scale) if was_published[k]
                  else start0[k] for k, name in enumerate(names)])
    kept = {id(res) for res in changes.previous_data}
    previous = tuple(res for res in results_now if id(res) in kept)  # in sheet order, as the current fit sees them
    r0, level0, division_level0 = start0, fit1.starting_level[fit1.group], fit1.starting_level.copy()
    if previous:
        # Last update's rows with their own home divisions (so unchanged rows give P again); a player
        # with no row among them is placed where the current fit places them.
        seen = {name for res in previous for name in res.players}
        fit0 = fit_league(
            previous, settings, players=_order_players(fit1, players), reference_date=published.reference_date,
            start=dict(zip(names, p)), with_uncertainty=False, starting_levels=fit1.starting_levels(),
            home={name: division for name, division in fit1.homes().items() if name not in seen},
        )
        r0, level0 = fit0.r, fit0.level[fit0.group]
        was = {g: fit0.level[k] for k, g in enumerate(fit0.group_names)}
        division_level0 = np.array([was.get(g, m) for g, m in zip(fit1.group_names, fit1.starting_level)])
    p = np.where(was_published, p, r0)
    return _Before(changes, previous, r0, level0, division_level0, p, was_published,
                   settings_changed(published.settings, settings), published.reference_date, False)


@dataclass(frozen=True)
class _Parts:
    """The four parts in log-odds, and what the opponents' attribution needs."""

    own: np.ndarray
    opponents: np.ndarray
    group: np.ndarray
    corrections: np.ndarray
    ageing: np.ndarray
    shifted: np.ndarray  # R0 with every division moved by its shift
    shifted_mean: np.ndarray  # the prior means that go with ``shifted``
    shift: np.ndarray  # each division's shift d_g (log-odds)


def _parts(fit1: LeagueFit, before: _Before, settings: Settings, index: Mapping[str, int]) -> _Parts:
    """own, group, opponents (the remainder) and corrections, as in the module's formulas.

    With free division levels the shift of a division is the change of its
    level, ``d = L1 - L0``, every deviation frozen: ``shifted = R0 + B d``,
    with each player's prior mean moving with their level (``mu + L0`` before,
    ``mu + L1`` after; a player whose home division changed moves from the old
    division's ``L0`` to the new one's ``L1``).  In one pool ``d`` is the
    division's mean change.
    """
    group, D, sd = fit1.group, len(fit1.group_names), fit1.prior_sd
    r0, r1 = before.r0, fit1.r
    deviation_mean = fit1.prior_mean - fit1.level[group]
    mean0, mean1 = deviation_mean + before.level0, fit1.prior_mean  # the prior means that go with R0 and R1
    if fit1.levels is not None:
        shift = fit1.level - before.division_level0
        shifted = r0 + fit1.level[group] - before.level0  # a player who moved division moves to the new level
    else:
        shift = np.bincount(group, r1 - r0, D) / np.maximum(np.bincount(group, minlength=D), 1)
        shifted = r0 + shift[group]
    br0 = best_response(fit1.pairs, r0, mean0, sd)
    own = br0 - r0
    group_part = best_response(fit1.pairs, shifted, mean1, sd) - br0
    if before.previous:  # the ageing share of the own part: last update's rows weighed at today's date
        old_pairs = _rows_pairs(before.previous, index, fit1.reference_date, settings.half_life_days)
        ageing = best_response(old_pairs, r0, mean0, sd) - r0
    else:
        ageing = np.zeros(len(r0))
    return _Parts(own, r1 - r0 - own - group_part, group_part, r0 - before.p, ageing, shifted, mean1, shift)


def _activity(previous: Sequence[Result], new: Sequence[Result], index: Mapping[str, int]):
    """Every rated game now per player (unweighted), each one's latest game before and first game this update."""
    played_all = np.zeros(len(index))
    last_before: dict[str, dt.date] = {}
    first_new: dict[str, dt.date] = {}
    names = list(index)
    for rows, book, latest in ((previous, last_before, True), (new, first_new, False)):
        seat, row = _seats(rows, index)
        if not len(seat):
            continue
        games = np.array([res.games_a + res.games_b for res in rows], dtype=float)
        played_all += np.bincount(seat, games[row], len(index))  # whole games: exact in any order
        day = np.array([res.date.toordinal() for res in rows], dtype=np.int64)[row]
        pick = np.full(len(index), -1 if latest else np.iinfo(np.int64).max, dtype=np.int64)
        (np.maximum if latest else np.minimum).at(pick, seat, day)
        for k in np.unique(seat).tolist():
            book[names[k]] = dt.date.fromordinal(int(pick[k]))
    return played_all, last_before, first_new


def _seats(rows: Sequence[Result], index: Mapping[str, int]) -> tuple[np.ndarray, np.ndarray]:
    """Every seat of ``rows`` (each player of each row, as ``Result.players``): the player's index and the row's."""
    a = [index[res.player_a] for res in rows]
    b = [index[res.player_b] for res in rows]
    doubles = [k for k, res in enumerate(rows) if res.partner_a and res.partner_b]
    pa = [index[rows[k].partner_a] for k in doubles]
    pb = [index[rows[k].partner_b] for k in doubles]
    n = len(rows)
    seat = np.array(a + b + pa + pb, dtype=np.int64)
    row = np.concatenate([np.arange(n), np.arange(n), np.array(doubles * 2, dtype=np.int64)]).astype(np.int64)
    return seat, row


def _days_away(name: str, played: bool, last_before, first_new, t1) -> int | None:
    """Days since the previous game: before this update's first game, or to the reference date."""
    if name not in last_before:
        return None
    if played:
        return (first_new[name] - last_before[name]).days
    return (t1 - last_before[name]).days if t1 else None


def _player_changes(fit1: LeagueFit, before: _Before, parts: _Parts, published, settings: Settings, top):
    """One ``PlayerChange`` (with its sentence) per player with a rated game now, and every player's games now."""
    names, ppl, t1 = fit1.names, points_per_logodds(settings.scale), fit1.reference_date
    index = {name: k for k, name in enumerate(names)}
    played_all, last_before, first_new = _activity(before.previous, before.changes.new, index)
    new_played, new_won, new_expected = _week_games(before.changes.new, index, before.r0)
    home = fit1.homes()
    events, crossed = _group_events(before.changes.new, home)
    published_ratings = published.ratings if published is not None else {}
    context_base = Context(
        first_update=before.first, settings_changed=before.settings_changed,
        edited_rows=before.changes.edited_rows, removed_rows=before.changes.removed_rows,
        dates_moved_back=bool(before.t0 and t1 and t1 < before.t0),
    )
    out = []
    for k, name in enumerate(names):
        if played_all[k] == 0:
            continue
        was = bool(before.was_published[k])
        start = float(published_ratings[name]) if was else float(to_points(before.p[k], settings.centre, settings.scale))
        after = float(to_points(fit1.r[k], settings.centre, settings.scale))
        values = [float(v[k] * ppl) for v in (parts.own, parts.opponents, parts.group, parts.corrections)]
        played = bool(new_played[k] > 0)
        pc = PlayerChange(
            name=name, division=home[name], before=start, after=after, change=after - start,
            own=values[0], opponents=values[1], group=values[2], corrections=values[3],
            shown=displayed_parts(start, after, values), new_games=int(new_played[k]), new_won=int(new_won[k]),
            new_expected=float(new_expected[k]), played=played, is_new=not was, top_opponents=top[k][0],
            top_partners=top[k][1],
            sentence="", games=int(played_all[k]), ageing=float(parts.ageing[k] * ppl),
            days_away=_days_away(name, played, last_before, first_new, t1),
        )
        context = replace(context_base, group_event=events.get(home[name], ""),
                          group_played_others=home[name] in crossed)
        out.append(replace(pc, sentence=sentence(pc, context)))
    return out, played_all


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
    index = {name: k for k, name in enumerate(names)}
    ppl = points_per_logodds(settings.scale)
    before = _before(results_now, published, settings, players, fit1)
    parts = _parts(fit1, before, settings, index)
    to_i, to_j, to_seat = opponent_shares(fit1.pairs, parts.shifted, fit1.r, parts.shifted_mean, fit1.prior_sd)
    top = top_opponents(fit1.pairs, to_i * ppl, to_j * ppl, parts.opponents, names, to_seat * ppl)
    out, played_all = _player_changes(fit1, before, parts, published, settings, top)
    published_ratings = published.ratings if published is not None else {}
    removed_players = tuple(
        (name, float(rating)) for name, rating in published_ratings.items()
        if name not in index or played_all[index[name]] == 0
    )
    return Breakdown(
        players=tuple(out), removed_players=removed_players, changes=before.changes, first_update=before.first,
        state_missing=bool(state_missing and before.first), settings_changed=before.settings_changed,
        note=update_note(state_missing, before.first, before.settings_changed),
        reference_date=fit1.reference_date, previous_reference_date=before.t0, names=names,
        before_r=before.p, after_r=fit1.r, own_r=parts.own, opponents_r=parts.opponents, group_r=parts.group,
        corrections_r=parts.corrections,
        group_shift={g: float(parts.shift[k] * ppl) for k, g in enumerate(fit1.group_names)},
        level_before={g: float(before.division_level0[k] * ppl) for k, g in enumerate(fit1.group_names)},
    )
