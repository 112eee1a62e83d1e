"""Whole-update benchmark: `secretary update` against a bare openpyxl load + save of the same file.

Run by hand (not part of the test command):

    python tests/bench/bench_update.py [--sizes 2000 20000 100000] [--repeat 3]

For each generated league workbook (tests/bench/make_league.py) it times, as
the median of --repeat runs on fresh copies:

  bare       openpyxl.load_workbook + save of the same file (the floor any
             tool that edits the workbook pays)
  update     the whole weekly update on a workbook that was updated before
             (read + check, fit, breakdown, watch list, write, safe save, PDF)
  stages     where the update's time goes (from its progress callback)
"""
from __future__ import annotations

import argparse
import shutil
import statistics
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parents[1]))

import openpyxl  # noqa: E402
from make_league import make_league_workbook  # noqa: E402

from secretary.pipeline import run_update  # noqa: E402


class StageClock:
    """Records how long each stage of the update took, from the progress callback."""

    def __init__(self):
        self.marks = []

    def __call__(self, stage, fraction):
        self.marks.append((stage, time.perf_counter()))

    def durations(self):
        return {a[0]: b[1] - a[1] for a, b in zip(self.marks, self.marks[1:])}


def bare(path: Path, out: Path) -> float:
    start = time.perf_counter()
    wb = openpyxl.load_workbook(path)
    wb.save(out)
    return time.perf_counter() - start


def one_update(source: Path, folder: Path):
    work = folder / "league.xlsx"
    shutil.copyfile(source, work)
    clock = StageClock()
    start = time.perf_counter()
    run_update(work, progress=clock)
    return time.perf_counter() - start, clock.durations()


def main():
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--sizes", type=int, nargs="+", default=[2_000, 20_000, 100_000])
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    stage_names = ["Reading the workbook", "Rating every player", "Working out why ratings changed",
                   "Looking for divisions that need linking", "Writing the sheets", "Saving the workbook safely"]
    short = ["read", "fit", "why", "watch", "write", "save+pdf"]
    print(f"{'rows':>8} {'players':>8} | {'bare load+save':>14} {'update':>8} {'ratio':>6} | "
          + " ".join(f"{s:>8}" for s in short))
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        for rows in args.sizes:
            players = max(60, rows // 40)
            source = tmp / f"league-{rows}.xlsx"
            make_league_workbook(source, rows, players, seed=1)
            # A workbook that has been updated once, so every update has a previous one to explain.
            run_update(source)
            bare_times = [bare(source, tmp / "bare.xlsx") for _ in range(args.repeat)]
            runs = [one_update(source, tmp) for _ in range(args.repeat)]
            update = statistics.median(t for t, _ in runs)
            stages = {name: statistics.median(d.get(name, 0.0) for _, d in runs) for name in stage_names}
            floor = statistics.median(bare_times)
            print(f"{rows:>8,} {players:>8,} | {floor:>13.2f}s {update:>7.2f}s {update / floor:>5.2f}x | "
                  + " ".join(f"{stages[n]:>7.2f}s" for n in stage_names), flush=True)


if __name__ == "__main__":
    main()
