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
MOST_PAGES = {
    schema.RATINGS_SHEET: 3, schema.WHY_SHEET: 6, schema.HISTORY_SHEET: 4, schema.LOG_SHEET: 1,
    schema.PROBLEMS_SHEET: 1, schema.WATCH_SHEET: 3, schema.NOTICE_SHEET: 8,
}
SMALLEST_TEXT = 6.5  # points: the median word height on a page, after fitting it to the page's width
FOOTER = re.compile(r"(.+?) \u2013 page (\d+) of (\d+)")


@pytest.fixture(scope="module")
def printed(tmp_path_factory):
    """{sheet: [page texts]} and {sheet: [median word heights]} of the updated demo workbook's tool sheets."""
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
    return pages, sizes


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
