"""The handicap card (PDF): the fair race for each coming fixture, in plain words."""
from __future__ import annotations

import datetime as dt
from itertools import groupby
from pathlib import Path
from typing import Sequence

from reportlab.platypus import CondPageBreak

from secretary.model.fixtures import FixtureForecast
from secretary.model.notice import (CLOSING, PAST_NOTE, forecast_note, is_past, league_title, long_date,
                                     percent_chance)
from secretary.model.records import PlayerRating, Settings
from secretary.model.sentences import plural
from secretary.report import layout

COLUMNS = ("Match", "Fair race", "Chance at the set race", "How sure")
COLUMN_SHARES = (0.30, 0.28, 0.25, 0.17)  # of the page width
NO_DATE = "date not set"
NOT_RATED = "not yet rated"
NBSP = "\u00a0"
TABLE_START = 80  # points: a date's heading is kept with its table's header and first rows


def fair_race_text(fc: FixtureForecast) -> str:
    """``Ann races to 5, Bob races to 3`` (a doubles side as ``Ann & Cy``)."""
    a, b = fc.fixture.label_a, fc.fixture.label_b
    return f"{a} races to {fc.fair_race_a}, {b} races to {fc.fair_race_b}"


def chance_text(fc: FixtureForecast, settings: Settings) -> str:
    """``Races to 5 (the usual race): Ann wins 71%`` or ``Ann to 5, Bob to 4: Ann wins 16%``."""
    a, b = fc.fixture.label_a, fc.fixture.label_b
    if fc.race_a != fc.race_b:
        race = f"{a} to {fc.race_a}, {b} to {fc.race_b}"
    elif fc.fixture.race_a is None and fc.race_a == settings.usual_race:
        race = f"Races to {fc.race_a} (the usual race)"
    else:
        race = f"Races to {fc.race_a}"
    return f"{race}: {a} wins {percent_chance(fc.race_chance)}"


def _match_cell(fc: FixtureForecast, ratings: dict[str, PlayerRating]) -> list:
    """The two sides, one per line, each player with their rating when known (a doubles side: two)."""
    lines = []
    for lead, side in (("", fc.fixture.side_a), ("v ", fc.fixture.side_b)):
        parts = []
        for k, name in enumerate(side):
            p = ratings.get(name)
            known = rating_text(p) if p is not None else NOT_RATED
            parts += [((lead if k == 0 else " & ") + name, True), (f"  {known}" if ratings else "", False)]
        lines.append(layout.rich(parts, "cell"))
    return lines


def rating_text(p: PlayerRating) -> str:
    """``1598 ± 47`` with no-break spaces, so that a narrow column never splits the value over two lines."""
    return f"{p.rating:.0f}{NBSP}±{NBSP}{p.sd:.0f}"


def columns_used(rows: Sequence[Sequence[object]]) -> list[int]:
    """The columns with something in at least one row (an empty column would take page width for nothing)."""
    return [c for c in range(len(COLUMNS)) if any(row[c] not in ("", None) for row in rows)]


def _order(forecasts: Sequence[FixtureForecast], latest: dt.date | None = None) -> list[FixtureForecast]:
    """Coming fixtures by date, then undated ones, then past ones (dated before ``latest``) by date."""
    return sorted(forecasts, key=lambda fc: (is_past(fc.fixture.date, latest), fc.fixture.date is None,
                                             fc.fixture.date or dt.date.min))


def day_heading(day: dt.date | None, latest: dt.date | None = None) -> str:
    """``17 March 2026``, or ``17 March 2026 (past: dated before the latest results, 20 March 2026)``."""
    if day is None:
        return NO_DATE.capitalize()
    return f"{long_date(day)} ({PAST_NOTE}, {long_date(latest)})" if is_past(day, latest) else long_date(day)


def _intro(ordered: Sequence[FixtureForecast], latest: dt.date | None) -> str:
    """The subtitle: the coming fixtures' dates, and how many past ones are listed after them."""
    coming = [fc.fixture.date for fc in ordered if fc.fixture.date is not None and not is_past(fc.fixture.date, latest)]
    past = sum(1 for fc in ordered if is_past(fc.fixture.date, latest))
    when = "to come" if not coming else f"on {long_date(coming[0])}" if coming[0] == coming[-1] else (
        f"from {long_date(coming[0])} to {long_date(coming[-1])}")
    after = f"; {plural(past, 'past fixture')} (dated before the latest results) at the end" if past else ""
    return f"Fair races for the fixtures {when}{after}"


def write_handicap_pdf(path: str | Path, forecasts: Sequence[FixtureForecast], settings: Settings, *,
                       ratings: Sequence[PlayerRating] = (), latest: dt.date | None = None) -> Path:
    """Write the handicap card, one table per date; ``ratings`` adds each player's rating ±; fixtures dated
    before ``latest`` (the newest result) come last, their dates marked past."""
    by_name = {p.name: p for p in ratings}
    ordered = _order(forecasts, latest)
    title = league_title(settings, "handicap card")
    width = layout.frame_width(settings)
    story = layout.title_block(title, _intro(ordered, latest))
    story.append(layout.para(
        "A fair race gives both players about an even chance: each player races to the number shown. "
        "The chance is for the race the fixture is set at (the usual race when none is set), allowing for how "
        "sure each rating is; the last column says when it could be far off."))
    if not ordered:
        story.append(layout.para("There are no fixtures in the Fixtures sheet yet."))
    for day, group in groupby(ordered, key=lambda fc: fc.fixture.date):
        rows = [
            (_match_cell(fc, by_name), layout.para(fair_race_text(fc), "cellbold"),
             chance_text(fc, settings), forecast_note(fc))
            for fc in group
        ]
        used = columns_used(rows)
        share = sum(COLUMN_SHARES[c] for c in used)
        # A day's table runs on over a page break (its header repeated) rather than leave a page half empty.
        story += [CondPageBreak(TABLE_START), layout.para(day_heading(day, latest), "heading"),
                  layout.table([COLUMNS[c] for c in used], [[row[c] for c in used] for row in rows],
                               [width * COLUMN_SHARES[c] / share for c in used])]
    story.append(layout.closing(CLOSING))
    footer = f"{title} · fair races are suggestions; the committee decides"
    return layout.build(path, story, settings, title, footer)
