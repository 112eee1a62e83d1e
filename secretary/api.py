"""The small scripting API: ``rate``, ``race_chance`` and ``fair_race`` (names kept stable)."""
from __future__ import annotations

import datetime as dt
import numbers
import operator
from typing import Iterable, Mapping, Sequence

import numpy as np

from secretary.model.league import LeagueFit, fit_matches
from secretary.model.matches import Matches, factorise, from_results
from secretary.model.races import fair_race, race_chance
from secretary.model.records import Player, Result, Settings
from secretary.threads import native_threads_limited

__all__ = ["rate", "race_chance", "fair_race", "Ratings"]


class Ratings:
    """The league's ratings from ``rate``: ``.names``, ``.rating(name)`` and ``.sd(name)`` in points."""

    def __init__(self, fit: LeagueFit):
        self.fit = fit

    @property
    def names(self) -> tuple[str, ...]:
        """Every rated player, in order of first appearance."""
        return self.fit.names

    def rating(self, name: str | tuple[str, str]) -> float:
        """The player's rating in points; for a doubles side (a tuple of two names) the mean of the two."""
        if isinstance(name, tuple):
            return float(np.mean([self.fit.rating(n) for n in name]))
        return self.fit.rating(name)

    def sd(self, name: str) -> float:
        """The player's ± (one standard deviation) in points."""
        return self.fit.sd(name)

    def level(self, division: str) -> float:
        """A division's level in points above the centre (with ``divisions``; KeyError for an unknown one)."""
        if division not in self.fit.group_names:
            raise KeyError(division)
        return self.fit.level_points(division)

    def level_sd(self, division: str) -> float:
        """The ± of a division's level in points (0 when Division spread is 0)."""
        if division not in self.fit.group_names:
            raise KeyError(division)
        return self.fit.level_sd(division)

    def __repr__(self) -> str:
        return f"<Ratings of {len(self.names)} players>"


def _side(where: str, label: str, side) -> tuple[str, ...]:
    """A side as stripped names: one name, or a tuple of two different names (doubles)."""
    names = side if isinstance(side, tuple) else (side,)
    if len(names) not in (1, 2) or (isinstance(side, tuple) and len(names) != 2):
        raise ValueError(f"{where}: {label} must be a name or a tuple of two names, got {side!r}")
    for name in names:
        if not isinstance(name, str) or not name.strip():
            raise ValueError(f"{where}: {label} must be a non-empty name, got {side!r}")
    names = tuple(name.strip() for name in names)
    if len(set(names)) < len(names):
        raise ValueError(f"{where}: {label} names {names[0]!r} twice; a doubles side is two different players")
    return names


def _check_row(k: int, row) -> Result:
    where = f"result {k + 1}"
    try:
        date, a, b, ga, gb = row
    except (TypeError, ValueError):
        raise ValueError(f"{where}: expected (date, side_a, side_b, games_a, games_b), got {row!r}") from None
    if not isinstance(date, dt.date):
        raise ValueError(f"{where}: the date must be a datetime.date, got {date!r}")
    if isinstance(date, dt.datetime):
        date = date.date()
    side_a, side_b = _side(where, "player_a", a), _side(where, "player_b", b)
    if len(side_a) != len(side_b):
        raise ValueError(f"{where}: one side has two players and the other one; doubles need two a side")
    both = set(side_a) & set(side_b)
    if both:
        raise ValueError(f"{where}: {sorted(both)[0]!r} cannot play against themself")
    for label, g in (("games_a", ga), ("games_b", gb)):
        if isinstance(g, bool) or not isinstance(g, numbers.Integral) or g < 0:
            raise ValueError(f"{where}: {label} must be a whole number of games, 0 or more, got {g!r}")
    if ga == 0 and gb == 0:
        raise ValueError(f"{where}: both sides have 0 games; a result needs at least one game played")
    partners = (side_a[1], side_b[1]) if len(side_a) == 2 else ("", "")
    return Result(date, side_a[0], side_b[0], int(ga), int(gb), partner_a=partners[0], partner_b=partners[1])


class _Unusual(Exception):
    """A row the column checks do not pass: the row-by-row checks find it (or accept it) instead."""


def _columns(rows: Sequence, known: Sequence[str]) -> Matches:
    """The rows checked and turned into columns by whole-column passes (no per-row Python checks)."""
    if set(map(len, rows)) - {5}:
        raise _Unusual
    m = len(rows)
    dates, a, b, games_a, games_b = (tuple(map(operator.itemgetter(k), rows)) for k in range(5))
    if set(map(type, dates)) - {dt.date, dt.datetime} or set(map(type, a + b)) - {str}:
        raise _Unusual
    sides = [""] * (2 * m)
    sides[0::2], sides[1::2] = map(str.strip, a), map(str.strip, b)
    names, both = factorise(sides, known)
    idx_a, idx_b = both[0::2].copy(), both[1::2].copy()
    if set(map(type, games_a + games_b)) - {int} or "" in names[len(known):] or np.any(idx_a == idx_b):
        raise _Unusual
    try:
        ga, gb = np.array(games_a, dtype=np.int64), np.array(games_b, dtype=np.int64)
    except OverflowError:
        raise _Unusual from None
    if np.any(ga < 0) or np.any(gb < 0) or np.any((ga == 0) & (gb == 0)):
        raise _Unusual
    return Matches(names, idx_a, idx_b, ga.astype(float), gb.astype(float),
                   np.fromiter(map(dt.date.toordinal, dates), np.int64, m),
                   np.zeros(m, dtype=np.int64), ("",) if m else ())


def _checked(results: Iterable[tuple], players: Sequence[Player]) -> Matches:
    """Columns of the checked results; a bad row raises ``ValueError`` naming it."""
    rows = results if isinstance(results, (list, tuple)) else list(results)
    try:
        return _columns(rows, [p.name for p in players])
    except (_Unusual, TypeError):
        return from_results([_check_row(k, row) for k, row in enumerate(rows)], players)


def rate(
    results: Iterable[tuple],
    *,
    centre: float = 1500,
    scale: float = 400,
    skill_spread: float | None = None,
    half_life_days: float | None = None,
    starting: Mapping[str, float] | None = None,
    divisions: Mapping[str, str] | None = None,
    division_spread: float | None = None,
    starting_levels: Mapping[str, float] | None = None,
) -> Ratings:
    """Rate every player from ``(date, side_a, side_b, games_a, games_b)`` tuples.

    A side is a player's name, or a tuple of two names for a doubles game (a side's
    strength is the mean of its two players' strengths).

    ``skill_spread`` (points) and ``half_life_days`` default to the league
    defaults (``Settings``); ``starting`` maps names to known starting ratings.
    ``divisions`` maps names to their home division: with two or more
    divisions each gets its own level (``division_spread`` points, default the
    league default; 0 = one pool), starting at ``starting_levels`` (points
    above the centre, by division; 0 when absent).  Without ``divisions`` the
    ratings are one pool, as before.
    A bad row raises ``ValueError`` naming the row and the problem.
    """
    defaults = Settings()
    settings = Settings(
        centre=float(centre),
        scale=float(scale),
        skill_spread=defaults.skill_spread if skill_spread is None else float(skill_spread),
        half_life_days=defaults.half_life_days if half_life_days is None else float(half_life_days),
        division_spread=defaults.division_spread if division_spread is None else float(division_spread),
    )
    if settings.division_spread < 0:
        raise ValueError("division_spread must be 0 or more")
    if settings.scale <= 0 or settings.skill_spread <= 0 or settings.half_life_days < 0:
        raise ValueError("scale and skill_spread must be positive and half_life_days 0 or more")
    known = {name.strip(): float(value) for name, value in (starting or {}).items()}
    home = {name.strip(): str(d).strip() for name, d in (divisions or {}).items()}
    players = [Player(name, division=home.get(name, ""), starting=known.get(name)) for name in {**known, **home}]
    with native_threads_limited():
        return Ratings(fit_matches(_checked(results, players), settings, players=players,
                                   starting_levels=starting_levels))
