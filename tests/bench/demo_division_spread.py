"""The demo's watch list at several Division spreads: each division's linked share and level ±, what is flagged.

Run from the repository root: ``python tests/bench/demo_division_spread.py [SPREAD ...]`` (default 0 100 300).
The demo league is invented (``demo/league.xlsx``); every other setting is the demo's own.
"""
from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from secretary.model.league import fit_league  # noqa: E402
from secretary.model.linkage import watch_list  # noqa: E402
from tests.bench.demo_league import DEMO  # noqa: E402


def main(argv=None) -> int:
    from secretary.workbook.read import read_workbook

    spreads = [float(x) for x in (argv if argv is not None else sys.argv[1:])] or [0.0, 100.0, 300.0]
    book = read_workbook(DEMO)
    for spread in spreads:
        settings = book.settings.replace(division_spread=spread)
        fit = fit_league(book.results, settings, players=book.players)
        watch = watch_list(fit, book.results)
        cells = [f"{d.division} {d.linked_share:.2f} (level ± {fit.level_sd(d.division):.0f})" for d in watch.divisions]
        flagged = ", ".join(d.division for d in watch.flagged_divisions) or "none"
        print(f"Division spread {spread:g}: linked share " + "; ".join(cells) + f"; flagged: {flagged}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
