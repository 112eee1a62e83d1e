"""Print setup of the tool's sheets: one page wide, headings repeated, wrapped text in rows tall enough.

Spreadsheet programs print a sheet as it is laid out: without a print setup a
wide table spills onto extra pages, and a row written by a library keeps its
default height however many lines its wrapped text needs. So every tool sheet
gets a page setup here, after it is written, and every long text column is
wrapped with its rows made as tall as a word wrap at the column's width needs.
"""
from __future__ import annotations

import textwrap

from openpyxl.styles import Alignment
from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from secretary.model.records import Settings
from secretary.workbook import schema
from secretary.workbook.style import header_row, tool_sheet

PAPER = {"A4": Worksheet.PAPERSIZE_A4, "Letter": Worksheet.PAPERSIZE_LETTER}
LINE_POINTS = 15.0  # height of one line of 11-point text
FOOTER = "&A \u2013 page &P of &N"  # the sheet's name and the page: a loose page finds its sheet again
WRAP = Alignment(wrap_text=True, vertical="top")
WATCH_FIRST, WATCH_DATA, WATCH_TODO = 20, 10, 40  # characters: the Watch list's names, numbers, what to do

# Per table sheet: landscape?, and the text columns to wrap at a width (characters) that fits a page.
TABLE_SHEETS = {
    schema.RATINGS_SHEET: (False, {"Note": 24}),
    schema.WHY_SHEET: (True, {"Why": 60, "Division": 16, "Player": 22}),
    schema.LOG_SHEET: (True, {"Settings": 50, "Warnings": 40}),
    schema.PROBLEMS_SHEET: (True, {"Problem": 45, "What to do": 45, "Found": 20}),
    schema.HISTORY_SHEET: (False, {}),  # landscape once it has more than HISTORY_PORTRAIT update columns
}
HISTORY_PORTRAIT = 8


def page_setup(ws: Worksheet, paper: str, landscape: bool, title_rows: int = 1) -> None:
    """One page wide (as many pages down as needed), the heading rows on every page, a footer."""
    ws.page_setup.orientation = "landscape" if landscape else "portrait"
    ws.page_setup.paperSize = PAPER.get(paper, Worksheet.PAPERSIZE_A4)
    ws.sheet_properties.pageSetUpPr.fitToPage = True
    ws.page_setup.fitToWidth, ws.page_setup.fitToHeight = 1, 0
    if title_rows:
        ws.print_title_rows = f"1:{title_rows}"
    ws.page_margins.left = ws.page_margins.right = 0.4  # inches
    ws.page_margins.top = ws.page_margins.bottom = 0.6
    ws.oddFooter.center.text = FOOTER


def lines_needed(text: object, width: float) -> int:
    """Lines a text takes wrapped at ``width`` characters (a word wrap, so never fewer than it needs)."""
    if text is None or text == "":
        return 1
    most = max(4, int(width) - 2)  # the cell's own padding
    return max(1, sum(len(textwrap.wrap(part, most)) or 1 for part in str(text).split("\n")))


def wrap_column(ws: Worksheet, column: int, width: float, first_row: int = 2) -> None:
    """A wrapped text column of this width, each row as tall as its longest wrapped cell needs."""
    ws.column_dimensions[get_column_letter(column)].width = width
    for row in range(first_row, ws.max_row + 1):
        cell = ws.cell(row, column)
        if cell.value is None:
            continue
        cell.alignment = WRAP
        lines = lines_needed(cell.value, width)
        height = ws.row_dimensions[row].height or LINE_POINTS
        if lines * LINE_POINTS > height:
            ws.row_dimensions[row].height = lines * LINE_POINTS


def set_up_table(ws: Worksheet, paper: str, landscape: bool, wrapped: dict[str, float]) -> None:
    """A table sheet (headers in row 1): page setup, and its long text columns wrapped."""
    page_setup(ws, paper, landscape)
    for column, header in enumerate(header_row(ws), start=1):
        if header in wrapped:
            wrap_column(ws, column, wrapped[header])
    for cell in ws[1]:
        cell.alignment = WRAP


def set_up_watch(ws: Worksheet, paper: str) -> None:
    """The Watch list: several small tables under their own headings, so no single heading row repeats.
    Its columns are narrowed (headings wrap) and the what-to-do column wrapped, so that one page width
    still prints at a readable size."""
    page_setup(ws, paper, landscape=True, title_rows=0)
    last = ws.max_column
    for column in range(1, last + 1):
        letter = get_column_letter(column)
        width = ws.column_dimensions[letter].width or 10
        ws.column_dimensions[letter].width = WATCH_TODO if column == last else min(width, WATCH_FIRST if column == 1
                                                                                    else WATCH_DATA)
    for row in ws.iter_rows(min_row=1, max_row=ws.max_row):
        texts = [c for c in row if isinstance(c.value, str) and c.column > 1]
        if not texts:
            continue  # a heading or a note in column A runs on over the empty cells to its right
        lines = 1
        for cell in texts:
            cell.alignment = WRAP
            lines = max(lines, lines_needed(cell.value, ws.column_dimensions[get_column_letter(cell.column)].width))
        ws.row_dimensions[row[0].row].height = lines * LINE_POINTS


def set_up_printing(wb: Workbook, settings: Settings) -> None:
    """Page setup for every tool sheet the update wrote (the Notice board sets up its own)."""
    for name, (landscape, wrapped) in TABLE_SHEETS.items():
        ws = tool_sheet(wb, name)
        if ws is not None:
            wide = name == schema.HISTORY_SHEET and ws.max_column > HISTORY_PORTRAIT + 1
            set_up_table(ws, settings.paper, landscape or wide, wrapped)
    watch = tool_sheet(wb, schema.WATCH_SHEET)
    if watch is not None:
        set_up_watch(watch, settings.paper)
