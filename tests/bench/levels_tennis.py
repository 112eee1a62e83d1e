"""Division levels on the men's tennis tiers: log-loss overall and across divisions, Division spread 0 against others.

Run from the repository root: ``python tests/bench/levels_tennis.py`` (options:
``--skill-spread``, ``--half-life``, ``--division-spreads 0,100``, ``--tiers
file|level``, ``--no-walk``).  Two measurements, each printed per Division spread:

- **walk forward** (``secretary.model.evaluate``): every week predicted from the
  weeks before it, point and predictive chances, per game;
- **split**: one fit of the first eight months (January to August 2019), the
  last four scored with point chances; a player not in the fit starts at the
  level of the division of the match (their strength ``L_d``).

A game is cross-division when the two players' home divisions differ (for the
split: home divisions of the fit; a newcomer counts in the match's division).
Tiers are the three files (``file``: qualifying rows in the second tier) or the
events' levels (``level``).  Data: men's professional tennis 2019
(JeffSackmann/tennis_atp, CC BY-NC-SA 4.0), read from ``../shared/data``.
"""
from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import argparse  # noqa: E402
import datetime as dt  # noqa: E402
import sys  # noqa: E402
from pathlib import Path  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import numpy as np  # noqa: E402
from scipy.special import expit  # noqa: E402

from secretary.model.evaluate import evaluate, game_scores, prepare  # noqa: E402
from secretary.model.league import fit_league  # noqa: E402
from secretary.model.records import Settings  # noqa: E402
from secretary.model.scale import points_per_logodds  # noqa: E402
from tests import realdata  # noqa: E402

CUT = dt.date(2019, 9, 1)  # the split: fitted before, scored from


def split_scores(results, settings: Settings) -> tuple[float, float, float, dict[str, float]]:
    """(overall log-loss, cross-division log-loss, cross-division games, levels in points) of the split."""
    train = [r for r in results if r.date < CUT]
    test = [r for r in results if r.date >= CUT]
    fit = fit_league(train, settings, with_uncertainty=False)
    home = fit.homes()
    level = dict(zip(fit.group_names, fit.level))

    def side(name, division):
        if name in home:
            return fit.r[fit.index(name)], home[name]
        return level.get(division, 0.0), division

    p, cross = np.empty(len(test)), np.zeros(len(test), bool)
    for k, r in enumerate(test):
        (ra, da), (rb, db) = side(r.player_a, r.division), side(r.player_b, r.division)
        p[k], cross[k] = expit(ra - rb), da != db
    ga = np.array([r.games_a for r in test], float)
    gb = np.array([r.games_b for r in test], float)
    games, cross_games = ga.sum() + gb.sum(), ga[cross].sum() + gb[cross].sum()
    ppl = points_per_logodds(settings.scale)
    return (game_scores(p, ga, gb)[0] / games, game_scores(p[cross], ga[cross], gb[cross])[0] / cross_games,
            cross_games, {g: v * ppl for g, v in level.items()})


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    shipped = Settings()
    parser.add_argument("--skill-spread", type=float, default=shipped.skill_spread)
    parser.add_argument("--half-life", type=float, default=shipped.half_life_days)
    parser.add_argument("--division-spreads", default=f"0,{shipped.division_spread:g}")
    parser.add_argument("--tiers", choices=("file", "level"), default="file")
    parser.add_argument("--no-walk", action="store_true", help="the split only")
    args = parser.parse_args(argv)
    results = realdata.tennis(by_file=args.tiers == "file")
    walk = None if args.no_walk else prepare(results)
    print(f"tiers by {args.tiers}; skill spread {args.skill_spread:g}, half-life {args.half_life:g} days")
    print("| division spread | walk: point | predictive | cross point | cross predictive | cross games "
          "| split: point | cross point | cross games | levels (split) |")
    print("|---|---|---|---|---|---|---|---|---|---|")
    for tau in (float(x) for x in args.division_spreads.split(",")):
        settings = Settings(skill_spread=args.skill_spread, half_life_days=args.half_life, division_spread=tau)
        cells = ["-"] * 5
        if walk is not None:
            ev = evaluate(walk, settings)
            cells = [f"{ev.log_loss:.4f}", f"{ev.predictive.log_loss:.4f}", f"{ev.cross.log_loss:.4f}",
                     f"{ev.predictive_cross.log_loss:.4f}", f"{ev.cross.count:,.0f}"]
        overall, cross, cross_games, levels = split_scores(results, settings)
        shown = ", ".join(f"{g} {v:+.0f}" for g, v in sorted(levels.items(), key=lambda kv: -kv[1]))
        print(f"| {tau:g} | {' | '.join(cells)} | {overall:.4f} | {cross:.4f} | {cross_games:,.0f} | {shown} |",
              flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
