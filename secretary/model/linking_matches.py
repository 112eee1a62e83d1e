"""Suggested linking matches: the cross-division races that narrow the weakly linked levels' ± most.

A race of expected length ``n`` between i and j adds ``c (e_i - e_j)(e_i - e_j)^T``
to the posterior precision ``H`` of the strengths, ``c = n p (1 - p)``.  For a
quantity ``w^T H^-1 w`` (a division's level against the rest, see
``secretary.model.contrasts``) that lowers the variance by
``c (x[i] - x[j])^2 / (1 + c q_ij)`` with ``x = H^-1 w`` and
``q_ij = (e_i - e_j)^T H^-1 (e_i - e_j)`` (Sherman-Morrison).  Matches are
picked greedily from a bounded set of active players, updating ``H^-1`` on
that set after each pick, so each suggestion assumes the ones above it were
played.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.special import expit
from scipy.stats import nbinom

from secretary.model.scale import points_per_logodds
from secretary.model.watch_sentences import match_todo

ACTIVE_DAYS = 60  # a player counts as active when they played this recently (before the reference date)
CANDIDATES_PER_GROUP = 30  # most active players per division (or target) considered for linking matches
CANDIDATES_MAX = 300  # bound on all candidates: the greedy search costs O(candidates^2) per pick
PICKS_PER_PLAYER = 2  # spread suggestions over players: nobody is asked to play more than this


@dataclass(frozen=True)
class LinkingMatch:
    """One suggested match between divisions, and what it would do to the level it ties in.

    Rows are cumulative: each assumes the suggestions above it were played.

    Attributes
    ----------
    player_a, player_b, division_a, division_b, rating_a, rating_b : the pairing (ratings in points)
    race : games each needs to win (the league's usual race)
    chance_a : chance that A wins one game
    expected_games : expected games in the race
    target : the weakly linked division whose level it ties in most
    sd_before, sd_after : the target's ± of the gap (``DivisionLink.level_sd``) before and after, points
    what_to_do : one line in plain words
    """

    player_a: str
    player_b: str
    division_a: str
    division_b: str
    rating_a: float
    rating_b: float
    race: int
    chance_a: float
    expected_games: float
    target: str
    sd_before: float
    sd_after: float
    what_to_do: str

    @property
    def sd_drop(self) -> float:
        """How much the target's ± would drop, points."""
        return self.sd_before - self.sd_after


def expected_race_games(p, race: int) -> np.ndarray:
    """Expected games in a first-to-``race`` match when one side wins each game with chance ``p``.

    The race ends at ``race + k`` games when the loser took ``k < race``;
    the winner's side follows the negative binomial (``k`` failures before
    ``race`` successes), so ``E = sum_k (race + k) [NB(k; race, p) + NB(k; race, 1 - p)]``.
    """
    if race < 1:
        raise ValueError(f"a race needs at least one game (got {race!r})")
    p = np.asarray(p, dtype=float)
    k = np.arange(race).reshape((race,) + (1,) * p.ndim)
    total = (race + k) * (nbinom.pmf(k, race, p) + nbinom.pmf(k, race, 1.0 - p))
    return total.sum(axis=0)


def candidates(fit, targets: np.ndarray, eligible: np.ndarray) -> np.ndarray:
    """A bounded set of eligible players: the most active of each division and of each target."""
    ref = fit.reference_date
    recent = np.array([
        ref is not None and last is not None and (ref - last).days <= ACTIVE_DAYS for last in fit.last_played
    ], dtype=bool)
    games = fit.games
    groups = [fit.group == g for g in range(len(fit.group_names))] + list(targets.T)
    per_group = max(4, min(CANDIDATES_PER_GROUP, CANDIDATES_MAX // max(1, len(groups))))
    chosen = np.zeros(len(fit.names), dtype=bool)
    for mask in groups:
        idx = np.flatnonzero(mask & eligible & (games > 0))
        # Active players first, then the most (weighted) games: the likeliest to turn up.
        idx = idx[np.lexsort((-games[idx], ~recent[idx]))]
        chosen[idx[:per_group]] = True
    return np.flatnonzero(chosen)


class _Search:
    """The greedy search's state on the candidates: ``H^-1`` there, ``H^-1 w`` and the variances."""

    def __init__(self, fit, solver, cand, targets, X, var):
        m = len(cand)
        E = np.zeros((solver.n, m))  # the strengths' rows (the levels' rows of a joint H stay 0)
        E[cand, np.arange(m)] = 1.0
        S = solver.solve(E).reshape(E.shape)[cand]
        self.S = 0.5 * (S + S.T)
        self.XC = X[cand].copy()
        self.var = np.array(var, dtype=float)
        inside = targets[cand]  # (m, k): candidate in target t
        a, b = np.triu_indices(m, 1)
        # Only pairs that cross the edge of a target: one player in it, the other outside.
        crosses = np.any(inside[a] != inside[b], axis=1)
        self.a, self.b = a[crosses], b[crosses]
        r = fit.r[cand]
        self.p = expit(r[self.a] - r[self.b])
        self.n_games = expected_race_games(self.p, fit.settings.usual_race)
        self.c = self.n_games * self.p * (1.0 - self.p)
        self.alive = np.ones(len(self.a), dtype=bool)
        self.picks_of = np.zeros(m, dtype=np.int64)

    def best(self) -> int | None:
        """The live pair that lowers the summed target variance most (None when nothing helps)."""
        if not self.alive.any():
            return None
        a, b, c, S = self.a, self.b, self.c, self.S
        dx = self.XC[a] - self.XC[b]
        q = S[a, a] + S[b, b] - 2.0 * S[a, b]
        gain = np.where(self.alive, c * np.sum(dx**2, axis=1) / (1.0 + c * q), -np.inf)
        k = int(np.argmax(gain))
        return k if np.isfinite(gain[k]) and gain[k] > 0 else None

    def play(self, k: int) -> tuple[np.ndarray, np.ndarray]:
        """Add pair ``k`` (rank-one update of ``H^-1``); returns the variances before and after."""
        i, j, c = self.a[k], self.b[k], self.c[k]
        dx = self.XC[i] - self.XC[j]
        w = self.S[:, i] - self.S[:, j]
        denom = 1.0 + c * (self.S[i, i] + self.S[j, j] - 2.0 * self.S[i, j])
        before = self.var.copy()
        self.var = self.var - c * dx**2 / denom
        self.XC -= c * np.outer(w, dx) / denom
        self.S -= c * np.outer(w, w) / denom
        self.alive[k] = False
        for x in (i, j):
            self.picks_of[x] += 1
            if self.picks_of[x] >= PICKS_PER_PLAYER:
                self.alive &= (self.a != x) & (self.b != x)
        return before, np.maximum(self.var, 0.0)


def suggest_matches(fit, solver, targets, target_names, X, var, eligible) -> list[LinkingMatch]:
    """Greedy linking matches that most lower the summed variance of the targets' levels.

    Parameters
    ----------
    fit : the league's fit
    solver : solves with the posterior precision ``H`` of the strengths
    targets : bool (n_players, k): the players of each weakly linked division
    target_names : the k divisions' names
    X : (n_players, k) ``H^-1 w`` for each target's contrast ``w``
    var : (k,) each target's variance now (log-odds squared)
    eligible : bool (n_players,): who may be asked to play (not members of separate pools)
    """
    settings = fit.settings
    if settings.linking_matches <= 0 or targets.shape[1] == 0:
        return []
    cand = candidates(fit, targets, eligible)
    if len(cand) < 2:
        return []
    search = _Search(fit, solver, cand, targets, X, var)
    ppl = points_per_logodds(settings.scale)
    out = []
    for _ in range(settings.linking_matches):
        k = search.best()
        if k is None:
            break
        before, after = search.play(k)
        sd_before, sd_after = np.sqrt(before) * ppl, np.sqrt(after) * ppl
        t = int(np.argmax(sd_before - sd_after))
        out.append(_match(fit, cand[search.a[k]], cand[search.b[k]], float(search.p[k]),
                          float(search.n_games[k]), target_names[t], float(sd_before[t]), float(sd_after[t])))
    return out


def _match(fit, i: int, j: int, p: float, n_games: float, target: str, sd_before: float,
           sd_after: float) -> LinkingMatch:
    race = fit.settings.usual_race
    a, b = fit.names[i], fit.names[j]
    return LinkingMatch(
        player_a=a, player_b=b,
        division_a=fit.group_names[fit.group[i]], division_b=fit.group_names[fit.group[j]],
        rating_a=float(fit.ratings[i]), rating_b=float(fit.ratings[j]),
        race=race, chance_a=p, expected_games=n_games, target=target,
        sd_before=sd_before, sd_after=sd_after,
        what_to_do=match_todo(a, b, race, target, sd_before, sd_after),
    )
