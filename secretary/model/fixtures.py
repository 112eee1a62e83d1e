"""Chances for matches still to be played, and the fair race for each.

For a fixture between A and B the strength difference ``d = r_A - r_B``
(log-odds) has the Laplace posterior ``N(r_A - r_B, var_A + var_B - 2 cov_AB)``
from the league's fit (``LeagueFit.contrast_variance``).  Every chance shown
is predictive, averaged over that posterior (``races.predictive_race_chance``);
the point chances (``p = sigmoid(r_A - r_B)``) are kept beside them.  The fair
race is the race, each side between the shortest and the longest race, whose
predictive chance is closest to one half.

A doubles fixture compares the sides' mean strengths: ``d = x . r`` with
``x = (e_A + e_A2 - e_B - e_B2) / 2`` and variance ``x^T H^-1 x``.

A player with no results but a division on the Players sheet is in the fit:
their strength is their division's level plus the prior (``L_d + u``), and
the joint posterior counts the level's ± and its covariance with everyone.
A player with no results and no division (not on the Players sheet, or there
without a Division) is the mixture over the divisions (``Unplaced``):
``centre + L_z + u`` with ``u ~ N(0, s^2)`` and the division ``z`` drawn with
``P(z = d) = w_d``, the division's share of the players with a rated game.
The chances use its mean and variance (moment matched): for seats ``s`` with
weights ``a_s`` (``+-1``, or ``+-1/2`` in doubles) and ``z_s`` independent,

    E[d]   = sum_placed a_s r_s + (sum_unplaced a_s) w . L
    Var(d) = Var(sum_placed a_s r_s + (sum_unplaced a_s) w . L) + (sum_unplaced a_s^2) K
    K      = sum_d w_d Var(L_d) - Var(w . L) + sum_d w_d (L_d - w . L)^2 + s^2

(the first variance from the joint posterior over ``(r, L)``; the levels'
covariance with the other players is in it).  With one division, or the
levels fixed at equal starting levels, this is the centre with ``s^2``.

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
from secretary.model.records import HOME_RULES, Fixture

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
    no_division : the fixture's players with no results and no division, taken as the mixture over the
        divisions (only where a division would tell something: ``Unplaced.division_matters``)
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
    no_division: tuple[str, ...] = ()


def _index_and_games(fit: LeagueFit, name: str) -> tuple[int, float]:
    """Player index (-1 when the fit has not met them) and weighted games."""
    try:
        k = fit.index(name)
    except KeyError:
        return -1, 0.0
    return k, float(fit.games[k])


def _placed(fit: LeagueFit, name: str) -> int:
    """The player's index in the fit, or -1 when their strength is the mixture over the divisions: not in
    the fit at all, or with no rated game and no division (a Players-sheet row without one)."""
    k, games = _index_and_games(fit, name)
    return -1 if k < 0 or (games <= 0 and fit.home_rule[k] == HOME_RULES[2]) else k


@dataclass(frozen=True)
class Unplaced:
    """What the fit says of a player with no results and no division: ``centre + L_z + u``.

    Attributes
    ----------
    weights : (D,) the chance ``w_d`` that the division ``z`` is ``d``: its share of the rated players
        (a division named "" gets none); all 0 when no division has one (then the centre)
    mean : ``w . L``, log-odds above the centre (``u``'s prior mean is the centre)
    spread : the variance every such seat adds on top of the contrast row ``[0, w]`` (log-odds squared):
        ``own - Var(w . L)``
    own : the variance of the player's strength, ``sum_d w_d Var(L_d) + sum_d w_d (L_d - w . L)^2 + s^2``
    """

    weights: np.ndarray
    mean: float
    spread: float
    own: float
    prior_var: float  # s^2

    @property
    def division_matters(self) -> bool:
        """Knowing the division would tell something: two or more divisions to choose from, whose levels
        differ or are uncertain (in one pool with equal levels the mixture is the centre with ``s^2``)."""
        return int(np.count_nonzero(self.weights)) >= 2 and self.own > self.prior_var * (1.0 + 1e-9)


def _division_shares(fit: LeagueFit) -> np.ndarray:
    """``w_d``: each named division's share of the players with a rated game (all 0 when none has one)."""
    count = np.bincount(fit.group[fit.rated], minlength=len(fit.group_names)).astype(float)
    count[[k for k, g in enumerate(fit.group_names) if not g]] = 0.0
    return count / count.sum() if count.sum() > 0 else count


def _mixture(fit: LeagueFit, w: np.ndarray, level_var: np.ndarray, mixed_var: float) -> Unplaced:
    """``Unplaced`` from the shares ``w``, each level's variance and ``Var(w . L)`` (0s for fixed levels)."""
    level = np.asarray(fit.level, float) if len(w) else np.zeros(0)
    mean = float(w @ level)
    own = float(w @ level_var) + float(w @ (level - mean) ** 2) + fit.prior_sd**2
    return Unplaced(w, mean, own - mixed_var, own, fit.prior_sd**2)


def _per_fixture(seats, value, m: int) -> np.ndarray:
    """``value(seat)`` summed over each fixture's ``seats`` (0 where none)."""
    return np.bincount(np.fromiter((s[0] for s in seats), np.int64, len(seats)),
                       np.fromiter((value(s) for s in seats), float, len(seats)), m)


def _posteriors(fixtures: Sequence[Fixture], fit: LeagueFit):
    """Per fixture: mean and variance of the difference ``x . r``, and each player's own variance (log-odds).

    Each player weighs ``+-1 / (players on the side)``; a player the fit cannot place (``_placed``) is the
    mixture ``Unplaced``: their weight goes on the levels' row ``w``, and ``weight^2 * spread`` on top.
    """
    n, m, w, r = len(fit.names), len(fixtures), _division_shares(fit), np.asarray(fit.r, float)
    seats = [(k, name, sign / len(side), _placed(fit, name)) for k, f in enumerate(fixtures)
             for side, sign in ((f.side_a, 1.0), (f.side_b, -1.0)) for name in side]
    known, away = [s for s in seats if s[3] >= 0], [s for s in seats if s[3] < 0]
    # Rows: each fixture's x (placed players; the levels' part), each placed seat alone, each level, w . L.
    k, D, at = len(known), len(w), [s[3] for s in known]
    rows = [s[0] for s in known] + list(range(m, m + k))
    players = sp.csr_matrix(([s[2] for s in known] + [1.0] * k, (rows, at * 2)), shape=(m + k + D + 1, max(n, 1)))
    share = _per_fixture(away, lambda s: s[2], m)
    levels = sp.csr_matrix(np.vstack([np.outer(np.r_[share, np.zeros(k)], w), np.eye(D), w[None, :]]))
    var = fit.contrast_variance(players, levels) if n else np.zeros(m + k + D + 1)
    mix = _mixture(fit, w, var[m + k:m + k + D], float(var[-1]))
    own: list[dict[str, float]] = [{} for _ in range(m)]
    for (f, name, _, _), v in zip(known, var[m:m + k].tolist()):
        own[f][name] = v
    for f, name, _, _ in away:
        own[f][name] = mix.own
    mean = _per_fixture(known, lambda s: s[2] * r[s[3]], m) + share * mix.mean
    return mean, var[:m] + _per_fixture(away, lambda s: s[2] ** 2, m) * mix.spread, own, mix


def _forecast(fixture: Fixture, fit: LeagueFit, mean: float, var: float, side_var, mix: Unplaced) -> FixtureForecast:
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
        no_division=tuple(name for name in fixture.players if mix.division_matters and _placed(fit, name) < 0),
    )


def forecast_fixtures(fixtures: Iterable[Fixture], fit: LeagueFit) -> tuple[FixtureForecast, ...]:
    """The forecast of every fixture, in the order given (one posterior computation for all)."""
    fixtures = tuple(fixtures)
    if not fixtures:
        return ()
    mean, var, side, mix = _posteriors(fixtures, fit)
    return tuple(_forecast(fx, fit, float(mean[k]), float(var[k]), side[k], mix) for k, fx in enumerate(fixtures))


def forecast(fixture: Fixture, fit: LeagueFit) -> FixtureForecast:
    """The chances and fair race for one fixture, from the league's fit."""
    return forecast_fixtures((fixture,), fit)[0]
