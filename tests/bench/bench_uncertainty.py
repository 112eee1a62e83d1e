"""Accuracy and time of the ± for large leagues: the probe-corrected approximation against the exact value.

Run by hand (not part of the test command):

    python tests/bench/bench_uncertainty.py

Leagues as in tests/model/test_uncertainty.py (seeded): 3,500 players sparse
(7,000 matches), uneven (the same with five players of 2,000 matches each),
eight busy divisions (35,000 matches); 20,000 players sparse (60,000 matches,
40 divisions) and dense (1 M matches, 4 divisions).  The reference is the
exact diagonal of H^-1: a dense inverse at 3,500 players, conjugate-gradient
solves for 100 sampled players at 20,000.  Errors are of the ± (square
roots), relative; "mean" shows any bias (negative = too narrow).
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))

from secretary.model import uncertainty  # noqa: E402
from secretary.model.fit import conjugate_gradient  # noqa: E402
from secretary.threads import limit_native_threads  # noqa: E402
from tests.model.test_uncertainty import league, sd_errors  # noqa: E402

LEAGUES = [("3,500 sparse", 3_500, 7_000, 8, 0.02, 0), ("3,500 uneven", 3_500, 7_000, 8, 0.02, 5),
           ("3,500 busy divisions", 3_500, 35_000, 8, 0.02, 0), ("20,000 sparse", 20_000, 60_000, 40, 0.02, 0),
           ("20,000 dense", 20_000, 1_000_000, 4, 0.05, 0)]


def exact_at(H, n: int):
    if n <= 5_000:
        return np.arange(n), uncertainty.exact_variance(H)
    sample = np.random.default_rng(5).choice(n, 100, replace=False)
    inv_diag = 1.0 / H.diagonal()
    return sample, np.array([conjugate_gradient(lambda v: H @ v, np.eye(1, n, k).ravel(), inv_diag, 1e-10,
                                                200_000)[k] for k in sample])


def main():
    limit_native_threads()
    print(f"{'league':>22} | {'seconds':>8} {'median':>7} {'worst':>7} {'mean':>7} | "
          f"{'plain approximation: median':>27} {'worst':>7} {'mean':>7}")
    for label, n, matches, divisions, cross, busy in LEAGUES:
        H, division = league(n, matches, divisions, cross, busy=busy)
        start = time.perf_counter()
        var = uncertainty.inverse_diagonal(H, division)
        seconds = time.perf_counter() - start
        plain = uncertainty.approximate_variance(H, division)
        where, exact = exact_at(H, n)
        e, p = sd_errors(var[where], exact), sd_errors(plain[where], exact)
        print(f"{label:>22} | {seconds:>7.2f}s {np.median(abs(e)):>7.2%} {abs(e).max():>7.2%} {e.mean():>+7.2%} | "
              f"{np.median(abs(p)):>27.2%} {abs(p).max():>7.2%} {p.mean():>+7.2%}", flush=True)


if __name__ == "__main__":
    main()
