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
``--division-spread``, ``--change``; defaults: tennis, the shipped settings).  Doubles
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
from secretary.model.pairs import age_weights  # noqa: E402
from secretary.model.races import predictive_game_chance  # noqa: E402
from secretary.model.scale import points_per_logodds  # noqa: E402
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


def walk_chances(walk, settings: Settings, after=None) -> Chances:
    """``evaluate``'s walk, each step's levels recorded on the way (a wrapper round its step prediction).

    ``after(walk, out, step, pairs, level)``, if given, runs after each step's prediction and may change
    ``out.mean[step]`` (a research change to the predictions; the fits are the shipped ones).
    """
    levels, original = {}, walkforward._predict_step

    def recording(walk_, out, step, pairs, r, level, *rest):
        levels[step.start] = np.array(level, float)
        original(walk_, out, step, pairs, r, level, *rest)
        if after is not None:
            after(walk_, out, step, pairs, level)

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


def recent_form(walk, p, window: int = 56) -> np.ndarray:
    """Per sorted match (rows) and side (A, B): the player's surplus games per game over their predicted
    matches in the ``window`` days before the match's step, against the chances ``p`` (0 without any)."""
    ok = ~np.isnan(p) & ~walk.doubles
    games = np.where(ok, walk.games_a + walk.games_b, 0.0)
    surplus = np.where(ok, walk.games_a - games * np.where(ok, p, 0.0), 0.0)
    n, form = len(walk.names), np.zeros((len(walk.day), 2))
    for k in range(len(walk.bounds) - 1):
        start, stop = int(walk.bounds[k]), int(walk.bounds[k + 1])
        if stop == start or start == 0:
            continue
        past = slice(int(np.searchsorted(walk.day, walk.day[start] - window)), start)
        sur = np.bincount(walk.a[past], surplus[past], n) - np.bincount(walk.b[past], surplus[past], n)
        played = np.bincount(walk.a[past], games[past], n) + np.bincount(walk.b[past], games[past], n)
        per_game = sur / np.maximum(played, 1e-12)
        form[start:stop] = np.column_stack([per_game[walk.a[start:stop]], per_game[walk.b[start:stop]]])
    return form


def print_form_and_size(walk, sel, c0: Chances, c1: Chances) -> None:
    """Does recent form explain the levels model's misses (logit ``k d + c (form_a - form_b)``)?  And the best
    scale by the size of the predicted logit in the walk's second half, within and across divisions."""
    inside = ~sel & ~np.isnan(c1.predictive) & ~walk.doubles
    ga, gb = walk.games_a, walk.games_b
    form = recent_form(walk, c1.predictive)
    x = form[:, 0] - form[:, 1]
    print("\nrecent form (surplus games per game in the 56 days before, levels model), logit k d + c x:")
    for name, use in (("within divisions", inside), ("across divisions", sel)):
        d, won, lost = logit(c1.predictive[use]), ga[use], gb[use]
        per_game = lambda q: match_loss(q, won, lost).sum() / (won + lost).sum()  # noqa: E731
        k, c = split_scales(d, x[use], won, lost)
        print(f"  {name}: k {k:.2f}, c {c:.2f}; log-loss {per_game(c1.predictive[use]):.4f} -> "
              f"{per_game(expit(k * d + c * x[use])):.4f} (k alone "
              f"{per_game(expit(best_scale(c1.predictive[use], won, lost) * d)):.4f})")
    late = np.minimum(4 * walk.day // (walk.day[-1] + 1), 3) >= 2
    edges = (0.0, 0.4, 0.8, 1.2, 1.8, np.inf)
    print("\nsecond half of the walk: best scale k (matches) by |predicted logit|, log-odds\n")
    print("| games | model | " + " | ".join(f"{lo:g}-{hi:g}" for lo, hi in zip(edges, edges[1:])) + " |")
    print("|---|---|" + "---|" * (len(edges) - 1))
    for name, use in (("within", inside & late), ("across", sel & late)):
        for label, c in (("spread 0", c0), ("levels", c1)):
            size = np.abs(logit(c.predictive))
            cells = [use & (size >= lo) & (size < hi) for lo, hi in zip(edges, edges[1:])]
            print(f"| {name} | {label} | " + " | ".join(
                f"{best_scale(c.predictive[b], ga[b], gb[b]):.2f} ({b.sum():,})" if b.sum() >= 50 else f"- ({b.sum()})"
                for b in cells) + " |")


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
    print_form_and_size(walk, sel, c0, c1)


class NewcomerOffset:
    """Research (not shipped): a newcomer starts at their division's level plus an offset ``delta_d``.

    Before each step ``delta`` (one per division) is the MAP of the earlier newcomers' first-step games
    given the walk's own predicted difference for them, ``logit = mean + X delta`` (``X``: each match's
    newcomer coefficients per division, as in the prediction), games age-weighted by the half-life from
    the newest earlier result, prior ``delta_d ~ N(0, s^2)`` (the Skill spread).  Only predictions with a
    newcomer change; the fits are the shipped ones.
    """

    def __init__(self, walk, settings: Settings):
        self.sd2 = (settings.skill_spread / points_per_logodds(settings.scale)) ** 2
        self.half_life = settings.half_life_days
        self.delta = np.zeros(len(walk.division_names))
        self.rows: list[tuple[np.ndarray, ...]] = []  # (X, mean, won, lost, day) of earlier steps

    @staticmethod
    def design(walk, step: slice, n: int) -> np.ndarray:
        """``X`` (matches x divisions): each match's newcomer seats' coefficients on their division."""
        half = np.where(walk.doubles[step], 0.5, 1.0)
        seats = [(walk.a[step], half), (walk.b[step], -half)]
        if walk.pa is not None:
            seats += [(walk.pa[step], half), (walk.pb[step], -half)]
        X = np.zeros((step.stop - step.start, len(walk.division_names)))
        for idx, coef in seats:
            new = idx >= n
            given = walk.given_home[np.maximum(idx, 0)]
            div = np.where(given >= 0, given, walk.division[step])
            np.add.at(X, (np.flatnonzero(new), div[new]), coef[new])
        return X

    def estimate(self, today: float) -> np.ndarray:
        """``delta`` by Newton from the recorded newcomer games (warm-started from the last step's)."""
        if not self.rows:
            return self.delta
        X, mean, won, lost, day = (np.concatenate(c) for c in zip(*self.rows))
        w = age_weights(today - day, self.half_life)
        for _ in range(50):
            p = expit(mean + X @ self.delta)
            g = X.T @ (w * (won - (won + lost) * p)) - self.delta / self.sd2
            H = X.T @ (X * (w * (won + lost) * p * (1 - p))[:, None]) + np.eye(len(self.delta)) / self.sd2
            move = np.linalg.solve(H, g)
            self.delta = self.delta + move
            if np.max(np.abs(move)) < 1e-10:
                break
        return self.delta

    def __call__(self, walk, out, step: slice, pairs, level) -> None:
        X = self.design(walk, step, pairs.n_players)
        mean = out.mean[step].copy()
        out.mean[step] = mean + X @ self.estimate(float(walk.day[step.start - 1]))
        keep = np.any(X != 0, axis=1)
        self.rows.append((X[keep], mean[keep], walk.games_a[step][keep], walk.games_b[step][keep],
                          walk.day[step][keep].astype(float)))


class CrossVariance:
    """Research (not shipped): a cross-division game's difference gets extra variance ``v`` beyond the
    Laplace posterior (a player's strength against another division deviating from the one their home
    level implies, not learnt per player).

    Before each step ``v`` is the maximum-likelihood value (0 to 9 log-odds^2) of the earlier cross-division
    games under their own predictive chances ``E[sigmoid(d)]``, ``d ~ N(mean, var + v)``, games
    age-weighted by the half-life from the newest earlier result.  Within-division games do not change.
    """

    def __init__(self, walk, settings: Settings):
        self.half_life, self.v = settings.half_life_days, 0.0
        self.rows: list[tuple[np.ndarray, ...]] = []  # (mean, var, won, lost, day) of earlier cross games

    def estimate(self, today: float) -> float:
        if not self.rows:
            return self.v
        mean, var, won, lost, day = (np.concatenate(c) for c in zip(*self.rows))
        w = age_weights(today - day, self.half_life)
        loss = lambda v: w @ match_loss(predictive_game_chance(mean, var + v), won, lost)  # noqa: E731
        self.v = float(minimize_scalar(loss, bounds=(0.0, 9.0), method="bounded").x)
        return self.v

    def __call__(self, walk, out, step: slice, pairs, level) -> None:
        v = self.estimate(float(walk.day[step.start - 1]))
        cross = out.cross[step]
        self.rows.append((out.mean[step][cross], out.var[step][cross], walk.games_a[step][cross],
                          walk.games_b[step][cross], walk.day[step][cross].astype(float)))
        out.var[step] = out.var[step] + np.where(cross, v, 0.0)


CHANGES = {"offset": ("levels + newcomer offset", NewcomerOffset),
           "cross-variance": ("levels + cross-division variance", CrossVariance)}


def try_change(name: str, settings: Settings, change: str) -> None:
    """One pool, the shipped levels and the levels with a change (``CHANGES``): predictive log-loss, same games."""
    results, players = SETS[name]()
    walk = prepare(results, players=players)
    n_before = np.array([walk.seen(int(walk.bounds[k])) for k in walk.day // walk.step_days])
    with_new = (walk.a >= n_before) | (walk.b >= n_before)
    ppl = points_per_logodds(settings.scale)
    label, make = CHANGES[change]
    for label, tau, make in (("one pool (spread 0)", 0.0, None), ("shipped levels", settings.division_spread, None),
                             (label, settings.division_spread, make)):
        after = make(walk, settings) if make else None
        c = walk_chances(walk, settings.replace(division_spread=tau), after)
        done = ~np.isnan(c.predictive)
        cells = []
        for use in (done, done & c.cross, done & with_new, done & c.cross & with_new):
            ga, gb = walk.games_a[use], walk.games_b[use]
            cells.append(f"{match_loss(c.predictive[use], ga, gb).sum() / (ga.sum() + gb.sum()):.4f}" if use.any()
                         else "-")
        shown = "-" if after is None else (f"{np.sqrt(after.v) * ppl:.0f} (sd)" if make is CrossVariance else
                                           ", ".join(f"{d} {v * ppl:+.0f}" for d, v in zip(walk.division_names,
                                                                                          after.delta)))
        print(f"| {name} | {label} | " + " | ".join(cells) + f" | {shown} |", flush=True)


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    shipped = Settings()
    parser.add_argument("--sets", default="tennis")
    parser.add_argument("--skill-spread", type=float, default=shipped.skill_spread)
    parser.add_argument("--half-life", type=float, default=shipped.half_life_days)
    parser.add_argument("--division-spread", type=float, default=shipped.division_spread)
    parser.add_argument("--change", choices=sorted(CHANGES), help="research: score a change instead of the breakdown")
    args = parser.parse_args(argv)
    settings = Settings(skill_spread=args.skill_spread, half_life_days=args.half_life,
                        division_spread=args.division_spread)
    print(f"skill spread {settings.skill_spread:g}, half-life {settings.half_life_days:g} days, division spread "
          f"{settings.division_spread:g} against 0; predictive log-loss per game, walk forward week by week")
    if args.change:
        print("| set | model | predictive | cross | games with a newcomer | cross, with a newcomer "
              "| at the last step (points) |\n|---|---|---|---|---|---|---|")
    for name in args.sets.split(","):
        try_change(name, settings, args.change) if args.change else run(name, settings)
    return 0


if __name__ == "__main__":
    sys.exit(main())
