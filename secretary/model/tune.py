"""Choosing the half-life, the skill spread and the division spread by walk-forward predictive log-loss.

The score is ``Evaluation.score``: the log-loss per game of the predictive
chances (averaged over each step's posterior), what the secretary is shown.
The coarse grid is walked with point chances only (a predictive walk costs a
factorisation of the Hessian per step); it only picks where the local search
starts, and every setting the search compares, the starting settings
included, is scored predictively.

A coarse grid over (half-life, skill spread) at the current Division spread;
in a league with two or more divisions, a scan of Division spreads (0 = one
pool among them) at the grid's best point; then a compass search around the
best point in log space (each axis stepped by a factor, the factor
square-rooted whenever no neighbour improves).  A half-life of 0 (games never
age) and a Division spread of 0 (one pool) are candidates; the search does
not step away from a 0 along its axis.  The starting settings are scored too
and kept unless something scores better, so the answer is never worse than
what was given.
"""
from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass
from typing import Callable, Mapping, Sequence

from secretary.errors import Cancelled
from secretary.model.evaluate import Walk, evaluate, prepare
from secretary.model.records import Player, Result, Settings, TuneCheck

HALF_LIVES = (0.0, 30.0, 60.0, 120.0, 240.0, 480.0, 960.0)  # days; 0 = no ageing
SPREADS = (50.0, 75.0, 110.0, 160.0, 240.0, 360.0)  # points
DIVISION_SPREADS = (0.0, 50.0, 100.0, 200.0, 400.0)  # points; 0 = one pool (scanned only with divisions)
REFINE_EVALUATIONS = 16  # walks spent on the local search after the grid
FIELDS = ("half_life_days", "skill_spread", "division_spread")  # the tuned settings, in key order


@dataclass(frozen=True)
class Tuning:
    """What tuning found.

    Attributes
    ----------
    old_settings, settings : the settings given, and the chosen ones (only the three tuned fields differ)
    old_score, new_score : walk-forward predictive log-loss per game (nats) of each
    tried : every (half-life days, skill spread points, division spread points, log-loss) scored, in order
    """

    old_settings: Settings
    settings: Settings
    old_score: float
    new_score: float
    tried: tuple[tuple[float, float, float, float], ...]

    @property
    def improved(self) -> bool:
        """True when the chosen settings score strictly better than the old ones."""
        return self.new_score < self.old_score


def _walks(data, players, step_days, starting_levels) -> list[Walk]:
    if isinstance(data, list) and data and all(isinstance(w, Walk) for w in data):
        return data
    return [data if isinstance(data, Walk) else prepare(data, players=players, step_days=step_days,
                                                        starting_levels=starting_levels)]


def _key(values) -> tuple[float, float, float]:
    return tuple(float(round(float(v))) for v in values)


def tune(
    data: Walk | Sequence[Result],
    settings: Settings = Settings(),
    *,
    players: Sequence[Player] = (),
    step_days: int = 7,
    starting_levels: Mapping[str, float] | None = None,
    half_lives: Sequence[float] = HALF_LIVES,
    spreads: Sequence[float] = SPREADS,
    division_spreads: Sequence[float] = DIVISION_SPREADS,
    refine: int = REFINE_EVALUATIONS,
    progress: Callable[[int, int], None] | None = None,
    cancel=None,
) -> Tuning:
    """The half-life (days), skill spread and division spread (points) with the lowest walk-forward log-loss.

    Parameters
    ----------
    data : results, a ``Walk`` from ``evaluate.prepare``, or a list of walks (then the mean of their scores is
        minimised: how the shipped defaults were chosen over several leagues)
    settings : the current settings (scored first; every other field is kept)
    players : Players-sheet records (starting ratings, divisions)
    step_days : walk step in days
    starting_levels : starting level per division, points (the Divisions sheet)
    half_lives, spreads : the coarse grid (half-life 0 = no ageing)
    division_spreads : the Division spreads scanned at the grid's best point (only when a walk has divisions)
    refine : most walks spent refining around the best point found
    progress : called as ``progress(done, total)`` after every walk (and once at the end)
    cancel : optional flag with ``is_set()``; when set, ``Cancelled`` is raised

    Raises
    ------
    Cancelled
        when ``cancel`` is set; nothing is chosen.
    """
    walks = _walks(data, players, step_days, starting_levels)
    levels = any(len(w.division_names) > 1 for w in walks)
    scan = tuple(division_spreads) if levels else ()
    total = 1 + len(half_lives) * len(spreads) + len(scan) + max(0, int(refine))
    walker = _Walker(walks, settings, total, progress, cancel)
    current = _key(getattr(settings, f) for f in FIELDS)
    start = _coarse_start(walker, current, half_lives, spreads, scan)
    old = walker.score(*current)
    factors = (math.sqrt(_ratio([x for x in half_lives if x > 0])), math.sqrt(_ratio(spreads)),
               math.sqrt(_ratio([x for x in scan if x > 0])) if levels else None)
    _refine(walker.score, start, walker.walked, walker.walked[0] + max(0, int(refine)), factors)
    if progress is not None:
        progress(total, total)
    scores = walker.scores
    key = min(scores, key=scores.get)
    if scores[key] >= old:
        return Tuning(settings, settings, old, old, tuple(walker.tried))
    return Tuning(settings, settings.replace(**dict(zip(FIELDS, key))), old, scores[key], tuple(walker.tried))


class _Walker:
    """Walks the walks at trial settings, counts the walks for ``progress`` and keeps every predictive score."""

    def __init__(self, walks: list[Walk], settings: Settings, total: int, progress, cancel):
        self.walks, self.settings, self.total, self.progress, self.cancel = walks, settings, total, progress, cancel
        self.walked = [0]  # shared with _refine, which stops at its budget
        self.scores: dict[tuple, float] = {}
        self.tried: list[tuple[float, float, float, float]] = []

    def mean_score(self, key, predictive: bool) -> float:
        """The mean score over the walks at the settings ``key`` (point chances unless ``predictive``)."""
        if self.cancel is not None and self.cancel.is_set():
            raise Cancelled("Tuning was cancelled; the settings were not changed.")
        trial = self.settings.replace(**dict(zip(FIELDS, key)))
        value = sum(evaluate(w, trial, cancel=self.cancel, predictive=predictive).score
                    for w in self.walks) / len(self.walks)
        self.walked[0] += 1
        if self.progress is not None:
            self.progress(min(self.walked[0], self.total), self.total)
        return value

    def score(self, *values) -> float:
        """The predictive score at these settings (walked once per key)."""
        key = _key(values)
        if key not in self.scores:
            self.scores[key] = self.mean_score(key, True)
            self.tried.append((*key, self.scores[key]))
        return self.scores[key]


def _coarse_start(walker: _Walker, current, half_lives, spreads, scan) -> tuple:
    """Where the local search starts: the best point score of the (half-life, spread) grid at the current
    Division spread, then of the Division spreads ``scan`` at that grid point."""
    point: dict[tuple, float] = {}
    for key in (_key((h, sp, current[2])) for h in half_lives for sp in spreads):
        if key not in point:
            point[key] = walker.mean_score(key, False)
    best = min(point, key=point.get) if point else current
    for key in (_key((best[0], best[1], t)) for t in scan):
        if key not in point:
            point[key] = walker.mean_score(key, False)
    return min(point, key=point.get) if point else current


def _refine(score, start, walked, budget: int, factors) -> None:
    """Compass search from ``start`` on the predictive ``score`` until ``walked[0]`` reaches ``budget``.

    ``factors`` holds each axis's first step factor (None: the axis is not searched); a 0 on an axis
    ("never ages", "one pool") has no neighbour along it.
    """
    if walked[0] >= budget:
        return
    x, best = list(start), score(*start)
    steps = list(factors)
    while walked[0] < budget and any(f is not None and f > 1.02 for f in steps):
        moved = False
        for axis, f in enumerate(steps):
            if f is None or x[axis] <= 0:
                continue
            for value in (x[axis] * f, x[axis] / f):
                if walked[0] >= budget or value < 1:
                    continue
                cand = list(x)
                cand[axis] = round(value)
                found = score(*cand)
                if found < best:
                    x, best, moved = cand, found, True
                    break
            if moved:
                break
        if not moved:
            steps = [None if f is None else math.sqrt(f) for f in steps]


def _ratio(values: Sequence[float]) -> float:
    """Geometric mean ratio between neighbouring grid values (2 when there are fewer than two)."""
    v = sorted(set(float(x) for x in values if x > 0))
    if len(v) < 2:
        return 2.0
    return (v[-1] / v[0]) ** (1.0 / (len(v) - 1))


# ------------------------------------------------------------------ when to suggest tuning

SEASON_DAYS = 240  # about one league season (September to April) of results since the last check
SUGGEST_GAIN = 0.002  # nats per game: the smallest predictive log-loss gain worth a suggestion
CHECK_HALF_LIVES = (120.0, 480.0, 0.0)  # the check's coarse grid (a quicker tune than `secretary tune`)
CHECK_SPREADS = (90.0, 150.0, 240.0)
CHECK_DIVISION_SPREADS = (0.0, 100.0, 300.0)
CHECK_REFINE = 6
CHECK_STEP_DAYS = 28  # the check walks four weeks at a time: a quarter of the fits of a weekly walk
# Larger leagues are not checked during an update.  A rule of ours: the check stays under about 30 s of
# processor time on the development machine (2 cores, OPENBLAS_NUM_THREADS=1).  Measured with
# `python tests/bench/bench_check.py` (generated leagues, four divisions, two years; load average 2-5):
# 2,000 players x 30,000 results 27.1 s, 2,500 x 20,000 23.6 s, 1,000 x 50,000 17.9 s; over the rule
# 2,000 x 40,000 33.2 s, 2,500 x 30,000 34.0 s; from 3,000 players (above walkforward.DENSE_CONTRASTS
# unknowns a step's variances take a sparse LU) 20,000 results ran past 200 s of wall time and
# 5,000 x 50,000 past 600 s.  The real tennis set (2,951 players, 27,080 results) took 9.9 s.
CHECK_MOST_PLAYERS = 2000
CHECK_MOST_RESULTS = 30_000


def tune_due(first_date: dt.date | None, reference_date: dt.date | None, last: TuneCheck | None, *,
             players: int = 0, results: int = 0) -> bool:
    """True when a season (``SEASON_DAYS``) of results has come in since the last check (or since the first result).

    Never for a league over ``CHECK_MOST_PLAYERS`` players or ``CHECK_MOST_RESULTS`` rated results.
    """
    if reference_date is None or first_date is None or players > CHECK_MOST_PLAYERS or results > CHECK_MOST_RESULTS:
        return False
    since = last.checked_through if last is not None else first_date
    return (reference_date - since).days >= SEASON_DAYS


def check_tuning(data, settings: Settings, reference_date: dt.date, *, players: Sequence[Player] = (),
                 starting_levels: Mapping[str, float] | None = None, cancel=None) -> TuneCheck:
    """A quick tune (a 3 x 3 grid, three Division spreads with divisions, a short local search, four-week steps)
    and what it would gain over ``settings``."""
    found = tune(data, settings, players=players, step_days=CHECK_STEP_DAYS, starting_levels=starting_levels,
                 half_lives=CHECK_HALF_LIVES, spreads=CHECK_SPREADS, division_spreads=CHECK_DIVISION_SPREADS,
                 refine=CHECK_REFINE, cancel=cancel)
    return TuneCheck(reference_date, settings, max(found.old_score - found.new_score, 0.0),
                     found.settings.half_life_days, found.settings.skill_spread, found.settings.division_spread)


def tune_advice(check: TuneCheck | None, settings: Settings, workbook: str = "WORKBOOK") -> str:
    """The suggestion to tune, in plain words ('' when there is none, or the settings changed since the check)."""
    if check is None or check.settings != settings or check.gain <= SUGGEST_GAIN:
        return ""
    named = [f"Half-life {check.half_life_days:g} days", f"Skill spread {check.skill_spread:g} points"]
    if check.division_spread is not None and check.division_spread != settings.division_spread:
        named.append(f"Division spread {check.division_spread:g} points")
    return (f"A season of results has come in since the settings were last checked: tuning would make the "
            f"predictions better (log-loss {check.gain:.3f} per game lower) with {', '.join(named[:-1])} and "
            f"{named[-1]}. Run `secretary tune \"{workbook}\" --apply` once, or enter them in League \u25b8 Settings.")
