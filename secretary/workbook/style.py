"""Shared helpers for the tool's output sheets: replace a sheet, write a table, store text as text."""
from __future__ import annotations

import datetime as dt
import re
from typing import Iterable, Mapping, Sequence

from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE
from openpyxl.styles import Alignment, Border, Font, PatternFill
from openpyxl.styles.cell_style import StyleArray
from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.table import Table, TableStyleInfo
from openpyxl.worksheet.worksheet import Worksheet

from secretary.workbook import toolsheets
from secretary.workbook.schema import OUTPUT_SHEETS, STATE_SHEET

# Number formats of the output columns.
RATING_FORMAT = "0"
SD_FORMAT = "0"
CHANGE_FORMAT = "+0;-0;0"
GAMES_FORMAT = "0.0"
DATE_FORMAT = "yyyy-mm-dd"
TIME_FORMAT = "yyyy-mm-dd hh:mm"

MAX_CELL_TEXT = 32767  # Excel's limit on the characters in one cell
_WIDEST = 60  # characters: a column is never made wider than this


def safe_text(value: object) -> object:
    """A value fit for a cell: text loses the characters XML cannot hold and is cut to Excel's limit."""
    if not isinstance(value, str):
        return value
    return ILLEGAL_CHARACTERS_RE.sub("", value)[:MAX_CELL_TEXT]


def put(cell, value: object, number_format: str | None = None) -> None:
    """Write one value; text is always stored as text, never as a formula or an error code."""
    value = safe_text(value)
    if value == "":
        value = None  # an empty text is saved as an empty cell anyway
    cell.value = value
    if isinstance(value, str):
        # openpyxl turns "=..." into a formula and "#N/A" into an error; a name is neither.
        cell.data_type = "s"
    if number_format and value is not None:
        cell.number_format = number_format


# Where a workbook keeps each kind of style, and which index of a cell's style points into it.
_STYLE_LISTS = {Alignment: ("_alignments", "alignmentId"), Font: ("_fonts", "fontId"),
                PatternFill: ("_fills", "fillId"), Border: ("_borders", "borderId")}


class Styling:
    """One alignment, font, fill or border for many cells of a workbook: ``styling(cell)`` does what
    ``cell.alignment = value`` (or ``.font``, ``.fill``, ``.border``) does, with the style found in the
    workbook's list once, not hashed again for every cell (thousands of rows on the tool's sheets)."""

    def __init__(self, wb: Workbook, value: Alignment | Font | PatternFill | Border):
        collection, self.key = _STYLE_LISTS[type(value)]
        self.index = getattr(wb, collection).add(value)

    def __call__(self, cell) -> None:
        if not cell._style:  # as openpyxl's own attribute does
            cell._style = StyleArray()
        setattr(cell._style, self.key, self.index)


class WrapsText:
    """``wraps(cell)`` is ``cell.alignment.wrap_text`` (as a bool), each alignment of the workbook asked once."""

    def __init__(self, wb: Workbook):
        self.alignments = wb._alignments
        self.known: dict[int, bool] = {}

    def __call__(self, cell) -> bool:
        index = cell._style.alignmentId if cell._style else 0  # no style yet: the workbook's first
        if index not in self.known:
            self.known[index] = bool(self.alignments[index].wrap_text)
        return self.known[index]


def replace_sheet(wb: Workbook, name: str) -> Worksheet:
    """An empty tool sheet of role `name` in place of the tool's old one (same name and position), or a
    new one, marked as the tool's (see `toolsheets`); a sheet of the secretary's is never touched."""
    if name not in OUTPUT_SHEETS:
        raise ValueError(f"{name!r} is not one of the tool's sheets; the secretary's sheets are never replaced")
    tool = toolsheets.of_workbook(wb)
    current = tool.get(name)
    if current is not None:
        old = wb[current]
        index = wb.sheetnames.index(current)
        tab_colour = old.sheet_properties.tabColor
        was_selected = old.sheet_view.tabSelected
        wb.remove(old)
    else:
        current = toolsheets.free_name(name, wb.sheetnames)
        index = _new_sheet_index(wb, name, tool)
        tab_colour, was_selected = None, False
    ws = wb.create_sheet(current, index)
    ws.sheet_properties.tabColor = tab_colour
    ws.sheet_view.tabSelected = was_selected
    toolsheets.mark(wb, name, current)
    _keep_active_visible(wb)
    return ws


def tool_sheet(wb: Workbook, name: str) -> Worksheet | None:
    """The tool's sheet of role `name`, or None."""
    current = toolsheets.of_workbook(wb).get(name)
    return wb[current] if current is not None else None


def remove_sheet(wb: Workbook, name: str) -> None:
    """Remove the tool's sheet of role `name` if it is there."""
    if name not in OUTPUT_SHEETS:
        raise ValueError(f"{name!r} is not one of the tool's sheets")
    ws = tool_sheet(wb, name)
    if ws is not None:
        wb.remove(ws)
        marker = toolsheets.marker(name)
        for old in [n for n in wb.defined_names if n.casefold() == marker]:
            del wb.defined_names[old]
        _keep_active_visible(wb)


def _new_sheet_index(wb: Workbook, name: str, tool: dict[str, str]) -> int:
    """Where a new tool sheet goes: after the tool's other sheets, before the hidden state sheet."""
    names = wb.sheetnames
    if name == STATE_SHEET:
        return len(names)
    state = tool.get(STATE_SHEET)
    mine = {n for role, n in tool.items() if role != STATE_SHEET}
    placed = [i for i, n in enumerate(names) if n in mine]
    if placed:
        return placed[-1] + 1
    return names.index(state) if state in names else len(names)


def _keep_active_visible(wb: Workbook) -> None:
    """Excel refuses a workbook whose active sheet is hidden; fall back to the first visible one."""
    index = wb._active_sheet_index  # the index itself; wb.active would fail when out of range
    if 0 <= index < len(wb._sheets) and wb._sheets[index].sheet_state == "visible":
        return
    for i, ws in enumerate(wb._sheets):
        if ws.sheet_state == "visible":
            wb.active = i
            return


def write_table(
    ws: Worksheet,
    headers: Sequence[str],
    rows: Iterable[Sequence[object]],
    *,
    formats: Mapping[str, str] | None = None,
    widths: Mapping[str, float] | None = None,
    freeze: str = "A2",
) -> int:
    """Write a header and rows from A1 as an Excel table with filter buttons; returns the row count."""
    formats = dict(formats or {})
    widths = dict(widths or {})
    if len({h.casefold() for h in headers}) != len(headers):
        raise ValueError(f"table headers must be unique: {headers}")
    for col, header in enumerate(headers, start=1):
        put(ws.cell(1, col), header)
    column_formats = [formats.get(h) for h in headers]
    longest = [len(h) for h in headers]
    count = 0
    for r, row in enumerate(rows, start=2):
        count += 1
        for col, value in enumerate(row, start=1):
            if value is None or value == "":
                continue
            put(ws.cell(r, col), value, column_formats[col - 1])
            longest[col - 1] = max(longest[col - 1], _shown_length(value))
    # Excel wants at least one data row under a table's header, even an empty one.
    last_row = max(count, 1) + 1
    ref = f"A1:{get_column_letter(len(headers))}{last_row}"
    table = Table(displayName=_table_name(ws), ref=ref)
    table.tableStyleInfo = TableStyleInfo(name="TableStyleMedium2", showRowStripes=True)
    ws.add_table(table)
    ws.freeze_panes = freeze
    for col, header in enumerate(headers, start=1):
        width = widths.get(header, min(longest[col - 1] + 3, _WIDEST))
        ws.column_dimensions[get_column_letter(col)].width = width
    return count


def _shown_length(value: object) -> int:
    if isinstance(value, float):
        return len(f"{value:.1f}")
    if isinstance(value, dt.datetime):
        return len(TIME_FORMAT)  # "2026-04-16 10:30": a date's width would print as "###"
    if isinstance(value, dt.date):
        return 10
    return len(str(value))


def _table_name(ws: Worksheet) -> str:
    """A workbook-unique table name made from the sheet name (Excel allows letters, digits, _)."""
    base = "Secretary_" + re.sub(r"\W", "_", ws.title, flags=re.ASCII)
    taken = {name.casefold() for sheet in ws.parent.worksheets for name in sheet.tables}
    taken |= {name.casefold() for name in ws.parent.defined_names}
    name, n = base, 1
    while name.casefold() in taken:
        n += 1
        name = f"{base}_{n}"
    return name


def header_row(ws: Worksheet) -> list[str]:
    """The first row's texts (blank cells as empty text)."""
    first = next(ws.iter_rows(min_row=1, max_row=1, values_only=True), ())
    return ["" if v is None else str(v).strip() for v in first]
