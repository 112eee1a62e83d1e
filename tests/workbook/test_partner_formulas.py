"""A formula in a Partner A/B cell with no saved value: refused by the command line, naming the cell.

Blank partners make a row singles, so a partner formula that no spreadsheet program has calculated
(openpyxl writes formulas without their values) would silently turn a doubles frame into a singles one.
"""
from __future__ import annotations

import datetime as dt
import hashlib
import subprocess
import sys
from pathlib import Path

import openpyxl

from secretary.workbook import cells
from secretary.workbook.cells import Workbook as ValuesBook
from secretary.workbook.read import read_workbook
from tests.workbook.league_books import FIXTURES_HEADERS, RESULTS_HEADERS, D, good_results, rewrite_part, write_book

SHEET1 = "xl/worksheets/sheet1.xml"

HEADERS = RESULTS_HEADERS + ("Partner A", "Partner B")
LATER = D + dt.timedelta(days=7)
PLAYERS = [["Ada Finch", "Premier", None, None], ["Bram Oak", "Premier", None, None],
           ["Cleo Marsh", "Premier", None, None], ["Dev Pike", "Premier", None, None]]


def _book(path: Path, *extra, fixtures=None) -> Path:
    rows = [row + [None, None] for row in good_results()] + [list(row) for row in extra]
    return write_book(path, rows, results_headers=HEADERS, players=PLAYERS, fixtures=fixtures,
                      fixtures_headers=FIXTURES_HEADERS + ("Partner A", "Partner B"))


def _run(path: Path) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "secretary.cli", "update", str(path)],
                          capture_output=True, text=True, timeout=300)


def test_the_command_line_refuses_partner_formulas_without_saved_values(tmp_path):
    # Row 6: both partners are formulas (read blank, the row would be singles); row 7: one partner is.
    path = _book(tmp_path / "league.xlsx",
                 [LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "", '="Bram"&" Oak"', '="Dev"&" Pike"'],
                 [LATER, "Premier", "Cleo Marsh", "Ada Finch", 3, 2, "", "", "Bram Oak", '=B2'])
    before = hashlib.sha256(path.read_bytes()).hexdigest()
    done = _run(path)
    text = done.stdout + done.stderr
    assert done.returncode == 1, text
    assert "Traceback" not in text
    lines = [line for line in text.splitlines() if "formula without a saved value" in line]
    assert len(lines) == 3, text
    for row, column in ((6, "Partner A"), (6, "Partner B"), (7, "Partner B")):
        assert any(f"row {row}" in line and column in line for line in lines), text
    assert "Open and save the workbook in your spreadsheet program" in text
    assert hashlib.sha256(path.read_bytes()).hexdigest() == before


def test_blank_partners_beside_a_formula_elsewhere_stay_a_singles_row(tmp_path):
    """The sheet holds a formula (in the Event cell), but no partner cell does: no error, a singles result."""
    path = _book(tmp_path / "league.xlsx",
                 [LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "=1+1", "", None, None])
    values = ValuesBook(path)
    assert values.read_cells("Results").formulas == {(6, 7)}
    values.close()
    book = read_workbook(path)
    assert book.errors == ()
    assert len(book.results) == 5 and not book.results[-1].is_doubles


def test_fixtures_partner_formulas_are_refused_too(tmp_path):
    fixtures = [[LATER, "Premier", "Ada Finch", "Cleo Marsh", None, None, None, '="Bram Oak"', "Dev Pike"]]
    path = _book(tmp_path / "league.xlsx", fixtures=[f[:len(FIXTURES_HEADERS)] + f[-2:] for f in fixtures])
    book = read_workbook(path)
    assert [(p.sheet, p.row, p.column, p.problem) for p in book.errors
            if p.problem == "a formula without a saved value"] == [("Fixtures", 2, "Partner A", "a formula without a saved value")]


def test_the_byte_search_places_formulas_across_chunk_boundaries(tmp_path, monkeypatch):
    """Each formula's cell, as openpyxl (formulas kept) lists it, whatever the chunk size of the search."""
    wb = openpyxl.Workbook()
    ws = wb.active
    for r in range(1, 400):
        ws.cell(r, 1, f"name {r}")
        if r % 7 == 0:
            ws.cell(r, 3 + r % 30, f"=A{r}")
    wb.save(tmp_path / "f.xlsx")
    reference = {(c.row, c.column) for row in ws.iter_rows() for c in row if c.data_type == "f"}
    for chunk in (1 << 22, 4096, 1000, 777):
        monkeypatch.setattr(cells, "_CHUNK", chunk)
        values = ValuesBook(tmp_path / "f.xlsx")
        assert values.read_cells(values.sheetnames[0]).formulas == reference, chunk
        values.close()


def test_a_cell_the_search_cannot_place_leaves_the_formulas_to_openpyxl(tmp_path):
    """A formula cell without a reference (legal XML): formulas unknown, and openpyxl still finds the partner's."""
    path = _book(tmp_path / "league.xlsx",
                 [LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "", '="Bram Oak"', '="Dev Pike"'])
    odd = rewrite_part(path, tmp_path / "noref.xlsx", SHEET1, b'<c r="I6"><f>', b'<c><f>')
    values = ValuesBook(odd)
    assert values.read_cells("Results").formulas is None
    values.close()
    book = read_workbook(odd)
    assert [(p.row, p.column) for p in book.errors] == [(6, "Partner A"), (6, "Partner B")]


def test_a_partner_formula_with_its_saved_value_is_read_as_the_name(tmp_path):
    """As a spreadsheet program saves it (value beside the formula): a doubles row, no error."""
    path = _book(tmp_path / "league.xlsx",
                 [LATER, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "", '="Bram Oak"', "Dev Pike"])
    saved = rewrite_part(path, tmp_path / "saved.xlsx", SHEET1, b'<c r="I6"><f>"Bram Oak"</f><v></v></c>',
                         b'<c r="I6" t="str"><f>"Bram Oak"</f><v>Bram Oak</v></c>')
    values = ValuesBook(saved)
    assert (6, 9) in values.read_cells("Results").formulas
    values.close()
    book = read_workbook(saved)
    assert book.errors == ()
    assert (book.results[-1].partner_a, book.results[-1].partner_b) == ("Bram Oak", "Dev Pike")
