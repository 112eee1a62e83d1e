"""Baseline rating methods walked over exactly the engine's walk (same steps, games, order).

Every baseline sees the matches in the walk's sorted order.  For each step it
first predicts every match of the step (A's chance per game) from what it has
learnt so far, then learns from the step's matches.  The scored matches are
those ``evaluate`` scores: every step after the first.

- ``elo``: incremental Elo on games, ``R_a += K (games_a - n E)`` after each
  match, ``E = 1 / (1 + 10 ** (-(R_a - R_b) / 400))``; K chosen from a grid on
  the same walk (in-sample, as the engine's tuned settings are).
- ``glicko2`` (PyPI ``glicko2``): one rating period per step, every game one outcome.
- ``trueskill`` (PyPI ``trueskill``): every game a 1-vs-1 result, A's and B's
  wins interleaved evenly; chance ``Phi((mu_a - mu_b) / sqrt(2 beta^2 + s_a^2 + s_b^2))``.
- ``whr`` (PyPI ``whr``, whole-history rating): games added with their day
  number, then a few Newton rounds over the whole history after each step;
  chance from each player's latest rating on the 400-point logistic scale.
"""
from __future__ import annotations

import math
import time
from dataclasses import dataclass
from typing import Callable

import numpy as np

from secretary.model.evaluate import Walk, game_scores

ELO_K = (1.0, 2.0, 4.0, 6.0, 8.0, 12.0, 16.0, 24.0, 32.0)
WHR_W2 = (1.0, 3.0, 14.0, 60.0)  # Elo^2 per day; the library's default (300) is far looser
WHR_ROUNDS = 5  # Newton rounds over the whole history after each step


@dataclass(frozen=True)
class Score:
    """One method's walk: scores per game over the scored matches."""

    method: str
    log_loss: float
    brier: float
    games: float
    matches: int
    seconds: float


def scored(walk: Walk) -> slice:
    """The matches ``evaluate`` predicts: everything after the first step."""
    return slice(int(walk.bounds[1]) if len(walk.bounds) > 1 else 0, len(walk.day))


def run(walk: Walk, method: str, predict: Callable, learn: Callable) -> Score:
    """Walk ``predict(a, b) -> p`` and ``learn(a, b, games_a, games_b, day)`` over the steps; score."""
    start = time.perf_counter()
    p = np.full(len(walk.day), np.nan)
    for k in range(len(walk.bounds) - 1):
        lo, hi = int(walk.bounds[k]), int(walk.bounds[k + 1])
        if hi == lo:
            continue
        a, b = walk.a[lo:hi], walk.b[lo:hi]
        if lo > 0:
            p[lo:hi] = predict(a, b)
        learn(a, b, walk.games_a[lo:hi], walk.games_b[lo:hi], walk.day[lo:hi])
    s = scored(walk)
    ga, gb = walk.games_a[s], walk.games_b[s]
    loss, brier = game_scores(p[s], ga, gb)
    total = float(ga.sum() + gb.sum())
    return Score(method, loss / total, brier / total, total, len(ga), time.perf_counter() - start)


def coin(walk: Walk) -> Score:
    """Every game a coin toss (log-loss ln 2): the floor any method must beat."""
    return run(walk, "coin toss", lambda a, b: np.full(len(a), 0.5), lambda *args: None)


def elo(walk: Walk, k_factor: float) -> Score:
    """Incremental Elo on games with one K."""
    rating = np.zeros(len(walk.names))

    def predict(a, b):
        return 1.0 / (1.0 + 10.0 ** (-(rating[a] - rating[b]) / 400.0))

    def learn(a, b, ga, gb, day):
        for i, j, x, y in zip(a.tolist(), b.tolist(), ga.tolist(), gb.tolist()):
            e = 1.0 / (1.0 + 10.0 ** (-(rating[i] - rating[j]) / 400.0))
            delta = k_factor * (x - (x + y) * e)
            rating[i] += delta
            rating[j] -= delta

    return run(walk, f"Elo on games, K={k_factor:g}", predict, learn)


def best_of(scores: list[Score]) -> Score:
    """The best-scoring run of a parameter grid, timed as the whole grid (tuned in-sample)."""
    best = min(scores, key=lambda sc: sc.log_loss)
    return Score(best.method + " (tuned)", best.log_loss, best.brier, best.games, best.matches,
                 sum(sc.seconds for sc in scores))


def best_elo(walk: Walk, grid=ELO_K) -> Score:
    """Elo with the K from ``grid`` that scores best on this walk."""
    return best_of([elo(walk, k) for k in grid])


def interleave(x: int, y: int) -> list[bool]:
    """``x`` wins for A and ``y`` for B spread evenly (True = A won the game)."""
    n = x + y
    return [(t + 1) * x // n > t * x // n for t in range(n)]


def glicko_2(walk: Walk) -> Score:
    """Glicko-2 from the ``glicko2`` package: one rating period per step."""
    import glicko2

    players = [glicko2.Player() for _ in walk.names]
    scale = 173.7178  # the package's points per Glicko-2 unit

    def g(phi):
        return 1.0 / np.sqrt(1.0 + 3.0 * phi**2 / math.pi**2)

    def predict(a, b):
        mu = np.array([(players[i].rating - 1500.0) / scale for i in range(len(players))])
        phi = np.array([players[i].rd / scale for i in range(len(players))])
        return 1.0 / (1.0 + np.exp(-g(np.hypot(phi[a], phi[b])) * (mu[a] - mu[b])))

    def learn(a, b, ga, gb, day):
        before = [(pl.rating, pl.rd) for pl in players]
        games: dict[int, tuple[list, list, list]] = {}
        for i, j, x, y in zip(a.tolist(), b.tolist(), ga.tolist(), gb.tolist()):
            for me, other, won, lost in ((i, j, x, y), (j, i, y, x)):
                opp_r, opp_rd, out = games.setdefault(me, ([], [], []))
                n = int(won + lost)
                opp_r += [before[other][0]] * n
                opp_rd += [before[other][1]] * n
                out += [1] * int(won) + [0] * int(lost)
        for k, pl in enumerate(players):
            if k in games:
                pl.update_player(*games[k])
            else:
                pl.did_not_compete()

    return run(walk, "Glicko-2 (glicko2)", predict, learn)


def true_skill(walk: Walk) -> Score:
    """TrueSkill from the ``trueskill`` package, no draws, every game rated in turn."""
    import trueskill

    env = trueskill.TrueSkill(draw_probability=0.0)
    players = [env.create_rating() for _ in walk.names]

    def predict(a, b):
        out = np.empty(len(a))
        for t, (i, j) in enumerate(zip(a.tolist(), b.tolist())):
            x, y = players[i], players[j]
            out[t] = env.cdf((x.mu - y.mu) / math.sqrt(2 * env.beta**2 + x.sigma**2 + y.sigma**2))
        return out

    def learn(a, b, ga, gb, day):
        for i, j, x, y in zip(a.tolist(), b.tolist(), ga.tolist(), gb.tolist()):
            for a_won in interleave(int(x), int(y)):
                if a_won:
                    players[i], players[j] = env.rate_1vs1(players[i], players[j])
                else:
                    players[j], players[i] = env.rate_1vs1(players[j], players[i])

    return run(walk, "TrueSkill (trueskill)", predict, learn)


def whole_history(walk: Walk, w2: float) -> Score:
    """Whole-history rating from the ``whr`` package with one ``w2`` (Elo^2 per day)."""
    import whr

    base = whr.Base(config={"w2": w2})
    names = [f"p{k}" for k in range(len(walk.names))]
    known: set[int] = set()

    def predict(a, b):
        latest = {k: base.ratings_for_player(names[k])[-1][1] for k in set(a.tolist()) | set(b.tolist()) if k in known}
        diff = np.array([latest.get(i, 0.0) - latest.get(j, 0.0) for i, j in zip(a.tolist(), b.tolist())])
        return 1.0 / (1.0 + 10.0 ** (-diff / 400.0))

    def learn(a, b, ga, gb, day):
        rows = []
        for i, j, x, y, d in zip(a.tolist(), b.tolist(), ga.tolist(), gb.tolist(), day.tolist()):
            rows += [[names[i], names[j], "B" if won else "W", int(d)] for won in interleave(int(x), int(y))]
            known.update((i, j))
        base.create_games(rows)
        base.iterate(WHR_ROUNDS)

    return run(walk, f"WHR (whr), w2={w2:g}", predict, learn)


def best_whr(walk: Walk, grid=WHR_W2) -> Score:
    """WHR with the ``w2`` from ``grid`` that scores best on this walk."""
    return best_of([whole_history(walk, w2) for w2 in grid])
