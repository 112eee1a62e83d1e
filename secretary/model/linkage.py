"""The watch list: how well each division's level is tied to the rest, held-back players, linking matches.

Posterior of the strengths.  ``K = A + I / s^2`` is the one-pool Hessian at
the optimum (``A`` the likelihood's weighted Laplacian, ``n p (1 - p)`` per
pair).  With division levels (``r_i = L_d(i) + u_i``, ``L_d ~ N(m_d, tau^2)``,
``u_i ~ N(mu_i, s^2)``) the strengths' prior covariance is
``s^2 I + tau^2 B B^T`` (``B`` the player-by-division indicator), so their
posterior precision is

    H = A + (s^2 I + tau^2 B B^T)^-1 = K - B diag(beta) B^T,
    beta_d = tau^2 / (s^2 (s^2 + n_d tau^2)),

solved by Woodbury with one extra solve of ``K`` per division (``LevelSolver``).
With ``tau = 0`` (one pool) ``H = K``.

Division linkage with levels (``tau > 0``).  The contrast ``c = e_d - (1 - e_d) / (D - 1)``
is division d's level minus the other divisions' average level; the common
mode of all levels, which games never see, drops out of it.  The data depend
on the strengths only, and ``E[L | r]`` is linear in ``r``, so

    Var(c . L) = Var(c . L | r) + Var(w . r),
    Var(c . L | r) = sum_k c_k^2 tau^2 s^2 / (s^2 + n_k tau^2)    (the offset),
    w_i = tau^2 c_d(i) / (s^2 + n_d(i) tau^2),

with ``Var(w . r) = w^T H^-1 w`` after the games and ``w^T (s^2 I + tau^2 B B^T) w``
before (the prior alone gives ``Var(c . L) = tau^2 |c|^2``).  Games can only
act on the second part (how a level splits from its players' deviations is the
priors' matter), so ``linked_share = 1 - (Var_post - offset) / (Var_prior - offset)``
is the share of that part's precision that comes from games: exactly 0 for a
division that has played no other (its contrast is then a prior-only direction,
because the other divisions enter it with equal weights), near 1 for a
well-linked one, whatever the division's size.  ``level_sd`` is the full
posterior ± of ``c . L``.

Division linkage in one pool (``tau = 0``).  For a set of players g, ``u_g``
averages over g minus the average over the league; ``Var_post = u_g^T H^-1 u_g``
against ``s^2 |u_g|^2`` under the prior alone.  Separate pools always use this
form (with the prior covariance above when there are levels).

Held back.  At the optimum the data's pull on player i, ``g_i = sum w (won - p)``,
equals the prior's ``(u_i - mu_i) / s^2``: the prior holds them against their
division's level.  ``g_i / L_ii`` (``L`` the likelihood part of ``H``) is how far
the data alone would still move them, and ``g_i / sqrt(L_ii)`` that surplus as
a z-score.
"""
from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Iterable

import numpy as np
import scipy.sparse.linalg as spla
from scipy.special import expit

from secretary.model.fit import LaplacianPattern, conjugate_gradient, joint_hessian, pair_curvature
from secretary.model.linking_matches import LinkingMatch, expected_race_games, suggest_matches
from secretary.model.records import Result
from secretary.model.scale import points_per_logodds
from secretary.model.watch_sentences import NO_DIVISION, division_todo, held_todo, pool_todo

__all__ = ["DivisionLink", "HeldPlayer", "LinkingMatch", "Pool", "WatchList", "watch_list", "NO_DIVISION",
           "HessianSolver", "Contrasts", "level_vectors", "expected_race_games"]

# Players up to which solves use a sparse LU factor; above, Jacobi-preconditioned CG.  Leagues
# whose divisions mix at random fill the factor in badly (10,000 players: 30 M entries, 40 s),
# while CG stays near-linear (2 s); at 1,500 players both take a fraction of a second.
FACTOR_LIMIT = 1500
HELD_SHOWN = 20  # held-back players listed, strongest cases first; the rest are counted


@dataclass(frozen=True)
class DivisionLink:
    """How well one division's level is tied to the rest of the league.

    Attributes
    ----------
    division : the division's name ("" for players without one)
    players : players counted in it
    level : the division's level (with Division spread) or its players' mean rating, points
    relative_level : against the rest, points: the level minus the other divisions' average level
        (with Division spread), or the mean rating minus the league's
    level_sd : ± (one SD) of the relative level from the games, points
    prior_sd : the same ± under the starting assumption alone, points
    linked_share : the share of the level that games pin down, 0 to 1 (see the module's docstring;
        ``1 - level_sd^2 / prior_sd^2`` in one pool)
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
    """A player whose results run ahead of their rating: the starting assumption holds them back.

    Attributes
    ----------
    name, division : who, and the division they are counted in
    rating : points
    games, won, expected : age-weighted games, games won, and games the rating
        expects them to have won (``sum w p``)
    held_points : how much further the data alone would move them, points (``g / L_ii``)
    surplus_z : ``g / sqrt(L_ii)``, the surplus as a z-score
    linked_share : their division's linked share
    flagged : their division is weakly linked (their true level cannot show)
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
class Pool:
    """Players who have played nobody outside their own group (a separate pool).

    Attributes
    ----------
    players : their names
    divisions : the divisions they are counted in
    games : age-weighted games among themselves
    level_sd : ± of the pool's average rating against the league's, points
    what_to_do : one line in plain words, naming them
    """

    players: tuple[str, ...]
    divisions: tuple[str, ...]
    games: float
    level_sd: float
    what_to_do: str


@dataclass(frozen=True)
class WatchList:
    """Everything the Watch list sheet shows: pools first, then divisions, players, suggestions.

    ``held`` is capped at ``HELD_SHOWN`` players, strongest cases first;
    ``held_not_shown`` counts the held-back players left off.
    """

    reference_date: dt.date | None
    pools: tuple[Pool, ...]
    divisions: tuple[DivisionLink, ...]
    held: tuple[HeldPlayer, ...]
    suggestions: tuple[LinkingMatch, ...]
    held_not_shown: int = 0

    @property
    def flagged_divisions(self) -> tuple[DivisionLink, ...]:
        """Divisions whose level is weakly tied to the rest."""
        return tuple(d for d in self.divisions if d.flagged)

    @property
    def flagged_players(self) -> tuple[HeldPlayer, ...]:
        """Held-back players in weakly linked divisions."""
        return tuple(p for p in self.held if p.flagged)

    def division(self, name: str) -> DivisionLink:
        """The row of one division; KeyError if absent."""
        for d in self.divisions:
            if d.division == name:
                return d
        raise KeyError(name)


# ---------------------------------------------------------------------------
# Solves with the posterior precision


class HessianSolver:
    """Solves ``K x = b`` for many right-hand sides without forming ``K^-1``.

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
        """``K^-1 b`` for a vector or for each column of a matrix."""
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


def division_spread(fit) -> float:
    """The fit's prior SD of division levels, log-odds (0 when the levels are fixed: one pool)."""
    return fit.levels.sd if fit.levels is not None else 0.0


def posterior_solver(fit, method: str = "auto"):
    """A solver for the fit's posterior precision ``H``, and the pair weights ``n p (1 - p)``.

    ``H`` is over the strengths, and with free division levels over ``(r, L)``
    (``fit.hessian``: the players' block bordered by one row per division).
    """
    h = pair_curvature(fit.pairs, fit.r)
    H = LaplacianPattern(fit.pairs).matrix(h, fit.prior_sd)
    if fit.levels is not None:
        H = joint_hessian(H, fit.levels, fit.prior_sd)
    return HessianSolver(H, method), h


# ---------------------------------------------------------------------------
# Contrasts: levels against the rest


@dataclass(frozen=True)
class Contrasts:
    """Quantities ``w . x`` over the unknowns ``x`` of ``H`` (strengths, then any free levels).

    ``prior`` is their variance under the prior alone and ``offset`` the part of
    it no game can reach (``Var(c . L | r)`` for a level; 0 for an average
    strength), both in log-odds squared.
    """

    vectors: np.ndarray  # (n_unknowns, k)
    offset: np.ndarray  # (k,)
    prior: np.ndarray  # (k,)

    def variance(self, solver) -> tuple[np.ndarray, np.ndarray]:
        """Posterior variances ``w^T H^-1 w`` (k,) and ``X = H^-1 W`` (n_unknowns, k)."""
        W = self.vectors
        X = solver.solve(W).reshape(W.shape) if W.size else W.copy()
        return np.einsum("ij,ij->j", W, X), X

    def shares(self, var: np.ndarray, s2: float) -> np.ndarray:
        """The share of what games can pin down that they do: ``1 - (Var_post - offset) / (Var_prior - offset)``.

        Clipped to [0, 1]; 1 where the prior leaves nothing to pin down.
        """
        seen = self.prior - self.offset
        with np.errstate(invalid="ignore", divide="ignore"):
            share = np.where(seen > 1e-12 * s2, 1.0 - (var - self.offset) / seen, 1.0)
        return np.clip(share, 0.0, 1.0)


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


def average_contrasts(fit, members: np.ndarray) -> Contrasts:
    """Each set's average strength minus the league's; prior covariance ``s^2 I + tau^2 B B^T``.

    With free levels the vectors carry zeros in the levels' rows of ``H``.
    """
    U = level_vectors(members)
    per_division = np.zeros((len(fit.group_names), U.shape[1]))
    np.add.at(per_division, fit.group, U)
    prior = fit.prior_sd**2 * np.sum(U**2, axis=0) + division_spread(fit) ** 2 * np.sum(per_division**2, axis=0)
    if fit.levels is not None:
        U = np.vstack([U, np.zeros_like(per_division)])
    return Contrasts(U, np.zeros(U.shape[1]), prior)


def against_the_rest(D: int) -> np.ndarray:
    """Row d: division d's level minus the other divisions' average level (D >= 2)."""
    return (np.eye(D) * D - 1.0) / (D - 1)


def level_contrasts(fit) -> Contrasts:
    """Each division's level minus the other divisions' average level (free levels only).

    The vectors are ``c`` in the levels' rows of the joint ``H``; the offset is
    ``Var(c . L | r)``, the part no game can see.
    """
    s2, t2 = fit.prior_sd**2, division_spread(fit) ** 2
    sizes = fit.levels.sizes
    D = len(sizes)
    C = against_the_rest(D)
    hidden = t2 * s2 / (s2 + sizes * t2)  # Var(L_d | r)
    vectors = np.vstack([np.zeros((len(fit.names), D)), C.T])
    return Contrasts(vectors, np.sum(C**2 * hidden[None, :], axis=1), t2 * np.sum(C**2, axis=1))


def division_contrasts(fit) -> Contrasts:
    """The divisions against the rest: their levels with free levels, else their average strengths."""
    if fit.levels is not None:
        return level_contrasts(fit)
    n_groups = len(fit.group_names)
    return average_contrasts(fit, fit.group[:, None] == np.arange(n_groups)[None, :])


# ---------------------------------------------------------------------------
# The watch list


def watch_list(fit, results: Iterable[Result] | None = None, *, method: str = "auto") -> WatchList:
    """The league's watch list from a fit (``secretary.model.league.LeagueFit``).

    Parameters
    ----------
    fit : the joint fit (strengths, pairs, divisions, pools, settings)
    results : the results the fit used; only needed for the raw count of
        recent cross-division games (None leaves that count out)
    method : how to solve with ``K``: "auto", "factor" or "cg" (see ``HessianSolver``)
    """
    settings = fit.settings
    n, n_groups = len(fit.names), len(fit.group_names)
    solver, h = posterior_solver(fit, method)
    contrasts = division_contrasts(fit)
    var, X = contrasts.variance(solver)
    share = contrasts.shares(var, fit.prior_sd**2)
    members = fit.group[:, None] == np.arange(n_groups)[None, :]
    played = members.T.astype(float) @ fit.games if n else np.zeros(n_groups)
    # A division nobody in it has played for yet has nothing to tie in: not flagged.
    flagged = (share < settings.weakly_linked_below) & (played > 0) & (n_groups > 1)
    eligible = _not_islanders(fit)
    weak = np.flatnonzero(flagged)
    suggestions = suggest_matches(fit, solver, members[:, weak], [fit.group_names[g] for g in weak],
                                  X[:, weak], var[weak], eligible) if n else []
    suggested = {d for m in suggestions for d in (m.division_a, m.division_b)}
    divisions = _division_rows(fit, results, var, contrasts.prior, share, flagged, suggested)
    held, not_shown = held_back(fit, h, share, flagged, eligible)
    return WatchList(
        reference_date=fit.reference_date,
        pools=tuple(_pools(fit, solver)),
        divisions=tuple(divisions),
        held=tuple(held),
        suggestions=tuple(suggestions),
        held_not_shown=not_shown,
    )


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


def _cross_games(fit) -> tuple[np.ndarray, np.ndarray]:
    """Age-weighted games against other divisions, per division and per player."""
    pairs, n, n_groups = fit.pairs, len(fit.names), len(fit.group_names)
    gi, gj = fit.group[pairs.i], fit.group[pairs.j]
    cross = (gi != gj) & (pairs.total > 0)
    t = pairs.total[cross]
    per_division = np.bincount(gi[cross], t, n_groups) + np.bincount(gj[cross], t, n_groups)
    per_player = np.bincount(pairs.i[cross], t, n) + np.bincount(pairs.j[cross], t, n)
    return per_division, per_player


def _division_rows(fit, results, var, prior, share, flagged, suggested) -> list[DivisionLink]:
    """One row per division, the weakest-linked flagged ones first."""
    ppl = points_per_logodds(fit.settings.scale)
    cross_games, player_cross = _cross_games(fit)
    recent = _recent_cross_games(fit, results) if results is not None else None
    level, relative = _levels(fit)
    rows = []
    for g, name in enumerate(fit.group_names):
        inside = np.flatnonzero(fit.group == g)
        linkers = inside[player_cross[inside] > 0]
        linkers = linkers[np.argsort(-player_cross[linkers], kind="stable")]
        rows.append(DivisionLink(
            division=name,
            players=len(inside),
            level=float(level[g]),
            relative_level=float(relative[g]),
            level_sd=float(np.sqrt(max(var[g], 0.0)) * ppl),
            prior_sd=float(np.sqrt(prior[g]) * ppl),
            linked_share=float(share[g]),
            cross_games=float(cross_games[g]),
            recent_cross_games=None if recent is None else int(recent[g]),
            linking_players=len(linkers),
            linkers=tuple(fit.names[k] for k in linkers),
            flagged=bool(flagged[g]),
            what_to_do=division_todo(name, cross_games[g], name in suggested) if flagged[g] else "",
        ))
    rows.sort(key=lambda d: (not d.flagged, d.linked_share, d.division))
    return rows


def _levels(fit) -> tuple[np.ndarray, np.ndarray]:
    """Each division's level and its level against the rest, points.

    Free levels: ``centre + L_d`` and ``L_d`` minus the other levels' average.
    One pool: the players' mean rating and that minus the league's mean rating.
    """
    ppl, centre = points_per_logodds(fit.settings.scale), fit.settings.centre
    if fit.levels is not None:
        return centre + fit.level * ppl, against_the_rest(len(fit.level)) @ fit.level * ppl
    sizes = np.bincount(fit.group, minlength=len(fit.group_names))
    mean = np.bincount(fit.group, fit.ratings, len(fit.group_names)) / np.maximum(sizes, 1)
    mean[sizes == 0] = centre
    return mean, mean - (float(fit.ratings.mean()) if len(fit.names) else centre)


def _whole_pools(fit) -> np.ndarray:
    """Per pool: is it the largest pool, or the pool that holds most of a division cut off from the largest?

    Any other separate pool is an island (two newcomers who only met each other, a
    misspelt name): it is listed once, on its own line, and never suggested for.
    A division that plays nobody else is a pool too, but that is the division's
    problem, which its line and the suggestions address; a pool inside a division
    that others do reach is not (that line is not flagged), so it is an island.
    """
    pool = fit.diagnosis.pool
    if not len(pool):
        return np.zeros(0, dtype=bool)
    n_pools, n_groups = int(pool.max()) + 1, len(fit.group_names)
    count = np.zeros((n_pools, n_groups), dtype=np.int64)
    np.add.at(count, (pool, fit.group), 1)
    whole = np.zeros(n_pools, dtype=bool)
    whole[np.argmax(count, axis=0)[count[0] == 0]] = True
    whole[0] = True
    return whole


def _not_islanders(fit) -> np.ndarray:
    """Who may be suggested for a match or listed as held back: everyone but the members of islands."""
    return _whole_pools(fit)[fit.diagnosis.pool] if len(fit.names) else np.zeros(0, dtype=bool)


def _pools(fit, solver) -> list[Pool]:
    """Islands: separate pools of two or more players that are not whole divisions, each named once."""
    pool, pairs = fit.diagnosis.pool, fit.pairs
    if not len(pool):
        return []
    sizes, whole = np.bincount(pool), _whole_pools(fit)
    separate = [k for k in range(1, len(sizes)) if sizes[k] >= 2 and not whole[k]]
    if not separate:
        return []
    contrasts = average_contrasts(fit, pool[:, None] == np.array(separate)[None, :])
    var, _ = contrasts.variance(solver)
    ppl = points_per_logodds(fit.settings.scale)
    out = []
    for col, k in enumerate(separate):
        idx = np.flatnonzero(pool == k)
        inner = (pool[pairs.i] == k) & (pool[pairs.j] == k)
        names = tuple(fit.names[x] for x in idx)
        out.append(Pool(
            players=names,
            divisions=tuple(sorted({fit.group_names[fit.group[x]] for x in idx})),
            games=float(pairs.total[inner].sum()),
            level_sd=float(np.sqrt(max(var[col], 0.0)) * ppl),
            what_to_do=pool_todo(names),
        ))
    return out


# ---------------------------------------------------------------------------
# Held back


def surplus(fit, h: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Per player: games their rating expects them to win, the surplus z-score, and the points held.

    ``expected = sum w p``; ``z = (won - expected) / sqrt(L_ii)``; ``held = (won - expected) / L_ii``
    in points, ``L_ii = sum_pairs n p (1 - p)`` (the likelihood's curvature; 0 for no games).
    """
    pairs, n = fit.pairs, len(fit.names)
    p = expit(fit.r[pairs.i] - fit.r[pairs.j])
    expected = np.bincount(pairs.i, pairs.total * p, n) + np.bincount(pairs.j, pairs.total * (1.0 - p), n)
    L = np.bincount(pairs.i, h, n) + np.bincount(pairs.j, h, n)
    pull = fit.wins - expected
    with np.errstate(invalid="ignore", divide="ignore"):
        z = np.where(L > 0, pull / np.sqrt(L), 0.0)
        held = np.where(L > 0, pull / L, 0.0) * points_per_logodds(fit.settings.scale)
    return expected, z, held


def held_back(fit, h, share, flagged, eligible) -> tuple[list[HeldPlayer], int]:
    """Held-back players, strongest cases first (at most ``HELD_SHOWN``), and how many more there are.

    A player with at least "Few games" games, outside any separate pool, is held
    back when their surplus z-score reaches ``held_z``, or when they win at least
    ``dominant_share`` of their games in a weakly linked division (whose level
    nobody has checked, however clearly they win).  Those in weakly linked
    divisions come first.
    """
    settings = fit.settings
    expected, z, held = surplus(fit, h)
    games, won = fit.games, fit.wins
    weak = flagged[fit.group] if len(fit.names) else np.zeros(0, dtype=bool)
    with np.errstate(invalid="ignore", divide="ignore"):
        share_won = np.where(games > 0, won / games, 0.0)
    dominant = (share_won >= settings.dominant_share) & weak
    chosen = np.flatnonzero(((z >= settings.held_z) | dominant) & (games >= settings.few_games) & eligible)
    chosen = chosen[np.lexsort((-z[chosen], ~weak[chosen]))]
    out = []
    for k in chosen[:HELD_SHOWN]:
        division = fit.group_names[fit.group[k]]
        out.append(HeldPlayer(
            name=fit.names[k], division=division, rating=float(fit.ratings[k]),
            games=float(games[k]), won=float(won[k]), expected=float(expected[k]),
            held_points=float(held[k]), surplus_z=float(z[k]),
            linked_share=float(share[fit.group[k]]), flagged=bool(weak[k]),
            what_to_do=held_todo(division, bool(weak[k])),
        ))
    return out, max(0, len(chosen) - HELD_SHOWN)
