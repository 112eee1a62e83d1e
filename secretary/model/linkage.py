"""The watch list: how well each division is tied to the rest, players held by the prior, linking matches.

Division linkage.  For a set of players g let ``u_g`` average over g minus
the average over the league; ``u_g . r`` is g's level relative to the rest.
Its posterior variance ``u_g^T H^-1 u_g`` comes from sparse solves with the
Hessian ``H`` at the optimum; under the prior alone it is ``s^2 |u_g|^2``
(the prior covariance is ``s^2 I`` whatever the prior means are).
``linked_share = 1 - Var_post / Var_prior``: 0 when only the starting
assumption sets the level, near 1 when games against others pin it down.

Held by the prior.  At the optimum the data's pull on player i,
``g_i = sum w (won - p)``, equals the prior's ``(r_i - mu_i) / s^2``.
``g_i / L_ii`` (``L`` = likelihood part of ``H``) is how far the data alone
would still move them, and ``g_i / sqrt(L_ii)`` is that surplus as a z-score.

Linking matches.  A race of expected length ``n`` between i and j adds
``c (e_i - e_j)(e_i - e_j)^T`` to ``H`` with ``c = n p (1 - p)``, which lowers
``Var(u_g . r)`` by ``c (x_g[i] - x_g[j])^2 / (1 + c q_ij)`` where
``x_g = H^-1 u_g`` and ``q_ij = (e_i - e_j)^T H^-1 (e_i - e_j)``
(Sherman-Morrison).  Matches are picked greedily from a bounded set of
active players, updating ``H^-1`` on that set after each pick.
"""
from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Iterable

import numpy as np
import scipy.sparse.linalg as spla
from scipy.special import expit
from scipy.stats import nbinom

from secretary.model.fit import LaplacianPattern, conjugate_gradient, pair_curvature
from secretary.model.records import Result
from secretary.model.scale import points_per_logodds

# Players up to which solves use a sparse LU factor; above, Jacobi-preconditioned CG.  Leagues
# whose divisions mix at random fill the factor in badly (10,000 players: 30 M entries, 40 s),
# while CG stays near-linear (2 s); at 1,500 players both take a fraction of a second.
FACTOR_LIMIT = 1500
ACTIVE_DAYS = 60  # a player counts as active when they played this recently (before the reference date)
CANDIDATES_PER_GROUP = 30  # most active players per division (or pool) considered for linking matches
CANDIDATES_MAX = 300  # bound on all candidates: the greedy search costs O(candidates^2) per pick
PICKS_PER_PLAYER = 2  # spread suggestions over players: nobody is asked to play more than this
UNFLAGGED_HELD_MAX = 20  # players with a big z-score in well-linked divisions listed after the flagged ones
NO_DIVISION = "(no division)"


@dataclass(frozen=True)
class DivisionLink:
    """How well one division's level is tied to the rest of the league.

    Attributes
    ----------
    division : the division's name ("" for players without one)
    players : players counted in it
    level : mean rating of its players, points
    relative_level : that mean minus the league's mean, points
    level_sd : ± (one SD) of the relative level from the games, points
    prior_sd : the same ± under the starting assumption alone, points
    linked_share : ``1 - level_sd^2 / prior_sd^2`` clipped to [0, 1]
    cross_games : age-weighted games against other divisions
    recent_cross_games : games against other divisions in the recent window
        (age at most one half-life, i.e. weight >= 0.5; all games when games
        never age); None when the results were not given
    linking_players : how many of its players met someone from another division
    linkers : their names, most cross-division games first
    flagged : linked share under the league's ``weakly_linked_below``
    what_to_do : one line in plain words ("" when not flagged)
    """

    division: str
    players: int
    level: float
    relative_level: float
    level_sd: float
    prior_sd: float
    linked_share: float
    cross_games: float
    recent_cross_games: int | None
    linking_players: int
    linkers: tuple[str, ...]
    flagged: bool
    what_to_do: str


@dataclass(frozen=True)
class HeldPlayer:
    """A player whose results run ahead of their rating: the starting assumption holds them.

    Attributes
    ----------
    name, division : who, and the division they are counted in
    rating : points
    games, won, expected : age-weighted games, games won, and games the rating
        expects them to have won (``sum w p``)
    held_points : how much further the data alone would move them, points (``g / L_ii``)
    surplus_z : ``g / sqrt(L_ii)``, the surplus as a z-score
    linked_share : their division's linked share
    flagged : z at least ``held_z`` and the division weakly linked
    what_to_do : one line in plain words
    """

    name: str
    division: str
    rating: float
    games: float
    won: float
    expected: float
    held_points: float
    surplus_z: float
    linked_share: float
    flagged: bool
    what_to_do: str


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
    target : the division (or pool) whose level it ties in most
    sd_before, sd_after : ± of that level relative to the rest, points
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


@dataclass(frozen=True)
class Pool:
    """Players who have played nobody outside their own group (a separate pool).

    Attributes
    ----------
    players : their names
    divisions : the divisions they are counted in
    games : age-weighted games among themselves
    level_sd : ± of the pool's level relative to the rest, points (the prior's alone)
    what_to_do : one line in plain words
    """

    players: tuple[str, ...]
    divisions: tuple[str, ...]
    games: float
    level_sd: float
    what_to_do: str


@dataclass(frozen=True)
class WatchList:
    """Everything the Watch list sheet shows: pools first, then divisions, players, suggestions."""

    reference_date: dt.date | None
    pools: tuple[Pool, ...]
    divisions: tuple[DivisionLink, ...]
    held: tuple[HeldPlayer, ...]
    suggestions: tuple[LinkingMatch, ...]

    @property
    def flagged_divisions(self) -> tuple[DivisionLink, ...]:
        """Divisions whose level is weakly tied to the rest."""
        return tuple(d for d in self.divisions if d.flagged)

    @property
    def flagged_players(self) -> tuple[HeldPlayer, ...]:
        """Players held by the prior in weakly linked divisions."""
        return tuple(p for p in self.held if p.flagged)

    def division(self, name: str) -> DivisionLink:
        """The row of one division; KeyError if absent."""
        for d in self.divisions:
            if d.division == name:
                return d
        raise KeyError(name)


# ---------------------------------------------------------------------------
# Sparse solves with H


class HessianSolver:
    """Solves ``H x = b`` for many right-hand sides without forming ``H^-1``.

    ``method``: "factor" (sparse LU with a symmetric ordering, exact to
    rounding), "cg" (conjugate gradients with a Jacobi preconditioner, relative
    residual ``rtol``), or "auto" (factor up to ``FACTOR_LIMIT`` players).
    """

    def __init__(self, H, method: str = "auto", rtol: float = 1e-11):
        n = H.shape[0]
        if method == "auto":
            method = "factor" if n <= FACTOR_LIMIT else "cg"
        if method not in ("factor", "cg"):
            raise ValueError(f"method must be 'auto', 'factor' or 'cg' (got {method!r})")
        self.method, self.rtol, self.n = method, rtol, n
        if method == "factor":
            self._lu = spla.splu(H.tocsc(), permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                                 options={"SymmetricMode": True})
        else:
            self._H = H.tocsr()
            self._inv_diag = 1.0 / self._H.diagonal()

    def solve(self, b) -> np.ndarray:
        """``H^-1 b`` for a vector or for each column of a matrix."""
        b = np.asarray(b, dtype=float)
        if self.n == 0:
            return b.copy()
        if self.method == "factor":
            return self._lu.solve(b)
        if b.ndim == 1:
            return self._cg(b)
        return np.column_stack([self._cg(col) for col in b.T]) if b.shape[1] else b.copy()

    def _cg(self, b: np.ndarray) -> np.ndarray:
        return conjugate_gradient(self._H.dot, b, self._inv_diag, self.rtol, 20 * self.n)


def level_vectors(members: np.ndarray) -> np.ndarray:
    """Columns ``u_g``: average over group g minus average over everyone.

    Parameters
    ----------
    members : bool array (n_players, n_groups), True where a player is in a group
    """
    members = np.asarray(members, dtype=bool)
    n = members.shape[0]
    sizes = np.maximum(members.sum(axis=0), 1)
    return members / sizes - (1.0 / n if n else 0.0)


def level_variance(solver: HessianSolver, U: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``Var(u_g . r) = u_g^T H^-1 u_g`` per column of ``U`` (log-odds squared), and ``X = H^-1 U``."""
    X = solver.solve(U)
    X = X.reshape(U.shape)
    return np.einsum("ij,ij->j", U, X), X


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


# ---------------------------------------------------------------------------
# The watch list


def _label(division: str) -> str:
    return division or NO_DIVISION


def _recent_cross_games(fit, results: Iterable[Result]) -> np.ndarray:
    """Raw games against other divisions per division, from results no older than one half-life."""
    counts = np.zeros(len(fit.group_names), dtype=np.int64)
    half_life = fit.settings.half_life_days
    lookup = {name: k for k, name in enumerate(fit.names)}
    for res in results:
        if res.void or res.player_a not in lookup or res.player_b not in lookup:
            continue
        if half_life and fit.reference_date and (fit.reference_date - res.date).days > half_life:
            continue
        ga, gb = fit.group[lookup[res.player_a]], fit.group[lookup[res.player_b]]
        if ga != gb:
            games = int(round(res.games_a + res.games_b))
            counts[ga] += games
            counts[gb] += games
    return counts


def _candidates(fit, targets: np.ndarray, games: np.ndarray) -> np.ndarray:
    """A bounded set of players for linking matches: the most active of each division and target."""
    n = len(fit.names)
    ref = fit.reference_date
    recent = np.array([
        ref is not None and last is not None and (ref - last).days <= ACTIVE_DAYS for last in fit.last_played
    ], dtype=bool)
    n_groups = len(fit.group_names)
    groups = [fit.group == g for g in range(n_groups)] + list(targets.T)
    per_group = max(4, min(CANDIDATES_PER_GROUP, CANDIDATES_MAX // max(1, len(groups))))
    chosen = np.zeros(n, dtype=bool)
    for mask in groups:
        idx = np.flatnonzero(mask & (games > 0))
        # Active players first, then the most (weighted) games: the likeliest to turn up.
        idx = idx[np.lexsort((-games[idx], ~recent[idx]))]
        chosen[idx[:per_group]] = True
    return np.flatnonzero(chosen)


def _suggest(fit, solver, targets, target_names, X, var) -> list[LinkingMatch]:
    """Greedy linking matches that most reduce the summed level variance of the targets."""
    settings = fit.settings
    count = settings.linking_matches
    if count <= 0 or targets.shape[1] == 0:
        return []
    games = fit.games
    cand = _candidates(fit, targets, games)
    m = len(cand)
    if m < 2:
        return []
    E = np.zeros((fit.pairs.n_players, m))
    E[cand, np.arange(m)] = 1.0
    S = solver.solve(E).reshape(E.shape)[cand]  # H^-1 on the candidates
    S = 0.5 * (S + S.T)
    XC = X[cand].copy()  # H^-1 u_t on the candidates
    var = var.copy()
    inside = targets[cand]  # (m, k): candidate in target t
    a, b = np.triu_indices(m, 1)
    # Only pairs that cross the edge of some target: one player in it, the other outside.
    crosses = np.any(inside[a] != inside[b], axis=1)
    a, b = a[crosses], b[crosses]
    if len(a) == 0:
        return []
    r = fit.r[cand]
    p = expit(r[a] - r[b])
    n_games = expected_race_games(p, settings.usual_race)
    c = n_games * p * (1.0 - p)
    ppl = points_per_logodds(settings.scale)
    picks_of = np.zeros(m, dtype=np.int64)
    alive = np.ones(len(a), dtype=bool)
    out = []
    for _ in range(count):
        dx = XC[a] - XC[b]
        q = S[a, a] + S[b, b] - 2.0 * S[a, b]
        gain = c * np.sum(dx**2, axis=1) / (1.0 + c * q)
        gain[~alive] = -np.inf
        best = int(np.argmax(gain))
        if not np.isfinite(gain[best]) or gain[best] <= 0:
            break
        i, j, cb = a[best], b[best], c[best]
        w = S[:, i] - S[:, j]
        denom = 1.0 + cb * q[best]
        drop = cb * dx[best] ** 2 / denom
        before = var.copy()
        var = var - drop
        XC -= cb * np.outer(w, dx[best]) / denom
        S -= cb * np.outer(w, w) / denom
        sd_before, sd_after = np.sqrt(before) * ppl, np.sqrt(np.maximum(var, 0.0)) * ppl
        t = int(np.argmax(sd_before - sd_after))
        alive[best] = False
        for k in (i, j):
            picks_of[k] += 1
            if picks_of[k] >= PICKS_PER_PLAYER:
                alive &= (a != k) & (b != k)
        pi, pj = cand[i], cand[j]
        name_a, name_b = fit.names[pi], fit.names[pj]
        out.append(LinkingMatch(
            player_a=name_a,
            player_b=name_b,
            division_a=fit.group_names[fit.group[pi]],
            division_b=fit.group_names[fit.group[pj]],
            rating_a=float(fit.ratings[pi]),
            rating_b=float(fit.ratings[pj]),
            race=settings.usual_race,
            chance_a=float(p[best]),
            expected_games=float(n_games[best]),
            target=target_names[t],
            sd_before=float(sd_before[t]),
            sd_after=float(sd_after[t]),
            what_to_do=(f"Arrange {name_a} v {name_b}, race to {settings.usual_race}: the level of "
                        f"{target_names[t]} would then be known to ±{sd_after[t]:.0f} points "
                        f"instead of ±{sd_before[t]:.0f}."),
        ))
    return out


def watch_list(fit, results: Iterable[Result] | None = None, *, method: str = "auto") -> WatchList:
    """The league's watch list from a fit (``secretary.model.league.LeagueFit``).

    Parameters
    ----------
    fit : the joint fit (strengths, pairs, divisions, pools, settings)
    results : the results the fit used; only needed for the raw count of
        recent cross-division games (None leaves that count out)
    method : how to solve with ``H``: "auto", "factor" or "cg" (see ``HessianSolver``)
    """
    settings = fit.settings
    pairs = fit.pairs
    n = pairs.n_players
    n_groups = len(fit.group_names)
    ppl = points_per_logodds(settings.scale)
    s2 = fit.prior_sd**2
    h = pair_curvature(pairs, fit.r)
    H = LaplacianPattern(pairs).matrix(h, fit.prior_sd)
    solver = HessianSolver(H, method)

    # Targets: every division, then every separate pool (not the largest).
    members = fit.group[:, None] == np.arange(n_groups)[None, :]
    pool = fit.diagnosis.pool
    pool_sizes = np.bincount(pool, minlength=1) if n else np.zeros(0, dtype=np.int64)
    separate = [k for k in range(1, len(pool_sizes)) if pool_sizes[k] >= 2]
    pool_members = pool[:, None] == np.array(separate, dtype=np.int64)[None, :]
    M = np.hstack([members, pool_members])
    U = level_vectors(M)
    var_post, X = level_variance(solver, U) if n else (np.zeros(U.shape[1]), U)
    var_prior = s2 * np.sum(U**2, axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.where(var_prior > 1e-12 * s2, 1.0 - var_post / var_prior, 1.0)
    share = np.clip(share, 0.0, 1.0)

    # Games against other divisions, and who plays them.
    gi, gj = fit.group[pairs.i], fit.group[pairs.j]
    cross = (gi != gj) & (pairs.total > 0)
    cross_games = np.bincount(gi[cross], pairs.total[cross], n_groups) + np.bincount(gj[cross], pairs.total[cross], n_groups)
    player_cross = np.bincount(pairs.i[cross], pairs.total[cross], n) + np.bincount(pairs.j[cross], pairs.total[cross], n)
    recent = _recent_cross_games(fit, results) if results is not None else None
    ratings, games = fit.ratings, fit.games
    mean_rating = float(ratings.mean()) if n else settings.centre

    divisions = []
    for g, name in enumerate(fit.group_names):
        inside = np.flatnonzero(members[:, g])
        linkers = inside[player_cross[inside] > 0]
        linkers = linkers[np.argsort(-player_cross[linkers], kind="stable")]
        # A division nobody in it has played for yet has nothing to tie in: not flagged.
        flagged = bool(n_groups > 1 and share[g] < settings.weakly_linked_below and games[inside].sum() > 0)
        label = _label(name)
        if not flagged:
            todo = ""
        elif cross_games[g] <= 0:
            todo = (f"{label} has played no one from another division, so its level rests on the starting "
                    f"assumption: arrange a few matches between {label} and the other divisions (see suggestions).")
        else:
            todo = f"Arrange a few matches between {label} and the other divisions (see suggestions)."
        level = float(ratings[inside].mean()) if len(inside) else settings.centre
        divisions.append(DivisionLink(
            division=name,
            players=len(inside),
            level=level,
            relative_level=level - mean_rating,
            level_sd=float(np.sqrt(max(var_post[g], 0.0)) * ppl),
            prior_sd=float(np.sqrt(var_prior[g]) * ppl),
            linked_share=float(share[g]),
            cross_games=float(cross_games[g]),
            recent_cross_games=None if recent is None else int(recent[g]),
            linking_players=len(linkers),
            linkers=tuple(fit.names[k] for k in linkers),
            flagged=flagged,
            what_to_do=todo,
        ))
    divisions_by_name = {d.division: d for d in divisions}
    divisions.sort(key=lambda d: (not d.flagged, d.linked_share, d.division))

    weak_group = np.array([divisions_by_name[name].flagged for name in fit.group_names], dtype=bool)
    held = _held_players(fit, h, share[:n_groups], weak_group)

    pools = []
    for col, k in enumerate(separate):
        idx = np.flatnonzero(pool == k)
        inner = (pool[pairs.i] == k) & (pool[pairs.j] == k)
        names = tuple(fit.names[x] for x in idx)
        pools.append(Pool(
            players=names,
            divisions=tuple(sorted({fit.group_names[fit.group[x]] for x in idx})),
            games=float(pairs.total[inner].sum()),
            level_sd=float(np.sqrt(max(var_post[n_groups + col], 0.0)) * ppl),
            what_to_do=(f"These {len(names)} players have played nobody outside their group: check whether a "
                        "name is another spelling of a player already listed (add it under 'Also known as'), "
                        "or arrange a match against the rest (see suggestions)."),
        ))

    # Targets for linking matches: weakly linked divisions and separate pools (once per set of players).
    weak = [int(g) for g in np.flatnonzero(weak_group)]
    cols, seen, names_t = [], set(), []
    for col in weak + [n_groups + c for c in range(len(separate))]:
        key = tuple(np.flatnonzero(M[:, col]))
        if key in seen:
            continue
        seen.add(key)
        cols.append(col)
        names_t.append(_label(fit.group_names[col]) if col < n_groups else
                       f"the pool of {fit.names[key[0]]} and {len(key) - 1} other{'s' if len(key) > 2 else ''}")
    targets = M[:, cols]
    suggestions = _suggest(fit, solver, targets, names_t, X[:, cols], var_post[cols]) if n else []

    return WatchList(
        reference_date=fit.reference_date,
        pools=tuple(pools),
        divisions=tuple(divisions),
        held=tuple(held),
        suggestions=tuple(suggestions),
    )


def _held_players(fit, h: np.ndarray, share: np.ndarray, weak_group: np.ndarray) -> list[HeldPlayer]:
    """Players whose surplus z-score reaches ``held_z``, or who win at least ``dominant_share`` of
    their games in a weakly linked division: flagged when their division is weakly linked."""
    settings = fit.settings
    pairs = fit.pairs
    n = pairs.n_players
    ppl = points_per_logodds(settings.scale)
    p = expit(fit.r[pairs.i] - fit.r[pairs.j])
    expected = np.bincount(pairs.i, pairs.total * p, n) + np.bincount(pairs.j, pairs.total * (1.0 - p), n)
    won = fit.wins
    L = np.bincount(pairs.i, h, n) + np.bincount(pairs.j, h, n)
    pull = won - expected
    with np.errstate(invalid="ignore", divide="ignore"):
        z = np.where(L > 0, pull / np.sqrt(L), 0.0)
        held_pts = np.where(L > 0, pull / L, 0.0) * ppl
    games = fit.games
    with np.errstate(invalid="ignore", divide="ignore"):
        share_won = np.where(games > 0, won / games, 0.0)
    # Dominant in a weakly linked division: the division's level is set by the starting assumption,
    # so however clearly they win, their rating is measured against a level nobody has checked.
    dominant = (share_won >= settings.dominant_share) & (games >= settings.few_games) & weak_group[fit.group]
    big = np.flatnonzero((z >= settings.held_z) | dominant)
    weak = weak_group[fit.group[big]]
    flagged = big[weak]
    others = big[~weak]
    flagged = flagged[np.argsort(-z[flagged], kind="stable")]
    others = others[np.argsort(-z[others], kind="stable")][:UNFLAGGED_HELD_MAX]
    out = []
    for k, is_flagged in [(k, True) for k in flagged] + [(k, False) for k in others]:
        division = fit.group_names[fit.group[k]]
        if is_flagged:
            todo = (f"Their true level cannot show until they play outside {_label(division)}; "
                    "treat their handicap with care.")
        else:
            todo = "Their results run ahead of their rating; it will catch up as they play more."
        out.append(HeldPlayer(
            name=fit.names[k],
            division=division,
            rating=float(fit.ratings[k]),
            games=float(games[k]),
            won=float(won[k]),
            expected=float(expected[k]),
            held_points=float(held_pts[k]),
            surplus_z=float(z[k]),
            linked_share=float(share[fit.group[k]]),
            flagged=bool(is_flagged),
            what_to_do=todo,
        ))
    return out
