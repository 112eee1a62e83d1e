"""Real doubles: a rating per player against a rating per pair and TrueSkill with teams.

Run from the repository root: ``python tests/bench/bench_doubles.py``.  Data:
men's professional doubles 2018-2019 (JeffSackmann/tennis_atp, CC BY-NC-SA 4.0,
read from ``../shared/data``; sets as games, a match tie-break counts as a set).
Two ways of scoring, both log-loss per set (nats) and Brier per set:

- split: fitted on everything before 1 July 2019, every later set predicted;
- walk: week by week, each week predicted from the weeks before it
  (``secretary.model.evaluate``), every method on the same weeks.

Methods: the engine with a side's strength = the mean of its two players'
(the shipped defaults; point and predictive chances), the engine with one
rating per pair (each pair a player of its own: a new pair starts at the
centre), and TrueSkill (the ``trueskill`` package, teams of two, no draws,
every set rated in turn; chance ``Phi((mu_A - mu_B) / sqrt(4 beta^2 + sum
sigma^2))``).  A coin toss scores 0.6931.
"""
from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import datetime as dt  # noqa: E402
import math  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from dataclasses import replace  # noqa: E402
from pathlib import Path  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import numpy as np  # noqa: E402
from scipy.special import expit  # noqa: E402

from secretary.model.evaluate import evaluate, game_scores, prepare  # noqa: E402
from secretary.model.league import fit_league  # noqa: E402
from secretary.model.races import predictive_game_chance  # noqa: E402
from secretary.model.records import Result, Settings  # noqa: E402
from tests import realdata  # noqa: E402
from tests.bench.baselines import interleave  # noqa: E402

CUT = dt.date(2019, 7, 1)


def as_pairs(results) -> list[Result]:
    """Each side as one pseudo-player named by its two players (sorted): one rating per pair."""
    def pair(side):
        return " + ".join(sorted(side))
    return [replace(r, player_a=pair(r.side_a), player_b=pair(r.side_b), partner_a="", partner_b="") for r in results]


def per_set(p, results) -> tuple[float, float, float]:
    ga = np.array([r.games_a for r in results], float)
    gb = np.array([r.games_b for r in results], float)
    loss, brier = game_scores(np.asarray(p), ga, gb)
    total = ga.sum() + gb.sum()
    return loss / total, brier / total, total


def engine_split(train, test, settings):
    """Point and predictive chances for the test sets from one fit on the training sets."""
    fit = fit_league(train, settings)
    n = len(fit.names)
    x = np.zeros((len(test), n))
    unmet = np.zeros(len(test))
    for k, r in enumerate(test):
        for side, sign in ((r.side_a, 1.0), (r.side_b, -1.0)):
            for name in side:
                c = sign / len(side)
                try:
                    x[k, fit.index(name)] += c
                except KeyError:
                    unmet[k] += c * c * fit.prior_sd**2
    mean = x @ fit.r
    var = fit.contrast_variance(x) + unmet
    return expit(mean), predictive_game_chance(mean, var)


class TeamSkill:
    """TrueSkill with teams: every set in turn, the winner's side ranked first."""

    def __init__(self):
        import trueskill

        self.env = trueskill.TrueSkill(draw_probability=0.0)
        self.ratings = {}

    def get(self, name):
        return self.ratings.setdefault(name, self.env.create_rating())

    def chance(self, r: Result) -> float:
        a, b = [self.get(n) for n in r.side_a], [self.get(n) for n in r.side_b]
        spread = math.sqrt(len(a + b) * self.env.beta**2 + sum(x.sigma**2 for x in a + b))
        return self.env.cdf((sum(x.mu for x in a) - sum(x.mu for x in b)) / spread)

    def learn(self, r: Result) -> None:
        a, b = [self.get(n) for n in r.side_a], [self.get(n) for n in r.side_b]
        for a_won in interleave(r.games_a, r.games_b):
            a, b = self.env.rate([a, b], ranks=[0, 1] if a_won else [1, 0])
            a, b = list(a), list(b)
        self.ratings.update(zip(r.side_a + r.side_b, a + b))


def split(results, settings):
    train = [r for r in results if r.date < CUT]
    test = [r for r in results if r.date >= CUT]
    rows = []
    for label, data_train, data_test in (("engine, rating per player (side = mean of two)", train, test),
                                         ("engine, one rating per pair", as_pairs(train), as_pairs(test))):
        start = time.perf_counter()
        point, predictive = engine_split(data_train, data_test, settings)
        seconds = time.perf_counter() - start
        rows.append((label + ", predictive", *per_set(predictive, test), seconds))
        rows.append((label + ", point", *per_set(point, test), seconds))
    start = time.perf_counter()
    skill = TeamSkill()
    for r in sorted(train, key=lambda r: r.date):
        skill.learn(r)
    rows.append(("TrueSkill with teams (trueskill)", *per_set([skill.chance(r) for r in test], test),
                 time.perf_counter() - start))
    return rows, len(train), len(test)


def walk(results, settings):
    rows = []
    for label, data in (("engine, rating per player (side = mean of two)", results),
                        ("engine, one rating per pair", as_pairs(results))):
        start = time.perf_counter()
        ev = evaluate(data, settings)
        seconds = time.perf_counter() - start
        rows.append((label + ", predictive", ev.predictive.log_loss, ev.predictive.brier, ev.games, seconds))
        rows.append((label + ", point", ev.log_loss, ev.brier, ev.games, seconds))
    # TrueSkill on the same weeks: predict a week from the weeks before it, then learn it.
    steps = prepare(results)
    ordered = [results[k] for k in steps.order]
    start = time.perf_counter()
    skill, p = TeamSkill(), []
    for k in range(len(steps.bounds) - 1):
        week = ordered[int(steps.bounds[k]):int(steps.bounds[k + 1])]
        if k > 0 and int(steps.bounds[k]) > 0:
            p += [skill.chance(r) for r in week]
        for r in week:
            skill.learn(r)
    scored = ordered[int(steps.bounds[1]):]
    rows.append(("TrueSkill with teams (trueskill)", *per_set(p, scored), time.perf_counter() - start))
    return rows


def table(title, rows):
    print(f"\n{title}\n")
    print("| method | log-loss per set | Brier per set | sets predicted | seconds |")
    print("|---|---|---|---|---|")
    for method, loss, brier, sets, seconds in rows:
        print(f"| {method} | {loss:.4f} | {brier:.4f} | {sets:,.0f} | {seconds:.1f} |")


def main() -> None:
    results = list(realdata.tennis_doubles())
    players = {n for r in results for n in r.players}
    sides = {frozenset(s) for r in results for s in (r.side_a, r.side_b)}
    print(f"Men's doubles 2018-2019: {len(results):,} matches, {len(players)} players in {len(sides):,} pairs")
    settings = Settings()
    rows, n_train, n_test = split(results, settings)
    table(f"Split: fitted on the {n_train:,} matches before {CUT:%d %B %Y}, the {n_test:,} after predicted", rows)
    table("Walk forward, week by week", walk(results, settings))


if __name__ == "__main__":
    main()
