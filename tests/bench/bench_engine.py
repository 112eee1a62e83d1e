"""Engine benchmark: this engine against scikit-learn and choix on the same seeded leagues.

Run by hand (not part of the test command):

    python tests/bench/bench_engine.py            # 5 k / 200, 50 k / 2 k, 1 M / 20 k
    python tests/bench/bench_engine.py --large    # adds 10 M / 100 k
    python tests/bench/bench_engine.py --conditions idle   # only the machine as it is (default: idle, then busy)

Every method solves the same problem on one native thread (no age decay, prior SD 1 log-odds,
prior mean 0) and runs in its own child process, so that its peak memory
(maximum resident set size) is its own.  Times are the median of --repeat
runs.  Each size is measured idle and then with one core kept busy by another
program (tests/bench/busy.py), every method under the same condition.  Columns:

  raw->ratings±   this engine from raw match arrays: aggregate, fit, ± for everyone, the ±
                  as shipped (``strength_variance``, the call the league fit makes: exact up to
                  1,500 players, above that the two-level approximation corrected by exact probes)
  solve           this engine's MAP solve alone, from the aggregated pairs
  sklearn         scikit-learn LogisticRegression (the faster of lbfgs / newton-cg)
                  on the same aggregated pairs (rows e_i - e_j, C = s^2)
  choix           choix.opt_pairwise on the same games (skipped above 50 k matches;
                  one run instead of --repeat above 5 k, where one run takes minutes)
  floor           one pass over the raw games: the log-likelihood of every match once
"""
from __future__ import annotations

import argparse
import json
import resource
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np
from scipy.special import log_expit

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parents[1]))

import busy  # noqa: E402
from busy import timed  # noqa: E402
from make_league import make_games  # noqa: E402

from secretary.model.fit import fit_map  # noqa: E402
from secretary.model.pairs import aggregate  # noqa: E402
from secretary.model.uncertainty import strength_variance  # noqa: E402

SIZES = [(5_000, 200), (50_000, 2_000), (1_000_000, 20_000)]
LARGE = (10_000_000, 100_000)
PRIOR_SD = 1.0
POINTS = 400 / np.log(10)


def run_ours_raw(g, repeat):
    n = len(g.strengths)

    def go():
        pairs = aggregate(g.idx_a, g.idx_b, g.games_a, g.games_b, n)
        fit = fit_map(pairs, np.zeros(n), PRIOR_SD)
        return fit.r, strength_variance(pairs, fit.r, PRIOR_SD, g.division)

    return timed(go, repeat)[0], go()[0]


def run_ours_solve(g, repeat):
    n = len(g.strengths)
    pairs = aggregate(g.idx_a, g.idx_b, g.games_a, g.games_b, n)
    t, fit = timed(lambda: fit_map(pairs, np.zeros(n), PRIOR_SD), repeat)
    return t, fit.r


def sklearn_problem(g, weights=None):
    """Rows ``e_i - e_j`` per pair and side, labels, and the side's (weighted) games as sample weights."""
    import scipy.sparse as sp

    n = len(g.strengths)
    pairs = aggregate(g.idx_a, g.idx_b, g.games_a, g.games_b, n, weights)
    m = len(pairs.i)
    rows = np.r_[np.arange(m), np.arange(m)]
    X1 = sp.csr_matrix((np.r_[np.ones(m), -np.ones(m)], (rows, np.r_[pairs.i, pairs.j])), shape=(m, n))
    X = sp.vstack([X1, X1]).tocsr()
    y = np.r_[np.ones(m), np.zeros(m)]
    w = np.r_[pairs.won_i, pairs.won_j]
    keep = w > 0
    return X[keep], y[keep], w[keep]


def run_sklearn(g, repeat, solver):
    from sklearn.linear_model import LogisticRegression

    X, y, w = sklearn_problem(g)

    def go():
        # tol 1e-10: looser settings stop scikit-learn short of the optimum by more than 0.01 points.
        model = LogisticRegression(fit_intercept=False, C=PRIOR_SD**2, solver=solver, tol=1e-10, max_iter=10_000)
        return model.fit(X, y, sample_weight=w).coef_.ravel()

    return timed(go, repeat)


def run_choix(g, repeat):
    import choix

    n = len(g.strengths)
    winners = np.r_[np.repeat(g.idx_a, g.games_a), np.repeat(g.idx_b, g.games_b)]
    losers = np.r_[np.repeat(g.idx_b, g.games_a), np.repeat(g.idx_a, g.games_b)]
    data = list(zip(winners.tolist(), losers.tolist()))
    # One run above 5 k matches: choix takes minutes there (its data is one tuple per game).
    runs = repeat if len(g.idx_a) <= 5_000 else 1
    return timed(lambda: choix.opt_pairwise(n, data, alpha=1 / (2 * PRIOR_SD**2), method="Newton-CG", tol=1e-8), runs)


def run_floor(g, repeat):
    r = np.zeros(len(g.strengths))

    def one_pass():
        d = r[g.idx_a] - r[g.idx_b]
        return float(g.games_a @ log_expit(d) + g.games_b @ log_expit(-d))

    return timed(one_pass, repeat)[0], None


METHODS = {
    "raw": run_ours_raw,
    "solve": run_ours_solve,
    "lbfgs": lambda g, k: run_sklearn(g, k, "lbfgs"),
    "newton-cg": lambda g, k: run_sklearn(g, k, "newton-cg"),
    "choix": run_choix,
    "floor": run_floor,
}


def child(method, n_games, n_players, repeat, out):
    from secretary.threads import limit_native_threads

    limit_native_threads()  # every method on one thread, as the command line runs the engine
    g = make_games(n_games, n_players, seed=1)
    seconds, ratings = METHODS[method](g, repeat)
    if ratings is not None:
        np.save(out, ratings)
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(json.dumps({"seconds": seconds, "peak_mb": peak_mb}))


def measure(method, n_games, n_players, repeat, folder):
    out = Path(folder) / f"{method}-{n_games}.npy"
    done = subprocess.run(
        [sys.executable, __file__, "--child", method, str(n_games), str(n_players), str(repeat), str(out)],
        capture_output=True, text=True,
    )
    if done.returncode != 0:
        return {"seconds": float("nan"), "peak_mb": float("nan"), "error": done.stderr.strip().splitlines()[-1]}
    result = json.loads(done.stdout.strip().splitlines()[-1])
    result["ratings"] = np.load(out) if out.exists() else None
    return result


def measure_size(n_games, n_players, args, folder) -> dict:
    """Every method on one league size, each in its own process."""
    res = {}
    for method in METHODS:
        if method == "choix" and (n_games > 50_000 or args.no_choix):
            continue
        if method in ("lbfgs", "newton-cg") and n_games > 1_000_000:
            continue
        res[method] = measure(method, n_games, n_players, args.repeat, folder)
    return res


def table_line(n_games, n_players, res) -> str:
    """One row of the table: this engine, scikit-learn's faster solver, choix, the floor."""
    ours = res["solve"]["ratings"]
    sk = [m for m in ("lbfgs", "newton-cg") if m in res and res[m]["ratings"] is not None]
    best = min(sk, key=lambda m: res[m]["seconds"]) if sk else None

    def diff(m):
        return np.max(np.abs(res[m]["ratings"] - ours)) * POINTS

    line = (f"{n_games:>10,} {n_players:>8,} | {res['raw']['seconds']:>12.3f}s {res['raw']['peak_mb']:>8.0f} | "
            f"{res['solve']['seconds']:>6.3f}s ")
    if best:
        line += (f"{res[best]['seconds']:>7.3f}s {best:>10} {res[best]['seconds'] / res['solve']['seconds']:>5.1f}x "
                 f"{diff(best):>8.1e}p | ")
    else:
        line += f"{'-':>8} {'-':>10} {'-':>6} {'-':>9} | "
    if "choix" in res and res["choix"]["ratings"] is not None:
        line += (f"{res['choix']['seconds']:>6.2f}s {res['choix']['seconds'] / res['solve']['seconds']:>6.0f}x "
                 f"{diff('choix'):>8.1e}p | ")
    else:
        line += f"{'-':>7} {'-':>7} {'-':>9} | "
    return line + f"{res['floor']['seconds']:>6.3f}s {res['raw']['seconds'] / res['floor']['seconds']:>8.1f}x"


def main():
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--large", action="store_true", help="also run 10 M matches / 100 k players")
    parser.add_argument("--repeat", type=int, default=3, help="runs per measurement (median is shown)")
    parser.add_argument("--no-choix", action="store_true", help="leave choix out (it takes minutes at 50 k matches)")
    parser.add_argument("--child", nargs=5, help=argparse.SUPPRESS)
    busy.add_argument(parser)
    args = parser.parse_args()
    if args.child:
        method, n_games, n_players, repeat, out = args.child
        return child(method, int(n_games), int(n_players), int(repeat), out)

    sizes = SIZES + ([LARGE] if args.large else [])
    header = (f"{'condition':>14} {'matches':>10} {'players':>8} | {'raw->ratings±':>13} {'peak MB':>8} | "
              f"{'solve':>7} {'sklearn':>8} {'(solver)':>10} {'ratio':>6} {'max diff':>9} | {'choix':>7} "
              f"{'ratio':>7} {'max diff':>9} | {'floor':>7} {'raw/floor':>9}")
    print(header)
    print("-" * len(header))
    with tempfile.TemporaryDirectory() as folder:
        for condition in busy.conditions(args.conditions):
            for n_games, n_players in sizes:
                res = measure_size(n_games, n_players, args, folder)
                print(f"{condition:>14} {table_line(n_games, n_players, res)}", flush=True)
    print("\nratio = that method's time / this engine's solve; max diff = largest rating difference in points")


if __name__ == "__main__":
    main()
