"""Research (issue #10): a player's prior centre from a *mix* of division levels, against today's home rule.

Today a player's prior centre is ``centre + L_home`` (home: the Players sheet's
division, else the division of the latest result).  Tried here, in the walk
forward only (the shipped code paths are not changed):

- **mix**: ``centre + sum_d w_id L_d`` with ``w_id`` the player's age-weighted
  share of games in division ``d`` (the fit's own half-life weights, ages from
  the newest earlier result; a doubles seat counts half).  A player with one
  division has today's model.  Over ``(r, L)`` the level block becomes the
  dense ``W^T W / sd^2 + I / tau^2`` (``D x D``) and the coupling ``-W / sd^2``:
  still positive definite.  Each Newton step eliminates the levels exactly
  and solves the players' Schur complement by CG (a rank-``D`` correction).
- **most (weighted)**: home = the division with the largest age-weighted share;
- **most (count)**: home = the division of most games, unweighted (an earlier rule).

A Players-sheet division always decides (as today): such a player's row of
``W`` is that division alone.  Newcomers start at the level of their
Players-sheet division, else the match's, as in the shipped walk.  The
cross-division games are the same set in every row: home divisions by today's
rule, so the rows score the same games.  ``latest`` runs through the mix code
with one-hot rows as a check: it must equal the shipped walk (``shipped``).

Run from the repository root: ``python tests/bench/levels_mix.py`` (options:
``--sets demo,badminton,tennis``, ``--skill-spread``, ``--half-life``,
``--division-spread``; the shipped defaults otherwise).  Sets: the invented
demo league, badminton men's singles 2018-2021 (event tiers) and men's tennis
2019 (the three files as tiers), read from ``../shared/data``.
"""
from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import argparse  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import numpy as np  # noqa: E402
import scipy.sparse as sp  # noqa: E402
from scipy.special import expit  # noqa: E402

from secretary.model.evaluate import evaluate, scores  # noqa: E402
from secretary.model.fit import (Levels, LaplacianPattern, _line_search, _player_gradient_and_curvature,  # noqa: E402
                                 conjugate_gradient, hessian)
from secretary.model.races import predictive_game_chance  # noqa: E402
from secretary.model.records import Settings  # noqa: E402
from secretary.model.scale import points_per_logodds, to_strength  # noqa: E402
from secretary.model.uncertainty import contrast_variance  # noqa: E402
from secretary.model.walkforward import (DENSE_CONTRASTS, Homes, StepOutput, _fit, _predict_step,  # noqa: E402
                                         prepare, training_pairs)
from tests.bench.bench_predict import SETS  # noqa: E402

RULES = ("latest", "mix", "most (weighted)", "most (count)")


def shares(walk, stop: int, half_life: float, latest: np.ndarray) -> sp.csr_matrix:
    """``W`` (players seen x divisions): each player's age-weighted share of games per named division.

    A Players-sheet division, or no game in a named division, gives the one-hot row of today's home.
    """
    n, D = len(latest), len(walk.division_names)
    age = walk.day[stop - 1] - walk.day[:stop]
    weight = np.exp2(-age / half_life) if half_life else np.ones(stop)
    weight = weight * (walk.games_a[:stop] + walk.games_b[:stop]) * np.where(walk.doubles[:stop], 0.5, 1.0)
    named = np.array([bool(d) for d in walk.division_names])[walk.division[:stop]]
    seats = (walk.a, walk.b) if walk.pa is None else (walk.a, walk.b, walk.pa, walk.pb)
    W = np.zeros((n, D))
    for seat in seats:
        sat = (seat[:stop] >= 0) & named
        np.add.at(W, (seat[:stop][sat], walk.division[:stop][sat]), weight[sat])
    total = W.sum(axis=1)
    one_hot = (walk.given_home[:n] >= 0) | (total <= 0)
    W[one_hot] = 0.0
    W[one_hot, latest[one_hot]] = 1.0
    W[~one_hot] /= total[~one_hot, None]
    return sp.csr_matrix(W)


def rule_homes(walk, stop: int, half_life: float, latest: np.ndarray, rule: str) -> sp.csr_matrix:
    """The rule's ``W``: shares for ``mix``, their largest entry one-hot for ``most``, today's home for ``latest``."""
    n, D = len(latest), len(walk.division_names)
    if rule == "latest":
        return sp.csr_matrix((np.ones(n), (np.arange(n), latest)), shape=(n, D))
    W = shares(walk, stop, 0.0 if rule == "most (count)" else half_life, latest)
    if rule == "mix":
        return W
    home = np.asarray(W.argmax(axis=1)).reshape(-1)
    return sp.csr_matrix((np.ones(n), (np.arange(n), home)), shape=(n, D))


class Mix:
    """Levels ``L ~ N(mean, tau^2)`` entering player ``i``'s prior centre as ``(W L)_i``."""

    def __init__(self, W: sp.csr_matrix, mean: np.ndarray, tau: float, prior_sd: float):
        self.W, self.mean, self.tau, self.sd = W, mean, tau, prior_sd
        self.P = (W.T @ W).toarray() / prior_sd**2 + np.eye(len(mean)) / tau**2  # the level block
        self.Pinv = np.linalg.inv(self.P)

    def gradient(self, pairs, x, mu):
        """``dF/d(r, L)`` and the pair weights."""
        n = pairs.n_players
        r, level = x[:n], x[n:]
        conditional = mu + self.W @ level
        g, h = _player_gradient_and_curvature(pairs, r, conditional, self.sd)
        g_level = (level - self.mean) / self.tau**2 - self.W.T @ (r - conditional) / self.sd**2
        return np.concatenate([g, g_level]), h

    def step(self, pattern: LaplacianPattern, h, g, gmax: float) -> np.ndarray:
        """Newton step: the levels eliminated exactly, the Schur complement ``A - W P^-1 W^T / sd^4`` by CG."""
        n, W, s2 = pattern.n, self.W, self.sd**2
        g_r, g_level = g[:n], g[n:]
        diag = pattern.diagonal(h, self.sd)
        players = pattern.matvec(h, diag)
        WP = W @ self.Pinv
        low = np.asarray(W.multiply(WP).sum(axis=1)).reshape(-1) / s2**2
        rhs = -(g_r + WP @ g_level / s2)
        step_r = conjugate_gradient(lambda v: players(v) - WP @ (W.T @ v) / s2**2, rhs, 1.0 / (diag - low),
                                    min(0.1, np.sqrt(gmax)) * 0.1, 10 * n)
        return np.concatenate([step_r, self.Pinv @ (W.T @ step_r / s2 - g_level)])

    def fit(self, pairs, mu, start, gtol: float, max_iter: int = 100) -> np.ndarray:
        """The MAP ``(r, L)`` by safeguarded Newton (the shipped ``_newton``'s stop and line search)."""
        pattern = LaplacianPattern(pairs)
        tol = gtol * max(1.0, float(pairs.games_per_player().mean()))
        x = np.array(start, float)
        g, h = self.gradient(pairs, x, mu)
        for _ in range(max_iter):
            gmax = float(np.max(np.abs(g)))
            if gmax <= tol:
                return x
            step = self.step(pattern, h, g, gmax)
            t, g, h = _line_search(lambda y: self.gradient(pairs, y, mu), x, step, g)
            x = x + t * step
        raise RuntimeError("the mix fit did not settle")

    def joint_hessian(self, pairs, r) -> sp.csr_matrix:
        """``[[K + I / sd^2, -W / sd^2], [-W^T / sd^2, P]]``."""
        coupling = -self.W / self.sd**2
        return sp.bmat([[hessian(pairs, r, self.sd), coupling], [coupling.T, sp.csr_matrix(self.P)]], format="csr")


def contrast_rows(walk, step: slice, n: int, home_of_match) -> sp.csr_matrix:
    """Each match's coefficients on ``(r, L)``: seen players on ``r``, a newcomer on their division's level."""
    m = step.stop - step.start
    half = np.where(walk.doubles[step], 0.5, 1.0)
    seats = [(walk.a[step], half), (walk.b[step], -half)]
    if walk.pa is not None:
        seats += [(walk.pa[step], half), (walk.pb[step], -half)]
    rows, cols, vals = [], [], []
    for idx, coef in seats:
        sat, new = idx >= 0, idx >= n
        given = walk.given_home[np.maximum(idx, 0)]
        div = np.where(given >= 0, given, home_of_match)
        rows.append(np.flatnonzero(sat))
        cols.append(np.where(new, n + div, idx)[sat])
        vals.append(coef[sat])
    return sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                         shape=(m, n + len(walk.division_names)))


def walk_rule(walk, settings: Settings, rule: str, gtol: float = 1e-7):
    """The walk forward of ``walk_steps`` with the rule's ``W`` (levels free: Division spread > 0).

    Returns the steps' output (cross-division by today's homes) and, for a one-hot rule, the
    cross-division flags by its own homes (None otherwise).
    """
    ppl = points_per_logodds(settings.scale)
    starting = np.where(np.isnan(walk.starting), settings.centre, walk.starting)
    mu = np.asarray(to_strength(starting, settings.centre, settings.scale), float).reshape(-1)
    sd, tau = settings.skill_spread / ppl, settings.division_spread / ppl
    level_mean = walk.starting_level / ppl
    out = StepOutput(*(np.full(len(walk.day), np.nan) for _ in range(2)), np.zeros(len(walk.day), bool),
                     np.zeros(len(walk.day), bool))
    own = StepOutput(*(np.full(len(walk.day), np.nan) for _ in range(2)), np.zeros(len(walk.day), bool),
                     np.zeros(len(walk.day), bool))  # cross-division by the rule's own homes (one-hot rules)
    homes, r, level = Homes(walk), np.zeros(0), level_mean.copy()
    for k in range(len(walk.bounds) - 1):
        start, stop = int(walk.bounds[k]), int(walk.bounds[k + 1])
        if stop == start or start == 0:
            continue
        pairs = training_pairs(walk, start, settings.half_life_days)
        n, latest = pairs.n_players, homes.at(start)
        W = rule_homes(walk, start, settings.half_life_days, latest, rule)
        warm = np.concatenate([r, mu[len(r):n] + W[len(r):] @ level, level])
        if rule in ("latest", "mix"):  # the mix code (for latest: the check against the shipped walk)
            mix = Mix(W, level_mean, tau, sd)
            x = mix.fit(pairs, mu[:n], warm, gtol)
            r, level = x[:n], x[n:]
            _predict_step(walk, out, slice(start, stop), pairs, r, level, latest, mu, sd, settings.few_games,
                          None, False)
            C = contrast_rows(walk, slice(start, stop), n, walk.division[start:stop])
            new = [(idx[start:stop] >= n) for idx in ((walk.a, walk.b) if walk.pa is None
                                                     else (walk.a, walk.b, walk.pa, walk.pb))]
            half2 = np.where(walk.doubles[start:stop], 0.25, 1.0)
            extra = sum(nw * half2 for nw in new) * sd**2
            out.var[start:stop] = contrast_variance(mix.joint_hessian(pairs, r), C,
                                                    dense_limit=DENSE_CONTRASTS) + extra
        else:  # a one-hot rule: the shipped fit and prediction with that home
            home = np.asarray(W.argmax(axis=1)).reshape(-1)
            levels = Levels(home, level_mean, tau)
            fit = _fit(pairs, mu[:n], sd, levels, warm, gtol)
            r, level = fit.r, fit.level
            _predict_step(walk, out, slice(start, stop), pairs, r, level, latest, mu, sd, settings.few_games,
                          levels, True)
            _predict_step(walk, own, slice(start, stop), pairs, r, level, home, mu, sd, 0.0, None, False)
        out.steps += 1
    return out, (own.cross if rule.startswith("most") else None)


def score(walk, out: StepOutput, cross=None) -> tuple[float, float, float, float, float]:
    """(point, predictive, cross point, cross predictive, cross games): log-loss per game, as ``evaluate``.

    ``cross``: other cross-division flags per sorted match (default: ``out.cross``).
    """
    done = ~np.isnan(out.mean)
    ga, gb = walk.games_a[done], walk.games_b[done]
    cross = (out.cross if cross is None else cross)[done]
    p, q = expit(out.mean[done]), predictive_game_chance(out.mean[done], out.var[done])
    return (scores(p, ga, gb).log_loss, scores(q, ga, gb).log_loss, scores(p[cross], ga[cross], gb[cross]).log_loss,
            scores(q[cross], ga[cross], gb[cross]).log_loss, float(ga[cross].sum() + gb[cross].sum()))


def pool_cross(walk, ev, cross) -> tuple[float, float]:
    """(point, predictive) cross-division log-loss of the one-pool evaluation ``ev`` over other flags."""
    p, q = ev.p[walk.order], ev.p_predictive[walk.order]
    use = cross & ~np.isnan(p)
    ga, gb = walk.games_a[use], walk.games_b[use]
    return scores(p[use], ga, gb).log_loss, scores(q[use], ga, gb).log_loss


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    shipped = Settings()
    parser.add_argument("--sets", default="tennis,badminton,demo")
    parser.add_argument("--skill-spread", type=float, default=shipped.skill_spread)
    parser.add_argument("--half-life", type=float, default=shipped.half_life_days)
    parser.add_argument("--division-spread", type=float, default=shipped.division_spread)
    args = parser.parse_args(argv)
    settings = Settings(skill_spread=args.skill_spread, half_life_days=args.half_life,
                        division_spread=args.division_spread)
    print(f"skill spread {settings.skill_spread:g}, half-life {settings.half_life_days:g} days, "
          f"division spread {settings.division_spread:g} (log-loss per game, walk forward week by week)")
    print("| set | prior centre | point | predictive | cross point | cross predictive | cross games | seconds |")
    print("|---|---|---|---|---|---|---|---|")
    for name in args.sets.split(","):
        results, players = SETS[name]()
        walk, pool = prepare(results, players=players), None
        for label, tau in (("one pool (spread 0)", 0.0), ("shipped (latest)", settings.division_spread)):
            begin = time.perf_counter()
            ev = evaluate(walk, Settings(skill_spread=settings.skill_spread, half_life_days=settings.half_life_days,
                                         division_spread=tau))
            cells = (ev.log_loss, ev.predictive.log_loss, ev.cross.log_loss, ev.predictive_cross.log_loss)
            pool = ev if tau == 0 else pool
            print(f"| {name} | {label} | " + " | ".join(f"{c:.4f}" for c in cells)
                  + f" | {ev.cross.count:,.0f} | {time.perf_counter() - begin:.1f} |", flush=True)
        for rule in RULES:
            begin = time.perf_counter()
            out, own = walk_rule(walk, settings, rule)
            cells = score(walk, out)
            print(f"| {name} | {rule} | " + " | ".join(f"{c:.4f}" for c in cells[:4])
                  + f" | {cells[4]:,.0f} | {time.perf_counter() - begin:.1f} |", flush=True)
            if own is not None:  # the same walk, its cross-division games by its own homes
                cells = score(walk, out, own)
                base = pool_cross(walk, pool, own)
                print(f"| {name} | {rule}, cross by its own homes (one pool there: {base[0]:.4f} / {base[1]:.4f}) "
                      f"| - | - | {cells[2]:.4f} | {cells[3]:.4f} | {cells[4]:,.0f} | - |", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
