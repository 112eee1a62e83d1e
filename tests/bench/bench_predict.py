"""How well each method predicts next week's games: the engine against baselines.

Run from the repository root: ``python tests/bench/bench_predict.py`` (options:
``--sets demo,badminton,tennis``).  Prints one Markdown table: data set x
method -> log-loss and Brier score per game, games predicted, seconds.  All
methods walk the same steps and predict the same games in the same order
(see ``tests/bench/baselines.py``).  The engine is scored with the shipped
defaults, with the settings tuned on the demo league, and with settings tuned
on the set itself (in-sample, like Elo's K).

Real data: badminton men's singles 2018-2021 (a public dataset by SanderP99,
CC0 mirror) and men's professional tennis 2019 (JeffSackmann/tennis_atp,
CC BY-NC-SA 4.0), read from ``../shared/data``; sets that are missing are skipped.
"""
from __future__ import annotations

import os

# Small dense solves on a busy machine run far slower with BLAS threads spinning.
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import argparse  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import pytest  # noqa: E402

from secretary.model.evaluate import evaluate, prepare  # noqa: E402
from secretary.model.records import Settings  # noqa: E402
from secretary.model.tune import tune  # noqa: E402
from tests import realdata  # noqa: E402
from tests.bench import baselines  # noqa: E402
from tests.bench.demo_league import demo_league  # noqa: E402

SETS = {
    "demo": lambda: demo_league(),
    "badminton": lambda: (realdata.badminton(), ()),
    "tennis": lambda: (realdata.tennis(), ()),
}


def engine_row(walk, settings: Settings, label: str) -> baselines.Score:
    start = time.perf_counter()
    ev = evaluate(walk, settings)
    return baselines.Score(f"{label}: half-life {settings.half_life_days:g} d, spread {settings.skill_spread:g}",
                           ev.log_loss, ev.brier, ev.games, ev.matches, time.perf_counter() - start)


def bench(name: str, demo_settings: Settings | None) -> tuple[list[baselines.Score], Settings, float]:
    """Every method on one set; also the settings tuned on it and the tuning time."""
    results, players = SETS[name]()
    walk = prepare(results, players=players)
    start = time.perf_counter()
    tuned = tune(walk).settings
    tune_seconds = time.perf_counter() - start
    rows = [baselines.coin(walk), engine_row(walk, Settings(), "engine, shipped defaults")]
    if demo_settings is not None and name != "demo":
        rows.append(engine_row(walk, demo_settings, "engine, demo-tuned"))
    rows.append(engine_row(walk, tuned, f"engine, tuned here ({tune_seconds:.1f} s)"))
    rows += [baselines.best_elo(walk), baselines.glicko_2(walk), baselines.true_skill(walk),
             baselines.best_whr(walk)]
    return rows, tuned, tune_seconds


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sets", default="demo,badminton,tennis", help="comma-separated: demo, badminton, tennis")
    args = parser.parse_args(argv)
    print("| data set | method | log-loss | Brier | games | matches | seconds |")
    print("|---|---|---|---|---|---|---|")
    demo_settings = None
    for name in args.sets.split(","):
        try:
            rows, tuned, _ = bench(name, demo_settings)
        except pytest.skip.Exception as why:
            print(f"| {name} | skipped: {why} | | | | | |")
            continue
        if name == "demo":
            demo_settings = tuned
        for r in rows:
            print(f"| {name} | {r.method} | {r.log_loss:.4f} | {r.brier:.4f} | {r.games:,.0f} | {r.matches:,} "
                  f"| {r.seconds:.2f} |", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
