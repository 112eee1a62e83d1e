"""Time the whole watch list on the real tennis set (about 3,000 players, 27,000 matches).

Run from the repository root: ``python tests/bench/bench_watch.py``.  Prints the
fit time (without and with the ± of every player) beside the watch list's time;
the target for the watch list is 2 seconds.
"""
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))  # run as a script from anywhere

from secretary.model.league import fit_league  # noqa: E402
from secretary.model.linkage import watch_list  # noqa: E402
from tests import realdata  # noqa: E402

TARGET_SECONDS = 2.0
REPEATS = 3


def timed(fn):
    times, out = [], None
    for _ in range(REPEATS):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return out, statistics.median(times)


def main() -> int:
    if not (realdata.TENNIS / realdata.TENNIS_FILES[0]).exists():
        print(f"tennis data not found under {realdata.TENNIS}; nothing to time")
        return 0
    t0 = time.perf_counter()
    results = realdata.tennis()
    load = time.perf_counter() - t0
    fit, fit_time = timed(lambda: fit_league(results, with_uncertainty=False))
    _, full_fit_time = timed(lambda: fit_league(results))
    wl, watch_time = timed(lambda: watch_list(fit, results))
    # Every division counted as weakly linked: the linking-match search runs in full too.
    strict = fit_league(results, fit.settings.replace(weakly_linked_below=1.0), with_uncertainty=False)
    wl_all, strict_time = timed(lambda: watch_list(strict, results))
    print(f"tennis: {len(fit.names)} players, {len(results)} matches, {len(fit.pairs.i)} pairs (load {load:.2f} s)")
    print(f"fit (ratings only)     {fit_time:6.2f} s")
    print(f"fit (ratings and ±)    {full_fit_time:6.2f} s")
    print(f"watch list             {watch_time:6.2f} s   target <= {TARGET_SECONDS:.1f} s "
          f"({'met' if watch_time <= TARGET_SECONDS else 'MISSED'})")
    print(f"  {len(wl.divisions)} divisions, {len(wl.held)} held players, {len(wl.suggestions)} suggestions, "
          f"{len(wl.pools)} separate pools; median of {REPEATS} runs")
    print(f"watch list, all flagged {strict_time:5.2f} s   ({len(wl_all.suggestions)} suggestions searched)")
    return 0 if max(watch_time, strict_time) <= TARGET_SECONDS else 1


if __name__ == "__main__":
    raise SystemExit(main())
