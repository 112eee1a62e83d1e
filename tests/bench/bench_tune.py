"""`secretary tune` on a real season: processor time, wall time and peak memory, beside the per-step LU path.

Run by hand (not part of the test command; needs the tennis set of docs/real-data.md):

    python tests/bench/bench_tune.py [--matches 13700] [--conditions idle busy] [--default-threads]

The season is a stand-in: the first --matches matches (by date) of
professional men's tennis 2019 (tests/realdata.py), written as a league
workbook.  Each run is its own process, timed from outside (processor time =
user + system of the child, peak = its largest resident set):

  secretary tune     the command line as shipped
  per-step LU path   the same tuning with the walk's previous numerical path
                     (dense Newton steps up to 1,500 players, a sparse LU of
                     every step's Hessian above 1,000 unknowns for the
                     predictive variances): the reference the target was set
                     against (106 s of processor time in the last session)
  check, demo        the once-a-season check an update runs (tune.check_tuning),
  check, season      on the demo league and on the season
  default threads    with --default-threads: the previous path again with the
                     maths libraries' default thread pools (what every entry
                     point did before the thread limit); stopped after
                     --reference-timeout seconds

Both paths must choose the same settings with the same score (printed).
"""
from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parents[1]
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(REPO))

import busy  # noqa: E402

from tests import realdata  # noqa: E402

PREVIOUS_PATH = """
import sys
from secretary.threads import limit_native_threads
if sys.argv[2] == "limit":
    limit_native_threads()
from secretary.model import fit, uncertainty, walkforward
walkforward.DENSE_LIMIT, walkforward.DENSE_CONTRASTS = fit.DENSE_LIMIT, uncertainty.DENSE_CONTRASTS
from secretary.pipeline import tune_workbook
t = tune_workbook(sys.argv[1])
s = t.settings
print(f"half-life {s.half_life_days:g} days, skill spread {s.skill_spread:g} points, "
      f"division spread {s.division_spread:g} points: log-loss {t.new_score:.4f} per game (predictive chances).")
"""


CHECK = """
import sys, time
from secretary.threads import limit_native_threads
limit_native_threads()
from secretary.model.tune import check_tuning
from secretary.pipeline import _history_book, starting_levels
book = _history_book(sys.argv[1], "the check")
start = time.process_time()
found = check_tuning(book.results, book.settings, max(r.date for r in book.results), players=book.players,
                     starting_levels=starting_levels(book))
print(f"{len(book.results):,} results: the check itself {time.process_time() - start:.1f} s of processor time, "
      f"would gain {found.gain:.4f} per game")
"""


def write_season(path: Path, matches: int) -> int:
    results = sorted(realdata.tennis(), key=lambda r: r.date)[:matches]
    realdata.write_results_workbook(results, path)
    return len({r.player_a for r in results} | {r.player_b for r in results})


def measured(command: list[str], timeout: float, default_threads: bool = False):
    """(processor seconds, wall seconds, peak MB, last line printed) of one process; None when it ran out of time."""
    env = dict(os.environ, PYTHONPATH=str(REPO))
    if default_threads:
        for name in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
            env.pop(name, None)  # the reference must see the libraries' defaults
    start = time.perf_counter()
    with tempfile.TemporaryFile("w+") as out:
        child = subprocess.Popen(command, env=env, stdout=out, stderr=subprocess.DEVNULL)
        while True:
            pid, status, usage = os.wait4(child.pid, os.WNOHANG)
            if pid:
                break
            if time.perf_counter() - start > timeout:
                child.kill()
                child.wait()
                return None
            time.sleep(0.05)
        wall = time.perf_counter() - start
        child.returncode = os.waitstatus_to_exitcode(status)
        if child.returncode:
            raise RuntimeError(f"{command[:3]} failed with exit code {child.returncode}")
        out.seek(0)
        lines = [x.strip() for x in out.read().splitlines() if x.strip()]
    chosen = next((x.split(":", 1)[1].strip() for x in lines if x.startswith("Best found")), lines[-1] if lines else "")
    return usage.ru_utime + usage.ru_stime, wall, usage.ru_maxrss / 1024, chosen


def main():
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--matches", type=int, default=13_700)
    parser.add_argument("--default-threads", action="store_true", help="also run the default-thread-pool reference")
    parser.add_argument("--reference-timeout", type=float, default=900)
    busy.add_argument(parser)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "season.xlsx"
        players = write_season(path, args.matches)
        print(f"tennis 2019, first {args.matches:,} matches, {players:,} players; {os.cpu_count()} cores")
        print(f"{'condition':>14} {'load':>5} | {'run':<17} {'CPU s':>7} {'wall s':>7} {'peak MB':>8} | chosen")
        runs = [("secretary tune", [sys.executable, "-m", "secretary.cli", "tune", str(path)], 3600, False),
                ("per-step LU path", [sys.executable, "-c", PREVIOUS_PATH, str(path), "limit"], 3600, False)]
        demo = REPO / "secretary" / "data" / "demo-league.xlsx"
        runs += [("check, demo", [sys.executable, "-c", CHECK, str(demo)], 600, False),
                 ("check, season", [sys.executable, "-c", CHECK, str(path)], 600, False)]
        if args.default_threads:
            runs.append(("default threads", [sys.executable, "-c", PREVIOUS_PATH, str(path), "default"],
                         args.reference_timeout, True))
        for condition in busy.conditions(args.conditions):
            cpu, chosen = {}, {}
            for label, command, timeout, default in runs:
                load = os.getloadavg()[0]
                got = measured(command, timeout, default)
                if got is None:
                    print(f"{condition:>14} {load:>5.1f} | {label:<17} {'>' + str(int(timeout)):>7} s", flush=True)
                    continue
                cpu[label] = got[0]
                chosen[label] = got[3]
                print(f"{condition:>14} {load:>5.1f} | {label:<17} {got[0]:>7.1f} {got[1]:>7.1f} {got[2]:>8.0f} | "
                      f"{got[3]}", flush=True)
            _compare(condition, cpu, chosen)


def _compare(condition: str, cpu: dict, chosen: dict) -> None:
    """The per-step LU path's processor time over secretary tune's, and whether both chose the same."""
    if "per-step LU path" not in cpu or "secretary tune" not in cpu:
        return
    same = chosen["per-step LU path"] == chosen["secretary tune"]
    print(f"{condition:>14} {'':>5} | processor time: the per-step LU path takes "
          f"{cpu['per-step LU path'] / cpu['secretary tune']:.1f}x secretary tune's; "
          f"{'the same settings chosen' if same else 'DIFFERENT SETTINGS CHOSEN'}", flush=True)

if __name__ == "__main__":
    main()
