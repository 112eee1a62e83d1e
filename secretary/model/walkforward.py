"""The walk forward's steps: results indexed once, then one fit per step from the results before it.

Each step is rated exactly as an update on that day would rate the league
(``league.fit_matches``): ages from the newest earlier result, each player's
home division from the earlier results (the Players sheet's division, else the
division of their most recent result), and, with a
Division spread above 0 and two or more divisions in the walk, a level per
division fitted jointly with the players (``fit.Levels``).  A division
nobody has played in yet keeps its starting level (its level is separate from
everything fitted, so this changes no other value).

A player not yet seen starts at their division's level: strength
``mu_i + L_d`` (``mu_i`` the starting offset, 0 without a starting rating),
``d`` their Players-sheet division, else the division of the match being
predicted.  For predictive chances the difference ``r_a - r_b`` is a contrast
over the joint posterior of ``(r, L)`` (``c^T H^-1 c`` with a newcomer's
coefficient on their division's level, plus the Skill spread's variance per
newcomer), so a newcomer's chance carries their level's ± too.

Each fit starts from the previous step's optimum, strengths and levels (players
first seen since start at their division's level), so a walk costs a few
Newton steps per week, each by conjugate gradients on the sparse Hessian
(``DENSE_LIMIT``).
"""
from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Mapping, Sequence

import numpy as np
import scipy.sparse as sp

from secretary.errors import Cancelled, FitFailed
from secretary.model.fit import Levels, fit_map, hessian
from secretary.model.matches import factorise
from secretary.model.pairs import Pairs, age_weights, aggregate
from secretary.model.records import Player, Result, Settings
from secretary.model.scale import points_per_logodds, to_strength
from secretary.model.uncertainty import contrast_variance

# Players up to which a step's Newton steps use a dense Cholesky factor: none.  Warm-started fits with the
# walk's tolerance take 3-5 steps, and a CG step on the sparse Hessian costs far less than a dense factor
# (13.7k tennis matches, 27 steps: a point walk 0.08 s by CG, 1.0 s with dense steps up to 1,500 players;
# scores within 2e-9, the fit's own tolerance).
DENSE_LIMIT = 0
# Unknowns up to which a step's predictive variances use a dense Cholesky factor (touched unknowns last)
# rather than a sparse LU: at 2,148 unknowns and 600 contrasts 80 ms against 160 ms; 3,000 take 72 MB.
DENSE_CONTRASTS = 3000


@dataclass(frozen=True)
class Walk:
    """Results prepared once for any number of walks (the settings come later).

    Matches are sorted by date (stable) and players numbered in order of first
    appearance, so the players seen before any step are ``0 .. n_seen - 1``.

    Attributes
    ----------
    names : players in order of first appearance
    day : days since ``first_date`` of each match (sorted)
    a, b : player index of each side
    games_a, games_b : games won by each side
    order : position of each sorted match in the caller's sequence
    bounds : first match of each step; step ``k`` is ``bounds[k] : bounds[k + 1]``
    pair : pair number of each match; ``pair_i < pair_j`` are the players of each pair
    pair_first : index of the first match of each pair
    starting : starting rating (points) of each player, NaN where none
    first_date : date of step 0's first day
    step_days : length of a step in days
    n_input : length of the caller's sequence (void results included)
    division : division of each match (index into ``division_names``)
    division_names : the divisions met ("" = none given), Players-sheet divisions first
    given_home : each player's Players-sheet division (index), -1 where none
    starting_level : each division's starting level, points above the centre (0 = blank)
    pa, pb : each side's second player in a doubles match, -1 in singles (None: no doubles at all)
    """

    names: tuple[str, ...]
    day: np.ndarray
    a: np.ndarray
    b: np.ndarray
    games_a: np.ndarray
    games_b: np.ndarray
    order: np.ndarray
    bounds: np.ndarray
    pair: np.ndarray
    pair_i: np.ndarray
    pair_j: np.ndarray
    pair_first: np.ndarray
    starting: np.ndarray
    first_date: dt.date | None
    step_days: int
    n_input: int
    division: np.ndarray = None
    division_names: tuple[str, ...] = ("",)
    given_home: np.ndarray = None
    starting_level: np.ndarray = None
    pa: np.ndarray | None = None
    pb: np.ndarray | None = None

    def seen(self, stop: int) -> int:
        """Number of players who appear in the first ``stop`` matches."""
        if stop == 0:
            return 0
        partners = (self.pa[:stop].max(), self.pb[:stop].max()) if self.pa is not None else ()
        return int(max(self.a[:stop].max(), self.b[:stop].max(), *partners)) + 1

    @property
    def doubles(self) -> np.ndarray:
        """Which sorted matches are doubles."""
        return np.zeros(len(self.a), bool) if self.pa is None else self.pa >= 0


def prepare(results: Sequence[Result], *, players: Sequence[Player] = (), step_days: int = 7,
            starting_levels: Mapping[str, float] | None = None) -> Walk:
    """Sort and index the rated (non-void) results for ``evaluate``.

    Parameters
    ----------
    results : the matches, in any order; void ones are not predicted or used
    players : optional Players-sheet records; starting ratings (points) set prior means, divisions home divisions
    step_days : length of a step in days (7 = week by week)
    starting_levels : optional starting level per division, points above the centre (the Divisions sheet)
    """
    if int(step_days) < 1:
        raise ValueError(f"the step must be at least one day (got {step_days!r})")
    step_days = int(step_days)
    results = list(results)
    kept = [k for k, res in enumerate(results) if not res.void]
    kept.sort(key=lambda k: results[k].date)  # stable: same-day rows keep the caller's order
    # Players numbered in order of first appearance: side A, side B, then the partners of each match.
    seats = [(res.player_a, res.player_b, res.partner_a, res.partner_b) if res.is_doubles
             else (res.player_a, res.player_b) for res in (results[k] for k in kept)]
    names, codes = factorise([name for seat in seats for name in seat])
    ends = np.cumsum([len(seat) for seat in seats], dtype=np.int64)
    first_seat = ends - np.fromiter((len(seat) for seat in seats), np.int64, len(seats))
    a, b = codes[first_seat], codes[first_seat + 1]
    dbl = (ends - first_seat) == 4
    pa, pb = np.full(len(kept), -1, np.int64), np.full(len(kept), -1, np.int64)
    pa[dbl], pb[dbl] = codes[first_seat[dbl] + 2], codes[first_seat[dbl] + 3]
    n = len(names)
    given = {p.name: p.division for p in players if p.division}
    division_names, division = factorise([results[k].division for k in kept],
                                         [given[x] for x in names if x in given])
    code = {d: k for k, d in enumerate(division_names)}
    first = results[kept[0]].date if kept else None
    day = np.fromiter(((results[k].date - first).days for k in kept), np.int64, len(kept))
    steps = int(day[-1] // step_days) + 1 if len(kept) else 0
    bounds = np.searchsorted(day, np.arange(steps + 1) * step_days, side="left")
    lo, hi = np.minimum(a, b), np.maximum(a, b)
    keys, first_match, pair = np.unique(lo * max(n, 1) + hi, return_index=True, return_inverse=True)
    starting = np.full(n, np.nan)
    index = {x: k for k, x in enumerate(names)}
    for p in players:
        if p.starting is not None and p.name in index:
            starting[index[p.name]] = float(p.starting)
    return Walk(
        names=tuple(names), day=day, a=a, b=b,
        games_a=np.fromiter((results[k].games_a for k in kept), float, len(kept)),
        games_b=np.fromiter((results[k].games_b for k in kept), float, len(kept)),
        order=np.asarray(kept, np.int64), bounds=bounds.astype(np.int64),
        pair=pair.reshape(-1).astype(np.int64), pair_i=keys // max(n, 1), pair_j=keys % max(n, 1),
        pair_first=first_match.astype(np.int64), starting=starting, first_date=first, step_days=step_days,
        n_input=len(results), division=division, division_names=tuple(division_names),
        given_home=np.fromiter((code[given[x]] if x in given else -1 for x in names), np.int64, n),
        starting_level=np.array([float((starting_levels or {}).get(d, 0.0)) for d in division_names]),
        pa=pa if dbl.any() else None, pb=pb if dbl.any() else None,
    )


def training_pairs(walk: Walk, stop: int, half_life_days: float) -> Pairs:
    """Age-weighted pairs of the first ``stop`` matches, ages from the newest of them.

    Only the players seen so far (``0 .. walk.seen(stop) - 1``) take part.
    """
    n = walk.seen(stop)
    age = (walk.day[stop - 1] - walk.day[:stop]) if stop else np.zeros(0)
    w = age_weights(age, half_life_days)
    doubles = walk.doubles[:stop]
    table = None
    if doubles.any():  # doubles rows by pair of sides; their (a, b) pair gets none of their games
        table = aggregate(walk.a[:stop][doubles], walk.b[:stop][doubles], walk.games_a[:stop][doubles],
                          walk.games_b[:stop][doubles], n, w[doubles], walk.pa[:stop][doubles],
                          walk.pb[:stop][doubles]).doubles
        w = np.where(doubles, 0.0, w)
    first_is_i = walk.a[:stop] < walk.b[:stop]
    won_lo = np.where(first_is_i, walk.games_a[:stop], walk.games_b[:stop]) * w
    won_hi = np.where(first_is_i, walk.games_b[:stop], walk.games_a[:stop]) * w
    m = len(walk.pair_first)
    won_i = np.bincount(walk.pair[:stop], won_lo, m)
    won_j = np.bincount(walk.pair[:stop], won_hi, m)
    met = walk.pair_first < stop
    return Pairs(n, walk.pair_i[met], walk.pair_j[met], won_i[met], won_j[met], table)


class Homes:
    """Each seen player's home division after the first ``stop`` matches, kept up to date step by step.

    The rule of ``matches.home_divisions``: the Players-sheet division, else the division of the most
    recent result (the latest date, on one date the one further down the sheet: later in the walk's
    stable date order); a result without a division counts only for a player who has no other.
    """

    def __init__(self, walk: Walk):
        self.walk = walk
        named = np.array([bool(d) for d in walk.division_names], dtype=bool)
        m = len(walk.day)
        self.key = named[walk.division].astype(np.int64) * max(m, 1) + np.arange(m)  # named first, then newest
        self.latest = np.full(len(walk.names), -1, np.int64)
        self.done = 0

    def at(self, stop: int) -> np.ndarray:
        """Home division (index) of players ``0 .. walk.seen(stop) - 1``."""
        w, lo = self.walk, self.done
        for seat in (w.a, w.b) if w.pa is None else (w.a, w.b, w.pa, w.pb):  # doubles partners too
            sat = seat[lo:stop] >= 0
            np.maximum.at(self.latest, seat[lo:stop][sat], self.key[lo:stop][sat])
        self.done = stop
        n = w.seen(stop)
        home = w.division[self.latest[:n] % max(len(w.day), 1)]
        given = w.given_home[:n]
        return np.where(given >= 0, given, home)


@dataclass
class StepOutput:
    """Per sorted match: point difference, its posterior variance (NaN unless predictive), few-games and
    cross-division flags; and the number of steps predicted."""

    mean: np.ndarray
    var: np.ndarray
    few: np.ndarray
    cross: np.ndarray
    steps: int = 0


def walk_steps(walk: Walk, settings: Settings, cancel, gtol: float, predictive: bool) -> StepOutput:
    """Fit before every step and predict its matches (see the module)."""
    ppl = points_per_logodds(settings.scale)
    starting = np.where(np.isnan(walk.starting), settings.centre, walk.starting)
    mu = np.asarray(to_strength(starting, settings.centre, settings.scale), float).reshape(-1)
    prior_sd = settings.skill_spread / ppl
    D = len(walk.division_names)
    level_mean = walk.starting_level / ppl if D > 1 else np.zeros(D)
    tau = max(float(settings.division_spread), 0.0) / ppl if D > 1 else 0.0
    m = len(walk.day)
    out = StepOutput(np.full(m, np.nan), np.full(m, np.nan), np.zeros(m, bool), np.zeros(m, bool))
    homes = Homes(walk)
    r, level = np.zeros(0), level_mean.copy()
    for k in range(len(walk.bounds) - 1):
        start, stop = int(walk.bounds[k]), int(walk.bounds[k + 1])
        if stop == start or start == 0:
            continue
        if cancel is not None and cancel.is_set():
            raise Cancelled("The evaluation was cancelled.")
        pairs = training_pairs(walk, start, settings.half_life_days)
        n = pairs.n_players
        home = homes.at(start)
        levels = Levels(home, level_mean, tau) if tau > 0 else None
        warm = np.concatenate([r, mu[len(r):n] + level[home[len(r):]]])
        if levels is None:
            r = _fit(pairs, mu[:n] + level_mean[home], prior_sd, None, warm, gtol).r
        else:
            fit = _fit(pairs, mu[:n], prior_sd, levels, np.concatenate([warm, level]), gtol)
            r, level = fit.r, fit.level
        _predict_step(walk, out, slice(start, stop), pairs, r, level, home, mu, prior_sd, settings.few_games,
                      levels if predictive else None, predictive)
        out.steps += 1
    return out


def _fit(pairs: Pairs, mu, prior_sd: float, levels: Levels | None, start, gtol: float):
    """The step's MAP by CG Newton steps (``DENSE_LIMIT``); should CG not settle, by dense steps as in an update."""
    try:
        return fit_map(pairs, mu, prior_sd, levels=levels, start=start, gtol=gtol, dense_limit=DENSE_LIMIT)
    except FitFailed:
        return fit_map(pairs, mu, prior_sd, levels=levels, start=start, gtol=gtol)


def _predict_step(walk: Walk, out: StepOutput, step: slice, pairs: Pairs, r, level, home, mu, prior_sd: float,
                  few_games: float, levels: Levels | None, predictive: bool) -> None:
    """Fill ``out`` for the matches of ``step`` from the step's fit.

    Each seat (side A, side B, and in doubles both partners, each counted at half) adds its strength to
    the difference: a seen player's fitted ``r``, a newcomer's ``mu + L_d``.  A match is cross-division
    when the divisions' levels do not cancel in the difference.
    """
    n, m = pairs.n_players, step.stop - step.start
    half = np.where(walk.doubles[step], 0.5, 1.0)
    seats = [(walk.a[step], half), (walk.b[step], -half)]
    if walk.pa is not None:
        seats += [(walk.pa[step], half), (walk.pb[step], -half)]
    games = pairs.games_per_player()
    mean, least, extra = np.zeros(m), np.full(m, np.inf), np.zeros(m)
    level_sum = np.zeros((m, len(level)))
    rows, cols, vals = [], [], []
    for idx, coef in seats:
        sat = idx >= 0
        new = sat & (idx >= n)
        seen = np.clip(idx, 0, max(n - 1, 0))
        given = walk.given_home[np.maximum(idx, 0)]
        div = np.where(new, np.where(given >= 0, given, walk.division[step]), home[seen])
        mean += np.where(sat, coef * np.where(new, mu[np.maximum(idx, 0)] + level[div], r[seen]), 0.0)
        least = np.where(sat, np.minimum(least, np.where(new, 0.0, games[seen])), least)
        np.add.at(level_sum, (np.flatnonzero(sat), div[sat]), coef[sat])
        extra += np.where(new, coef**2 * prior_sd**2, 0.0)  # a newcomer's own deviation
        use = sat & (~new | (levels is not None))  # a newcomer's coefficient sits on their level (free levels)
        rows.append(np.flatnonzero(use))
        cols.append(np.where(new, n + div, idx)[use])
        vals.append(coef[use])
    out.mean[step], out.few[step] = mean, least < few_games
    out.cross[step] = np.any(np.abs(level_sum) > 1e-12, axis=1)
    if not predictive:
        return
    H = hessian(pairs, r, prior_sd, levels)
    C = sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                      shape=(m, max(H.shape[0], 1)))
    out.var[step] = contrast_variance(H, C, dense_limit=DENSE_CONTRASTS) + extra
