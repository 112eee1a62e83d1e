"""Chances for matches still to be played, and the fair race for each.

For a fixture between A and B the strength difference ``d = r_A - r_B``
(log-odds) has the Laplace posterior ``N(r_A - r_B, var_A + var_B - 2 cov_AB)``
from the league's fit (``LeagueFit.contrast_variance``); a player the fit has
not met is taken at the centre with the prior's variance, independent of
everyone.  Every chance shown is predictive, averaged over that posterior
(``races.predictive_race_chance``); the point chances (``p = sigmoid(r_A -
r_B)``) are kept beside them.  The fair race is the race, each side between
the shortest and the longest race, whose predictive chance is closest to one
half.

A doubles fixture compares the sides' mean strengths: ``d = x . r`` with
``x = (e_A + e_A2 - e_B - e_B2) / 2`` and variance ``x^T H^-1 x`` (an unmet
player adding ``prior variance / 4``).

How sure a forecast is: the posterior SD of ``d``.  At ``FAR_OFF`` log-odds
(about 100 points on the 400 scale) the per-game chance of an even match is
only known to lie between about 35 % and 65 % (one SD): the forecast says the
chance could be far off; from ``ROUGH`` (about 70 points) it says the chance
is rough.  Both are rules of thumb of ours: an established player's ± is
40-60 points, so two of them stay under ``ROUGH``, while a player with a
handful of games is over ``FAR_OFF``.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Iterable, Sequence

import numpy as np
import scipy.sparse as sp
from scipy.special import expit

from secretary.model.league import LeagueFit
from secretary.model.races import fair_race_predictive, predictive_game_chance, predictive_race_chance, race_chance
from secretary.model.records import Fixture
from secretary.model.uncertainty import difference_coefficients

FAR_OFF = 0.6  # log-odds: posterior SD of the difference above which a chance "could be far off"
ROUGH = 0.4  # log-odds: above this a chance is "rough"


@dataclass(frozen=True)
class FixtureForecast:
    """What the ratings say about one fixture (chances are predictive unless named point).

    Attributes
    ----------
    fixture : the fixture as given
    game_chance : A's chance of winning one game (0..1), averaged over the posterior
    race_a, race_b : the race the chance is for (the fixture's, else the usual race)
    race_chance : A's chance of winning that race (0..1), averaged over the posterior
    fair_race_a, fair_race_b : the race closest to an even match (each shortest..longest race)
    fair_chance : A's chance at the fair race (0..1)
    uncertain : either player has fewer than ``settings.few_games`` weighted games
    not_rated : the fixture's players who have no rated games yet (taken at their prior mean)
    point_game_chance, point_race_chance : the same chances from the point ratings alone
    difference_sd : posterior SD of the strength difference, log-odds
    care : "" (sure enough), "rough" (SD over ``ROUGH``) or "far off" (over ``FAR_OFF``)
    least_known : (name, weighted games) of the player whose rating is least sure
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
    point_game_chance: float = float("nan")
    point_race_chance: float = float("nan")
    difference_sd: float = 0.0
    care: str = ""
    least_known: tuple[str, float] = ("", 0.0)


def _index_and_games(fit: LeagueFit, name: str) -> tuple[int, float]:
    """Player index (-1 when the fit has not met them) and weighted games."""
    try:
        k = fit.index(name)
    except KeyError:
        return -1, 0.0
    return k, float(fit.games[k])


def _posteriors(fixtures: Sequence[Fixture], fit: LeagueFit):
    """Per fixture: mean and variance of the difference, and each player's own variance (log-odds)."""
    if any(f.is_doubles for f in fixtures):
        return _doubles_posteriors(fixtures, fit)
    n, m, prior_var = len(fit.names), len(fixtures), fit.prior_sd**2
    idx = np.array([[_index_and_games(fit, f.player_a)[0], _index_and_games(fit, f.player_b)[0]]
                    for f in fixtures], np.int64).reshape(m, 2)
    known = idx >= 0
    r = np.where(known, fit.r[np.maximum(idx, 0)] if n else 0.0, 0.0)
    # Rows over rated players: e_a - e_b (an unmet side has no column), then e_a and e_b on their own.
    none = np.full(m, -1)
    coef = sp.vstack([difference_coefficients(idx[:, 0], idx[:, 1], n), difference_coefficients(idx[:, 0], none, n),
                      difference_coefficients(idx[:, 1], none, n)]).tocsr()
    var = fit.contrast_variance(coef) if n else np.zeros(3 * m)
    own = np.where(known, var[m:].reshape(2, m).T, prior_var)
    diff = var[:m] + prior_var * (~known).sum(axis=1)
    return r[:, 0] - r[:, 1], diff, [dict(zip(f.players, v)) for f, v in zip(fixtures, own.tolist())]


def _doubles_posteriors(fixtures: Sequence[Fixture], fit: LeagueFit):
    """``_posteriors`` with doubles among the fixtures: each player weighs ``+-1 / (players on the side)``."""
    n, m, prior_var = len(fit.names), len(fixtures), fit.prior_sd**2
    row, col, value, unmet = [], [], [], np.zeros(m)
    mean = np.zeros(m)
    seats = []
    for k, f in enumerate(fixtures):
        for side, sign in ((f.side_a, 1.0), (f.side_b, -1.0)):
            for name in side:
                c, idx = sign / len(side), _index_and_games(fit, name)[0]
                seats.append((k, name, idx))
                if idx < 0:
                    unmet[k] += c * c * prior_var
                else:
                    row.append(k), col.append(idx), value.append(c)
                    mean[k] += c * fit.r[idx]
    known = [s for s in seats if s[2] >= 0]
    own_rows = sp.csr_matrix((np.ones(len(known)), (np.arange(len(known)), [s[2] for s in known])),
                             shape=(len(known), max(n, 1)))
    coef = sp.vstack([sp.csr_matrix((value, (row, col)), shape=(m, max(n, 1))), own_rows]).tocsr()
    var = fit.contrast_variance(coef) if n else np.zeros(m + len(known))
    own: list[dict[str, float]] = [{} for _ in range(m)]
    known_var = iter(var[m:].tolist())
    for k, name, idx in seats:
        own[k][name] = next(known_var) if idx >= 0 else prior_var
    return mean, var[:m] + unmet, own


def _forecast(fixture: Fixture, fit: LeagueFit, mean: float, var: float, side_var) -> FixtureForecast:
    settings = fit.settings
    race_a = int(fixture.race_a or settings.usual_race)
    race_b = int(fixture.race_b or settings.usual_race)
    fair_a, fair_b = fair_race_predictive(mean, var, settings.longest_race,
                                          min(settings.shortest_race, settings.longest_race), settings.usual_race)
    games = {name: _index_and_games(fit, name)[1] for name in fixture.players}
    sd = float(np.sqrt(max(var, 0.0)))
    least = max(fixture.players, key=lambda name: side_var[name])  # the first of equals
    p = float(expit(mean))
    return FixtureForecast(
        fixture=fixture,
        game_chance=predictive_game_chance(mean, var),
        race_a=race_a,
        race_b=race_b,
        race_chance=predictive_race_chance(mean, var, race_a, race_b),
        fair_race_a=fair_a,
        fair_race_b=fair_b,
        fair_chance=predictive_race_chance(mean, var, fair_a, fair_b),
        uncertain=bool(min(games.values()) < settings.few_games),
        not_rated=tuple(name for name in fixture.players if games[name] <= 0),
        point_game_chance=p,
        point_race_chance=float(race_chance(p, race_a, race_b)),
        difference_sd=sd,
        care="far off" if sd >= FAR_OFF else "rough" if sd >= ROUGH else "",
        least_known=(least, games[least]),
    )


def forecast_fixtures(fixtures: Iterable[Fixture], fit: LeagueFit) -> tuple[FixtureForecast, ...]:
    """The forecast of every fixture, in the order given (one posterior computation for all)."""
    fixtures = tuple(fixtures)
    if not fixtures:
        return ()
    mean, var, side = _posteriors(fixtures, fit)
    return tuple(_forecast(fx, fit, float(mean[k]), float(var[k]), side[k]) for k, fx in enumerate(fixtures))


def forecast(fixture: Fixture, fit: LeagueFit) -> FixtureForecast:
    """The chances and fair race for one fixture, from the league's fit."""
    return forecast_fixtures((fixture,), fit)[0]
