"""The tool's sheets printed by a real spreadsheet program: LibreOffice turns the updated demo workbook into a
PDF, and poppler reads it back page by page (each page's footer names its sheet)."""
from __future__ import annotations

import re
import shutil
import statistics
import subprocess
from pathlib import Path

import pytest

from secretary.workbook import printing, schema
from tests.report.poppler import ARTIFACTS, needs_poppler

pytestmark = [
    pytest.mark.slow, needs_poppler,
    pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice (soffice) is not on PATH"),
]

# Pages each tool sheet of the demo league (63 players, four divisions, two updates) may take: the bounds
# this issue promises, a little above what LibreOffice 7 prints today (measured: see DEVELOPERS.md).
# Measured: Ratings 1, Why it changed 4, Rating history 3, Update log 1, Problems 1, Watch list 2, Notice board 4.
MOST_PAGES = {
    schema.RATINGS_SHEET: 2, schema.WHY_SHEET: 5, schema.HISTORY_SHEET: 3, schema.LOG_SHEET: 1,
    schema.PROBLEMS_SHEET: 1, schema.WATCH_SHEET: 3, schema.NOTICE_SHEET: 5,
}
SMALLEST_TEXT = 7.5  # points: the median word height on a page after fitting it to the page's width (measured
# 7.7 for the Update log, 8.5 to 13.4 for the others)
FOOTER = re.compile(r"(.+?) \u2013 page (\d+) of (\d+)")


@pytest.fixture(scope="module")
def printed(converted):
    """{sheet: [page texts]} and {sheet: [median word heights]} of the updated demo workbook's tool sheets."""
    return converted[:2]


@pytest.fixture(scope="module")
def converted(tmp_path_factory):
    """The printed pages and text sizes, and the updated demo workbook they were printed from."""
    from secretary.pipeline import run_demo

    folder = tmp_path_factory.mktemp("print")
    run_demo(folder / "demo")
    subprocess.run(["soffice", f"-env:UserInstallation={(folder / 'profile').as_uri()}", "--headless",
                    "--convert-to", "pdf", "--outdir", str(folder), str(folder / "demo" / "league.xlsx")],
                   capture_output=True, timeout=300)
    pdf = folder / "league.pdf"
    assert pdf.exists(), "LibreOffice made no PDF"
    ARTIFACTS.mkdir(exist_ok=True)
    shutil.copyfile(pdf, ARTIFACTS / "demo-workbook-printed.pdf")
    text = subprocess.run(["pdftotext", "-layout", "-enc", "UTF-8", str(pdf), "-"], check=True,
                          capture_output=True, text=True, encoding="utf-8").stdout
    pages: dict[str, list[str]] = {}
    for page in text.split("\f"):
        footer = FOOTER.findall(page)
        if footer:
            pages.setdefault(footer[-1][0].strip(), []).append(page)
    heights = _word_heights(pdf)
    sizes: dict[str, list[float]] = {}
    for number, page in enumerate(text.split("\f")):
        footer = FOOTER.findall(page)
        if footer and heights.get(number):
            sizes.setdefault(footer[-1][0].strip(), []).append(statistics.median(heights[number]))
    return pages, sizes, folder / "demo" / "league.xlsx"


def _word_heights(pdf: Path) -> dict[int, list[float]]:
    """Per page (from 0), the height in points of every word, from ``pdftotext -bbox``."""
    html = subprocess.run(["pdftotext", "-bbox", str(pdf), "-"], check=True, capture_output=True,
                          text=True, encoding="utf-8").stdout
    out: dict[int, list[float]] = {}
    for number, page in enumerate(html.split("<page ")[1:]):
        out[number] = [float(b) - float(a) for a, b in re.findall(r'yMin="([\d.]+)" xMax="[\d.]+" yMax="([\d.]+)"',
                                                                   page)]
    return out


def test_every_tool_sheet_prints_within_its_page_bound(printed):
    pages, _ = printed
    for sheet, most in MOST_PAGES.items():
        assert sheet in pages, f"{sheet}: no printed page has its footer"
        assert len(pages[sheet]) <= most, f"{sheet}: {len(pages[sheet])} pages (at most {most})"


def test_no_value_prints_as_hashes(printed):
    pages, _ = printed
    for sheet, texts in pages.items():
        assert not any("###" in t for t in texts), f"{sheet} prints '###' (a column too narrow for its values)"


def test_headings_repeat_on_the_second_page_of_long_sheets(printed):
    pages, _ = printed
    for sheet, heading in ((schema.WHY_SHEET, "Opponents re-rated"), (schema.HISTORY_SHEET, "Player"),
                           (schema.NOTICE_SHEET, "Why it changed")):
        assert len(pages[sheet]) >= 2, f"{sheet} is no longer long enough to test this"
        assert heading in pages[sheet][1], f"{sheet}: the column headings are not repeated on page 2"


def test_the_rating_history_chart_is_on_one_page(printed):
    pages, _ = printed
    with_title = [t for t in pages[schema.HISTORY_SHEET] if "ratings over time" in t]
    assert len(with_title) == 1


def test_the_printed_text_stays_readable(printed):
    _, sizes = printed
    for sheet in MOST_PAGES:
        assert min(sizes[sheet]) >= SMALLEST_TEXT, f"{sheet}: text shrunk to {min(sizes[sheet]):.1f} points"


def test_lines_needed_is_a_word_wrap():
    assert printing.lines_needed("", 20) == 1
    assert printing.lines_needed("a" * 10, 20) == 1
    assert printing.lines_needed("word " * 20, 22) == 5  # 100 characters, 20 a line (22 less the padding)
    assert printing.lines_needed("one\ntwo", 40) == 2


def _rows(workbook: Path, sheet: str, first: str, value: str) -> list[tuple[str, object]]:
    """(first column, value column) of every row under a table's heading row (the first row naming ``first``)."""
    import openpyxl

    wb = openpyxl.load_workbook(workbook, read_only=True, data_only=True)
    try:
        rows = list(wb[sheet].iter_rows(values_only=True))
    finally:
        wb.close()
    top = next(i for i, r in enumerate(rows) if first in r and value in r)
    a, b = rows[top].index(first), rows[top].index(value)
    out = []
    for r in rows[top + 1:]:
        if r[a] is None or r[b] is None:
            break
        out.append((str(r[a]), r[b]))
    return out


def test_numbers_print_on_the_line_of_their_name_beside_wrapped_text(converted):
    """In a row made tall by a wrapped text, every cell starts on the row's first line: a player's name and
    their numbers print on one line (they printed a few lines apart, numbers at the row's foot)."""
    pages, _, workbook = converted
    for sheet, first, value, shown in (
            (schema.WHY_SHEET, "Player", "After", lambda v: f"{v:.0f}"),
            (schema.WATCH_SHEET, "Division", "Players", str),
            (schema.WATCH_SHEET, "Player A", "Rating A", lambda v: f"{v:.0f}")):
        rows = _rows(workbook, sheet, first, value)
        assert rows, (sheet, first)
        lines = [line for text in pages[sheet] for line in text.splitlines()]
        for name, number in rows:
            line = next(line for line in lines if re.match(rf"\s*{re.escape(name)}\s", line))
            assert re.search(rf"(?<!\S){re.escape(shown(number))}(?!\S)", line), (sheet, name, line)


def test_every_watch_list_page_prints_its_tables_headings(printed):
    """The Watch list's tables each have their own heading row, so a table is kept to one page when it fits:
    no page starts with rows whose column headings are on the page before."""
    pages, _ = printed
    assert len(pages[schema.WATCH_SHEET]) >= 2, "the Watch list is no longer long enough to test this"
    for number, text in enumerate(pages[schema.WATCH_SHEET], start=1):
        body = [line.strip() for line in text.splitlines() if line.strip()]
        assert "What to do" in text, f"page {number} has rows without their headings"
        assert body[0] in ("Watch list", "Separate pools", "Divisions", "Held back", "Suggested linking matches"), \
            f"page {number} starts in the middle of a table: {body[0]!r}"


def test_a_section_that_would_run_over_a_page_end_starts_a_page():
    from openpyxl import Workbook

    ws = Workbook().active
    for row in range(1, 61):
        ws.cell(row, 1).value = f"row {row}"
        ws.row_dimensions[row].height = 10
    # Sections at rows 1, 20, 30 and 40 on pages holding 250 points (25 rows of 10): 1-19 (190 points) and
    # 20-29 (100) would make 290, so 20 starts page two; 30-39 joins it (200); 40-60 (210) fits on a page of
    # its own but not after them (410), so it starts page three.
    assert printing.keep_sections_together(ws, [1, 20, 30, 40], page=250) == [20, 40]
    assert [b.id for b in ws.row_breaks.brk] == [19, 39]
    # A section longer than a page runs on where it is: a break before it would only add a page.
    ws2 = Workbook().active
    for row in range(1, 41):
        ws2.cell(row, 1).value = "x"
        ws2.row_dimensions[row].height = 10
    assert printing.keep_sections_together(ws2, [1, 5], page=250) == []


def test_every_page_of_a_table_sheet_starts_with_its_whole_heading_row(converted):
    """One page wide and headings repeated: each printed page of a table sheet begins with every column heading
    of its first row, in order (a sheet wider than its page would lose its right-hand headings)."""
    import openpyxl

    pages, _, workbook = converted
    wb = openpyxl.load_workbook(workbook, read_only=True)
    try:
        headings = {sheet: [str(v) for v in next(wb[sheet].iter_rows(max_row=1, values_only=True)) if v is not None]
                    for sheet in printing.TABLE_SHEETS if sheet in pages}
    finally:
        wb.close()
    assert set(headings) == set(printing.TABLE_SHEETS)
    for sheet, names in headings.items():
        for number, text in enumerate(pages[sheet], start=1):
            first = next(line for line in text.splitlines() if line.strip())
            pattern = r"\s+".join(re.escape(n) for n in names)
            assert re.match(rf"\s*{pattern}\s*$", first), f"{sheet} page {number} starts {first!r}"
