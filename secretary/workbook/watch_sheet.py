"""The Watch list sheet: separate pools, divisions, held-back players, linking matches."""
from __future__ import annotations

from typing import Sequence

from openpyxl.styles import Alignment, Font
from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from secretary.model.linkage import WatchList
from secretary.model.watch_sentences import (GAP, GAP_MEANING, GAP_SD, GAP_SD_MEANING, MEAN_RATING,
                                             MEAN_RATING_MEANING, POOL_GAP_SD, division_label, listing, more_held)
from secretary.workbook.schema import WATCH_SHEET
from secretary.workbook.style import DATE_FORMAT, GAMES_FORMAT, RATING_FORMAT, SD_FORMAT, put, replace_sheet

SHARE_FORMAT = "0%"
Z_FORMAT = "0.0"
SIGNED_FORMAT = "+0;-0;0"
YES = "yes"
NOTHING = "Nothing to report."
TODO = "What to do"
LINKED = "How well linked"  # the linked share, in plain words (the window's heading too)
DIVISION_LINKED = "How well their division is linked"

GAP_NOW, GAP_AFTER = f"{GAP_SD} now", f"{GAP_SD} after"  # a suggested match's target, before and after it

POOL_HEADERS = ("Players", "Divisions", "Games among themselves", POOL_GAP_SD, TODO)
DIVISION_HEADERS = (
    "Division", "Players", MEAN_RATING, GAP, GAP_SD, LINKED,
    "Games against other divisions", "Recent games against other divisions", "Players who link it",
    "Needs attention", TODO,
)
HELD_HEADERS = (
    "Player", "Division", "Rating", "Weighted games", "Weighted wins", "Expected at their rating", "Points held back",
    "How surprising (z)", DIVISION_LINKED, "Needs attention", TODO,
)
MATCH_HEADERS = (
    "Player A", "Division A", "Rating A", "Player B", "Division B", "Rating B", "Race to",
    "A's chance per game", "Expected games", "Ties in", GAP_NOW, GAP_AFTER, TODO,
)
FORMATS = {
    "Games among themselves": GAMES_FORMAT, POOL_GAP_SD: SD_FORMAT,
    MEAN_RATING: RATING_FORMAT, GAP: SIGNED_FORMAT, GAP_SD: SD_FORMAT,
    LINKED: SHARE_FORMAT, "Games against other divisions": GAMES_FORMAT,
    "Rating": RATING_FORMAT, "Weighted games": GAMES_FORMAT, "Weighted wins": GAMES_FORMAT,
    "Expected at their rating": GAMES_FORMAT, "Points held back": RATING_FORMAT,
    "How surprising (z)": Z_FORMAT, DIVISION_LINKED: SHARE_FORMAT,
    "Rating A": RATING_FORMAT, "Rating B": RATING_FORMAT, "A's chance per game": SHARE_FORMAT,
    "Expected games": GAMES_FORMAT, GAP_NOW: SD_FORMAT, GAP_AFTER: SD_FORMAT,
}
WIDEST = 40  # characters for data columns; the what-to-do column gets TODO_WIDTH
TODO_WIDTH = 60
LINE_POINTS = 15  # height of one wrapped line of the default 11-point font
TODO_COLUMN = max(len(headers) for headers in (POOL_HEADERS, DIVISION_HEADERS, HELD_HEADERS, MATCH_HEADERS))

BOLD = Font(bold=True)
HEADING = Font(bold=True, size=13)


def _meaning(header: str, meaning: str) -> str:
    """A note line under a section: "Average rating: the mean rating of ..."."""
    return f"{header}: {meaning[0].lower()}{meaning[1:]}"


def _column(position: int, header: str) -> int:
    """Where a column goes: every section's what-to-do lines share one wide, wrapped column on the right."""
    return TODO_COLUMN if header == TODO else position


def _section(ws: Worksheet, row: int, title: str, note: str | Sequence[str], headers: Sequence[str],
             rows: Sequence[Sequence[object]], widths: dict[int, int], after: str = "") -> int:
    """Heading, explanatory lines, column headers, rows and an ``after`` line from ``row``; returns the
    next free row."""
    put(ws.cell(row, 1), title)
    ws.cell(row, 1).font = HEADING
    notes = (note,) if isinstance(note, str) else tuple(note)
    for k, line in enumerate(notes, start=row + 1):
        put(ws.cell(k, 1), line)
    row += 1 + len(notes)
    columns = [_column(i, header) for i, header in enumerate(headers, start=1)]
    for col, header in zip(columns, headers):
        cell = ws.cell(row, col)
        put(cell, header)
        cell.font = BOLD
        cell.alignment = Alignment(wrap_text=True, vertical="top")
        widths[col] = max(widths.get(col, 0), min(len(header), 16))
    row += 1
    if not rows:
        put(ws.cell(row, 1), NOTHING)
        return row + 2
    for values in rows:
        for col, header, value in zip(columns, headers, values):
            if value is None or value == "":
                continue
            put(ws.cell(row, col), value, FORMATS.get(header))
            if header == TODO:
                ws.cell(row, col).alignment = Alignment(wrap_text=True, vertical="top")
                lines = -(-len(str(value)) // (TODO_WIDTH - 4))  # spreadsheet programs do not grow rows on open
                if lines > 1:
                    ws.row_dimensions[row].height = LINE_POINTS * lines
            else:
                widths[col] = max(widths.get(col, 0), min(len(str(value)) if isinstance(value, str) else 8, WIDEST))
        row += 1
    if after:
        put(ws.cell(row, 1), after)
        row += 1
    return row + 1


def write_watch(wb: Workbook, watch: WatchList) -> None:
    """Rewrite the Watch list sheet from a ``WatchList``."""
    ws = replace_sheet(wb, WATCH_SHEET)
    widths: dict[int, int] = {}
    put(ws.cell(1, 1), "Watch list")
    ws.cell(1, 1).font = Font(bold=True, size=15)
    if watch.reference_date is not None:
        put(ws.cell(2, 1), "Results up to")
        put(ws.cell(2, 2), watch.reference_date, DATE_FORMAT)
    row = 4
    if watch.pools:
        row = _section(
            ws, row, "Separate pools",
            "These players have played nobody outside their own group, so their ratings can be "
            "compared only with each other.", POOL_HEADERS,
            [(listing(p.players), ", ".join(division_label(d) for d in p.divisions), p.games, p.level_sd,
              p.what_to_do) for p in watch.pools], widths)
    row = _section(
        ws, row, "Divisions",
        (f"{LINKED}: how much of a division's level is pinned down by games against other "
         "divisions (0% = only the starting assumption, 100% = fully tied in; the linked share).",
         _meaning(MEAN_RATING, MEAN_RATING_MEANING), _meaning(GAP, GAP_MEANING), _meaning(GAP_SD, GAP_SD_MEANING)),
        DIVISION_HEADERS,
        [(division_label(d.division), d.players, d.mean_rating, d.relative_level, d.level_sd, d.linked_share,
          d.cross_games, d.recent_cross_games, d.linking_players, YES if d.flagged else "",
          d.what_to_do) for d in watch.divisions], widths)
    row = _section(
        ws, row, "Held back",
        "Players who keep winning more games than their rating expects: the starting assumption is "
        "still holding their rating back. Strongest cases first; those whose division is weakly linked "
        "need attention.", HELD_HEADERS,
        [(p.name, division_label(p.division), p.rating, p.games, p.won, p.expected, p.held_points,
          p.surplus_z, p.linked_share, YES if p.flagged else "", p.what_to_do) for p in watch.held], widths,
        after=more_held(watch.held_not_shown) if watch.held_not_shown else "")
    _section(
        ws, row, "Suggested linking matches",
        "Matches between divisions that would tie weakly linked divisions in fastest. Each line "
        "assumes the lines above it were played.", MATCH_HEADERS,
        [(m.player_a, division_label(m.division_a), m.rating_a, m.player_b, division_label(m.division_b), m.rating_b,
          m.race, m.chance_a, m.expected_games, division_label(m.target), m.sd_before, m.sd_after, m.what_to_do)
         for m in watch.suggestions], widths)
    last = max(len(h) for h in (POOL_HEADERS, DIVISION_HEADERS, HELD_HEADERS, MATCH_HEADERS))
    for col in range(1, last + 1):
        ws.column_dimensions[get_column_letter(col)].width = widths.get(col, 10) + 2
    # Printed, the sheet fits the page width (landscape); rows run on over as many pages as needed.
    ws.page_setup.orientation = "landscape"
    ws.sheet_properties.pageSetUpPr.fitToPage = True
    ws.page_setup.fitToWidth, ws.page_setup.fitToHeight = 1, 0
    ws.column_dimensions[get_column_letter(TODO_COLUMN)].width = TODO_WIDTH
