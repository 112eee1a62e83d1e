"""Research (issue #10): a Skill spread per division by empirical Bayes, against the shipped single spread.

Model as shipped (``r_i = L_home(i) + u_i``, ``L_d ~ N(m_d, tau^2)``) but
``u_i ~ N(mu_i, s_d^2)`` with ``s_d`` the spread of the player's home division,
estimated from the data at every walk step by EM on the Laplace posterior:

    s_d^2 <- mean over the division's seen players of (u_i^2 + Var(u_i))

(``u_i = r_i - L_d - mu_i`` at the MAP, ``Var(u_i)`` the contrast
``e_i - e_{L_d}`` over ``H^-1`` of the joint fit), ``EM_ITERATIONS`` updates
per step, each followed by a refit, the spreads carried to the next step
(starting at the shipped Skill spread), clipped to ``[s/4, 4 s]``.  Rows:

- **single (shipped)**: the shipped Skill spread for all, through this code (a
  check: it must give the shipped walk, ``evaluate``, to the fit's tolerance);
- **EM, one global spread**: the same EM with one group (the control);
- **EM, per division**: one spread per division;
- **EM, per division, shrunk**: ``s_d^2`` from the division's sum plus
  ``SHRINK`` pseudo-players at the global EM estimate (fixed before any run).

Division spread, Half-life and the home rule are the shipped ones; a newcomer
starts at their division's level with variance ``s_d^2``.  Cross-division
games are the same set in every row (home divisions by the shipped rule).

Run from the repository root: ``python tests/bench/levels_spread.py`` (options:
``--sets demo,badminton,tennis``, ``--step-days``, ``--skill-spread``,
``--half-life-days``, ``--division-spread``; the shipped defaults otherwise).
"""
from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import argparse  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from dataclasses import replace  # noqa: E402
from pathlib import Path  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import numpy as np  # noqa: E402
import scipy.sparse as sp  # noqa: E402

from secretary.model.evaluate import evaluate  # noqa: E402
from secretary.model.fit import _player_gradient_and_curvature, conjugate_gradient, hessian  # noqa: E402
from secretary.model.records import Settings  # noqa: E402
from secretary.model.scale import points_per_logodds, to_strength  # noqa: E402
from secretary.model.uncertainty import contrast_variance  # noqa: E402
from secretary.model.walkforward import DENSE_CONTRASTS, Homes, StepOutput, _predict_step, prepare, training_pairs  # noqa: E402
from tests.bench.bench_predict import SETS  # noqa: E402
from tests.bench.levels_mix import Mix, contrast_rows, score  # noqa: E402

RULES = ("single (shipped)", "EM, one global spread", "EM, per division", "EM, per division, shrunk")
EM_ITERATIONS = 2  # EM updates per walk step (the spreads carry over, so the walk runs many in all)
SHRINK = 20.0  # pseudo-players at the global estimate in the shrunk rule
BOUNDS = (0.25, 4.0)  # the spreads' floor and ceiling, times the shipped Skill spread


class Spread(Mix):
    """``Mix`` with one-hot ``W`` and a prior SD per player (``sd``: their division's Skill spread)."""

    def __init__(self, W: sp.csr_matrix, mean: np.ndarray, tau: float, sd: np.ndarray):
        self.W, self.mean, self.tau, self.sd = W, mean, tau, sd
        self.V = sp.diags(1.0 / sd**2) @ W  # the coupling is -V
        self.P = (W.T @ self.V).toarray() + np.eye(len(mean)) / tau**2
        self.Pinv = np.linalg.inv(self.P)

    def gradient(self, pairs, x, mu):
        n = pairs.n_players
        centre = mu + self.W @ x[n:]  # each player's prior centre given the levels
        g, h = _player_gradient_and_curvature(pairs, x[:n], centre, self.sd)
        return np.concatenate([g, (x[n:] - self.mean) / self.tau**2 - self.V.T @ (x[:n] - centre)]), h

    def step(self, pattern, h, g, gmax: float) -> np.ndarray:
        n, V = pattern.n, self.V
        g_r, g_level = g[:n], g[n:]
        diag = pattern.diagonal(h, self.sd)
        players = pattern.matvec(h, diag)
        VP = V @ self.Pinv
        low = np.asarray(V.multiply(VP).sum(axis=1)).reshape(-1)
        step_r = conjugate_gradient(lambda v: players(v) - VP @ (V.T @ v), -(g_r + VP @ g_level), 1.0 / (diag - low),
                                    min(0.1, np.sqrt(gmax)) * 0.1, 10 * n)
        return np.concatenate([step_r, self.Pinv @ (V.T @ step_r - g_level)])

    def joint_hessian(self, pairs, r) -> sp.csr_matrix:
        return sp.bmat([[hessian(pairs, r, self.sd), -self.V], [-self.V.T, sp.csr_matrix(self.P)]], format="csr")


def second_moments(spread: Spread, pairs, x, mu, home) -> np.ndarray:
    """``u_i^2 + Var(u_i)`` per seen player, ``u_i = r_i - L_home - mu_i`` (Laplace posterior)."""
    n = pairs.n_players
    u = x[:n] - x[n + home] - mu
    C = sp.csr_matrix((np.r_[np.ones(n), -np.ones(n)], (np.r_[np.arange(n), np.arange(n)], np.r_[np.arange(n), n + home])),
                      shape=(n, len(x)))
    return u**2 + contrast_variance(spread.joint_hessian(pairs, x[:n]), C, dense_limit=DENSE_CONTRASTS)


def em_update(rule: str, moments, home, s, s0: float) -> np.ndarray:
    """The rule's new spreads per division (log-odds) from the players' second moments."""
    D = len(s)
    count, total = np.bincount(home, minlength=D).astype(float), np.bincount(home, moments, D)
    overall = moments.mean()
    if rule == "EM, one global spread":
        new = np.full(D, np.sqrt(overall))
    elif rule == "EM, per division":
        new = np.where(count > 0, np.sqrt(total / np.maximum(count, 1)), s)
    else:
        new = np.sqrt((total + SHRINK * overall) / (count + SHRINK))
    return np.clip(new, BOUNDS[0] * s0, BOUNDS[1] * s0)


def newcomer_variance(walk, step: slice, n: int, s) -> np.ndarray:
    """Each match's newcomers' own variance ``coef^2 s_d^2`` (``d``: Players-sheet division, else the match's)."""
    half2 = np.where(walk.doubles[step], 0.25, 1.0)
    seats = (walk.a, walk.b) if walk.pa is None else (walk.a, walk.b, walk.pa, walk.pb)
    extra = np.zeros(step.stop - step.start)
    for seat in seats:
        idx = seat[step]
        given = walk.given_home[np.maximum(idx, 0)]
        div = np.where(given >= 0, given, walk.division[step])
        extra += np.where(idx >= n, half2 * s[div] ** 2, 0.0)
    return extra


def steps(walk, half_life: float):
    """Each step with earlier results: (its matches, the earlier results' pairs, the home divisions then)."""
    homes = Homes(walk)
    for start, stop in zip(walk.bounds[:-1].tolist(), walk.bounds[1:].tolist()):
        if stop > start > 0:
            yield slice(start, stop), training_pairs(walk, start, half_life), homes.at(start)


def walk_spread(walk, settings: Settings, rule: str, gtol: float = 1e-7):
    """The shipped walk forward (levels free) with the rule's Skill spreads; returns the output and the last spreads."""
    ppl = points_per_logodds(settings.scale)
    starting = np.where(np.isnan(walk.starting), settings.centre, walk.starting)
    mu = np.asarray(to_strength(starting, settings.centre, settings.scale), float).reshape(-1)
    s0, tau = settings.skill_spread / ppl, settings.division_spread / ppl
    level_mean, D = walk.starting_level / ppl, len(walk.division_names)
    out = StepOutput(*(np.full(len(walk.day), np.nan) for _ in range(2)), np.zeros(len(walk.day), bool),
                     np.zeros(len(walk.day), bool))
    r, level, s = np.zeros(0), level_mean.copy(), np.full(D, s0)
    for step, pairs, home in steps(walk, settings.half_life_days):
        start, stop, n = step.start, step.stop, pairs.n_players
        W = sp.csr_matrix((np.ones(n), (np.arange(n), home)), shape=(n, D))
        x = np.concatenate([r, mu[len(r):n] + level[home[len(r):]], level])
        for _ in range(0 if rule.startswith("single") else EM_ITERATIONS):
            spread = Spread(W, level_mean, tau, s[home])
            x = spread.fit(pairs, mu[:n], x, gtol)
            s = em_update(rule, second_moments(spread, pairs, x, mu[:n], home), home, s, s0)
        spread = Spread(W, level_mean, tau, s[home])
        x = spread.fit(pairs, mu[:n], x, gtol)
        r, level = x[:n], x[n:]
        _predict_step(walk, out, slice(start, stop), pairs, r, level, home, mu, s0, settings.few_games, None, False)
        C = contrast_rows(walk, slice(start, stop), n, walk.division[start:stop])
        out.var[start:stop] = (contrast_variance(spread.joint_hessian(pairs, r), C, dense_limit=DENSE_CONTRASTS)
                               + newcomer_variance(walk, slice(start, stop), n, s))
        out.steps += 1
    return out, s * ppl


FIELDS = ("skill_spread", "half_life_days", "division_spread")  # the settings a run may change


def row(name: str, label: str, cells, games: float, spreads: str, begin: float) -> str:
    """One table row."""
    return (f"| {name} | {label} | " + " | ".join(f"{c:.4f}" for c in cells)
            + f" | {games:,.0f} | {spreads} | {time.perf_counter() - begin:.1f} |")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sets", default="tennis,badminton,demo")
    parser.add_argument("--step-days", type=int, default=7)
    for field in FIELDS:
        parser.add_argument("--" + field.replace("_", "-"), type=float, default=getattr(Settings(), field))
    args = parser.parse_args(argv)
    settings = replace(Settings(), **{field: getattr(args, field) for field in FIELDS})
    print(", ".join(f"{field.replace('_', ' ')} {getattr(settings, field):g}" for field in FIELDS)
          + f", steps of {args.step_days} days (walk-forward log-loss per game)")
    print("| set | Skill spread | point | predictive | cross point | cross predictive | cross games "
          "| last spreads (points) | seconds |")
    print("|---|---|---|---|---|---|---|---|---|")
    for name in args.sets.split(","):
        results, players = SETS[name]()
        walk = prepare(results, players=players, step_days=args.step_days)
        for label, tau in (("one pool (Division spread 0)", 0.0), ("shipped walk (evaluate)", settings.division_spread)):
            begin = time.perf_counter()
            ev = evaluate(walk, replace(settings, division_spread=tau))
            print(row(name, label, (ev.log_loss, ev.predictive.log_loss, ev.cross.log_loss,
                                    ev.predictive_cross.log_loss), ev.cross.count, "-", begin), flush=True)
        for rule in RULES:
            begin = time.perf_counter()
            out, last = walk_spread(walk, settings, rule)
            cells = score(walk, out)
            spreads = ", ".join(f"{d or '-'} {v:.0f}" for d, v in zip(walk.division_names, last))
            print(row(name, rule, cells[:4], cells[4], spreads, begin), flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
