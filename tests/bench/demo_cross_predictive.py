"""Why the demo's cross-division games score worse predictive than point: calibration and timing of the gap.

Run from the repository root: ``python tests/bench/demo_cross_predictive.py [DIVISION_SPREAD]`` (default: the
shipped one).  Walks the invented demo league week by week at the shipped settings and, over the
cross-division games only, prints for point and predictive chances: the log-loss per game, the logit scale
``k`` that would minimise it (``k > 1``: the chances are too cautious), the mean chance given to the
favourite against the share of games the favourite won; then the per-game difference predictive minus point
with its paired standard error over matches, split into the first and the second half of those matches.
"""
from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import sys  # noqa: E402
from pathlib import Path  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import numpy as np  # noqa: E402
from scipy.optimize import minimize_scalar  # noqa: E402
from scipy.special import expit, logit  # noqa: E402

from secretary.model.evaluate import evaluate, prepare  # noqa: E402
from secretary.model.records import Settings  # noqa: E402
from tests.bench.demo_league import demo_league  # noqa: E402


def per_match(p, a, b):
    """Log-loss of each match's games (nats, summed over the match's games)."""
    return -(a * np.log(p) + b * np.log(1 - p))


def describe(name, p, a, b) -> str:
    games = a.sum() + b.sum()
    loss = lambda k: per_match(expit(k * logit(p)), a, b).sum() / games  # noqa: E731
    k = minimize_scalar(loss, bounds=(0.3, 3.0), method="bounded").x
    favourite = np.where(p >= 0.5, p, 1 - p)
    won = np.where(p >= 0.5, a, b) / (a + b)
    return (f"{name}: log-loss {loss(1.0):.4f} per game; best logit scale {k:.2f} ({loss(k):.4f}); favourite "
            f"given {np.average(favourite, weights=a + b):.3f} on average, won {np.average(won, weights=a + b):.3f}")


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    settings = Settings() if not argv else Settings(division_spread=float(argv[0]))
    results, players = demo_league()
    ev = evaluate(prepare(results, players=players), settings)
    cross = ev.cross_division & np.isfinite(ev.p)
    a = np.array([r.games_a for r in results], float)[cross]
    b = np.array([r.games_b for r in results], float)[cross]
    point, predictive = ev.p[cross], ev.p_predictive[cross]
    print(f"demo, Division spread {settings.division_spread:g}: {cross.sum()} cross-division matches, "
          f"{a.sum() + b.sum():.0f} games")
    print(describe("point", point, a, b))
    print(describe("predictive", predictive, a, b))
    diff, games = per_match(predictive, a, b) - per_match(point, a, b), a + b
    print(f"predictive - point: {diff.sum() / games.sum():+.4f} per game "
          f"(paired SE {np.sqrt(len(diff)) * diff.std() / games.sum():.4f})")
    dates = np.array([r.date for r in results])[cross]
    order = np.argsort(dates, kind="stable")
    for label, part in (("first half", order[:len(order) // 2]), ("second half", order[len(order) // 2:])):
        print(f"  {label} (from {dates[part[0]]}): {diff[part].sum() / games[part].sum():+.4f} per game")
    return 0


if __name__ == "__main__":
    sys.exit(main())
