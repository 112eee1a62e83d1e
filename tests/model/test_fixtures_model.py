"""Fixture forecasts: point and predictive chances, the fair race, and how sure each forecast is."""
import dataclasses
import datetime as dt
import math

import numpy as np
import pytest

from secretary.model.fixtures import forecast, forecast_fixtures
from secretary.model.league import fit_league
from scipy.special import betainc, expit

from secretary.model.fit import hessian
from secretary.model.races import fair_race_predictive, predictive_race_chance
from secretary.model.records import Fixture, Result, Settings
from secretary.model.scale import to_strength
from secretary.model.notice import forecast_note
from scipy.special import logit
import scipy.sparse as sp
from tests import newcomer_league as newcomers

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
    assert fc.point_game_chance == pytest.approx(0.6401, abs=5e-5)
    assert 0.5 < fc.game_chance < fc.point_game_chance  # the uncertainty pulls the shown chance toward 1/2


def test_chance_at_the_given_race():
    gap = 400.0 * math.log10(1.5)  # per-game chance 0.6
    fit = league(strengths={"Ann Regular": 1500.0 + gap, "Bea Regular": 1500.0})
    fc = forecast(Fixture(DAY, "Ann Regular", "Bea Regular", 4, 4), fit)
    assert fc.point_game_chance == pytest.approx(0.6, abs=1e-12)
    # Source: S. Ross, A First Course in Probability, problem 4.72: p = 0.6, first to 4 -> 0.710208.
    assert (fc.race_a, fc.race_b) == (4, 4) and fc.point_race_chance == pytest.approx(0.710208, abs=5e-7)
    fc = forecast(Fixture(DAY, "Ann Regular", "Bea Regular", 3, 5), fit)
    # Source: docs/checks.md section 4, scipy.stats.nbinom.cdf(4, 3, 0.6) -> 0.903744.
    assert fc.point_race_chance == pytest.approx(0.903744, abs=5e-7)


def test_usual_race_when_the_fixture_gives_none():
    gap = 400.0 * math.log10(1.5)
    settings = Settings(usual_race=2)
    fit = league(settings, strengths={"Ann Regular": 1500.0 + gap, "Bea Regular": 1500.0})
    fc = forecast(Fixture(None, "Ann Regular", "Bea Regular"), fit)
    # Source: S. Ross, A First Course in Probability, problem 4.72: p = 0.6, first to 2 -> 0.648.
    assert (fc.race_a, fc.race_b) == (2, 2) and fc.point_race_chance == pytest.approx(0.648, abs=1e-12)


def test_fair_race_up_to_the_longest_race():
    settings = Settings(longest_race=7)
    fit = league(settings, strengths={"Ann Regular": 1700.0, "Cal Regular": 1450.0})
    fc = forecast(Fixture(DAY, "Ann Regular", "Cal Regular"), fit)
    mean = fit.r[fit.index("Ann Regular")] - fit.r[fit.index("Cal Regular")]
    var = fc.difference_sd**2
    assert (fc.fair_race_a, fc.fair_race_b) == fair_race_predictive(mean, var, 7, settings.shortest_race,
                                                                    settings.usual_race)
    assert fc.fair_race_a > fc.fair_race_b >= settings.shortest_race and max(fc.fair_race_a, fc.fair_race_b) <= 7
    assert fc.fair_chance == pytest.approx(predictive_race_chance(mean, var, fc.fair_race_a, fc.fair_race_b))
    assert abs(fc.fair_chance - 0.5) < abs(fc.race_chance - 0.5)


def test_flags_for_few_games_and_unknown_players():
    fit = league(Settings(few_games=10.0))
    regular = forecast(Fixture(DAY, "Ann Regular", "Bea Regular"), fit)
    seldom = forecast(Fixture(DAY, "Dot Seldom", "Bea Regular"), fit)
    stranger = forecast(Fixture(DAY, "Eve Stranger", "Bea Regular"), fit)
    assert not regular.uncertain and regular.not_rated == ()
    assert seldom.uncertain and seldom.not_rated == ()  # five games: rated, but uncertain
    assert stranger.uncertain and stranger.not_rated == ("Eve Stranger",)
    # A player not yet rated is taken at the centre (strength 0) with the prior's variance, independent of B.
    k = fit.index("Bea Regular")
    assert stranger.point_game_chance == pytest.approx(1.0 / (1.0 + np.exp(fit.r[k])), abs=1e-12)
    H = hessian(fit.pairs, fit.r, fit.prior_sd).toarray()
    assert stranger.difference_sd**2 == pytest.approx(np.linalg.inv(H)[k, k] + fit.prior_sd**2, rel=1e-10)
    assert stranger.care == "far off" and stranger.least_known == ("Eve Stranger", 0.0)
    assert stranger.no_division == ()  # one division: a division on the Players sheet would tell nothing
    assert regular.care == "" and seldom.least_known[0] == "Dot Seldom"


def test_many_fixtures_keep_their_order():
    fit = league()
    fixtures = [Fixture(DAY, "Ann Regular", "Bea Regular", 5, 5, row=2),
                Fixture(DAY, "Cal Regular", "Ann Regular", row=3)]
    out = forecast_fixtures(fixtures, fit)
    assert [fc.fixture for fc in out] == fixtures
    swapped = forecast(Fixture(DAY, "Bea Regular", "Ann Regular"), fit)
    assert out[0].game_chance == pytest.approx(1 - swapped.game_chance)
    assert out[0].race_chance == pytest.approx(1 - swapped.race_chance, abs=1e-12)


def test_predictive_chances_against_a_monte_carlo_average_over_the_posterior():
    fit = league()
    fc = forecast(Fixture(DAY, "Dot Seldom", "Bea Regular", 5, 4), fit)
    # Source: Monte Carlo over 10^6 numpy draws of all strengths from N(r, H^-1) (numpy.linalg.inv of the Hessian).
    H = hessian(fit.pairs, fit.r, fit.prior_sd).toarray()
    draws = np.random.default_rng(1).multivariate_normal(fit.r, np.linalg.inv(H), 1_000_000, method="cholesky")
    d = draws[:, fit.index("Dot Seldom")] - draws[:, fit.index("Bea Regular")]
    assert fc.game_chance == pytest.approx(expit(d).mean(), abs=1e-3)
    assert fc.race_chance == pytest.approx(betainc(5, 4, expit(d)).mean(), abs=1e-3)
    assert fc.difference_sd == pytest.approx(d.std(), rel=3e-3)
    assert abs(fc.race_chance - 0.5) < abs(fc.point_race_chance - 0.5)


def test_shortest_race_setting():
    fit = league(Settings(shortest_race=3), strengths={"Ann Regular": 1900.0, "Bea Regular": 1400.0})
    fc = forecast(Fixture(DAY, "Ann Regular", "Bea Regular"), fit)
    assert min(fc.fair_race_a, fc.fair_race_b) == 3  # without the floor the fairest race gives B a single game
    assert min(fair_race_predictive(0.0 + fit.r[0] - fit.r[1], fc.difference_sd**2, 9, 1)) < 3


def test_a_demo_newcomers_chance_is_pulled_toward_even_by_the_monte_carlo_amount():
    from secretary.workbook.read import read_workbook
    from tests.bench.demo_league import DEMO, demo_league

    results, players = demo_league()
    book = read_workbook(DEMO)
    fit = fit_league(results, book.settings, players=players)
    fc = next(f for f in forecast_fixtures(book.fixtures, fit) if f.fixture.player_a == "Yvette Marwood")
    a, b = fc.fair_race_a, fc.fair_race_b
    # Source: Monte Carlo over 10^6 numpy draws of every strength and division level from N((r, L), H^-1)
    # (numpy.linalg.inv of the joint Hessian: the demo's divisions have free levels).
    assert fit.levels is not None
    H = hessian(fit.pairs, fit.r, fit.prior_sd, fit.levels).toarray()
    centre = np.concatenate([fit.r, fit.level])
    draws = np.random.default_rng(1).multivariate_normal(centre, np.linalg.inv(H), 1_000_000, method="cholesky")
    d = draws[:, fit.index("Yvette Marwood")] - draws[:, fit.index("Oscar Penrice")]
    point = float(betainc(a, b, expit(fit.r[fit.index("Yvette Marwood")] - fit.r[fit.index("Oscar Penrice")])))
    pull_mc = float(betainc(a, b, expit(d)).mean()) - point
    assert fc.fair_chance - point == pytest.approx(pull_mc, abs=1e-3)
    assert pull_mc > 0.01 and fc.fair_chance < 0.5  # toward 50 %, by over a point (measured 0.014 with doubles)
    assert fc.game_chance - fc.point_game_chance == pytest.approx(float(expit(d).mean()) - fc.point_game_chance,
                                                                  abs=1e-3)


@pytest.mark.parametrize("spread, levels", [(250.0, None), (0.0, {"Premier": 120.0, "Second": -100.0})],
                         ids=["free levels", "fixed starting levels"])
def test_a_player_with_no_results_and_no_division_is_the_mixture_over_the_divisions(spread, levels):
    fit = fit_league(newcomers.results(), Settings(division_spread=spread), players=newcomers.players(),
                     starting_levels=levels)
    fixtures = newcomers.fixtures()
    out = forecast_fixtures(fixtures, fit)
    for fixture, fc in zip(fixtures, out):
        # Source: tests/newcomer_league.py, every choice of division enumerated with numpy.linalg.inv.
        mean, var = newcomers.by_enumeration(fit, fixture, newcomers.shares())
        assert logit(fc.point_game_chance) == pytest.approx(mean, abs=1e-9)
        assert fc.difference_sd**2 == pytest.approx(var, rel=1e-9)
        assert fc.race_chance == pytest.approx(predictive_race_chance(mean, var, fc.race_a, fc.race_b), abs=1e-12)
    # At the centre with the prior's variance (how a stranger was taken before) is well off the mixture.
    k = fit.index("Ada Finch")
    centre = fit.r[k], fit.contrast_variance(sp.csr_matrix(([1.0], ([0], [k])), shape=(1, len(fit.names))))[0]
    mean, var = newcomers.by_enumeration(fit, fixtures[0], newcomers.shares())
    assert abs(centre[0] - mean) > 0.15 and var - (centre[1] + fit.prior_sd**2) > 0.1


def test_a_player_with_a_division_but_no_results_starts_at_its_level_with_its_uncertainty():
    fit = fit_league(newcomers.results(), Settings(division_spread=250.0), players=newcomers.players())
    k, first = fit.index(newcomers.LISTED), fit.group_names.index("First")
    assert fit.r[k] == pytest.approx(fit.level[first], abs=1e-9)  # no games: the own deviation at its prior mean
    cov = np.linalg.inv(hessian(fit.pairs, fit.r, fit.prior_sd, fit.levels).toarray())
    level = len(fit.names) + first
    # Source: numpy.linalg.inv of the joint Hessian: strength = level + a deviation the games never saw,
    # so its variance is the level's plus the prior's, and it moves with everyone as the level does.
    assert cov[k, k] == pytest.approx(cov[level, level] + fit.prior_sd**2, rel=1e-9)
    assert cov[k, :len(fit.names)][np.arange(len(fit.names)) != k] == pytest.approx(
        cov[level, :len(fit.names)][np.arange(len(fit.names)) != k], abs=1e-12)
    fc = forecast(Fixture(DAY, "Kit Ellis", newcomers.LISTED), fit)
    j = fit.index("Kit Ellis")
    assert fc.difference_sd**2 == pytest.approx(cov[j, j] + cov[k, k] - 2 * cov[j, k], rel=1e-9)
    assert fc.no_division == () and fc.not_rated == (newcomers.LISTED,)


def test_the_note_says_what_to_do_for_a_player_with_no_division():
    fit = fit_league(newcomers.results(), Settings(division_spread=250.0), players=newcomers.players())
    notes = [forecast_note(fc) for fc in forecast_fixtures(newcomers.fixtures(), fit)]
    assert notes == [
        "Pia Wren has no results and no division on the Players sheet: this chance is a rough guess; "
        "add their division there for a better one",
        "Pia Wren and Otto Vane have no results and no division on the Players sheet: this chance is a rough "
        "guess; add their divisions there for a better one",
        "Nell Quarry is not rated yet: this chance is a rough guess",
        "Pia Wren has no results and no division on the Players sheet: this chance is a rough guess; "
        "add their division there for a better one"]


def test_one_division_gives_no_advice_to_add_one():
    """With one division a division on the Players sheet would tell nothing: the plain 'not rated yet'."""
    results = [r for r in newcomers.results() if r.division == "Premier"]
    fc = forecast(newcomers.fixtures()[0], fit_league(results, Settings(division_spread=250.0)))
    assert fc.no_division == () and forecast_note(fc) == "Pia Wren is not rated yet: this chance is a rough guess"
