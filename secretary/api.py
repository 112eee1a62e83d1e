"""The small scripting API: ``rate``, ``race_chance`` and ``fair_race`` (names kept stable)."""
from __future__ import annotations

import datetime as dt
import numbers
from typing import Iterable, Mapping

from secretary.model.league import LeagueFit, fit_league
from secretary.model.races import fair_race, race_chance
from secretary.model.records import Player, Result, Settings

__all__ = ["rate", "race_chance", "fair_race", "Ratings"]


class Ratings:
    """The league's ratings from ``rate``: ``.names``, ``.rating(name)`` and ``.sd(name)`` in points."""

    def __init__(self, fit: LeagueFit):
        self.fit = fit

    @property
    def names(self) -> tuple[str, ...]:
        """Every rated player, in order of first appearance."""
        return self.fit.names

    def rating(self, name: str) -> float:
        """The player's rating in points."""
        return self.fit.rating(name)

    def sd(self, name: str) -> float:
        """The player's ± (one standard deviation) in points."""
        return self.fit.sd(name)

    def __repr__(self) -> str:
        return f"<Ratings of {len(self.names)} players>"


def _check_row(k: int, row) -> Result:
    where = f"result {k + 1}"
    try:
        date, a, b, ga, gb = row
    except (TypeError, ValueError):
        raise ValueError(f"{where}: expected (date, player_a, player_b, games_a, games_b), got {row!r}") from None
    if not isinstance(date, dt.date):
        raise ValueError(f"{where}: the date must be a datetime.date, got {date!r}")
    if isinstance(date, dt.datetime):
        date = date.date()
    for label, name in (("player_a", a), ("player_b", b)):
        if not isinstance(name, str) or not name.strip():
            raise ValueError(f"{where}: {label} must be a non-empty name, got {name!r}")
    if a.strip() == b.strip():
        raise ValueError(f"{where}: {a.strip()!r} cannot play against themself")
    for label, g in (("games_a", ga), ("games_b", gb)):
        if isinstance(g, bool) or not isinstance(g, numbers.Integral) or g < 0:
            raise ValueError(f"{where}: {label} must be a whole number of games, 0 or more, got {g!r}")
    if ga == 0 and gb == 0:
        raise ValueError(f"{where}: both sides have 0 games; a result needs at least one game played")
    return Result(date, a.strip(), b.strip(), int(ga), int(gb))


def rate(
    results: Iterable[tuple],
    *,
    centre: float = 1500,
    scale: float = 400,
    skill_spread: float | None = None,
    half_life_days: float | None = None,
    starting: Mapping[str, float] | None = None,
) -> Ratings:
    """Rate every player from ``(date, player_a, player_b, games_a, games_b)`` tuples.

    ``skill_spread`` (points) and ``half_life_days`` default to the league
    defaults (``Settings``); ``starting`` maps names to known starting ratings.
    A bad row raises ``ValueError`` naming the row and the problem.
    """
    rows = [_check_row(k, row) for k, row in enumerate(results)]
    defaults = Settings()
    settings = Settings(
        centre=float(centre),
        scale=float(scale),
        skill_spread=defaults.skill_spread if skill_spread is None else float(skill_spread),
        half_life_days=defaults.half_life_days if half_life_days is None else float(half_life_days),
    )
    if settings.scale <= 0 or settings.skill_spread <= 0 or settings.half_life_days < 0:
        raise ValueError("scale and skill_spread must be positive and half_life_days 0 or more")
    players = [Player(name.strip(), starting=float(value)) for name, value in (starting or {}).items()]
    return Ratings(fit_league(rows, settings, players=players))
