"""Choose the shipped defaults: the settings with the lowest mean walk-forward predictive log-loss over three sets.

Half-life, Skill spread and Division spread together: a coarse grid over the
first two at the starting Division spread, a scan of Division spreads (0 = one
pool among them) at the grid's best point, then a local search over all three
(``secretary.model.tune.tune``; tennis by its three tiers, badminton by its
event tiers, the demo by its divisions).

Run from the repository root: ``python tests/bench/choose_defaults.py``.  The
sets are the invented demo league and the two real sets read from
``../shared/data`` (badminton men's singles 2018-2021, a public dataset by
SanderP99, CC0 mirror; men's professional tennis 2019, JeffSackmann/tennis_atp,
CC BY-NC-SA 4.0), weighted equally (mean of the three per-game predictive
log-losses), searched by ``secretary.model.tune.tune`` over a list of walks.
Prints every setting tried with the three scores and the chosen one; the
result goes into ``secretary/model/records.py`` by hand.
"""
from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")  # small dense solves on a busy machine
os.environ.setdefault("OMP_NUM_THREADS", "1")

import argparse  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from secretary.model.evaluate import evaluate, prepare  # noqa: E402
from secretary.model.records import Settings  # noqa: E402
from secretary.model.tune import tune  # noqa: E402
from tests.bench.bench_predict import SETS  # noqa: E402

HALF_LIVES = (240.0, 480.0, 960.0, 0.0)
SPREADS = (80.0, 120.0, 170.0, 250.0)
DIVISION_SPREADS = (0.0, 50.0, 100.0, 200.0, 400.0)


def score_only(walks, chosen) -> int:
    """Each given setting's mean predictive log-loss per game, and every set's point / predictive scores."""
    for text in chosen:
        h, s, d = (float(x) for x in text.split(","))
        settings = Settings(half_life_days=h, skill_spread=s, division_spread=d)
        evs = [evaluate(w, settings) for w in walks]
        cells = [f"{name} {ev.log_loss:.4f} / {ev.predictive.log_loss:.4f} (cross-division {ev.cross.log_loss:.4f} / "
                 f"{ev.predictive_cross.log_loss:.4f})" for name, ev in zip(("demo", "badminton", "tennis"), evs)]
        print(f"half-life {h:g}, skill spread {s:g}, division spread {d:g}: mean predictive "
              f"{sum(ev.score for ev in evs) / len(evs):.5f}; point / predictive: " + "; ".join(cells), flush=True)
    return 0


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--refine", type=int, default=12, help="walks of local search after the grid")
    parser.add_argument("--score", nargs="+", metavar="H,S,D",
                        help="only score these settings (half-life, skill spread, division spread), set by set")
    args = parser.parse_args(argv)
    walks = [prepare(*SETS[name]()[:1], players=SETS[name]()[1]) for name in ("demo", "badminton", "tennis")]
    if args.score:
        return score_only(walks, args.score)
    start = time.perf_counter()

    def progress(done, total):
        print(f"  {done}/{total} settings scored, {time.perf_counter() - start:.0f} s", file=sys.stderr, flush=True)

    result = tune(walks, Settings(), half_lives=HALF_LIVES, spreads=SPREADS, division_spreads=DIVISION_SPREADS,
                  refine=args.refine, progress=progress)
    print("| half-life (days) | skill spread | division spread | mean predictive log-loss |")
    print("|---|---|---|---|")
    for h, s, t, score in sorted(result.tried, key=lambda t: t[-1]):
        print(f"| {h:g} | {s:g} | {t:g} | {score:.5f} |")
    chosen = result.settings
    print(f"chosen: half-life {chosen.half_life_days:g} days, skill spread {chosen.skill_spread:g} points, "
          f"division spread {chosen.division_spread:g} points "
          f"(mean {result.new_score:.5f}; the starting settings scored {result.old_score:.5f}); "
          f"{time.perf_counter() - start:.0f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
