"""Scripting-API benchmark: ``secretary.rate`` on result tuples against scikit-learn's liblinear.

Run by hand (not part of the test command):

    python tests/bench/bench_api.py [--matches 200000] [--players 2000] [--repeat 3] [--conditions idle busy]

``rate`` gets ``(date, player_a, player_b, games_a, games_b)`` tuples and does
everything: checks every row, names to indices, ages, aggregation, the fit and
the ± of every player.  The reference is scikit-learn's LogisticRegression
with the liblinear solver on the same games already aggregated per pair (the
work before that is not timed), with the same prior (C = prior variance) and
the same age weights; "max diff" is the largest rating difference in points.
Each figure is the median of --repeat runs, idle and with one core kept busy.

liblinear stops on its own floor (a step that changes the objective by less
than 1e-12 of it), whatever ``tol`` asks: with the shipped Skill spread (175)
it stops at a largest gradient of about 3e-4, 0.0006 points from the optimum
(with 145, the earlier default, its sixth step happened to land within 0.00005).
So the accuracy is also checked against a tight reference, scikit-learn's
newton-cg at tol 1e-12 (not timed), and "|grad|" prints the largest gradient of
the same objective (weighted log-loss + |r|^2 / 2C) at each answer.
"""
from __future__ import annotations

import argparse
import datetime as dt
import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parents[1]))

import busy  # noqa: E402
from bench_engine import sklearn_problem  # noqa: E402
from busy import timed  # noqa: E402
from make_league import REFERENCE_DATE, make_games, player_name  # noqa: E402

import secretary  # noqa: E402
from secretary.model.pairs import age_weights  # noqa: E402
from secretary.model.records import Settings  # noqa: E402
from secretary.model.scale import points_per_logodds  # noqa: E402


def tuples(n_matches: int, n_players: int) -> list[tuple]:
    g = make_games(n_matches, n_players, seed=1)
    names = [player_name(i) for i in range(n_players)]
    days = [REFERENCE_DATE - dt.timedelta(days=int(a)) for a in range(int(g.age_days.max()) + 1)]
    return [(days[int(age)], names[a], names[b], ga, gb)
            for age, a, b, ga, gb in zip(g.age_days.tolist(), g.idx_a.tolist(), g.idx_b.tolist(),
                                         g.games_a.tolist(), g.games_b.tolist())], g


def main():
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--matches", type=int, default=200_000)
    parser.add_argument("--players", type=int, default=2_000)
    parser.add_argument("--repeat", type=int, default=3)
    busy.add_argument(parser)
    args = parser.parse_args()
    from scipy.special import expit
    from sklearn.linear_model import LogisticRegression
    from threadpoolctl import threadpool_limits

    rows, g = tuples(args.matches, args.players)
    settings = Settings()
    prior_sd = settings.skill_spread / points_per_logodds(settings.scale)
    X, y, w = sklearn_problem(g, age_weights(g.age_days, settings.half_life_days))
    names = [player_name(i) for i in range(args.players)]

    def solve(solver, tol):
        model = LogisticRegression(fit_intercept=False, C=prior_sd**2, solver=solver, tol=tol, max_iter=1000)
        return model.fit(X, y, sample_weight=w).coef_.ravel()

    def gradient(r):  # of sum w log(1 + exp(-(2y-1) X r)) + |r|^2 / (2 C), the objective both sides minimise
        return np.max(np.abs(X.T @ (w * (expit(X @ r) - y)) + r / prior_sd**2))

    with threadpool_limits(limits=1):
        tight = solve("newton-cg", 1e-12)
    ppl = points_per_logodds(settings.scale)
    print(f"{args.matches:,} result tuples, {args.players:,} players; median of {args.repeat} runs")
    print(f"{'condition':>14} | {'rate()':>8} {'liblinear':>10} {'ratio':>6} {'max diff':>9} | "
          f"{'|grad| rate()':>13} {'liblinear':>10} | {'max diff to newton-cg tol 1e-12':>31}")
    for condition in busy.conditions(args.conditions):
        ours, ratings = timed(lambda: secretary.rate(rows), args.repeat)
        with threadpool_limits(limits=1):  # the reference gets the same single thread
            theirs, coef = timed(lambda: solve("liblinear", 1e-8), args.repeat)
        mine = (np.array([ratings.rating(name) for name in names]) - settings.centre) / ppl
        diff, exact = (np.max(np.abs(mine - other)) * ppl for other in (coef, tight))
        print(f"{condition:>14} | {ours:>7.3f}s {theirs:>9.3f}s {ours / theirs:>5.2f}x {diff:>8.1e}p | "
              f"{gradient(mine):>13.1e} {gradient(coef):>10.1e} | rate() {exact:.1e}p, liblinear "
              f"{np.max(np.abs(coef - tight)) * ppl:.1e}p", flush=True)


if __name__ == "__main__":
    main()
