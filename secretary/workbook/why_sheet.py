"""The `Why it changed` sheet: every player's change split into its four parts, in whole points."""
from __future__ import annotations

from typing import Sequence

from openpyxl.styles import Alignment, Font
from openpyxl.workbook.workbook import Workbook

from secretary.model.breakdown import Breakdown, PlayerChange
from secretary.model.notice import PART_NAMES, division_label, division_order
from secretary.model.records import Settings
from secretary.workbook.schema import WHY_SHEET
from secretary.workbook.style import CHANGE_FORMAT, RATING_FORMAT, Styling, put, replace_sheet, write_table

WHY_HEADERS = ("Player", "Division", "Before", "After", "Change", *PART_NAMES, "Why")
WHY_WIDTH = 100  # characters: the sentence column, wrapped
FIRST_UPDATE_LINES = (
    "From the next update on, this sheet shows how much each player's rating moved and why, "
    "split into four parts that add up to the change:",
    "Own results: the player's own new games (and older games slowly counting less).",
    "Opponents re-rated: players they have met were rated higher or lower than before.",
    "Group shift: their whole division moved up or down against the other divisions.",
    "Corrections: old results that were edited or removed, or changed settings.",
)


def by_division_then_change(players: Sequence[PlayerChange]) -> list[PlayerChange]:
    """Players grouped by division (strongest first, as on the notice board), largest shown change first,
    players new this update last (they have a first rating, not a change)."""
    order = division_order((p.division, p.after) for p in players)
    return sorted(players, key=lambda p: (order[p.division], p.is_new, -abs(p.shown[2]), p.name.casefold()))


def why_figures(p: PlayerChange) -> tuple:
    """Before, After, Change and the four parts as the sheet shows them. A player new this update has no
    Before and no change, so only After is filled (blank, as the Ratings sheet's Change is)."""
    if p.is_new:
        return (None, p.shown[1], *([None] * (len(p.shown) - 2)))
    return tuple(p.shown)


def write_why(wb: Workbook, breakdown: Breakdown, settings: Settings) -> None:
    """Rewrite the `Why it changed` sheet from a ``Breakdown``."""
    ws = replace_sheet(wb, WHY_SHEET)
    if breakdown.first_update:
        # No previous ratings: a table of zeros would suggest a comparison that does not exist.
        put(ws.cell(1, 1), "Why it changed")
        ws.cell(1, 1).font = Font(bold=True, size=14)
        lines = (breakdown.note or "First update: these are first ratings.", *FIRST_UPDATE_LINES)
        for row, line in enumerate(lines, start=3):
            put(ws.cell(row, 1), line)
        ws.column_dimensions["A"].width = WHY_WIDTH
        return
    rows = [
        (p.name, division_label(p.division), *why_figures(p), p.sentence)
        for p in by_division_then_change(breakdown.players)
    ]
    formats = {"Before": RATING_FORMAT, "After": RATING_FORMAT, "Change": CHANGE_FORMAT}
    formats.update({h: CHANGE_FORMAT for h in PART_NAMES})
    count = write_table(ws, WHY_HEADERS, rows, formats=formats, widths={"Why": WHY_WIDTH}, freeze="B2")
    why_column = len(WHY_HEADERS)
    wrap = Styling(wb, Alignment(wrap_text=True, vertical="top"))
    for row in range(2, count + 2):
        wrap(ws.cell(row, why_column))
    # Notes about the whole update go below the table, leaving the table itself plain data.
    notes = [breakdown.note] if breakdown.note else []
    if breakdown.removed_players:
        gone = ", ".join(f"{name} (last {round(rating)})" for name, rating in breakdown.removed_players)
        notes.append(f"No longer rated (no rated games left): {gone}.")
    for k, line in enumerate(notes):
        put(ws.cell(count + 3 + k, 1), line)
