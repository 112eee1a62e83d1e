"""How well each method predicts next week's games: the engine against baselines.

Run from the repository root: ``python tests/bench/bench_predict.py`` (options:
``--sets demo,badminton,tennis``).  Prints one Markdown table: data set x
method -> log-loss per game and per race, for point and predictive chances
(baselines: per game, point only), the predictive Brier score per game, a
calibration summary, games and races predicted, seconds; then the predictive
calibration tables of the shipped defaults.  All
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
    "tennis": lambda: (realdata.tennis(by_file=True), ()),  # tiers = the three files
}


def calibration_gap(bands, share: float = 0.01) -> float:
    """Largest |predicted - observed| over the bands holding at least ``share`` of the predictions."""
    total = sum(b.games for b in bands)
    return max((abs(b.predicted - b.observed) for b in bands if b.games >= share * total), default=float("nan"))


def engine_row(walk, settings: Settings, label: str) -> dict:
    start = time.perf_counter()
    ev = evaluate(walk, settings)
    cross = dict(cross=ev.cross.log_loss, predictive_cross=ev.predictive_cross.log_loss) if ev.cross.count else {}
    return dict(method=f"{label}: half-life {settings.half_life_days:g} d, spread {settings.skill_spread:g}, "
                       f"division spread {settings.division_spread:g}", **cross,
                point=ev.log_loss, predictive=ev.predictive.log_loss, race=ev.race.log_loss,
                predictive_race=ev.predictive_race.log_loss, brier=ev.predictive.brier,
                gap=calibration_gap(ev.predictive.calibration), race_gap=calibration_gap(ev.predictive_race.calibration),
                games=ev.games, matches=ev.matches, races=ev.predictive_race.count,
                seconds=time.perf_counter() - start, evaluation=ev)


def baseline_row(score: baselines.Score) -> dict:
    return dict(method=score.method, point=score.log_loss, brier=score.brier, games=score.games,
                matches=score.matches, seconds=score.seconds)


QUICK_TUNE = dict(half_lives=(240.0, 480.0, 960.0), spreads=(120.0, 175.0, 250.0),
                  division_spreads=(0.0, 100.0, 300.0), refine=6)  # --quick-tune: a 3 x 3 grid, 6 walks of search


def bench(name: str, demo_settings: Settings | None, with_baselines: bool = True,
          engine: bool = True, quick: bool = False) -> tuple[list[dict], Settings, float]:
    """Every method on one set; also the settings tuned on it and the tuning time."""
    results, players = SETS[name]()
    walk = prepare(results, players=players)
    if not engine:
        return [baseline_row(s) for s in (baselines.coin(walk), baselines.best_elo(walk), baselines.glicko_2(walk),
                                          baselines.true_skill(walk), baselines.best_whr(walk))], Settings(), 0.0
    start = time.perf_counter()
    tuned = tune(walk, **(QUICK_TUNE if quick else {})).settings
    tune_seconds = time.perf_counter() - start
    rows = [baseline_row(baselines.coin(walk)), engine_row(walk, Settings(), "engine, shipped defaults"),
            engine_row(walk, Settings(division_spread=0.0), "engine, shipped defaults but one pool")]
    if demo_settings is not None and name != "demo":
        rows.append(engine_row(walk, demo_settings, "engine, demo-tuned"))
    rows.append(engine_row(walk, tuned, f"engine, tuned here ({tune_seconds:.1f} s)"))
    if with_baselines:
        rows += [baseline_row(s) for s in (baselines.best_elo(walk), baselines.glicko_2(walk),
                                           baselines.true_skill(walk), baselines.best_whr(walk))]
    return rows, tuned, tune_seconds


def _cell(row: dict, key: str, fmt: str) -> str:
    return format(row[key], fmt) if key in row else "-"


HEADER = ("| data set | method | log-loss per game: point | predictive | per race: point | predictive "
          "| Brier per game | cross-division log-loss per game: point | predictive "
          "| calibration gap: per game | per race | games | races | seconds |")


def table_row(name: str, r: dict) -> str:
    cells = [_cell(r, k, ".4f") for k in ("point", "predictive", "race", "predictive_race", "brier", "cross",
                                          "predictive_cross")]
    cells += [_cell(r, k, ".3f") for k in ("gap", "race_gap")]
    races = _cell(r, "races", ",.0f")
    return f"| {name} | {r['method']} | {' | '.join(cells)} | {r['games']:,.0f} | {races} | {r['seconds']:.2f} |"


def calibration_lines(name: str, ev) -> list[str]:
    """The predictive calibration of one set, per game and per race, band by band."""
    lines = [f"{name}, shipped defaults: predictive calibration (band: predicted / happened, count)"]
    for what, bands in (("per game", ev.predictive.calibration), ("per race", ev.predictive_race.calibration)):
        cells = [f"{b.low:.0%}-{b.high:.0%}: {b.predicted:.3f} / {b.observed:.3f} ({b.games:,.0f})"
                 for b in bands if b.games]
        lines.append(f"  {what}: " + "; ".join(cells))
    return lines


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sets", default="demo,badminton,tennis", help="comma-separated: demo, badminton, tennis")
    parser.add_argument("--no-baselines", action="store_true", help="the engine's rows only")
    parser.add_argument("--baselines-only", action="store_true", help="the baselines' rows only")
    parser.add_argument("--quick-tune", action="store_true", help="tune each set on a small grid (QUICK_TUNE)")
    args = parser.parse_args(argv)
    print(HEADER)
    print("|" + "---|" * (HEADER.count("|") - 1))
    demo_settings, notes = None, []
    for name in args.sets.split(","):
        try:
            rows, tuned, _ = bench(name, demo_settings, not args.no_baselines, not args.baselines_only, args.quick_tune)
        except pytest.skip.Exception as why:
            print(f"| {name} | skipped: {why} |" + " |" * (HEADER.count("|") - 3))
            continue
        if name == "demo":
            demo_settings = tuned
        for r in rows:
            print(table_row(name, r), flush=True)
        if not args.baselines_only:
            notes += calibration_lines(name, rows[1]["evaluation"])
    print("\ncalibration gap = largest |predicted - happened| over the bands holding at least 1 % of the "
          "predictions (predictive chances)")
    print("\n".join(notes))
    return 0

if __name__ == "__main__":
    sys.exit(main())
