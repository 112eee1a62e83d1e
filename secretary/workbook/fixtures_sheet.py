"""The tool's own columns in the secretary's `Fixtures` sheet: chance, fair race and a note.

Only these columns are written; every other cell of the sheet is left as the
secretary made it.  Columns are found by their header (any position, any
case) and added after the last used column when absent.
"""
from __future__ import annotations

import datetime as dt
from copy import copy
from typing import Sequence

from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from secretary.model.fixtures import FixtureForecast
from secretary.model.notice import fixture_note
from secretary.model.records import Settings
from secretary.workbook.schema import FIXTURES, header_key
from secretary.workbook.style import put

CHANCE = "Chance A"
FAIR_A = "Fair race A"
FAIR_B = "Fair race B"
NOTE = "Forecast note"
TOOL_HEADERS = (CHANCE, FAIR_A, FAIR_B, NOTE)
CHANCE_FORMAT = '[<0.005]"<1%";[>=0.995]">99%";0%'  # never 0% or 100% for a chance that is not certain
RACE_FORMAT = "0"
HEADER_SEARCH_ROWS = 10  # the reader allows a title line or two above the headers
WIDTHS = {CHANCE: 10, FAIR_A: 12, FAIR_B: 12, NOTE: 34}


def fixtures_sheet(wb: Workbook) -> Worksheet | None:
    """The secretary's Fixtures sheet (name matched like a header), or None."""
    for ws in wb.worksheets:
        if header_key(ws.title) == header_key(FIXTURES.name):
            return ws
    return None


def _header_row(ws: Worksheet) -> int | None:
    """The row holding both player headers (within the first few rows), or None."""
    wanted = {header_key(FIXTURES.column(k).header) for k in ("player_a", "player_b")}
    for row in range(1, min(HEADER_SEARCH_ROWS, ws.max_row) + 1):
        found = {header_key(c.value) for c in ws[row] if isinstance(c.value, str)}
        if wanted <= found:
            return row
    return None


def _tool_columns(ws: Worksheet, header_row: int) -> dict[str, int]:
    """Where each tool column is; missing ones are added after the last used column."""
    where: dict[str, int] = {}
    for cell in ws[header_row]:
        key = header_key(cell.value) if isinstance(cell.value, str) else ""
        for header in TOOL_HEADERS:
            if key == header_key(header) and header not in where:
                where[header] = cell.column
    next_column = ws.max_column + 1
    template = ws.cell(header_row, _player_column(ws, header_row))
    for header in TOOL_HEADERS:
        if header in where:
            continue
        cell = ws.cell(header_row, next_column)
        put(cell, header)
        cell.font = copy(template.font)  # look like the secretary's own headers
        ws.column_dimensions[get_column_letter(next_column)].width = WIDTHS[header]
        where[header] = next_column
        next_column += 1
    return where


def _player_column(ws: Worksheet, header_row: int) -> int:
    wanted = header_key(FIXTURES.column("player_a").header)
    return next(c.column for c in ws[header_row] if isinstance(c.value, str) and header_key(c.value) == wanted)


def write_fixture_columns(wb: Workbook, forecasts: Sequence[FixtureForecast], settings: Settings,
                          latest: dt.date | None = None) -> int:
    """Write Chance A, Fair race A, Fair race B and Forecast note on each fixture's row; returns rows written.
    The note marks a fixture dated before ``latest`` (the newest result) as past.

    Does nothing (returns 0) when the workbook has no Fixtures sheet with player headers.
    """
    ws = fixtures_sheet(wb)
    header_row = _header_row(ws) if ws is not None else None
    if header_row is None:
        return 0
    columns = _tool_columns(ws, header_row)
    # Last update's figures on rows that are no fixture any more would mislead: clear the tool's columns.
    for col in columns.values():
        for row in range(header_row + 1, ws.max_row + 1):
            ws.cell(row, col).value = None
    written = 0
    for fc in forecasts:
        row = fc.fixture.row
        if row <= header_row:
            continue  # not from this sheet
        put(ws.cell(row, columns[CHANCE]), fc.race_chance, CHANCE_FORMAT)
        put(ws.cell(row, columns[FAIR_A]), fc.fair_race_a, RACE_FORMAT)
        put(ws.cell(row, columns[FAIR_B]), fc.fair_race_b, RACE_FORMAT)
        put(ws.cell(row, columns[NOTE]), fixture_note(fc, latest))
        written += 1
    return written
