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
from openpyxl.worksheet.pagebreak import Break
from openpyxl.worksheet.worksheet import Worksheet

from secretary.model.records import Settings
from secretary.workbook import schema
from secretary.workbook.style import Styling, WrapsText, header_row, tool_sheet
from secretary.workbook.watch_sheet import HEADING as WATCH_HEADING

PAPER = {"A4": Worksheet.PAPERSIZE_A4, "Letter": Worksheet.PAPERSIZE_LETTER}
LINE_POINTS = 15.0  # height of one line of 11-point text
FOOTER = "&A \u2013 page &P of &N"  # the sheet's name and the page: a loose page finds its sheet again
WRAP = Alignment(wrap_text=True, vertical="top")
TOP = Alignment(vertical="top")  # a number beside a wrapped text prints on its first line, not its last
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
# Page sizes in points (ISO 216 A4; US Letter) and the margins page_setup sets, for estimating page breaks.
PAGE_POINTS = {"A4": (595.3, 841.9), "Letter": (612.0, 792.0)}
SIDE_MARGINS, END_MARGINS = 2 * 0.4 * 72, 2 * 0.6 * 72
FOOTER_ROOM = 0.85  # of the height between the margins: the footer and a safety margin for the estimate


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
    wrap = Styling(ws.parent, WRAP)
    for row in range(first_row, ws.max_row + 1):
        cell = ws.cell(row, column)
        if cell.value is None:
            continue
        wrap(cell)
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
    align_tall_rows(ws)


def align_tall_rows(ws: Worksheet, first_row: int = 2) -> None:
    """In every row taller than one line, the cells that do not wrap sit at the top beside the wrapped ones."""
    top, wraps = Styling(ws.parent, TOP), WrapsText(ws.parent)
    for row in ws.iter_rows(min_row=first_row, max_col=ws.max_column):  # one pass: ws[r] recounts columns
        dims = ws.row_dimensions.get(row[0].row)
        if dims is None or dims.height is None or dims.height <= LINE_POINTS:
            continue
        for cell in row:
            if cell.value is not None and not wraps(cell):
                top(cell)


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
    align_tall_rows(ws, first_row=1)


def page_rows_points(ws: Worksheet, paper: str, landscape: bool) -> float:
    """About how many points of rows one printed page holds, once the sheet is shrunk to one page wide."""
    short, long = PAGE_POINTS.get(paper, PAGE_POINTS["A4"])
    width, height = (long, short) if landscape else (short, long)
    # A column of w characters is about 7 w + 5 pixels of the default font wide, at 0.75 points a pixel.
    sheet = sum(((ws.column_dimensions[get_column_letter(c)].width or 8.43) * 7 + 5) * 0.75
                for c in range(1, ws.max_column + 1))
    scale = min(1.0, (width - SIDE_MARGINS) / sheet)
    return (height - END_MARGINS) * FOOTER_ROOM / scale


def keep_sections_together(ws: Worksheet, starts: list[int], page: float) -> list[int]:
    """Page breaks before the sections (headed at the rows ``starts``) that would otherwise run over a page
    end and fit on a page of their own, so that their column headings print above their rows; returns them."""
    def tall(r: int) -> float:
        return ws.row_dimensions[r].height or LINE_POINTS

    ends = [*starts[1:], ws.max_row + 1]
    used, breaks = 0.0, []
    for row in range(1, ws.max_row + 1):
        if row in starts and used:
            section = sum(tall(r) for r in range(row, ends[starts.index(row)]))
            if used + section > page >= section:
                ws.row_breaks.append(Break(id=row - 1))
                breaks.append(row)
                used = 0.0
        used += tall(row)
        if used > page:  # the program's own page break, about here
            used = tall(row)
    return breaks


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
        starts = [r for r in range(1, watch.max_row + 1) if watch.cell(r, 1).font.sz == WATCH_HEADING.sz
                  and watch.cell(r, 1).font.b and r > 1]
        keep_sections_together(watch, starts, page_rows_points(watch, settings.paper, landscape=True))
