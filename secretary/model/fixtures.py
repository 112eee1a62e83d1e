"""Chances for matches still to be played, and the fair race for each.

For a fixture between A and B the per-game chance is ``p = sigmoid(r_A - r_B)``
from the league's fit; a player the fit has not met is taken at their prior
mean (the league's centre).  The chance at a race uses ``races.race_chance``;
the fair race is ``races.fair_race_for_chance`` up to the longest race.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Iterable

from scipy.special import expit

from secretary.model.league import LeagueFit
from secretary.model.races import fair_race_for_chance, race_chance
from secretary.model.records import Fixture


@dataclass(frozen=True)
class FixtureForecast:
    """What the ratings say about one fixture.

    Attributes
    ----------
    fixture : the fixture as given
    game_chance : A's chance of winning one game (0..1)
    race_a, race_b : the race the chance is for (the fixture's, else the usual race)
    race_chance : A's chance of winning that race (0..1)
    fair_race_a, fair_race_b : the race closest to an even match (each 1..longest race)
    fair_chance : A's chance at the fair race (0..1)
    uncertain : either player has fewer than ``settings.few_games`` weighted games
    not_rated : the fixture's players who have no rated games yet (taken at their prior mean)
    """

    fixture: Fixture
    game_chance: float
    race_a: int
    race_b: int
    race_chance: float
    fair_race_a: int
    fair_race_b: int
    fair_chance: float
    uncertain: bool
    not_rated: tuple[str, ...]


def _strength_and_games(fit: LeagueFit, name: str) -> tuple[float, float]:
    """Strength (log-odds) and weighted games; an unknown player sits at the centre with none."""
    try:
        k = fit.index(name)
    except KeyError:
        return 0.0, 0.0
    return float(fit.r[k]), float(fit.games[k])


def forecast(fixture: Fixture, fit: LeagueFit) -> FixtureForecast:
    """The chances and fair race for one fixture, from the league's fit."""
    settings = fit.settings
    r_a, n_a = _strength_and_games(fit, fixture.player_a)
    r_b, n_b = _strength_and_games(fit, fixture.player_b)
    p = float(expit(r_a - r_b))
    race_a = fixture.race_a or settings.usual_race
    race_b = fixture.race_b or settings.usual_race
    fair_a, fair_b = fair_race_for_chance(p, settings.longest_race)
    return FixtureForecast(
        fixture=fixture,
        game_chance=p,
        race_a=int(race_a),
        race_b=int(race_b),
        race_chance=float(race_chance(p, race_a, race_b)),
        fair_race_a=fair_a,
        fair_race_b=fair_b,
        fair_chance=float(race_chance(p, fair_a, fair_b)),
        uncertain=bool(min(n_a, n_b) < settings.few_games),
        not_rated=tuple(name for name, n in ((fixture.player_a, n_a), (fixture.player_b, n_b)) if n <= 0),
    )


def forecast_fixtures(fixtures: Iterable[Fixture], fit: LeagueFit) -> tuple[FixtureForecast, ...]:
    """``forecast`` for every fixture, in the order given."""
    return tuple(forecast(fx, fit) for fx in fixtures)
