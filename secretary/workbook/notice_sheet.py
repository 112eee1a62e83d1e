"""The `Notice board` sheet: the week's ratings and changes, laid out to print (one division per page)."""
from __future__ import annotations

import math
from typing import Sequence

from openpyxl.styles import Alignment, Border, Font, PatternFill, Side
from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.pagebreak import Break
from openpyxl.worksheet.worksheet import Worksheet

from secretary.model.breakdown import Breakdown
from secretary.model.notice import NoticeDivision, build_notice
from secretary.model.records import PlayerRating, Settings
from secretary.workbook.printing import FOOTER
from secretary.workbook.schema import NOTICE_SHEET
from secretary.workbook.style import CHANGE_FORMAT, RATING_FORMAT, Styling, put, replace_sheet

NOTICE_HEADERS = ("Rank", "Player", "Rating", "±", "Change", "Why it changed")
WIDTHS = (6, 26, 8, 6, 8, 70)  # characters
SD_SHOWN = '"±"0'
NEW = "new"
LEVELS_LEAD = "Division levels:"
HEADER_ROWS = 3  # title, dates, column headers: repeated on every printed page
LINE_HEIGHT = 15.0  # points per wrapped line of 11-point text
PAPER = {"A4": Worksheet.PAPERSIZE_A4, "Letter": Worksheet.PAPERSIZE_LETTER}

FONT = "Calibri"  # named everywhere: a style without a font name prints in another typeface
TITLE = Font(name=FONT, bold=True, size=16)
BOLD = Font(name=FONT, bold=True)
DIVISION = Font(name=FONT, bold=True, size=13)
SMALL = Font(name=FONT, italic=True, size=10)
SHADE = PatternFill("solid", fgColor="DCE6F0")
UNDERLINE = Border(bottom=Side(style="thin", color="808080"))
WRAP = Alignment(wrap_text=True, vertical="top")
TOP = Alignment(vertical="top")
CENTRE = Alignment(horizontal="center", vertical="top")


def write_notice(wb: Workbook, breakdown: Breakdown, ratings: Sequence[PlayerRating], settings: Settings,
                 levels=()) -> None:
    """Rewrite the `Notice board` sheet: title and dates, the division levels, one block per division, closing lines."""
    notice = build_notice(breakdown, ratings, settings, levels)
    ws = replace_sheet(wb, NOTICE_SHEET)
    last_column = len(NOTICE_HEADERS)
    put(ws.cell(1, 1), notice.title)
    ws.cell(1, 1).font = TITLE
    put(ws.cell(2, 1), notice.dates)
    for col, header in enumerate(NOTICE_HEADERS, start=1):
        cell = ws.cell(HEADER_ROWS, col)
        put(cell, header)
        cell.font, cell.border = BOLD, UNDERLINE
    row = HEADER_ROWS + 1
    for text in (notice.note, notice.doubles):
        if text:
            row = _paragraph(ws, row, text, SMALL) + 1
    if notice.levels:
        row = _paragraph(ws, row, f"{LEVELS_LEAD} {notice.levels_line()}", BOLD)
        row = _paragraph(ws, row, notice.level_sentence, SMALL) + 1
    for k, block in enumerate(notice.divisions):
        if k:
            # A break after the previous block's last row: every division starts a new page.
            ws.row_breaks.append(Break(id=row - 1))
        row = _division_block(ws, row, block, notice.first_update, last_column)
    row += 1
    for line in ((notice.removed,) if notice.removed else ()) + notice.closing:
        row = _paragraph(ws, row, line, SMALL)
    for col, width in enumerate(WIDTHS, start=1):
        ws.column_dimensions[get_column_letter(col)].width = width
    _page_setup(ws, settings, row - 1, last_column)


def _division_block(ws: Worksheet, row: int, block: NoticeDivision, first_update: bool, last_column: int) -> int:
    """The division's heading row and one row per player; returns the next free row."""
    put(ws.cell(row, 1), block.division)
    for col in range(1, last_column + 1):
        ws.cell(row, col).fill = SHADE
    ws.cell(row, 1).font = DIVISION
    row += 1
    formats = (None, None, RATING_FORMAT, SD_SHOWN, CHANGE_FORMAT, None)
    # Each column's alignment as the cell would have it after `.alignment = TOP` and the first and last
    # column's own (CENTRE, WRAP) set over it.
    aligned = [Styling(ws.parent, TOP) for _ in formats]
    aligned[0], aligned[last_column - 1] = Styling(ws.parent, CENTRE), Styling(ws.parent, WRAP)
    for line in block.lines:
        change = (None if first_update else NEW) if line.change is None else line.change
        values = (line.rank, line.name, line.rating, line.sd, change, line.sentence)
        for col, (value, number_format, align) in enumerate(zip(values, formats, aligned), start=1):
            cell = ws.cell(row, col)
            put(cell, value, number_format)
            align(cell)
        _fit_height(ws, row, line.sentence, WIDTHS[-1])
        row += 1
    return row + 1


def _paragraph(ws: Worksheet, row: int, text: str, font: Font) -> int:
    """A line of text across the whole page width (merged, wrapped); returns the next row."""
    ws.merge_cells(start_row=row, start_column=1, end_row=row, end_column=len(NOTICE_HEADERS))
    put(ws.cell(row, 1), text)
    ws.cell(row, 1).font, ws.cell(row, 1).alignment = font, WRAP
    _fit_height(ws, row, text, sum(WIDTHS))
    return row + 1


def _fit_height(ws: Worksheet, row: int, text: str, width: float) -> None:
    """Row height for wrapped text: spreadsheet programs do not grow rows written by a library."""
    lines = max(1, math.ceil(len(text) * 0.8 / width))  # width counts digits; letters run narrower on average
    if lines > 1:
        ws.row_dimensions[row].height = lines * LINE_HEIGHT


def _page_setup(ws: Worksheet, settings: Settings, last_row: int, last_column: int) -> None:
    """Portrait, the settings' paper, fit to the page width, headers repeated, a page number."""
    ws.page_setup.orientation = "portrait"
    ws.page_setup.paperSize = PAPER.get(settings.paper, Worksheet.PAPERSIZE_A4)
    ws.sheet_properties.pageSetUpPr.fitToPage = True
    ws.page_setup.fitToWidth, ws.page_setup.fitToHeight = 1, 0
    ws.print_title_rows = f"1:{HEADER_ROWS}"
    ws.print_area = f"A1:{get_column_letter(last_column)}{last_row}"
    ws.print_options.horizontalCentered = True
    ws.page_margins.left = ws.page_margins.right = 0.5  # inches
    ws.oddFooter.center.text = FOOTER
    ws.oddFooter.right.text = "Ratings are estimates; the committee decides"
    ws.sheet_view.showGridLines = False
