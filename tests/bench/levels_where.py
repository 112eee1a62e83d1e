"""Research (issue #10): where the cross-division log-loss is, Division spread 0 against the shipped levels.

One walk forward per Division spread (``secretary.model.evaluate``: the same
games in the same order), each cross-division game's predictive chance kept
under both, and the per-game log-loss and its gain (spread 0 minus levels;
positive = the levels predict better) broken down by:

- **tiers**: the two players' home divisions at prediction time (the walk's
  rule: Players-sheet division, else the latest earlier result; a newcomer
  counts in the match's division), the higher tier first;
- **experience**: each player's weighted games at prediction time (the step's
  half-life weights), in bins 0, 1-9, 10-29, 30+, the higher-tier player first;
- **newcomers**: which of the two had not played before the step;
- **quarter**: quarter of the walk's span of days the game falls in;
- **underdog**: whether the side the levels model made underdog won the match.

"share of gain" is the bin's summed gain over all cross-division games: the
column adds up to the whole gain.  ``k`` is the logit scale that would fit the
levels model's chances in the bin best (``k < 1``: over-confident).  Tiers are
ordered by their levels in one fit of all results at the same settings.  Then
the calibration of the cross-division chances under both spreads: favourite's
predicted share against observed, in bands, and the best logit scale overall.

Run from the repository root: ``python tests/bench/levels_where.py`` (options:
``--sets tennis,badminton,demo``, ``--skill-spread``, ``--half-life``,
``--division-spread``; defaults: tennis, the shipped settings).  Doubles
matches are left out of the breakdown (none in the three sets' cross games).
"""
from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import argparse  # noqa: E402
import sys  # noqa: E402
from dataclasses import dataclass  # noqa: E402
from pathlib import Path  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import numpy as np  # noqa: E402
from scipy.optimize import minimize, minimize_scalar  # noqa: E402
from scipy.special import expit, logit  # noqa: E402

from secretary.model.evaluate import calibration_table, evaluate, prepare  # noqa: E402
from secretary.model.league import fit_league  # noqa: E402
from secretary.model.records import Settings  # noqa: E402
from secretary.model import walkforward  # noqa: E402
from secretary.model.walkforward import Homes, training_pairs  # noqa: E402
from tests.bench.bench_predict import SETS  # noqa: E402

EXPERIENCE = ("0", "1-9", "10-29", "30+")  # bins of weighted games: none, above 0 and under 10, 10-29, 30 or more


@dataclass
class Features:
    """Per sorted match, as the walk saw it before the match's step (``-1`` / NaN: not predicted).

    home_a, home_b : home division (index) of side A and B (a newcomer: the match's division)
    games_a, games_b : weighted games of side A and B (0 for a newcomer)
    new_a, new_b : side A / B not seen before the step
    """

    home_a: np.ndarray
    home_b: np.ndarray
    games_a: np.ndarray
    games_b: np.ndarray
    new_a: np.ndarray
    new_b: np.ndarray


def features(walk, half_life: float) -> Features:
    """Each match's homes, weighted games and newcomer flags at its step, the steps of ``walk_steps``."""
    m = len(walk.day)
    f = Features(np.full(m, -1), np.full(m, -1), np.full(m, np.nan), np.full(m, np.nan), np.zeros(m, bool),
                 np.zeros(m, bool))
    homes = Homes(walk)
    for k in range(len(walk.bounds) - 1):
        start, stop = int(walk.bounds[k]), int(walk.bounds[k + 1])
        if stop == start or start == 0:
            continue
        n, home = walk.seen(start), homes.at(start)
        games = training_pairs(walk, start, half_life).games_per_player()
        step = slice(start, stop)
        for idx, h, g, new in ((walk.a, f.home_a, f.games_a, f.new_a), (walk.b, f.home_b, f.games_b, f.new_b)):
            i = idx[step]
            new[step] = i >= n
            seen = np.minimum(i, max(n - 1, 0))
            given = walk.given_home[i]
            h[step] = np.where(i < n, home[seen], np.where(given >= 0, given, walk.division[step]))
            g[step] = np.where(i < n, games[seen], 0.0)
    return f


def match_loss(p, won, lost) -> np.ndarray:
    """Each match's summed log-loss over its games (nats)."""
    p = np.clip(p, 1e-15, 1 - 1e-15)
    return -(won * np.log(p) + lost * np.log1p(-p))


def best_scale(p, won, lost) -> float:
    """The logit scale ``k`` minimising the log-loss of ``sigmoid(k logit p)`` (1 = calibrated in scale)."""
    lp = logit(np.clip(p, 1e-15, 1 - 1e-15))
    return float(minimize_scalar(lambda k: match_loss(expit(k * lp), won, lost).sum(), bounds=(0.0, 3.0),
                                 method="bounded").x)


def breakdown(labels, loss0, loss1, games) -> list[tuple[object, int, float, float, float, float]]:
    """Per label: (label, matches, games, loss per game at spread 0, with levels, share of the whole gain).

    ``loss0``, ``loss1``: each match's summed log-loss; ``games``: its games.  The shares add up to
    the whole gain per game, ``(sum loss0 - sum loss1) / sum games``.
    """
    labels = np.asarray(labels)
    total = games.sum()
    rows = []
    for label in sorted(set(labels.tolist())):
        s = labels == label
        g = games[s].sum()
        rows.append((label, int(s.sum()), float(g), loss0[s].sum() / g, loss1[s].sum() / g,
                     (loss0[s].sum() - loss1[s].sum()) / total))
    return rows


def experience_bin(games) -> np.ndarray:
    """Bin of each weighted-games value (index into ``EXPERIENCE``): 0 none, 1 under 10, 2 10-29, 3 30 or more."""
    games = np.asarray(games, float)
    return np.where(games <= 0, 0, 1 + np.searchsorted([10.0, 30.0], games, side="right"))


def tier_rank(results, players, settings: Settings, names) -> np.ndarray:
    """Rank of each walk division by its level in one fit of all results (0 = highest)."""
    fit = fit_league(results, settings, players=players, with_uncertainty=False)
    level = dict(zip(fit.group_names, fit.level))
    values = np.array([level.get(d, -np.inf) for d in names])
    return np.argsort(np.argsort(-values, kind="stable"), kind="stable")


def labels(walk, f: Features, rank, p1, sel) -> dict[str, np.ndarray]:
    """The breakdowns' label of each selected match (``sel``), the higher-tier side first."""
    names = walk.division_names
    a_high = rank[f.home_a[sel]] <= rank[f.home_b[sel]]
    hi = lambda x, y: np.where(a_high, x[sel], y[sel])  # noqa: E731
    lo = lambda x, y: np.where(a_high, y[sel], x[sel])  # noqa: E731
    tiers = [f"{names[h]} v {names[l]}" for h, l in zip(hi(f.home_a, f.home_b), lo(f.home_a, f.home_b))]
    exp_hi, exp_lo = experience_bin(hi(f.games_a, f.games_b)), experience_bin(lo(f.games_a, f.games_b))
    experience = [f"{EXPERIENCE[h]} / {EXPERIENCE[l]}" for h, l in zip(exp_hi, exp_lo)]
    new_hi, new_lo = hi(f.new_a, f.new_b), lo(f.new_a, f.new_b)
    newcomer = np.select([new_hi & new_lo, new_hi, new_lo], ["both new", "higher-tier new", "lower-tier new"],
                         "neither new")
    span = walk.day[-1] + 1
    quarter = np.array([f"Q{q + 1}" for q in np.minimum(4 * walk.day[sel] // span, 3)])
    venue = walk.division[sel]
    visits = np.select([(venue != f.home_a[sel]) & (venue != f.home_b[sel]), venue == lo(f.home_a, f.home_b)],
                       ["played in neither's division", "higher-tier plays down"], "lower-tier plays up")
    ga, gb = walk.games_a[sel], walk.games_b[sel]
    fav_a = p1[sel] >= 0.5
    underdog = np.select([ga == gb, (ga > gb) == fav_a], ["level match", "favourite won"], "underdog won")
    return {"tiers (higher v lower)": np.array(tiers), "experience (higher / lower tier)": np.array(experience),
            "newcomers": newcomer, "quarter of the walk": quarter, "where played": visits,
            "underdog (levels model) won": underdog}


@dataclass
class Chances:
    """Per sorted match (NaN: not predicted): side A's point and predictive chance, the cross-division flag,
    and each step's division levels (log-odds) by the step's first match."""

    point: np.ndarray
    predictive: np.ndarray
    cross: np.ndarray
    levels: dict[int, np.ndarray]


def walk_chances(walk, settings: Settings) -> Chances:
    """``evaluate``'s walk, each step's levels recorded on the way (a wrapper round its step prediction)."""
    levels, original = {}, walkforward._predict_step

    def recording(walk_, out, step, pairs, r, level, *rest):
        levels[step.start] = np.array(level, float)
        return original(walk_, out, step, pairs, r, level, *rest)

    walkforward._predict_step = recording
    try:
        ev = evaluate(walk, settings)
    finally:
        walkforward._predict_step = original
    return Chances(ev.p[walk.order], ev.p_predictive[walk.order], ev.cross_division[walk.order], levels)


def level_gap(walk, f: Features, levels: dict[int, np.ndarray]) -> np.ndarray:
    """Per sorted match, ``L_home(a) - L_home(b)`` at its step (log-odds; NaN where not predicted)."""
    gap = np.full(len(walk.day), np.nan)
    for start, level in levels.items():
        stop = int(walk.bounds[np.searchsorted(walk.bounds, start, side="right")])
        gap[start:stop] = level[f.home_a[start:stop]] - level[f.home_b[start:stop]]
    return gap


def split_scales(gap, rest, won, lost) -> tuple[float, float]:
    """Scales ``(alpha, beta)`` of the logit ``alpha * gap + beta * rest`` that fit the games best."""
    def loss(x):
        return match_loss(expit(x[0] * gap + x[1] * rest), won, lost).sum()
    return tuple(float(v) for v in minimize(loss, np.ones(2), method="Nelder-Mead").x)


def print_breakdown(title: str, label, loss0, loss1, games, p, won, lost, with_scale: bool = True) -> None:
    """One breakdown's table; ``p`` = (spread 0, levels) chances; ``k`` only for bins of at least 50 matches
    (and not for bins chosen by outcome)."""
    print(f"\n{title}\n\n| {title} | matches | games | spread 0 | levels | gain | share of gain | k (spread 0) "
          "| k (levels) |")
    print("|---|---|---|---|---|---|---|---|---|")
    for name, matches, g, l0, l1, share in breakdown(label, loss0, loss1, games):
        s = label == name
        k = [best_scale(q[s], won[s], lost[s]) if matches >= 50 and with_scale else float("nan") for q in p]
        print(f"| {name} | {matches:,} | {g:,.0f} | {l0:.4f} | {l1:.4f} | {l0 - l1:+.4f} | {share:+.4f} "
              f"| {k[0]:.2f} | {k[1]:.2f} |")


def print_calibration(p0, p1, won, lost) -> None:
    """Favourite's predicted against observed share in bands, both spreads, and the best logit scale."""
    print("\ncalibration of the cross-division chances (favourite's side)\n")
    print("| band | games (spread 0) | predicted | observed | games (levels) | predicted | observed |")
    print("|---|---|---|---|---|---|---|")
    for b0, b1 in zip(calibration_table(p0, won, lost), calibration_table(p1, won, lost)):
        if b0.games or b1.games:
            print(f"| {b0.low:.2f}-{b0.high:.2f} | {b0.games:,.0f} | {b0.predicted:.3f} | {b0.observed:.3f} "
                  f"| {b1.games:,.0f} | {b1.predicted:.3f} | {b1.observed:.3f} |")
    for name, p in (("spread 0", p0), ("levels", p1)):
        k = best_scale(p, won, lost)
        games = won.sum() + lost.sum()
        fav = np.maximum(p, 1 - p)
        won_fav = np.where(p >= 0.5, won, lost)
        print(f"{name}: log-loss {match_loss(p, won, lost).sum() / games:.4f}, best logit scale {k:.2f} "
              f"({match_loss(expit(k * logit(p)), won, lost).sum() / games:.4f}); favourite given "
              f"{np.average(fav, weights=won + lost):.3f}, won {won_fav.sum() / games:.3f}")


def print_scales(walk, sel, c0: Chances, c1: Chances, f: Features) -> None:
    """Best logit scale by quarter within and across divisions, and the levels model's cross-division point
    logit split into its level gap and the rest (the players' own deviations)."""
    inside = ~sel & ~np.isnan(c1.predictive) & ~walk.doubles
    ga, gb = walk.games_a, walk.games_b
    quarter = np.minimum(4 * walk.day // (walk.day[-1] + 1), 3)
    print("\nbest logit scale k of the predictive chances (spread 0 / levels), by quarter of the walk\n")
    print("| games | Q1 | Q2 | Q3 | Q4 | all |\n|---|---|---|---|---|---|")
    for name, use in (("within divisions", inside), ("across divisions", sel)):
        cells = []
        for part in [use & (quarter == q) for q in range(4)] + [use]:
            cells.append(" / ".join(f"{best_scale(c.predictive[part], ga[part], gb[part]):.2f}" for c in (c0, c1)))
        print(f"| {name} | " + " | ".join(cells) + " |")
    gap = level_gap(walk, f, c1.levels)[sel]
    rest = logit(c1.point[sel]) - gap
    alpha, beta = split_scales(gap, rest, ga[sel], gb[sel])
    print(f"\nlevels model, cross-division point logit = level gap + rest: best scales {alpha:.2f} (gap, mean "
          f"|gap| {np.abs(gap).mean():.2f} log-odds) and {beta:.2f} (rest, mean |rest| {np.abs(rest).mean():.2f}); "
          f"correlation of gap and rest {np.corrcoef(gap, rest)[0, 1]:+.2f}")


def run(name: str, settings: Settings) -> None:
    results, players = SETS[name]()
    walk = prepare(results, players=players)
    c0 = walk_chances(walk, settings.replace(division_spread=0.0))
    c1 = walk_chances(walk, settings)
    f = features(walk, settings.half_life_days)
    sel = c1.cross & ~np.isnan(c1.predictive) & ~walk.doubles
    assert np.array_equal(c0.cross, c1.cross)
    assert np.array_equal(sel, (f.home_a != f.home_b) & ~np.isnan(c1.predictive) & ~walk.doubles)
    won, lost = walk.games_a[sel], walk.games_b[sel]
    p0, p1 = c0.predictive[sel], c1.predictive[sel]
    loss0, loss1 = match_loss(p0, won, lost), match_loss(p1, won, lost)
    games = won + lost
    print(f"\n## {name}: {sel.sum():,} cross-division matches, {games.sum():,.0f} games; log-loss per game "
          f"spread 0 {loss0.sum() / games.sum():.4f}, levels {loss1.sum() / games.sum():.4f}, "
          f"gain {(loss0.sum() - loss1.sum()) / games.sum():+.4f}")
    rank = tier_rank(results, players, settings, walk.division_names)
    for title, label in labels(walk, f, rank, c1.predictive, sel).items():
        print_breakdown(title, label, loss0, loss1, games, (p0, p1), won, lost, not title.startswith("underdog"))
    print_calibration(p0, p1, won, lost)
    print_scales(walk, sel, c0, c1, f)


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    shipped = Settings()
    parser.add_argument("--sets", default="tennis")
    parser.add_argument("--skill-spread", type=float, default=shipped.skill_spread)
    parser.add_argument("--half-life", type=float, default=shipped.half_life_days)
    parser.add_argument("--division-spread", type=float, default=shipped.division_spread)
    args = parser.parse_args(argv)
    settings = Settings(skill_spread=args.skill_spread, half_life_days=args.half_life,
                        division_spread=args.division_spread)
    print(f"skill spread {settings.skill_spread:g}, half-life {settings.half_life_days:g} days, division spread "
          f"{settings.division_spread:g} against 0; predictive log-loss per game, walk forward week by week")
    for name in args.sets.split(","):
        run(name, settings)
    return 0


if __name__ == "__main__":
    sys.exit(main())
