"""Research (issue #10): players' drift over time, a random walk of block strengths, against the static model.

Each player's strength is piecewise constant over calendar blocks of
``--block-days`` (counted from the first result's date; only blocks in which
the player has a game exist: blocks of their own activity), linked by a
Gaussian random walk:

    x_{i,1} = L_home(i) + u_i,   u_i ~ N(mu_i, s^2)
    x_{i,k+1} - x_{i,k} ~ N(0, w^2 * gap / 365)   (gap: days between the two blocks' starts)

with the division levels ``L_d ~ N(m_d, tau^2)`` and the home division as
shipped (``walkforward.Homes``).  ``w`` is in rating points per square-root
year; ``w = 0`` is one block per player: exactly the shipped static model.
The joint MAP over (block strengths, levels) is found by safeguarded Newton
(the shipped line search and stop) with a sparse direct solve: the likelihood
Laplacian over blocks plus the prior's precision, which is block-tridiagonal
per player (the walk's links) bordered by the level rows.

Prediction, as the shipped walk (``walkforward``): week by week, from the
results before the week; a seen player plays at their latest block's
strength, and the predictive chance (``races.predictive_game_chance``) adds
``w^2 * gap / 365`` per seat to the posterior variance of the difference, the
gap in days from the latest block's start to the start of the match's block
(0 in the same block).  A newcomer starts at their division's level with the
Skill spread's variance, as shipped.  Cross-division games are the shipped
walk's (``_predict_step``), so every row scores the same games; ``static
(evaluate)`` is the shipped walk itself, from the same run.

Run from the repository root: ``python tests/bench/levels_drift.py`` (options:
``--sets tennis,badminton,demo``, ``--drifts 0,50,100,200``, ``--half-lives
480,0``, ``--division-spreads 300,0``, ``--block-days 28``, ``--step-days 7``).
"""
from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import argparse  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from dataclasses import dataclass, replace  # noqa: E402
from pathlib import Path  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import numpy as np  # noqa: E402
import scipy.sparse as sp  # noqa: E402
import scipy.sparse.linalg as spla  # noqa: E402
from scipy.special import log_expit  # noqa: E402

from secretary.errors import FitFailed  # noqa: E402
from secretary.model.evaluate import evaluate  # noqa: E402
from secretary.model.fit import LaplacianPattern, _line_search, _player_gradient_and_curvature  # noqa: E402
from secretary.model.pairs import Pairs, age_weights, aggregate  # noqa: E402
from secretary.model.records import Settings  # noqa: E402
from secretary.model.scale import points_per_logodds, to_strength  # noqa: E402
from secretary.model.walkforward import StepOutput, _predict_step, prepare  # noqa: E402
from tests.bench.bench_predict import SETS  # noqa: E402
from tests.bench.levels_mix import contrast_rows, score  # noqa: E402
from tests.bench.levels_spread import steps  # noqa: E402

YEAR = 365.0


@dataclass(frozen=True)
class Blocks:
    """Every (player, calendar block) with a game, numbered by first appearance (seats a, b, partners).

    Attributes
    ----------
    seats : block of each sorted match's side A, side B (then partners, -1 in singles)
    player : player of each block
    start : first day of each block (days since the walk's first date)
    prev : the same player's previous block, -1 for their first
    """

    seats: tuple[np.ndarray, ...]
    player: np.ndarray
    start: np.ndarray
    prev: np.ndarray

    def seen(self, stop: int) -> int:
        """Blocks met in the first ``stop`` matches (``0 .. seen - 1``)."""
        return int(max(seat[:stop].max() for seat in self.seats)) + 1 if stop else 0

    def latest(self, stop: int, n: int) -> np.ndarray:
        """Each of the first ``n`` players' latest block among the first ``stop`` matches' blocks."""
        out = np.full(n, -1, np.int64)
        nb = self.seen(stop)
        np.maximum.at(out, self.player[:nb], np.arange(nb))
        return out


def make_blocks(walk, block_days: float | None) -> Blocks:
    """The walk's blocks of ``block_days`` (None: one block per player, numbered as the players)."""
    seats = (walk.a, walk.b) if walk.pa is None else (walk.a, walk.b, walk.pa, walk.pb)
    cal = np.zeros(len(walk.day), np.int64) if block_days is None else walk.day // int(block_days)
    width = int(cal.max()) + 1 if len(cal) else 1
    table = np.column_stack([np.where(s >= 0, s * width + cal, -1) for s in seats]).ravel()
    valid = table >= 0
    keys, first, inverse = np.unique(table[valid], return_index=True, return_inverse=True)
    rank = np.empty(len(keys), np.int64)
    rank[np.argsort(first, kind="stable")] = np.arange(len(keys))  # by first appearance
    codes = np.full(len(table), -1, np.int64)
    codes[valid] = rank[inverse.ravel()]
    by_id = np.empty(len(keys), np.int64)
    by_id[rank] = keys
    player, block = by_id // width, by_id % width
    order = np.lexsort((block, player))
    prev = np.full(len(keys), -1, np.int64)
    same = player[order][1:] == player[order][:-1]
    prev[order[1:][same]] = order[:-1][same]
    grid = table.reshape(len(walk.day), len(seats))
    return Blocks(tuple(codes.reshape(grid.shape)[:, k] for k in range(len(seats))), player,
                  block * (1 if block_days is None else int(block_days)), prev)


def block_pairs(walk, blocks: Blocks, stop: int, half_life: float) -> Pairs:
    """Age-weighted games of the first ``stop`` matches between blocks (ages from the newest of them)."""
    w = age_weights(walk.day[stop - 1] - walk.day[:stop], half_life)
    partners = blocks.seats[2:] if len(blocks.seats) > 2 else (None, None)
    return aggregate(blocks.seats[0][:stop], blocks.seats[1][:stop], walk.games_a[:stop], walk.games_b[:stop],
                     blocks.seen(stop), w, *(p if p is None else p[:stop] for p in partners))


@dataclass(frozen=True)
class Prior:
    """The prior as least squares over ``z = (x, L)``: ``|A z - c|^2_W / 2`` (``W`` diagonal weights).

    Rows: each player's first block ``x - L_home`` at ``mu`` (weight ``1 / s^2``; with fixed levels
    ``x`` at ``mu + m_home``), each link ``x_{k+1} - x_k`` at 0 (weight ``365 / (w^2 gap)``), each free
    level at ``m_d`` (weight ``1 / tau^2``).  ``Q = A^T W A`` is the prior's precision.
    """

    A: sp.csr_matrix
    c: np.ndarray
    weight: np.ndarray

    @property
    def Q(self) -> sp.csr_matrix:
        return (self.A.T @ sp.diags(self.weight) @ self.A).tocsr()

    def value(self, z) -> float:
        e = self.A @ z - self.c
        return 0.5 * float(e @ (self.weight * e))

    def gradient(self, z) -> np.ndarray:
        return self.A.T @ (self.weight * (self.A @ z - self.c))


def make_prior(blocks: Blocks, nb: int, home, mu, s: float, w: float, level_mean, tau: float) -> Prior:
    """The prior of the first ``nb`` blocks (log-odds: ``s``, ``w`` per sqrt-year, ``tau``; 0: fixed levels)."""
    player, prev = blocks.player[:nb], blocks.prev[:nb]
    first, link = np.flatnonzero(prev < 0), np.flatnonzero(prev >= 0)
    D = len(level_mean) if tau > 0 else 0
    d = home[player[first]]
    rows = [np.arange(len(first))] * (2 if D else 1)
    cols, vals = [first] + ([nb + d] if D else []), [np.ones(len(first))] + ([-np.ones(len(first))] if D else [])
    r0 = len(first)
    rows += [r0 + np.arange(len(link))] * 2
    cols += [link, prev[link]]
    vals += [np.ones(len(link)), -np.ones(len(link))]
    r1 = r0 + len(link)
    rows.append(r1 + np.arange(D))
    cols.append(nb + np.arange(D))
    vals.append(np.ones(D))
    A = sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(r1 + D, nb + D))
    gap = (blocks.start[link] - blocks.start[prev[link]]) / YEAR
    with np.errstate(divide="ignore"):
        link_weight = 1.0 / (w**2 * gap)
    c = np.concatenate([mu[player[first]] + (0.0 if D else level_mean[d]), np.zeros(len(link)),
                        np.asarray(level_mean, float)[:D]])
    weight = np.concatenate([np.full(len(first), 1.0 / s**2), link_weight, np.full(D, 1.0 / tau**2 if D else 0.0)])
    return Prior(A, c, weight)


def likelihood(pairs: Pairs, x) -> tuple[np.ndarray, np.ndarray]:
    """The negative log-likelihood's gradient over the blocks and the pair weights ``n p (1 - p)``."""
    return _player_gradient_and_curvature(pairs, x, 0.0, np.inf)


def objective(pairs: Pairs, prior: Prior, z) -> float:
    """``F(z)``: negative log-likelihood plus the prior (up to a constant)."""
    x = z[:pairs.n_players]
    d = pairs.difference(x)
    nll = -(pairs.won_i @ log_expit(d) + pairs.won_j @ log_expit(-d))
    if pairs.doubles is not None:
        dd = pairs.doubles.difference(x)
        nll -= pairs.doubles.won_a @ log_expit(dd) + pairs.doubles.won_b @ log_expit(-dd)
    return float(nll + prior.value(z))


def gradient(pairs: Pairs, prior: Prior, z) -> tuple[np.ndarray, np.ndarray]:
    """``dF/dz`` and the pair weights."""
    g, h = likelihood(pairs, z[:pairs.n_players])
    full = prior.gradient(z)
    full[:pairs.n_players] += g
    return full, h


def hessian(pattern: LaplacianPattern, h, Q: sp.csr_matrix) -> sp.csr_matrix:
    """``H = K + Q``: the blocks' likelihood Laplacian (padded with the level rows) plus the prior's precision."""
    nb, size = pattern.n, Q.shape[0]
    K = pattern.matrix(h, np.inf)
    return (sp.block_diag([K, sp.csr_matrix((size - nb, size - nb))]) + Q).tocsr() if size > nb else (K + Q).tocsr()


class Chains:
    """The preconditioner ``M^-1``, ``M = diag(K) + Q``: each player's chain of blocks (tridiagonal) bordered by
    the levels, solved exactly by a sparse LU in chain order, levels last (fill: one entry per block and level)."""

    def __init__(self, blocks: Blocks, nb: int, H: sp.csr_matrix, Q: sp.csr_matrix):
        size = H.shape[0]
        order = np.lexsort((blocks.start[:nb], blocks.player[:nb]))
        self.perm = np.concatenate([order, np.arange(nb, size)])
        M = (Q + sp.diags(np.r_[(H - Q).diagonal()[:nb], np.zeros(size - nb)])).tocsr()[self.perm][:, self.perm]
        self.lu = spla.splu(M.tocsc(), permc_spec="NATURAL", diag_pivot_thresh=0.0, options={"SymmetricMode": True})

    def __call__(self, r: np.ndarray) -> np.ndarray:
        y = np.empty_like(r)
        y[self.perm] = self.lu.solve(np.ascontiguousarray(r[self.perm]))
        return y


def pcg(H: sp.csr_matrix, B: np.ndarray, precondition, rtol: float, maxiter: int = 5000) -> np.ndarray:
    """``H^-1 B`` by preconditioned CG, every column its own recursion (shared products); each column stops
    when its residual is below ``rtol`` of its right-hand side."""
    B = np.asarray(B, float)
    X, R = np.zeros_like(B), B.copy()
    Z = precondition(R)
    P, rz = Z.copy(), np.einsum("i...,i...->...", R, Z)
    stop = rtol * np.sqrt(np.einsum("i...,i...->...", B, B))
    for _ in range(maxiter):
        active = np.sqrt(np.einsum("i...,i...->...", R, R)) > stop
        if not np.any(active):
            return X
        Q = H @ P
        alpha = np.where(active, rz / np.where(active, np.einsum("i...,i...->...", P, Q), 1.0), 0.0)
        X += P * alpha
        R -= Q * alpha
        Z = precondition(R)
        rz, rz_old = np.einsum("i...,i...->...", R, Z), rz
        P = Z + P * np.where(active, rz / np.where(rz_old > 0, rz_old, 1.0), 0.0)
    raise FitFailed("the drift solve did not settle")


def fit_drift(pairs: Pairs, prior: Prior, blocks: Blocks, start, gtol: float = 1e-7,
              max_iter: int = 100) -> np.ndarray:
    """The MAP ``z = (x, L)`` by safeguarded Newton (the shipped stop and line search), steps by ``pcg``."""
    pattern, Q = LaplacianPattern(pairs), prior.Q
    tol = gtol * max(1.0, float(pairs.games_per_player().mean())) if pairs.n_players else gtol
    z = np.array(start, float)
    g, h = gradient(pairs, prior, z)
    for _ in range(max_iter + 1):
        gmax = float(np.max(np.abs(g))) if len(g) else 0.0
        if gmax <= tol:
            return z
        H = hessian(pattern, h, Q)
        step = -pcg(H, g, Chains(blocks, pattern.n, H, Q), min(0.1, np.sqrt(gmax)) * 0.1)
        t, g, h = _line_search(lambda y: gradient(pairs, prior, y), z, step, g)
        z = z + t * step
    raise FitFailed(f"the drift fit did not settle (largest gradient {gmax:.3g})")


def variances(H: sp.csr_matrix, C: sp.csr_matrix, precondition, rtol: float = 1e-6) -> np.ndarray:
    """``c^T H^-1 c`` for each row of ``C`` (``pcg`` on all rows at once)."""
    if C.shape[0] == 0:
        return np.zeros(0)
    rhs = C.T.toarray()
    return np.einsum("ij,ij->j", rhs, pcg(H, rhs, precondition, rtol))


@dataclass(frozen=True)
class Drift:
    """One drift model's settings in log-odds: Skill spread ``s``, drift ``w`` per sqrt-year, Division spread ``tau``."""

    s: float
    w: float
    tau: float
    half_life: float
    block_days: int | None  # None: one block per player (``w = 0``)

    @classmethod
    def of(cls, settings: Settings, drift_points: float, block_days: int) -> "Drift":
        ppl = points_per_logodds(settings.scale)
        return cls(settings.skill_spread / ppl, drift_points / ppl, settings.division_spread / ppl,
                   settings.half_life_days, block_days if drift_points > 0 else None)


def prior_means(walk, settings: Settings) -> np.ndarray:
    """Each player's starting offset ``mu_i`` (log-odds; 0 without a starting rating)."""
    starting = np.where(np.isnan(walk.starting), settings.centre, walk.starting)
    return np.asarray(to_strength(starting, settings.centre, settings.scale), float).reshape(-1)


def warm_start(blocks: Blocks, nb: int, old, home, mu, level) -> np.ndarray:
    """The previous step's blocks, a new block at the player's previous block (their first at ``mu + L_home``)."""
    x = np.empty(nb)
    x[:len(old)] = old
    for k in range(len(old), nb):  # in order of first appearance: a block's predecessor comes first
        p = blocks.prev[k]
        x[k] = x[p] if p >= 0 else mu[blocks.player[k]] + level[home[blocks.player[k]]]
    return x


def drift_variance(walk, step: slice, blocks: Blocks, latest, n: int, model: Drift) -> np.ndarray:
    """Per match, ``w^2 * gap / 365`` summed over the seen seats (times the seat's coefficient squared)."""
    if model.block_days is None:
        return np.zeros(step.stop - step.start)
    half2 = np.where(walk.doubles[step], 0.25, 1.0)
    seats = player_seats(walk)
    now = (walk.day[step] // model.block_days) * model.block_days
    extra = np.zeros(step.stop - step.start)
    for seat in seats:
        idx = seat[step]
        seen = (idx >= 0) & (idx < n)
        gap = now - blocks.start[latest[np.clip(idx, 0, n - 1)]]
        extra += np.where(seen, half2 * model.w**2 * gap / YEAR, 0.0)
    return extra


def block_contrasts(walk, step: slice, n: int, nb: int, latest, free_levels: bool) -> sp.csr_matrix:
    """Each match's coefficients on ``(x, L)``: a seen player on their latest block, a newcomer on their level."""
    C = contrast_rows(walk, step, n, walk.division[step]).tocoo()
    player = C.col < n
    col = np.where(player, latest[np.minimum(C.col, n - 1)], nb + C.col - n)
    keep = player | free_levels
    D = len(walk.division_names) if free_levels else 0
    return sp.csr_matrix((C.data[keep], (C.row[keep], col[keep])), shape=(C.shape[0], nb + D))


def walk_drift(walk, settings: Settings, model: Drift, gtol: float = 1e-7) -> StepOutput:
    """The shipped walk forward (``walkforward.walk_steps``) with drifting players; point and predictive output."""
    mu, ppl = prior_means(walk, settings), points_per_logodds(settings.scale)
    D = len(walk.division_names)
    level_mean = walk.starting_level / ppl if D > 1 else np.zeros(D)
    tau = model.tau if D > 1 else 0.0
    blocks = make_blocks(walk, model.block_days)
    out = StepOutput(*(np.full(len(walk.day), np.nan) for _ in range(2)), *(np.zeros(len(walk.day), bool)
                                                                           for _ in range(2)))
    x, level = np.zeros(0), level_mean.copy()
    for step, player_pairs, home in steps(walk, model.half_life):
        n, nb = player_pairs.n_players, blocks.seen(step.start)
        pairs = block_pairs(walk, blocks, step.start, model.half_life)
        prior = make_prior(blocks, nb, home, mu[:n], model.s, model.w, level_mean, tau)
        z = fit_drift(pairs, prior, blocks, np.concatenate([warm_start(blocks, nb, x, home, mu, level),
                                                   level if tau > 0 else []]), gtol)
        x, level = z[:nb], (z[nb:] if tau > 0 else level_mean)
        latest = blocks.latest(step.start, n)
        _predict_step(walk, out, step, player_pairs, x[latest], level, home, mu, model.s, settings.few_games,
                      None, False)
        H = hessian(LaplacianPattern(pairs), likelihood(pairs, x)[1], prior.Q)
        C = block_contrasts(walk, step, n, nb, latest, tau > 0)
        own = variances(H, C, Chains(blocks, nb, H, prior.Q))
        newcomers = sum(np.where(seat[step] >= n, 1.0, 0.0) for seat in player_seats(walk))
        half2 = np.where(walk.doubles[step], 0.25, 1.0)
        out.var[step] = (own + newcomers * half2 * model.s**2
                         + drift_variance(walk, step, blocks, latest, n, model))
        out.steps += 1
    return out


def player_seats(walk) -> tuple[np.ndarray, ...]:
    """The walk's player seats: side A, side B, and with doubles both partners (-1 in singles)."""
    return (walk.a, walk.b) if walk.pa is None else (walk.a, walk.b, walk.pa, walk.pb)


def grid(text: str) -> list[float]:
    return [float(v) for v in text.split(",")]


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sets", default="tennis,badminton,demo")
    parser.add_argument("--drifts", default="0,50,100,200", help="w, rating points per square-root year")
    parser.add_argument("--half-lives", default="480,0", help="days (0: no age weights)")
    parser.add_argument("--division-spreads", default="300,0")
    parser.add_argument("--block-days", type=int, default=28)
    parser.add_argument("--step-days", type=int, default=7)
    args = parser.parse_args(argv)
    base = Settings()
    print(f"Skill spread {base.skill_spread:g}, blocks of {args.block_days} days, steps of {args.step_days} days "
          "(walk-forward log-loss per game)")
    print("| set | model | Half-life | Division spread | w | point | predictive | cross point | cross predictive "
          "| cross games | seconds |")
    print("|---|---|---|---|---|---|---|---|---|---|---|")
    for name in args.sets.split(","):
        results, players = SETS[name]()
        walk = prepare(results, players=players, step_days=args.step_days)
        for tau in grid(args.division_spreads):
            begin, settings = time.perf_counter(), replace(base, division_spread=tau)
            ev = evaluate(walk, settings)
            cells = (ev.log_loss, ev.predictive.log_loss, ev.cross.log_loss, ev.predictive_cross.log_loss,
                     ev.cross.count)
            print(table_row(name, "static (evaluate)", settings, 0.0, cells, begin), flush=True)
        for half_life in grid(args.half_lives):
            for tau in grid(args.division_spreads):
                settings = replace(base, division_spread=tau, half_life_days=half_life)
                for w in grid(args.drifts):
                    begin = time.perf_counter()
                    out = walk_drift(walk, settings, Drift.of(settings, w, args.block_days))
                    print(table_row(name, "drift", settings, w, score(walk, out), begin), flush=True)
    return 0


def table_row(name: str, model: str, settings: Settings, w: float, cells, begin: float) -> str:
    return (f"| {name} | {model} | {settings.half_life_days:g} | {settings.division_spread:g} | {w:g} | "
            + " | ".join(f"{c:.4f}" for c in cells[:4]) + f" | {cells[4]:,.0f} | {time.perf_counter() - begin:.1f} |")


if __name__ == "__main__":
    sys.exit(main())
