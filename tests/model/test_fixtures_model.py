"""Fixture forecasts: per-game chance, race chance, fair race and the flags."""
import dataclasses
import datetime as dt
import math

import numpy as np
import pytest

from secretary.model.fixtures import forecast, forecast_fixtures
from secretary.model.league import fit_league
from secretary.model.races import fair_race_for_chance, race_chance
from secretary.model.records import Fixture, Result, Settings
from secretary.model.scale import to_strength

DAY = dt.date(2026, 3, 5)


def league(settings=Settings(), strengths=None):
    """Three regulars (many games) and one occasional player, with strengths set exactly if given."""
    results = []
    for k in range(12):
        results += [Result(DAY, "Ann Regular", "Bea Regular", 5, 3), Result(DAY, "Bea Regular", "Cal Regular", 5, 4),
                    Result(DAY, "Cal Regular", "Ann Regular", 2, 5)]
    results.append(Result(DAY, "Dot Seldom", "Ann Regular", 1, 4))
    fit = fit_league(results, settings, with_uncertainty=False)
    if strengths:
        r = fit.r.copy()
        for name, points in strengths.items():
            r[fit.index(name)] = to_strength(points, settings.centre, settings.scale)
        fit = dataclasses.replace(fit, r=r)
    return fit


def test_game_chance_on_the_400_point_scale():
    fit = league(strengths={"Ann Regular": 1600.0, "Bea Regular": 1500.0})
    fc = forecast(Fixture(DAY, "Ann Regular", "Bea Regular"), fit)
    # Source: US Chess Federation rating system (Glickman), E = 1 / (1 + 10 ** (-D / 400)): D = 100 -> 0.6401.
    assert fc.game_chance == pytest.approx(0.6401, abs=5e-5)


def test_chance_at_the_given_race():
    gap = 400.0 * math.log10(1.5)  # per-game chance 0.6
    fit = league(strengths={"Ann Regular": 1500.0 + gap, "Bea Regular": 1500.0})
    fc = forecast(Fixture(DAY, "Ann Regular", "Bea Regular", 4, 4), fit)
    assert fc.game_chance == pytest.approx(0.6, abs=1e-12)
    # Source: S. Ross, A First Course in Probability, problem 4.72: p = 0.6, first to 4 -> 0.710208.
    assert (fc.race_a, fc.race_b) == (4, 4) and fc.race_chance == pytest.approx(0.710208, abs=5e-7)
    fc = forecast(Fixture(DAY, "Ann Regular", "Bea Regular", 3, 5), fit)
    # Source: checks.md section 4, scipy.stats.nbinom.cdf(4, 3, 0.6) -> 0.903744.
    assert fc.race_chance == pytest.approx(0.903744, abs=5e-7)


def test_usual_race_when_the_fixture_gives_none():
    gap = 400.0 * math.log10(1.5)
    settings = Settings(usual_race=2)
    fit = league(settings, strengths={"Ann Regular": 1500.0 + gap, "Bea Regular": 1500.0})
    fc = forecast(Fixture(None, "Ann Regular", "Bea Regular"), fit)
    # Source: S. Ross, A First Course in Probability, problem 4.72: p = 0.6, first to 2 -> 0.648.
    assert (fc.race_a, fc.race_b) == (2, 2) and fc.race_chance == pytest.approx(0.648, abs=1e-12)


def test_fair_race_up_to_the_longest_race():
    settings = Settings(longest_race=7)
    fit = league(settings, strengths={"Ann Regular": 1700.0, "Cal Regular": 1450.0})
    fc = forecast(Fixture(DAY, "Ann Regular", "Cal Regular"), fit)
    assert (fc.fair_race_a, fc.fair_race_b) == fair_race_for_chance(fc.game_chance, 7)
    assert fc.fair_race_a > fc.fair_race_b and max(fc.fair_race_a, fc.fair_race_b) <= 7
    assert fc.fair_chance == pytest.approx(race_chance(fc.game_chance, fc.fair_race_a, fc.fair_race_b))
    assert abs(fc.fair_chance - 0.5) < abs(fc.race_chance - 0.5)


def test_flags_for_few_games_and_unknown_players():
    fit = league(Settings(few_games=10.0))
    regular = forecast(Fixture(DAY, "Ann Regular", "Bea Regular"), fit)
    seldom = forecast(Fixture(DAY, "Dot Seldom", "Bea Regular"), fit)
    stranger = forecast(Fixture(DAY, "Eve Stranger", "Bea Regular"), fit)
    assert not regular.uncertain and regular.not_rated == ()
    assert seldom.uncertain and seldom.not_rated == ()  # five games: rated, but uncertain
    assert stranger.uncertain and stranger.not_rated == ("Eve Stranger",)
    # A player not yet rated is taken at the centre (strength 0).
    r_b = fit.r[fit.index("Bea Regular")]
    assert stranger.game_chance == pytest.approx(1.0 / (1.0 + np.exp(r_b)), abs=1e-12)


def test_many_fixtures_keep_their_order():
    fit = league()
    fixtures = [Fixture(DAY, "Ann Regular", "Bea Regular", 5, 5, row=2),
                Fixture(DAY, "Cal Regular", "Ann Regular", row=3)]
    out = forecast_fixtures(fixtures, fit)
    assert [fc.fixture for fc in out] == fixtures
    swapped = forecast(Fixture(DAY, "Bea Regular", "Ann Regular"), fit)
    assert out[0].game_chance == pytest.approx(1 - swapped.game_chance)
