"""How good the ratings are: a walk forward through the history, week by week.

Results are cut into steps of ``step_days`` (7 = weeks) counted from the first
result's date.  For each step the league is rated from the results dated
before it only, exactly as an update on that day would (ages measured from the
newest of those results), and every game of the step is predicted with
``p = sigmoid(r_a - r_b)``; a player not yet seen gets their prior mean.  The
predictions are scored per game:

    log-loss = sum_matches [games_a * -log p + games_b * -log(1 - p)] / games
    Brier    = sum_matches [games_a * (1 - p)^2 + games_b * p^2] / games

Each fit starts from the previous step's optimum (players first seen since
get their prior mean), so a walk costs a few Newton steps per week.

Doubles games (both partners given) are predicted from the sides' mean
strengths, ``d = (r_a + r_a2 - r_b - r_b2) / 2`` (variance ``x^T H^-1 x``),
fitted jointly with the singles, and scored in all the totals and on their own
(``Evaluation.doubles``).

Predictive chances, as the secretary sees them: the difference ``d = r_a -
r_b`` has the Laplace posterior ``N(r_a - r_b, c^T H^-1 c)`` (``c = e_a -
e_b``, ``H`` the step's Hessian; a player not yet seen adds the prior's
variance), and the chance is ``E[sigmoid(d)]`` per game.  Per race: a match
whose winner reached ``n = max(games_a, games_b)`` is taken as a race to
``n`` each (level matches, e.g. 4-4, are not races and are left out), its
predicted chance ``I_p(n, n)`` (point) or ``E[I_p(n, n)]`` (predictive) is
scored against who won the match:

    log-loss = mean over races of -log(chance given to the winner)
    Brier    = mean over races of (won - chance)^2
"""
from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Sequence

import numpy as np
import scipy.sparse as sp
from scipy.special import expit, log_expit
from scipy.stats import chi2

from secretary.errors import Cancelled
from secretary.model.fit import fit_map
from secretary.model.pairs import Pairs, age_weights, aggregate
from secretary.model.records import Player, Result, Settings
from secretary.model.races import predictive_game_chance, predictive_race_chance, race_chance
from secretary.model.scale import points_per_logodds, to_strength
from secretary.model.fit import hessian
from secretary.model.uncertainty import contrast_variance, difference_coefficients

BANDS = 10  # calibration bands of the favourite's chance, 5 % wide from 50 % to 100 %


@dataclass(frozen=True)
class Walk:
    """Results prepared once for any number of walks (the settings come later).

    Matches are sorted by date (stable) and players numbered in order of first
    appearance, so the players seen before any step are ``0 .. n_seen - 1``.

    Attributes
    ----------
    names : players in order of first appearance
    day : days since ``first_date`` of each match (sorted)
    a, b : player index of each side
    games_a, games_b : games won by each side
    order : position of each sorted match in the caller's sequence
    bounds : first match of each step; step ``k`` is ``bounds[k] : bounds[k + 1]``
    pair : pair number of each match; ``pair_i < pair_j`` are the players of each pair
    pair_first : index of the first match of each pair
    starting : starting rating (points) of each player, NaN where none
    first_date : date of step 0's first day
    step_days : length of a step in days
    n_input : length of the caller's sequence (void results included)
    """

    names: tuple[str, ...]
    day: np.ndarray
    a: np.ndarray
    b: np.ndarray
    games_a: np.ndarray
    games_b: np.ndarray
    order: np.ndarray
    bounds: np.ndarray
    pair: np.ndarray
    pair_i: np.ndarray
    pair_j: np.ndarray
    pair_first: np.ndarray
    starting: np.ndarray
    first_date: dt.date | None
    step_days: int
    n_input: int
    pa: np.ndarray | None = None  # each side's second player in a doubles match, -1 in singles (None: no doubles)
    pb: np.ndarray | None = None

    def seen(self, stop: int) -> int:
        """Number of players who appear in the first ``stop`` matches."""
        if stop == 0:
            return 0
        partners = (self.pa[:stop].max(), self.pb[:stop].max()) if self.pa is not None else ()
        return int(max(self.a[:stop].max(), self.b[:stop].max(), *partners)) + 1

    @property
    def doubles(self) -> np.ndarray:
        """Which sorted matches are doubles."""
        return np.zeros(len(self.a), bool) if self.pa is None else self.pa >= 0


def prepare(results: Sequence[Result], *, players: Sequence[Player] = (), step_days: int = 7) -> Walk:
    """Sort and index the rated (non-void) results for ``evaluate``.

    Parameters
    ----------
    results : the matches, in any order; void ones are not predicted or used
    players : optional Players-sheet records; their starting ratings (points) set prior means
    step_days : length of a step in days (7 = week by week)
    """
    if int(step_days) < 1:
        raise ValueError(f"the step must be at least one day (got {step_days!r})")
    step_days = int(step_days)
    results = list(results)
    kept = [k for k, res in enumerate(results) if not res.void]
    kept.sort(key=lambda k: results[k].date)  # stable: same-day rows keep the caller's order
    index: dict[str, int] = {}
    a = np.empty(len(kept), np.int64)
    b = np.empty(len(kept), np.int64)
    pa, pb = np.full(len(kept), -1, np.int64), np.full(len(kept), -1, np.int64)
    for m, k in enumerate(kept):
        res = results[k]
        a[m] = index.setdefault(res.player_a, len(index))
        b[m] = index.setdefault(res.player_b, len(index))
        if res.is_doubles:
            pa[m] = index.setdefault(res.partner_a, len(index))
            pb[m] = index.setdefault(res.partner_b, len(index))
    n = len(index)
    first = results[kept[0]].date if kept else None
    day = np.fromiter(((results[k].date - first).days for k in kept), np.int64, len(kept))
    steps = int(day[-1] // step_days) + 1 if len(kept) else 0
    bounds = np.searchsorted(day, np.arange(steps + 1) * step_days, side="left")
    lo, hi = np.minimum(a, b), np.maximum(a, b)
    keys, first_match, pair = np.unique(lo * max(n, 1) + hi, return_index=True, return_inverse=True)
    starting = np.full(n, np.nan)
    for p in players:
        if p.starting is not None and p.name in index:
            starting[index[p.name]] = float(p.starting)
    return Walk(
        names=tuple(index),
        day=day,
        a=a,
        b=b,
        games_a=np.fromiter((results[k].games_a for k in kept), float, len(kept)),
        games_b=np.fromiter((results[k].games_b for k in kept), float, len(kept)),
        order=np.asarray(kept, np.int64),
        bounds=bounds.astype(np.int64),
        pair=pair.reshape(-1).astype(np.int64),
        pair_i=keys // max(n, 1),
        pair_j=keys % max(n, 1),
        pair_first=first_match.astype(np.int64),
        starting=starting,
        first_date=first,
        step_days=step_days,
        n_input=len(results),
        pa=pa if np.any(pa >= 0) else None,
        pb=pb if np.any(pa >= 0) else None,
    )


def training_pairs(walk: Walk, stop: int, half_life_days: float) -> Pairs:
    """Age-weighted pairs of the first ``stop`` matches, ages from the newest of them.

    Only the players seen so far (``0 .. walk.seen(stop) - 1``) take part.
    """
    n = walk.seen(stop)
    age = (walk.day[stop - 1] - walk.day[:stop]) if stop else np.zeros(0)
    w = age_weights(age, half_life_days)
    doubles = walk.doubles[:stop]
    table = None
    if doubles.any():  # doubles rows by pair of sides; their (a, b) pair gets none of their games
        table = aggregate(walk.a[:stop][doubles], walk.b[:stop][doubles], walk.games_a[:stop][doubles],
                          walk.games_b[:stop][doubles], n, w[doubles], walk.pa[:stop][doubles],
                          walk.pb[:stop][doubles]).doubles
        w = np.where(doubles, 0.0, w)
    first_is_i = walk.a[:stop] < walk.b[:stop]
    won_lo = np.where(first_is_i, walk.games_a[:stop], walk.games_b[:stop]) * w
    won_hi = np.where(first_is_i, walk.games_b[:stop], walk.games_a[:stop]) * w
    m = len(walk.pair_first)
    won_i = np.bincount(walk.pair[:stop], won_lo, m)
    won_j = np.bincount(walk.pair[:stop], won_hi, m)
    met = walk.pair_first < stop
    return Pairs(n, walk.pair_i[met], walk.pair_j[met], won_i[met], won_j[met], table)


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


def difference_variance(pairs: Pairs, r, prior_sd: float, a, b, pa=None, pb=None) -> np.ndarray:
    """Posterior variance of ``r_a - r_b`` per match (log-odds squared); a side not yet seen adds ``prior_sd^2``.

    With partners (``pa``, ``pb``, -1 in singles) a doubles match's variance is that of
    ``(r_a + r_pa - r_b - r_pb) / 2``; a player not yet seen adds ``prior_sd^2 / 4``.
    """
    n = pairs.n_players
    if pa is None or not np.any(pa >= 0):
        var = contrast_variance(hessian(pairs, r, prior_sd), difference_coefficients(a, b, n)) if n else np.zeros(len(a))
        return var + prior_sd**2 * ((a >= n).astype(float) + (b >= n))
    half = np.where(pa >= 0, 0.5, 1.0)
    rows = np.tile(np.arange(len(a)), 4)
    who = np.concatenate([a, pa, b, pb])
    coef = np.concatenate([half, half, -half, -half])
    seated = who >= 0
    known = seated & (who < n)
    coefficients = sp.csr_matrix((coef[known], (rows[known], who[known])), shape=(len(a), max(n, 1)))
    var = contrast_variance(hessian(pairs, r, prior_sd), coefficients) if n else np.zeros(len(a))
    return var + prior_sd**2 * np.bincount(rows[seated & ~known], coef[seated & ~known] ** 2, len(a))


def _walk(walk: Walk, settings: Settings, cancel, gtol: float, predictive: bool):
    """Per sorted match: point difference, its posterior variance (NaN unless ``predictive``), few-games flag."""
    ppl = points_per_logodds(settings.scale)
    starting = np.where(np.isnan(walk.starting), settings.centre, walk.starting)
    mu = np.asarray(to_strength(starting, settings.centre, settings.scale), float).reshape(-1)
    prior_sd = settings.skill_spread / ppl
    n_total, m = len(walk.names), len(walk.day)
    mean, var, few = np.full(m, np.nan), np.full(m, np.nan), np.zeros(m, bool)
    r = np.zeros(0)
    steps = 0
    for k in range(len(walk.bounds) - 1):
        start, stop = int(walk.bounds[k]), int(walk.bounds[k + 1])
        if stop == start or start == 0:
            continue
        if cancel is not None and cancel.is_set():
            raise Cancelled("The evaluation was cancelled.")
        pairs = training_pairs(walk, start, settings.half_life_days)
        n = pairs.n_players
        warm = np.concatenate([r, mu[len(r):n]])
        r = fit_map(pairs, mu[:n], prior_sd, start=warm, gtol=gtol).r
        full = np.concatenate([r, mu[n:n_total]])
        games = np.concatenate([pairs.games_per_player(), np.zeros(n_total - n)])
        a, b = walk.a[start:stop], walk.b[start:stop]
        mean[start:stop] = full[a] - full[b]
        pa = pb = None
        if walk.pa is not None:
            pa, pb = walk.pa[start:stop], walk.pb[start:stop]
            dbl = pa >= 0
            mean[start:stop][dbl] = (full[a[dbl]] + full[pa[dbl]] - full[b[dbl]] - full[pb[dbl]]) / 2
        if predictive:
            var[start:stop] = difference_variance(pairs, r, prior_sd, a, b, pa, pb)
        least = np.minimum(games[a], games[b])
        if pa is not None:
            least = np.where(dbl, np.minimum(least, np.minimum(games[pa], games[pb])), least)
        few[start:stop] = least < settings.few_games
        steps += 1
    return mean, var, few, steps


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
    cancel=None,
    gtol: float = 1e-7,
    predictive: bool = True,
) -> Evaluation:
    """Walk forward, rating before each step and predicting its games.

    Parameters
    ----------
    data : results, or a ``Walk`` from ``prepare`` (then ``players`` and ``step_days`` are ignored)
    settings : centre, scale, skill spread (points), half-life (days) and few-games threshold
    players : Players-sheet records (starting ratings set prior means)
    step_days : step length in days (7 = week by week)
    cancel : optional flag with ``is_set()``, checked once per step
    gtol : the fit's relative gradient tolerance (looser than an update's; scores move by about 1e-9)
    predictive : also score the predictive chances (one factorisation of the Hessian per step)

    Raises
    ------
    Cancelled
        when ``cancel`` is set during the walk.
    """
    walk = data if isinstance(data, Walk) else prepare(data, players=players, step_days=step_days)
    mean, var, few_sorted, steps = _walk(walk, settings, cancel, gtol, predictive)
    done = ~np.isnan(mean)
    p_sorted = expit(mean)
    ga, gb = walk.games_a[done], walk.games_b[done]
    point = scores(p_sorted[done], ga, gb)
    few = few_sorted[done]
    few_scores = scores(p_sorted[done][few], ga[few], gb[few])
    pred_sorted = predictive_game_chance(mean, var) if predictive else np.full(len(mean), np.nan)
    race, predictive_race = _race_scores(mean[done], var[done], ga, gb)
    dbl = walk.doubles[done]
    doubles = scores(p_sorted[done][dbl], ga[dbl], gb[dbl]) if dbl.any() else None
    doubles_predictive = scores(pred_sorted[done][dbl], ga[dbl], gb[dbl]) if dbl.any() and predictive else None

    def per_input(values):
        out = np.full(walk.n_input, np.nan)
        out[walk.order] = np.where(done, values, np.nan)
        return out

    uncertain = np.zeros(walk.n_input, bool)
    uncertain[walk.order] = few_sorted & done
    return Evaluation(
        settings=settings, step_days=walk.step_days, steps=steps, matches=int(done.sum()), games=point.count,
        log_loss=point.log_loss, brier=point.brier, calibration=point.calibration,
        few_games=few_scores.count, few_log_loss=few_scores.log_loss, few_calibration=few_scores.calibration,
        p=per_input(p_sorted), uncertain=uncertain,
        predictive=scores(pred_sorted[done], ga, gb) if predictive else None,
        race=race, predictive_race=predictive_race, p_predictive=per_input(pred_sorted) if predictive else None,
        doubles=doubles, doubles_predictive=doubles_predictive,
    )
