"""Choosing the half-life and the skill spread by walk-forward predictive log-loss.

The score is ``Evaluation.score``: the log-loss per game of the predictive
chances (averaged over each step's posterior), what the secretary is shown.
The coarse grid is walked with point chances only (a predictive walk costs a
factorisation of the Hessian per step: on tennis about 15 s against 2 s); it
only picks where the local search starts, and every setting the search
compares, the starting settings included, is scored predictively.

A coarse grid over (half-life, skill spread), then a compass search around
the best point in log space (each axis stepped by a factor, the factor
square-rooted whenever no neighbour improves).  A half-life of 0 (games never
age) is one of the candidates; the search does not step away from it along
the half-life axis.  The starting settings are scored too and kept unless
something scores better, so the answer is never worse than what was given.
"""
from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass
from typing import Callable, Sequence

from secretary.errors import Cancelled
from secretary.model.evaluate import Walk, evaluate, prepare
from secretary.model.records import Player, Result, Settings, TuneCheck

HALF_LIVES = (0.0, 30.0, 60.0, 120.0, 240.0, 480.0, 960.0)  # days; 0 = no ageing
SPREADS = (50.0, 75.0, 110.0, 160.0, 240.0, 360.0)  # points
REFINE_EVALUATIONS = 16  # walks spent on the local search after the grid


@dataclass(frozen=True)
class Tuning:
    """What tuning found.

    Attributes
    ----------
    old_settings, settings : the settings given, and the chosen ones (only half-life and spread differ)
    old_score, new_score : walk-forward predictive log-loss per game (nats) of each
    tried : every (half-life days, skill spread points, log-loss) scored, in order
    """

    old_settings: Settings
    settings: Settings
    old_score: float
    new_score: float
    tried: tuple[tuple[float, float, float], ...]

    @property
    def improved(self) -> bool:
        """True when the chosen settings score strictly better than the old ones."""
        return self.new_score < self.old_score


def tune(
    data: Walk | Sequence[Result],
    settings: Settings = Settings(),
    *,
    players: Sequence[Player] = (),
    step_days: int = 7,
    half_lives: Sequence[float] = HALF_LIVES,
    spreads: Sequence[float] = SPREADS,
    refine: int = REFINE_EVALUATIONS,
    progress: Callable[[int, int], None] | None = None,
    cancel=None,
) -> Tuning:
    """The half-life (days) and skill spread (points) with the lowest walk-forward predictive log-loss.

    Parameters
    ----------
    data : results, a ``Walk`` from ``evaluate.prepare``, or a list of walks (then the mean of their scores is
        minimised: how the shipped defaults were chosen over several leagues)
    settings : the current settings (scored first; every other field is kept)
    players : Players-sheet records (starting ratings)
    step_days : walk step in days
    half_lives, spreads : the coarse grid (half-life 0 = no ageing)
    refine : most walks spent refining around the grid's best point
    progress : called as ``progress(done, total)`` after every walk (and once at the end)
    cancel : optional flag with ``is_set()``; when set, ``Cancelled`` is raised

    Raises
    ------
    Cancelled
        when ``cancel`` is set; nothing is chosen.
    """
    if isinstance(data, list) and data and all(isinstance(w, Walk) for w in data):
        walks = data
    else:
        walks = [data if isinstance(data, Walk) else prepare(data, players=players, step_days=step_days)]
    total = 1 + len(half_lives) * len(spreads) + max(0, int(refine))
    walked = [0]

    def mean_score(key: tuple[float, float], predictive: bool) -> float:
        if cancel is not None and cancel.is_set():
            raise Cancelled("Tuning was cancelled; the settings were not changed.")
        trial = settings.replace(half_life_days=float(key[0]), skill_spread=float(key[1]))
        value = sum(evaluate(w, trial, cancel=cancel, predictive=predictive).score for w in walks) / len(walks)
        walked[0] += 1
        if progress is not None:
            progress(min(walked[0], total), total)
        return value

    point: dict[tuple[float, float], float] = {}
    for h in half_lives:
        for sp in spreads:
            key = (round(float(h)), round(float(sp)))
            if key not in point:
                point[key] = mean_score(key, False)
    scores: dict[tuple[float, float], float] = {}
    tried: list[tuple[float, float, float]] = []

    def score(half_life: float, spread: float) -> float:
        key = (round(float(half_life)), round(float(spread)))
        if key not in scores:
            scores[key] = mean_score(key, True)
            tried.append((float(key[0]), float(key[1]), scores[key]))
        return scores[key]

    old = score(settings.half_life_days, settings.skill_spread)
    start = min(point, key=point.get) if point else (round(settings.half_life_days), round(settings.skill_spread))
    _refine(score, start, walked, walked[0] + max(0, int(refine)), half_lives, spreads)
    if progress is not None:
        progress(total, total)
    key = min(scores, key=scores.get)
    if scores[key] >= old:
        return Tuning(settings, settings, old, old, tuple(tried))
    chosen = settings.replace(half_life_days=float(key[0]), skill_spread=float(key[1]))
    return Tuning(settings, chosen, old, scores[key], tuple(tried))


def _refine(score, start, walked, budget: int, half_lives, spreads) -> None:
    """Compass search from ``start`` on the predictive ``score`` until ``walked[0]`` reaches ``budget``."""
    if walked[0] >= budget:
        return
    (h, s), best = start, score(*start)
    # Steps halve the grid's log spacing first (factor = sqrt of the typical neighbour ratio).
    step_h = math.sqrt(_ratio([x for x in half_lives if x > 0]))
    step_s = math.sqrt(_ratio(spreads))
    while walked[0] < budget and (step_h > 1.02 or step_s > 1.02):
        moved = False
        along_h = ((h * step_h, s), (h / step_h, s)) if h > 0 else ()  # "never ages" has no neighbour
        for cand in (*along_h, (h, s * step_s), (h, s / step_s)):
            if walked[0] >= budget:
                break
            if (h > 0 and cand[0] < 1) or cand[1] < 1:
                continue
            value = score(*cand)
            if value < best:
                (h, s), best, moved = (round(cand[0]), round(cand[1])), value, True
                break
        if not moved:
            step_h, step_s = math.sqrt(step_h), math.sqrt(step_s)


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
CHECK_REFINE = 6
CHECK_STEP_DAYS = 28  # the check walks four weeks at a time: a quarter of the fits of a weekly walk
CHECK_MOST_PLAYERS = 1000  # larger leagues are not checked during an update (a check would take minutes)
CHECK_MOST_RESULTS = 20_000


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
                 cancel=None) -> TuneCheck:
    """A quick tune (a 3 x 3 grid, a short local search, four-week steps) and what it would gain over ``settings``."""
    found = tune(data, settings, players=players, step_days=CHECK_STEP_DAYS, half_lives=CHECK_HALF_LIVES,
                 spreads=CHECK_SPREADS, refine=CHECK_REFINE, cancel=cancel)
    return TuneCheck(reference_date, settings, max(found.old_score - found.new_score, 0.0),
                     found.settings.half_life_days, found.settings.skill_spread)


def tune_advice(check: TuneCheck | None, settings: Settings, workbook: str = "WORKBOOK") -> str:
    """The suggestion to tune, in plain words ('' when there is none, or the settings changed since the check)."""
    if check is None or check.settings != settings or check.gain <= SUGGEST_GAIN:
        return ""
    return (f"A season of results has come in since the settings were last checked: tuning would make the "
            f"predictions better (log-loss {check.gain:.3f} per game lower) with Half-life "
            f"{check.half_life_days:g} days and Skill spread {check.skill_spread:g} points. Run `secretary tune "
            f"\"{workbook}\" --apply` once, or enter them in League \u25b8 Settings.")
