"""`secretary tune` on a real season, with the thread limit the command line sets and without it.

Run by hand (not part of the test command; needs the tennis set of docs/real-data.md):

    python tests/bench/bench_tune.py [--matches 13700] [--conditions idle busy] [--reference-timeout 900]

The season is a stand-in: the first --matches matches (by date) of
professional men's tennis 2019 (tests/realdata.py), written as a league
workbook.  Each run is its own process:

  secretary tune     the command line, one native thread per maths library
  default threads    the same tuning called from Python with the maths
                     libraries' default thread pools (the reference: what
                     every entry point did before the limit); stopped after
                     --reference-timeout seconds
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

DEFAULT_THREADS = "import sys; from secretary.pipeline import tune_workbook; print(tune_workbook(sys.argv[1]))"


def write_season(path: Path, matches: int) -> int:
    results = sorted(realdata.tennis(), key=lambda r: r.date)[:matches]
    realdata.write_results_workbook(results, path)
    return len({r.player_a for r in results} | {r.player_b for r in results})


def timed(command: list[str], timeout: float) -> float | None:
    env = dict(os.environ, PYTHONPATH=str(REPO))
    for name in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
        env.pop(name, None)  # the reference must see the libraries' defaults
    start = time.perf_counter()
    try:
        subprocess.run(command, env=env, check=True, timeout=timeout, capture_output=True)
    except subprocess.TimeoutExpired:
        return None
    return time.perf_counter() - start


def main():
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--matches", type=int, default=13_700)
    parser.add_argument("--reference-timeout", type=float, default=900)
    busy.add_argument(parser)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "season.xlsx"
        players = write_season(path, args.matches)
        print(f"tennis 2019, first {args.matches:,} matches, {players:,} players")
        print(f"{'condition':>14} | {'secretary tune':>14} {'default threads':>16} {'ratio':>6}")
        for condition in busy.conditions(args.conditions):
            ours = timed([sys.executable, "-m", "secretary.cli", "tune", str(path)], 3600)
            theirs = timed([sys.executable, "-c", DEFAULT_THREADS, str(path)], args.reference_timeout)
            shown = f"{theirs:>15.1f}s {theirs / ours:>5.1f}x" if theirs else f"{'>' + str(int(args.reference_timeout)):>15}s {'-':>6}"
            print(f"{condition:>14} | {ours:>13.1f}s {shown}", flush=True)


if __name__ == "__main__":
    main()
