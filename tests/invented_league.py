"""A small invented league over two weekly updates, for the tests of the printed outputs.

Built with the real model (``fit_league``, ``explain_changes``, ``forecast_fixtures``):
three divisions, accented names, and names a spreadsheet would read as formulas.
"""
from __future__ import annotations

import datetime as dt
import itertools
from dataclasses import dataclass

import numpy as np
from scipy.special import expit

from secretary.model.breakdown import Breakdown, explain_changes
from secretary.model.fixtures import FixtureForecast, forecast_fixtures
from secretary.model.league import fit_league
from secretary.model.records import Fixture, Player, PlayerRating, PublishedState, Result, Settings, fingerprint, identity

DIVISIONS = {
    "Premier": ("Zoë Ångström", "Bram Oak", "Cleo Marsh", "=Dev Pike", "Ñuño Ibáñez"),
    "First": ("Élodie Brûlé", "Finn Yarrow", "Gwen Ashby", "+Hal Brook", "Łucja Wąs"),
    "Second": ("Ines Cole", "@Jude Dunn", "Kit Ellis", "Søren Øby"),
}
WEEK_1 = dt.date(2026, 3, 3)
WEEK_2 = WEEK_1 + dt.timedelta(days=7)
# Pinned, not the defaults; one pool, so Premier's single cup matches leave it weakly linked.
SETTINGS = Settings(league_name="Riverside Cue League", few_games=12.0, skill_spread=145.0, division_spread=0.0)
NEWCOMER = "Nia Quell"  # first plays in week 2


@dataclass(frozen=True)
class Update:
    """One update's inputs and outputs."""

    results: tuple[Result, ...]
    breakdown: Breakdown
    ratings: tuple[PlayerRating, ...]
    published: PublishedState


def players() -> list[Player]:
    out = [Player(name, division) for division, names in DIVISIONS.items() for name in names]
    return out + [Player(NEWCOMER, "Second")]


def _week(rng, day: dt.date, pairs, strength) -> list[Result]:
    home = {p.name: p.division for p in players()}
    out = []
    for a, b in pairs:
        ga = int(rng.binomial(7, expit(strength[a] - strength[b])))
        division = home[a] if home[a] == home[b] else "Cup"
        out.append(Result(day, a, b, ga, 7 - ga, division, "Cup" if division == "Cup" else ""))
    return out


def _results() -> tuple[list[Result], list[Result]]:
    rng = np.random.default_rng(11)
    names = [p.name for p in players()]
    strength = {n: rng.normal(0, 0.7) for n in names}
    first = []
    for k, group in enumerate(DIVISIONS.values()):
        first += _week(rng, WEEK_1 - dt.timedelta(days=14 - k), itertools.combinations(group, 2), strength)
    first += _week(rng, WEEK_1, [("Bram Oak", "Gwen Ashby"), ("Finn Yarrow", "Ines Cole"), ("Cleo Marsh", "Kit Ellis")], strength)
    second = _week(rng, WEEK_2, [
        ("Zoë Ångström", "Cleo Marsh"), ("Bram Oak", "=Dev Pike"), ("Élodie Brûlé", "Gwen Ashby"),
        ("+Hal Brook", "Łucja Wąs"), ("Ines Cole", NEWCOMER), ("@Jude Dunn", "Søren Øby"),
        ("Gwen Ashby", "Kit Ellis"),
    ], strength)
    return first, second


def _publish(results, breakdown, settings) -> tuple[tuple[PlayerRating, ...], PublishedState]:
    fit = fit_league(results, settings, players=players())
    changes = {pc.name: pc for pc in breakdown.players}
    ratings = tuple(
        PlayerRating(
            name=name, division=fit.division(name), rating=float(fit.ratings[k]), sd=float(fit.sds[k]),
            games=float(fit.games[k]), wins=float(fit.wins[k]), last_played=fit.last_played[k],
            change=None if breakdown.first_update or changes[name].is_new else changes[name].change,
            is_new=breakdown.first_update or changes[name].is_new,
        )
        for k, name in enumerate(fit.names) if fit.games[k] > 0  # only players with games are published
    )
    state = PublishedState(
        updated_at="2026-03-03T21:00:00", reference_date=fit.reference_date,
        ratings={p.name: p.rating for p in ratings}, sds={p.name: p.sd for p in ratings},
        rows=tuple((identity(r), fingerprint(r)) for r in results if not r.void), settings=settings,
    )
    return ratings, state


def two_updates(settings: Settings = SETTINGS) -> tuple[Update, Update]:
    """The first update (first ratings) and the second (a week later, with a breakdown)."""
    week_1, week_2 = _results()
    first = explain_changes(week_1, None, settings, players())
    ratings_1, state_1 = _publish(week_1, first, settings)
    rows = tuple(week_1 + week_2)
    second = explain_changes(rows, state_1, settings, players())
    ratings_2, state_2 = _publish(rows, second, settings)
    return Update(tuple(week_1), first, ratings_1, state_1), Update(rows, second, ratings_2, state_2)


FIXTURES = (
    # (date, A, B, race A, race B): a usual race, a set handicap race, a newcomer, an unknown name.
    (WEEK_2 + dt.timedelta(days=7), "Zoë Ångström", "Finn Yarrow", None, None),
    (WEEK_2 + dt.timedelta(days=7), "=Dev Pike", "Kit Ellis", 5, 4),
    (WEEK_2 + dt.timedelta(days=8), NEWCOMER, "Gwen Ashby", None, None),
    (WEEK_2 + dt.timedelta(days=8), "Otto Newman", "@Jude Dunn", None, None),
)


def forecasts(results, settings: Settings = SETTINGS, first_row: int = 2) -> tuple[FixtureForecast, ...]:
    """Forecasts of ``FIXTURES``, as if read from sheet rows ``first_row`` onwards."""
    fit = fit_league(results, settings, players=players())
    fixtures = [Fixture(d, a, b, ra, rb, row=first_row + k) for k, (d, a, b, ra, rb) in enumerate(FIXTURES)]
    return forecast_fixtures(fixtures, fit)


def chance_by_integral(fc: FixtureForecast, a: int, b: int) -> float:
    """A's chance of a race, averaged over the difference's normal posterior by the trapezoid rule on a fine grid.

    The race chance is scipy.stats.nbinom.cdf(b - 1, a, p) (docs/checks.md section 4), independent of the beta
    function and of the model's quadrature; the posterior mean is the point chance's log-odds.
    """
    from scipy.stats import nbinom, norm

    mean = np.log(fc.point_game_chance / (1 - fc.point_game_chance))
    d = np.linspace(mean - 10 * fc.difference_sd, mean + 10 * fc.difference_sd, 20001)
    return float(np.trapezoid(nbinom.cdf(b - 1, a, expit(d)) * norm.pdf(d, mean, fc.difference_sd), d))
