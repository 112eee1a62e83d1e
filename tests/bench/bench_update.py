"""Whole-update benchmark: `secretary update` against a bare openpyxl load + save of the same file.

Run by hand (not part of the test command):

    python tests/bench/bench_update.py [--sizes 2000 20000 100000] [--repeat 3] [--conditions idle busy]
    python tests/bench/bench_update.py --sizes 1000000 --repeat 1 --no-bare   # a federation's archive

For each generated league workbook (tests/bench/make_league.py) it times, as
the median of --repeat runs on fresh copies, each in its own process (so that
its peak memory, the maximum resident set size, is its own):

  bare       openpyxl.load_workbook + save of the same file (the floor any
             tool that edits the workbook pays)
  update     the whole weekly update on a workbook that was updated before
             (read + check, fit, breakdown, watch list, write, safe save, PDF),
             with the native thread limit the command line sets; forced, as
             `secretary update --force` (with nothing new an update writes nothing)
  stages     where the update's time goes (from its progress callback)
  cpu        the update's own processor time (time.process_time in its process)

once with the machine as it is ("idle") and once with one core kept busy by
another program (tests/bench/busy.py); ratios are from the same condition.
"""
from __future__ import annotations

import argparse
import json
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parents[1]
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(REPO))

import busy  # noqa: E402
from make_league import make_league_workbook  # noqa: E402

STAGES = ["Reading the workbook", "Rating every player", "Working out why ratings changed",
          "Looking for divisions that need linking", "Writing the sheets", "Saving the workbook safely"]
SHORT = ["read", "fit", "why", "watch", "write", "save+pdf"]

CHILD = r"""
import json, sys, time
from pathlib import Path
if sys.argv[1] == "bare":
    import openpyxl
    start = time.perf_counter()
    openpyxl.load_workbook(sys.argv[2]).save(sys.argv[3])
    print(json.dumps({"seconds": time.perf_counter() - start}))
else:
    from secretary.threads import limit_native_threads
    limit_native_threads()  # as the command line does
    from secretary.pipeline import run_update
    marks = []
    start, cpu = time.perf_counter(), time.process_time()
    # force: the copy was updated before with these very rows, and an update with nothing new writes nothing
    run_update(Path(sys.argv[2]), force=True,
               progress=lambda stage, fraction: marks.append((stage, time.perf_counter())))
    end = time.perf_counter()
    stages = {a[0]: b[1] - a[1] for a, b in zip(marks, marks[1:] + [("end", end)])}
    print(json.dumps({"seconds": end - start, "cpu": time.process_time() - cpu, "stages": stages}))
"""


def in_child(*args: str) -> dict:
    """Run CHILD with ``args``; its JSON answer plus its own peak memory in MB."""
    env = dict(os.environ, PYTHONPATH=str(REPO))
    proc = subprocess.Popen([sys.executable, "-c", CHILD, *args], stdout=subprocess.PIPE, env=env)
    out = proc.stdout.read()
    _, status, usage = os.wait4(proc.pid, 0)
    proc.returncode = os.waitstatus_to_exitcode(status)
    if proc.returncode:
        raise RuntimeError(f"benchmark child failed: {args}")
    answer = json.loads(out)
    answer["peak_mb"] = usage.ru_maxrss / 1024
    return answer


def measure(source: Path, folder: Path, repeat: int, bare: bool = True) -> tuple[list, list]:
    bare = [in_child("bare", str(source), str(folder / "bare.xlsx")) for _ in range(repeat if bare else 0)]
    runs = []
    for _ in range(repeat):
        work = folder / "league.xlsx"
        shutil.copyfile(source, work)
        runs.append(in_child("update", str(work)))
    return bare, runs


def main():
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--sizes", type=int, nargs="+", default=[2_000, 20_000, 100_000])
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--no-bare", action="store_true",
                        help="leave out the bare load+save (at a million rows it takes many minutes and GB)")
    busy.add_argument(parser)
    args = parser.parse_args()
    print("ratio = update / bare load+save of the same file (issue #14's target: at most 0.5x); "
          "cpu = the update's processor seconds (on a shared machine, less than its wall-clock time)")
    print(f"{'condition':>14} {'rows':>9} {'players':>8} | {'bare load+save':>14} {'update':>8} {'ratio':>6} "
          f"{'cpu':>7} {'peak MB':>8} | " + " ".join(f"{s:>8}" for s in SHORT) + " | load average")
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        sources = {}
        for rows in args.sizes:
            players = max(60, rows // 40)
            source = tmp / f"league-{rows}.xlsx"
            make_league_workbook(source, rows, players, seed=1)
            in_child("update", str(source))  # updated once, so every update has a previous one to explain
            sources[rows] = (source, players)
        for condition in busy.conditions(args.conditions):
            for rows, (source, players) in sources.items():
                bare, runs = measure(source, tmp, args.repeat, bare=not args.no_bare)
                floor = statistics.median(b["seconds"] for b in bare) if bare else float("nan")
                update = statistics.median(r["seconds"] for r in runs)
                peak = max(r["peak_mb"] for r in runs)
                cpu = statistics.median(r["cpu"] for r in runs)
                stages = [statistics.median(r["stages"].get(name, 0.0) for r in runs) for name in STAGES]
                ratio = f"{update / floor:>5.2f}x" if bare else f"{'-':>6}"
                floor_text = f"{floor:>13.2f}s" if bare else f"{'-':>14}"
                print(f"{condition:>14} {rows:>9,} {players:>8,} | {floor_text} {update:>7.2f}s {ratio} "
                      f"{cpu:>6.2f}s {peak:>8.0f} | " + " ".join(f"{s:>7.2f}s" for s in stages)
                      + " | " + " ".join(f"{x:.1f}" for x in os.getloadavg()), flush=True)


if __name__ == "__main__":
    main()
