"""The watch list on the real tennis tiers, in one pool and with division levels.

Run from the repository root: ``python tests/bench/watch_tiers.py``.  For the
men's 2019 tiers (docs/real-data.md; top G/M/A/F/D, second C, third S)
fitted on the first eight months and on the whole season, prints each
division's linked share and whether it is flagged, the held-back count, and
where the suggested linking matches go, for Division spread 0 (one pool) and
the shipped default, at skill spread 145 and at the shipped default.
"""
import datetime as dt
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))  # run as a script from anywhere

from secretary.model.league import fit_league  # noqa: E402
from secretary.model.linkage import watch_list  # noqa: E402
from secretary.model.records import Settings  # noqa: E402
from tests import realdata  # noqa: E402


def report(label, results, settings):
    wl = watch_list(fit_league(results, settings, with_uncertainty=False), results)
    flagged = {d.division for d in wl.flagged_divisions}
    shares = ", ".join(f"{d.division} {d.linked_share:.0%} ({d.recent_cross_games} recent cross games)"
                       + (" FLAGGED" if d.flagged else "") for d in sorted(wl.divisions, key=lambda d: d.division))
    held = len(wl.held) + wl.held_not_shown
    touching = sum(bool({m.division_a, m.division_b} & flagged) for m in wl.suggestions)
    pooled = {n for p in wl.pools for n in p.players}
    islands = sum(bool({m.player_a, m.player_b} & pooled) for m in wl.suggestions)
    print(f"{label:<20} skill {settings.skill_spread:>3.0f} division {settings.division_spread:>3.0f} | {shares}")
    print(f"{'':<45}| held back {held} ({len(wl.flagged_players)} in flagged divisions), "
          f"{len(wl.pools)} islands, {len(wl.suggestions)} suggestions ({touching} touch a flagged division, "
          f"{islands} an island)")


def main() -> int:
    if not (realdata.TENNIS / realdata.TENNIS_FILES[0]).exists():
        print(f"tennis data not found under {realdata.TENNIS}; nothing to measure")
        return 0
    season = realdata.tennis()
    eight = [r for r in season if r.date < dt.date(2019, 9, 1)]
    # Skill spread 145 was the default when the one-pool symptoms were seen; the other is today's default.
    for skill in sorted({145.0, Settings().skill_spread}):
        for spread in (0.0, Settings().division_spread):
            settings = Settings(skill_spread=skill, division_spread=spread)
            report("first eight months", eight, settings)
            report("whole season", season, settings)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
