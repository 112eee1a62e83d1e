"""The `Notice board` sheet: content per division and the page setup that makes it print well."""
import re
import shutil
import subprocess

import pytest
from openpyxl import Workbook, load_workbook

from secretary.model.notice import CLOSING, build_notice
from secretary.workbook.notice_sheet import HEADER_ROWS, NOTICE_HEADERS, write_notice
from secretary.workbook.schema import NOTICE_SHEET
from tests.invented_league import SETTINGS, two_updates

# OOXML paper size codes. Source: ECMA-376 Part 1, 18.3.1.64 pageSetup (paperSize): 1 = Letter, 9 = A4.
LETTER_CODE, A4_CODE = 1, 9


@pytest.fixture(scope="module")
def updates():
    return two_updates()


def saved(tmp_path, update, settings=SETTINGS, name="notice.xlsx"):
    wb = Workbook()
    wb.remove(wb.active)
    write_notice(wb, update.breakdown, update.ratings, settings)
    path = tmp_path / name
    wb.save(path)
    return path


def column(ws, col):
    return [ws.cell(r, col).value for r in range(1, ws.max_row + 1)]


def test_title_dates_and_one_block_per_division(tmp_path, updates):
    update = updates[1]
    ws = load_workbook(saved(tmp_path, update))[NOTICE_SHEET]
    assert "Riverside Cue League" in ws["A1"].value
    assert "3 March 2026" in ws["A2"].value and "10 March 2026" in ws["A2"].value
    assert [ws.cell(HEADER_ROWS, c).value for c in range(1, len(NOTICE_HEADERS) + 1)] == list(NOTICE_HEADERS)
    notice = build_notice(update.breakdown, update.ratings, SETTINGS)
    names = column(ws, 2)
    for block in notice.divisions:
        start = column(ws, 1).index(block.division) + 1  # 1-based heading row
        for k, line in enumerate(block.lines, start=start + 1):
            row = [ws.cell(k, c).value for c in range(1, 7)]
            assert row[:4] == [line.rank, line.name, pytest.approx(line.rating), pytest.approx(line.sd)]
            assert row[4] == ("new" if line.change is None else line.change)
            assert row[5] == line.sentence
            assert ws.cell(k, 2).data_type == "s"
    assert sorted(n for n in names if n in {p.name for p in update.ratings}) == sorted(p.name for p in update.ratings)
    assert ws.cell(column(ws, 2).index("=Dev Pike") + 1, 2).data_type == "s"  # a name, not a formula


def test_closing_lines_in_plain_words(tmp_path, updates):
    ws = load_workbook(saved(tmp_path, updates[1]))[NOTICE_SHEET]
    text = [v for v in column(ws, 1) if isinstance(v, str)]
    for line in CLOSING:
        assert line in text
    assert any("±" in t and "uncertainty" in t for t in text)


def test_page_setup_prints_each_division_on_its_own_pages(tmp_path, updates):
    update = updates[1]
    ws = load_workbook(saved(tmp_path, update))[NOTICE_SHEET]
    assert ws.page_setup.orientation == "portrait"
    assert int(ws.page_setup.paperSize) == A4_CODE
    assert ws.sheet_properties.pageSetUpPr.fitToPage
    assert (int(ws.page_setup.fitToWidth), int(ws.page_setup.fitToHeight)) == (1, 0)
    assert ws.print_title_rows in ("1:3", "$1:$3")
    assert re.fullmatch(r"'?Notice board'?!\$A\$1:\$F\$\d+", ws.print_area)
    headings = [column(ws, 1).index(b.division) + 1 for b in build_notice(update.breakdown, update.ratings, SETTINGS).divisions]
    # A manual break after the row before each division's heading but the first (which shares the title's page).
    assert sorted(b.id for b in ws.row_breaks.brk) == [h - 1 for h in headings[1:]]
    letter = load_workbook(saved(tmp_path, update, SETTINGS.replace(paper="Letter"), "letter.xlsx"))[NOTICE_SHEET]
    assert int(letter.page_setup.paperSize) == LETTER_CODE


def test_first_update_shows_first_ratings_without_changes(tmp_path, updates):
    ws = load_workbook(saved(tmp_path, updates[0]))[NOTICE_SHEET]
    assert "First ratings" in ws["A2"].value
    changes = [ws.cell(r, 5).value for r in range(HEADER_ROWS + 1, ws.max_row + 1) if isinstance(ws.cell(r, 3).value, float)]
    assert changes and all(v is None for v in changes)


@pytest.mark.slow
@pytest.mark.skipif(shutil.which("soffice") is None or shutil.which("pdftotext") is None,
                    reason="LibreOffice (soffice) or poppler (pdftotext) not installed")
def test_printed_by_a_spreadsheet_program_one_division_per_page(tmp_path, updates):
    """LibreOffice prints the sheet: A4, and each page holds exactly one division (the blocks are short)."""
    update = updates[1]
    path = saved(tmp_path, update)
    subprocess.run(["soffice", "--headless", f"-env:UserInstallation=file://{tmp_path}/lo", "--convert-to", "pdf",
                    "--outdir", str(tmp_path), str(path)], check=True, capture_output=True, timeout=120)
    pdf = tmp_path / "notice.pdf"
    info = subprocess.run(["pdfinfo", str(pdf)], check=True, capture_output=True, text=True).stdout
    assert "A4" in info  # ISO 216 A4 as pdfinfo names it
    divisions = [b.division for b in build_notice(update.breakdown, update.ratings, SETTINGS).divisions]
    pages = int(re.search(r"Pages:\s+(\d+)", info).group(1))
    assert pages == len(divisions)
    for page, division in enumerate(divisions, start=1):
        text = subprocess.run(["pdftotext", "-f", str(page), "-l", str(page), "-layout", str(pdf), "-"],
                              check=True, capture_output=True, text=True).stdout
        lines = {line.strip() for line in text.splitlines()}
        assert division in lines and not (set(divisions) - {division}) & lines
        assert "Riverside Cue League" in text  # the title rows repeat on every page
