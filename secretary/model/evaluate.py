"""How good the ratings are: a walk forward through the history, week by week.

Results are cut into steps of ``step_days`` (7 = weeks) counted from the first
result's date.  For each step the league is rated from the results dated
before it only, exactly as an update on that day would (ages measured from the
newest of those results; division levels as in an update, see
``walkforward``), and every game of the step is predicted with
``p = sigmoid(r_a - r_b)``; a player not yet seen starts at their division's
level plus their starting offset.  The predictions are scored per game:

    log-loss = sum_matches [games_a * -log p + games_b * -log(1 - p)] / games
    Brier    = sum_matches [games_a * (1 - p)^2 + games_b * p^2] / games

over all games, and again over the cross-division games only (the two
players' home divisions differ; a newcomer counts in the division they start
in).

Doubles games (both partners given) are predicted from the sides' mean
strengths, ``d = (r_a + r_a2 - r_b - r_b2) / 2`` (variance ``x^T H^-1 x``),
fitted jointly with the singles, and scored in all the totals and on their own
(``Evaluation.doubles``).

Predictive chances, as the secretary sees them: the difference ``d = r_a -
r_b`` has the Laplace posterior ``N(r_a - r_b, c^T H^-1 c)`` (``H`` the step's
Hessian over the strengths and, with division levels, the levels; a player
not yet seen adds the prior's variance and their division level's), and the
chance is ``E[sigmoid(d)]`` per game.  Per race: a match
whose winner reached ``n = max(games_a, games_b)`` is taken as a race to
``n`` each (level matches, e.g. 4-4, are not races and are left out), its
predicted chance ``I_p(n, n)`` (point) or ``E[I_p(n, n)]`` (predictive) is
scored against who won the match:

    log-loss = mean over races of -log(chance given to the winner)
    Brier    = mean over races of (won - chance)^2
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping, Sequence

import numpy as np
from scipy.special import expit, log_expit
from scipy.stats import chi2

from secretary.model.records import Player, Result, Settings
from secretary.model.races import predictive_game_chance, predictive_race_chance, race_chance
from secretary.model.walkforward import Walk, prepare, training_pairs, walk_steps

__all__ = ["Walk", "prepare", "training_pairs", "evaluate", "Evaluation", "Scores", "Band", "scores",
           "calibration_table", "calibration_chi_square", "game_scores"]

BANDS = 10  # calibration bands of the favourite's chance, 5 % wide from 50 % to 100 %


@dataclass(frozen=True)
class Band:
    """One row of a calibration table: predictions between ``low`` and ``high``.

    Attributes
    ----------
    low, high : band edges of the favourite's chance (0.5..1)
    games : games (or races) predicted in the band
    predicted : mean predicted chance of the favoured side (NaN when empty)
    observed : share of those games won by the favoured side (NaN when empty)
    variance : sum over the band's games of ``p (1 - p)``, the binomial variance of the wins
    """

    low: float
    high: float
    games: float
    predicted: float
    observed: float
    variance: float


@dataclass(frozen=True)
class Scores:
    """One kind of prediction scored: per game (weighted by games) or per race (one per match).

    Attributes
    ----------
    count : games, or races, predicted
    log_loss : mean negative log-likelihood, nats (ln 2 = 0.693 for a coin toss)
    brier : mean squared error (0.25 for a coin toss)
    calibration : bands of predicted chance
    """

    count: float
    log_loss: float
    brier: float
    calibration: tuple[Band, ...]


def scores(p, won, lost) -> Scores:
    """Mean log-loss, Brier score and calibration of chances ``p`` with ``won``/``lost`` counts for side A."""
    won, lost = np.asarray(won, float), np.asarray(lost, float)
    total = float(won.sum() + lost.sum())
    loss, brier = game_scores(p, won, lost)
    nan = float("nan")
    return Scores(total, loss / total if total else nan, brier / total if total else nan,
                  calibration_table(p, won, lost))


@dataclass(frozen=True)
class Evaluation:
    """Scores of one walk forward.

    Attributes
    ----------
    settings : the settings rated with
    step_days : length of a step, days
    steps : steps predicted (steps with at least one match and some history)
    matches : matches predicted
    games : games predicted
    log_loss : mean negative log-likelihood per game, nats (ln 2 = 0.693 for a coin toss)
    brier : mean squared error per game
    calibration : bands over all predicted games
    few_games : games where either player had fewer than ``settings.few_games`` weighted games
    few_log_loss : log-loss over those games (NaN when none)
    few_calibration : bands over those games
    p : A's predicted chance per game for each input result (NaN: void or not predicted)
    uncertain : per input result, True where the prediction counts as few-games
    predictive : per-game scores of the predictive chances (None when not computed)
    race, predictive_race : per-race scores of the point and predictive race chances
    p_predictive : A's predictive chance per game for each input result (NaN as for ``p``)
    cross, predictive_cross : per-game scores of the point and predictive chances over the cross-division games
        only (the two players' home divisions differ); ``count`` 0 when there are none
    cross_division : per input result, True where the match was predicted as a cross-division one
    doubles, doubles_predictive : per-game point and predictive scores of the doubles games alone
        (None without doubles; the totals above include them)
    """

    settings: Settings
    step_days: int
    steps: int
    matches: int
    games: float
    log_loss: float
    brier: float
    calibration: tuple[Band, ...]
    few_games: float
    few_log_loss: float
    few_calibration: tuple[Band, ...]
    p: np.ndarray
    uncertain: np.ndarray
    predictive: Scores | None = None
    race: Scores | None = None
    predictive_race: Scores | None = None
    p_predictive: np.ndarray | None = None
    cross: Scores | None = None
    predictive_cross: Scores | None = None
    cross_division: np.ndarray | None = None
    doubles: Scores | None = None
    doubles_predictive: Scores | None = None

    @property
    def score(self) -> float:
        """What tuning minimises: the predictive log-loss per game (the point one when not computed)."""
        return self.predictive.log_loss if self.predictive is not None else self.log_loss


def calibration_table(p, games_a, games_b, bands: int = BANDS) -> tuple[Band, ...]:
    """Calibration by band of the favourite's predicted chance, 50 % to 100 % (weighted by games).

    Each prediction is turned to the side it favours (``max(p, 1 - p)``, with
    that side's wins), so the table does not depend on which player a sheet
    lists first (the tennis set always lists the winner first).
    """
    p, games_a, games_b = np.asarray(p, float), np.asarray(games_a, float), np.asarray(games_b, float)
    flip = p < 0.5
    p = np.where(flip, 1.0 - p, p)
    games_a, games_b = np.where(flip, games_b, games_a), np.where(flip, games_a, games_b)
    total = games_a + games_b
    k = np.minimum(((p - 0.5) * 2 * bands).astype(np.int64), bands - 1)
    g = np.bincount(k, total, bands)
    wins = np.bincount(k, games_a, bands)
    expected = np.bincount(k, total * p, bands)
    var = np.bincount(k, total * p * (1.0 - p), bands)
    with np.errstate(invalid="ignore", divide="ignore"):
        pred, obs = expected / g, wins / g
    return tuple(
        Band(0.5 + i / (2 * bands), 0.5 + (i + 1) / (2 * bands), float(g[i]), float(pred[i]), float(obs[i]),
             float(var[i]))
        for i in range(bands)
    )


def calibration_chi_square(bands: Sequence[Band]) -> tuple[float, int, float]:
    """Chi-square of observed against predicted wins over the non-empty bands.

    Returns ``(statistic, degrees of freedom, p-value)``; each band contributes
    ``(wins - expected)^2 / sum p (1 - p)``, one degree of freedom each.
    """
    used = [bd for bd in bands if bd.games > 0 and bd.variance > 0]
    stat = sum((bd.games * (bd.observed - bd.predicted)) ** 2 / bd.variance for bd in used)
    return float(stat), len(used), float(chi2.sf(stat, len(used))) if used else 1.0


def game_scores(p, games_a, games_b) -> tuple[float, float]:
    """Summed log-loss (nats) and summed Brier score over games, for chances ``p`` of side A."""
    p = np.clip(np.asarray(p, float), 1e-15, 1 - 1e-15)
    logit = np.log(p) - np.log1p(-p)
    loss = -(games_a @ log_expit(logit) + games_b @ log_expit(-logit))
    brier = games_a @ (1.0 - p) ** 2 + games_b @ p**2
    return float(loss), float(brier)


def _race_scores(mean, var, games_a, games_b) -> tuple[Scores, Scores | None]:
    """Point and predictive scores per race (a race to the winner's games each; level matches left out)."""
    race = games_a != games_b
    n = np.maximum(games_a, games_b)[race]
    won = (games_a > games_b)[race].astype(float)
    point = race_chance(expit(mean[race]), n, n)
    out = scores(point, won, 1.0 - won)
    if np.isnan(var).all():
        return out, None
    return out, scores(predictive_race_chance(mean[race], var[race], n, n), won, 1.0 - won)


def evaluate(
    data: Walk | Sequence[Result],
    settings: Settings = Settings(),
    *,
    players: Sequence[Player] = (),
    step_days: int = 7,
    starting_levels: Mapping[str, float] | None = None,
    cancel=None,
    gtol: float = 1e-7,
    predictive: bool = True,
) -> Evaluation:
    """Walk forward, rating before each step and predicting its games.

    Parameters
    ----------
    data : results, or a ``Walk`` from ``prepare`` (then ``players``, ``step_days`` and ``starting_levels``
        are ignored)
    settings : centre, scale, skill spread (points), half-life (days), division spread and few-games threshold
    players : Players-sheet records (starting ratings set prior means; divisions set home divisions)
    step_days : step length in days (7 = week by week)
    starting_levels : optional starting level per division, points above the centre (the Divisions sheet)
    cancel : optional flag with ``is_set()``, checked once per step
    gtol : the fit's relative gradient tolerance (looser than an update's; scores move by about 1e-9)
    predictive : also score the predictive chances (one factorisation of the Hessian per step)

    Raises
    ------
    Cancelled
        when ``cancel`` is set during the walk.
    """
    walk = data if isinstance(data, Walk) else prepare(data, players=players, step_days=step_days,
                                                       starting_levels=starting_levels)
    out = walk_steps(walk, settings, cancel, gtol, predictive)
    mean, var = out.mean, out.var
    done = ~np.isnan(mean)
    p_sorted = expit(mean)
    ga, gb = walk.games_a[done], walk.games_b[done]
    point = scores(p_sorted[done], ga, gb)
    few, cross = out.few[done], out.cross[done]
    few_scores = scores(p_sorted[done][few], ga[few], gb[few])
    pred_sorted = predictive_game_chance(mean, var) if predictive else np.full(len(mean), np.nan)
    race, predictive_race = _race_scores(mean[done], var[done], ga, gb)
    dbl = walk.doubles[done]
    doubles = scores(p_sorted[done][dbl], ga[dbl], gb[dbl]) if dbl.any() else None
    doubles_predictive = scores(pred_sorted[done][dbl], ga[dbl], gb[dbl]) if dbl.any() and predictive else None

    def per_input(values, fill=np.nan):
        result = np.full(walk.n_input, fill, dtype=np.asarray(values).dtype if fill is False else float)
        result[walk.order] = np.where(done, values, fill)
        return result

    return Evaluation(
        settings=settings, step_days=walk.step_days, steps=out.steps, matches=int(done.sum()), games=point.count,
        log_loss=point.log_loss, brier=point.brier, calibration=point.calibration,
        few_games=few_scores.count, few_log_loss=few_scores.log_loss, few_calibration=few_scores.calibration,
        p=per_input(p_sorted), uncertain=per_input(out.few, False),
        predictive=scores(pred_sorted[done], ga, gb) if predictive else None,
        race=race, predictive_race=predictive_race, p_predictive=per_input(pred_sorted) if predictive else None,
        cross=scores(p_sorted[done][cross], ga[cross], gb[cross]),
        predictive_cross=scores(pred_sorted[done][cross], ga[cross], gb[cross]) if predictive else None,
        cross_division=per_input(out.cross, False), doubles=doubles, doubles_predictive=doubles_predictive,
    )
