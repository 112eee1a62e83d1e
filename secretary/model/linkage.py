"""The watch list: how well each division's level is tied to the rest, held-back players, linking matches.

Each division's level against the rest, and its gap to the rest that the linked
share judges, come from ``secretary.model.contrasts`` (the maths is in its docstring); the words a
secretary reads from ``secretary.model.watch_sentences``; the suggested linking
matches from ``secretary.model.linking_matches``.

Held back.  At the optimum the data's pull on player i, ``g_i = sum w (won - p)``,
equals the prior's ``(u_i - mu_i) / s^2``: the prior holds them against their
division's level.  ``g_i / L_ii`` (``L`` the likelihood part of ``H``) is how far
the data alone would still move them, and ``g_i / sqrt(L_ii)`` that surplus as
a z-score.
"""
from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Iterable

import numpy as np
from scipy.special import expit

from secretary.model.contrasts import (against_the_rest, average_contrasts, division_contrasts, gap_contrasts,
                                       linked_shares, posterior_solver)
from secretary.model.doubles import expected_wins
from secretary.model.fixtures import FAR_OFF
from secretary.model.linking_matches import LinkingMatch, expected_race_games, suggest_matches
from secretary.model.records import Result
from secretary.model.scale import points_per_logodds
from secretary.model.watch_sentences import NO_DIVISION, division_todo, held_todo, pool_todo

__all__ = ["DivisionLink", "HeldPlayer", "LinkingMatch", "Pool", "WatchList", "watch_list", "NO_DIVISION",
           "expected_race_games"]

HELD_SHOWN = 20  # held-back players listed, strongest cases first; the rest are counted
# Linkage's fixed yardstick, log-odds: a division is half linked when the games alone pin its gap to
# the rest to this ± (about 104 points at the Elo scale), the ± at which a chance "could be far off".
LINK_REFERENCE = FAR_OFF


@dataclass(frozen=True)
class DivisionLink:
    """How well one division's level is tied to the rest of the league.

    Attributes
    ----------
    division : the division's name ("" for players without one)
    players : players with a rated game counted in it (as the Ratings sheet and the divisions table count)
    mean_rating : its players' mean rating, points (the watch list's ``watch_sentences.MEAN_RATING``); with
        Division spread not the same as ``level``: each rating is the level plus the player's own part
    level : the division's level (with Division spread) or its players' mean rating, points
    relative_level : the gap to the rest (``watch_sentences.GAP``), points: the level minus the other
        divisions' average level (with Division spread), or the mean rating minus the league's
    level_sd : the ± of the gap (``watch_sentences.GAP_SD``: one posterior SD of ``relative_level``), points;
        with free levels exactly ``D / (D - 1)`` times the divisions table's ± of the level, which is
        measured against the average of all D levels
    prior_sd : the same ± under the starting assumption alone, points
    linked_share : the share of the division's gap to the rest that games pin down, 0 to 1, against the
        fixed ``LINK_REFERENCE`` (``division_shares``)
    cross_games : age-weighted games against other divisions
    recent_cross_games : games against other divisions in the recent window
        (age at most one half-life, i.e. weight >= 0.5; all games when games
        never age); None when the results were not given
    linking_players : how many of its players met someone from another division
    linkers : their names, most cross-division games first
    flagged : linked share under the league's ``weakly_linked_below``
    what_to_do : one line in plain words ("" when not flagged)
    """

    division: str
    players: int
    mean_rating: float
    level: float
    relative_level: float
    level_sd: float
    prior_sd: float
    linked_share: float
    cross_games: float
    recent_cross_games: int | None
    linking_players: int
    linkers: tuple[str, ...]
    flagged: bool
    what_to_do: str


@dataclass(frozen=True)
class HeldPlayer:
    """A player whose results run ahead of their rating: the starting assumption holds them back.

    Attributes
    ----------
    name, division : who, and the division they are counted in
    rating : points
    games, won, expected : age-weighted games, games won, and games the rating
        expects them to have won (``sum w p``)
    held_points : how much further the data alone would move them, points (``g / L_ii``)
    surplus_z : ``g / sqrt(L_ii)``, the surplus as a z-score
    linked_share : their division's linked share
    flagged : their division is weakly linked (their true level cannot show)
    what_to_do : one line in plain words
    """

    name: str
    division: str
    rating: float
    games: float
    won: float
    expected: float
    held_points: float
    surplus_z: float
    linked_share: float
    flagged: bool
    what_to_do: str


@dataclass(frozen=True)
class Pool:
    """Players who have played nobody outside their own group (a separate pool).

    Attributes
    ----------
    players : their names
    divisions : the divisions they are counted in
    games : age-weighted games among themselves
    level_sd : ± of the pool's gap to the rest (its average rating against the league's), points
    what_to_do : one line in plain words, naming them
    """

    players: tuple[str, ...]
    divisions: tuple[str, ...]
    games: float
    level_sd: float
    what_to_do: str


@dataclass(frozen=True)
class WatchList:
    """Everything the Watch list sheet shows: pools first, then divisions, players, suggestions.

    ``held`` is capped at ``HELD_SHOWN`` players, strongest cases first;
    ``held_not_shown`` counts the held-back players left off.
    """

    reference_date: dt.date | None
    pools: tuple[Pool, ...]
    divisions: tuple[DivisionLink, ...]
    held: tuple[HeldPlayer, ...]
    suggestions: tuple[LinkingMatch, ...]
    held_not_shown: int = 0

    @property
    def flagged_divisions(self) -> tuple[DivisionLink, ...]:
        """Divisions whose level is weakly tied to the rest."""
        return tuple(d for d in self.divisions if d.flagged)

    @property
    def flagged_players(self) -> tuple[HeldPlayer, ...]:
        """Held-back players in weakly linked divisions."""
        return tuple(p for p in self.held if p.flagged)

    def division(self, name: str) -> DivisionLink:
        """The row of one division; KeyError if absent."""
        for d in self.divisions:
            if d.division == name:
                return d
        raise KeyError(name)


# ---------------------------------------------------------------------------
# The watch list


def watch_list(fit, results: Iterable[Result] | None = None, *, method: str = "auto") -> WatchList:
    """The league's watch list from a fit (``secretary.model.league.LeagueFit``).

    Parameters
    ----------
    fit : the joint fit (strengths, pairs, divisions, pools, settings)
    results : the results the fit used; only needed for the raw count of
        recent cross-division games (None leaves that count out)
    method : how to solve with ``K``: "auto", "factor" or "cg" (see ``contrasts.HessianSolver``)
    """
    settings = fit.settings
    n, n_groups = len(fit.names), len(fit.group_names)
    solver, h = posterior_solver(fit, method)
    contrasts = division_contrasts(fit)
    var, X = contrasts.variance(solver)
    share = division_shares(fit, solver)
    members = fit.group[:, None] == np.arange(n_groups)[None, :]
    played = members.T.astype(float) @ fit.games if n else np.zeros(n_groups)
    # A division nobody in it has played for yet has nothing to tie in: not flagged.
    flagged = (share < settings.weakly_linked_below) & (played > 0) & (n_groups > 1)
    eligible = _not_islanders(fit)
    weak = np.flatnonzero(flagged)
    suggestions = suggest_matches(fit, solver, members[:, weak], [fit.group_names[g] for g in weak],
                                  X[:, weak], var[weak], eligible) if n else []
    suggested = {d for m in suggestions for d in (m.division_a, m.division_b)}
    divisions = _division_rows(fit, results, var, contrasts.prior, share, flagged, suggested)
    held, not_shown = held_back(fit, h, share, flagged, eligible)
    return WatchList(
        reference_date=fit.reference_date,
        pools=tuple(_pools(fit, solver)),
        divisions=tuple(divisions),
        held=tuple(held),
        suggestions=tuple(suggestions),
        held_not_shown=not_shown,
    )


def division_shares(fit, solver) -> np.ndarray:
    """Each division's linked share: how much of its gap to the rest the games pin down (``LINK_REFERENCE``).

    The gap is the division's average strength minus the rest's (``contrasts.gap_contrasts``);
    the share compares the games' precision about it with a fixed reference prior
    (``contrasts.linked_shares``), never with the Division spread or the Skill spread.
    """
    if len(fit.group_names) < 2:
        return np.ones(len(fit.group_names))
    gaps = gap_contrasts(fit)
    var, _ = gaps.variance(solver)
    return linked_shares(var, gaps.prior, LINK_REFERENCE)


def _recent_cross_games(fit, results: Iterable[Result]) -> np.ndarray:
    """Raw games against other divisions per division, from results no older than one half-life."""
    counts = np.zeros(len(fit.group_names), dtype=np.int64)
    half_life = fit.settings.half_life_days
    lookup = {name: k for k, name in enumerate(fit.names)}
    for res in results:
        if res.void or any(name not in lookup for name in res.players):
            continue
        if half_life and fit.reference_date and (fit.reference_date - res.date).days > half_life:
            continue
        sides = [sorted(int(fit.group[lookup[name]]) for name in side) for side in (res.side_a, res.side_b)]
        if sides[0] != sides[1]:  # the sides' divisions differ: the game compares division levels
            for g in set(sides[0] + sides[1]):
                counts[g] += int(round(res.games_a + res.games_b))
    return counts


def _cross_games(fit) -> tuple[np.ndarray, np.ndarray]:
    """Age-weighted games against other divisions, per division and per player."""
    pairs, n_groups = fit.pairs, len(fit.group_names)
    cross = (pairs.difference(fit.group) != 0) & (pairs.total > 0)
    t = np.where(cross, pairs.total, 0.0)
    per_player = pairs.per_player(t)
    per_division = np.bincount(fit.group, per_player, n_groups)
    if pairs.doubles is not None:
        division, player = _doubles_cross_games(fit)
        per_division, per_player = per_division + division, per_player + player
    return per_division, per_player


def _doubles_cross_games(fit) -> tuple[np.ndarray, np.ndarray]:
    """Doubles games whose two sides' divisions differ (a side of North and South against two of North links
    them; North and South against North and South does not), per division present and per player in them."""
    table, n_groups = fit.pairs.doubles, len(fit.group_names)
    side_a, side_b = np.sort(fit.group[table.a], axis=1), np.sort(fit.group[table.b], axis=1)
    cross = np.any(side_a != side_b, axis=1) & (table.total > 0)
    t = np.where(cross, table.total, 0.0)
    groups = np.column_stack([side_a, side_b])
    present = np.zeros((len(t), n_groups), dtype=bool)
    present[np.repeat(np.arange(len(t)), 4), groups.ravel()] = True
    return present.T.astype(float) @ t, table.per_player(t, t)


def _division_rows(fit, results, var, prior, share, flagged, suggested) -> list[DivisionLink]:
    """One row per division, the weakest-linked flagged ones first."""
    ppl = points_per_logodds(fit.settings.scale)
    cross_games, player_cross = _cross_games(fit)
    recent = _recent_cross_games(fit, results) if results is not None else None
    mean = _mean_ratings(fit)
    level, relative = _levels(fit, mean)
    rows, rated = [], fit.rated
    for g, name in enumerate(fit.group_names):
        inside = np.flatnonzero((fit.group == g) & rated)
        linkers = inside[player_cross[inside] > 0]
        linkers = linkers[np.argsort(-player_cross[linkers], kind="stable")]
        rows.append(DivisionLink(
            division=name,
            players=len(inside),
            mean_rating=float(mean[g]),
            level=float(level[g]),
            relative_level=float(relative[g]),
            level_sd=float(np.sqrt(max(var[g], 0.0)) * ppl),
            prior_sd=float(np.sqrt(prior[g]) * ppl),
            linked_share=float(share[g]),
            cross_games=float(cross_games[g]),
            recent_cross_games=None if recent is None else int(recent[g]),
            linking_players=len(linkers),
            linkers=tuple(fit.names[k] for k in linkers),
            flagged=bool(flagged[g]),
            what_to_do=division_todo(name, cross_games[g], name in suggested) if flagged[g] else "",
        ))
    rows.sort(key=lambda d: (not d.flagged, d.linked_share, d.division))
    return rows


def _mean_ratings(fit) -> np.ndarray:
    """Each division's rated players' mean rating, points (the centre for a division with nobody rated in it)."""
    group, ratings = fit.group[fit.rated], fit.ratings[fit.rated]
    sizes = np.bincount(group, minlength=len(fit.group_names))
    mean = np.bincount(group, ratings, len(fit.group_names)) / np.maximum(sizes, 1)
    mean[sizes == 0] = fit.settings.centre
    return mean


def _levels(fit, mean: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Each division's level and its level against the rest, points (``mean``: ``_mean_ratings``).

    Free levels: ``centre + L_d`` and ``L_d`` minus the other levels' average.
    One pool: the players' mean rating and that minus the league's mean rating.
    """
    ppl, centre = points_per_logodds(fit.settings.scale), fit.settings.centre
    if fit.levels is not None:
        return centre + fit.level * ppl, against_the_rest(len(fit.level)) @ fit.level * ppl
    rated = fit.ratings[fit.rated]
    return mean, mean - (float(rated.mean()) if len(rated) else centre)


def _whole_pools(fit) -> np.ndarray:
    """Per pool: is it the largest pool, or the pool that holds most of a division cut off from the largest?

    Any other separate pool is an island (two newcomers who only met each other, a
    misspelt name): it is listed once, on its own line, and never suggested for.
    A division that plays nobody else is a pool too, but that is the division's
    problem, which its line and the suggestions address; a pool inside a division
    that others do reach is not (that line is not flagged), so it is an island.
    """
    pool = fit.diagnosis.pool
    if not len(pool):
        return np.zeros(0, dtype=bool)
    n_pools, n_groups = int(pool.max()) + 1, len(fit.group_names)
    count = np.zeros((n_pools, n_groups), dtype=np.int64)
    np.add.at(count, (pool, fit.group), 1)
    whole = np.zeros(n_pools, dtype=bool)
    whole[np.argmax(count, axis=0)[count[0] == 0]] = True
    whole[0] = True
    return whole


def _not_islanders(fit) -> np.ndarray:
    """Who may be suggested for a match or listed as held back: everyone but the members of islands."""
    return _whole_pools(fit)[fit.diagnosis.pool] if len(fit.names) else np.zeros(0, dtype=bool)


def _pools(fit, solver) -> list[Pool]:
    """Islands: separate pools of two or more players that are not whole divisions, each named once."""
    pool, pairs = fit.diagnosis.pool, fit.pairs
    if not len(pool):
        return []
    sizes, whole = np.bincount(pool), _whole_pools(fit)
    separate = [k for k in range(1, len(sizes)) if sizes[k] >= 2 and not whole[k]]
    if not separate:
        return []
    contrasts = average_contrasts(fit, pool[:, None] == np.array(separate)[None, :])
    var, _ = contrasts.variance(solver)
    ppl = points_per_logodds(fit.settings.scale)
    out = []
    for col, k in enumerate(separate):
        idx = np.flatnonzero(pool == k)
        inner = (pool[pairs.i] == k) & (pool[pairs.j] == k)
        games = float(pairs.total[inner].sum())
        if pairs.doubles is not None:  # a pool's doubles games have all four players in it
            games += float(pairs.doubles.total[np.all(pool[np.column_stack([pairs.doubles.a, pairs.doubles.b])] == k,
                                                      axis=1)].sum())
        names = tuple(fit.names[x] for x in idx)
        out.append(Pool(
            players=names,
            divisions=tuple(sorted({fit.group_names[fit.group[x]] for x in idx})),
            games=games,
            level_sd=float(np.sqrt(max(var[col], 0.0)) * ppl),
            what_to_do=pool_todo(names),
        ))
    return out


# ---------------------------------------------------------------------------
# Held back


def surplus(fit, h: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Per player: games their rating expects them to win, the surplus z-score, and the points held.

    ``expected = sum w p``; ``z = (won - expected) / sqrt(L_ii)``; ``held = (won - expected) / L_ii``
    in points, ``L_ii = sum_pairs n p (1 - p)`` (the likelihood's curvature; 0 for no games).
    A doubles game counts in full in ``expected``; in the pull (the gradient's data part) and in
    ``L_ii`` with the player's coefficient in ``x``: ``(won - expected) / 2`` and ``n p (1 - p) / 4``.
    """
    pairs = fit.pairs
    expected = pairs.expected_wins(expit(pairs.difference(fit.r)))
    m = len(pairs.i)
    L = pairs.per_player(h[:m])
    pull = fit.wins - expected
    if pairs.doubles is not None:
        doubles_expected = expected_wins(pairs.doubles, fit.r)
        expected = expected + doubles_expected
        pull = pull - 0.5 * (pairs.doubles.wins_per_player() + doubles_expected)
        L = L + pairs.doubles.per_player(0.25 * h[m:], 0.25 * h[m:])
    with np.errstate(invalid="ignore", divide="ignore"):
        z = np.where(L > 0, pull / np.sqrt(L), 0.0)
        held = np.where(L > 0, pull / L, 0.0) * points_per_logodds(fit.settings.scale)
    return expected, z, held


def held_back(fit, h, share, flagged, eligible) -> tuple[list[HeldPlayer], int]:
    """Held-back players, strongest cases first (at most ``HELD_SHOWN``), and how many more there are.

    A player with at least "Few games" games, outside any separate pool, is held
    back when their surplus z-score reaches ``held_z``, or when they win at least
    ``dominant_share`` of their games in a weakly linked division (whose level
    nobody has checked, however clearly they win).  Those in weakly linked
    divisions come first.
    """
    settings = fit.settings
    expected, z, held = surplus(fit, h)
    games, won = fit.games, fit.wins
    weak = flagged[fit.group] if len(fit.names) else np.zeros(0, dtype=bool)
    with np.errstate(invalid="ignore", divide="ignore"):
        share_won = np.where(games > 0, won / games, 0.0)
    dominant = (share_won >= settings.dominant_share) & weak
    chosen = np.flatnonzero(((z >= settings.held_z) | dominant) & (games >= settings.few_games) & eligible)
    chosen = chosen[np.lexsort((-z[chosen], ~weak[chosen]))]
    out = []
    for k in chosen[:HELD_SHOWN]:
        division = fit.group_names[fit.group[k]]
        out.append(HeldPlayer(
            name=fit.names[k], division=division, rating=float(fit.ratings[k]),
            games=float(games[k]), won=float(won[k]), expected=float(expected[k]),
            held_points=float(held[k]), surplus_z=float(z[k]),
            linked_share=float(share[fit.group[k]]), flagged=bool(weak[k]),
            what_to_do=held_todo(division, bool(weak[k])),
        ))
    return out, max(0, len(chosen) - HELD_SHOWN)
