"""The once-a-season tuning check (`tune.check_tuning`) by league size: processor time, wall time, peak memory.

Run by hand (not part of the test command), one at a time on a quiet machine:

    OPENBLAS_NUM_THREADS=1 python tests/bench/bench_check.py [--sizes 1000x20000 2000x50000 ...] [--tennis]

Each size is a generated league (tests/bench/make_league.py: four divisions, 5 % of matches between
divisions, races to 5 over two years of weekly nights, every player on the Players sheet with their
division), checked in its own process as an update would check it: processor time and wall time of
``check_tuning`` itself (timed inside the child), peak resident memory of the child.  ``--tennis``
adds the real tennis set (tests/realdata.py, docs/real-data.md).  The load average is printed before
each run.  The limits ``tune.CHECK_MOST_PLAYERS`` / ``CHECK_MOST_RESULTS`` are chosen from this table.
"""
from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from bench_tune import measured  # noqa: E402

SIZES = ("1000x20000", "2000x20000", "2000x50000", "5000x50000", "5000x100000", "10000x50000", "10000x100000")

CHILD = """
import sys, time, datetime as dt
from secretary.threads import limit_native_threads
limit_native_threads()
from secretary.model.records import Player, Result
from secretary.model.tune import check_tuning
from secretary.model.records import Settings
if sys.argv[1] == "tennis":
    from tests import realdata
    results, players = list(realdata.tennis()), []
else:
    from tests.bench.make_league import REFERENCE_DATE, make_games, player_name
    n_players, n_results = (int(x) for x in sys.argv[1].split("x"))
    g = make_games(n_results, n_players)
    names = [player_name(i) for i in range(n_players)]
    div = [f"Division {d + 1}" for d in g.division.tolist()]
    results = [Result(REFERENCE_DATE - dt.timedelta(days=int(age)), names[a], names[b], int(x), int(y),
                      div[a] if div[a] == div[b] else "Open night")
               for a, b, x, y, age in zip(g.idx_a.tolist(), g.idx_b.tolist(), g.games_a.tolist(),
                                          g.games_b.tolist(), g.age_days.tolist())]
    players = [Player(name, division=d) for name, d in zip(names, div)]
people = len({n for r in results for n in (r.player_a, r.player_b)})
cpu, wall = time.process_time(), time.perf_counter()
found = check_tuning(results, Settings(), max(r.date for r in results), players=players)
print(f"{people} {len(results)} {time.process_time() - cpu:.1f} {time.perf_counter() - wall:.1f} {found.gain:.4f}")
"""


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--sizes", nargs="*", default=SIZES, help="players x results, e.g. 2000x50000")
    parser.add_argument("--tennis", action="store_true", help="also the real tennis set")
    parser.add_argument("--timeout", type=float, default=900, help="seconds before a run is stopped")
    args = parser.parse_args()
    print(f"tune.check_tuning at default settings; {os.cpu_count()} cores, "
          f"OPENBLAS_NUM_THREADS={os.environ.get('OPENBLAS_NUM_THREADS', 'unset')}")
    print(f"{'league':>14} | {'players':>8} {'results':>8} | {'check CPU s':>11} {'wall s':>7} {'peak MB':>8} | "
          f"{'gain':>7} | load average")
    for size in list(args.sizes) + (["tennis"] if args.tennis else []):
        load = " ".join(f"{x:.1f}" for x in os.getloadavg())
        got = measured([sys.executable, "-c", CHILD, size], args.timeout)
        if got is None:
            print(f"{size:>14} | stopped after {args.timeout:.0f} s | {load}", flush=True)
            continue
        people, rows, cpu, wall, gain = got[3].split()
        print(f"{size:>14} | {int(people):>8,} {int(rows):>8,} | {float(cpu):>11.1f} {float(wall):>7.1f} "
              f"{got[2]:>8.0f} | {float(gain):>7.4f} | {load}", flush=True)


if __name__ == "__main__":
    main()
