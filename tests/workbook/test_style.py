"""Output-sheet helpers: text stays text, sheets are replaced in place, tables are real Excel tables."""
import datetime as dt
import re
import zipfile

import pytest
from openpyxl import Workbook, load_workbook

from secretary.workbook.schema import RATINGS_SHEET, STATE_SHEET, WATCH_SHEET
from secretary.workbook.style import (
    DATE_FORMAT,
    RATING_FORMAT,
    put,
    remove_sheet,
    replace_sheet,
    safe_text,
    write_table,
)

from tests.workbook.xlsx_samples import FORMULA_NAMES

TRICKY = (*FORMULA_NAMES, "#N/A", "=", "  spaced  ")


def _sheet_xml(path, index):
    with zipfile.ZipFile(path) as z:
        return z.read(f"xl/worksheets/sheet{index}.xml").decode()


def test_formula_like_text_is_saved_as_text(tmp_path):
    wb = Workbook()
    ws = wb.active
    for row, text in enumerate(TRICKY, start=1):
        put(ws.cell(row, 1), text)
    path = tmp_path / "text.xlsx"
    wb.save(path)
    xml = _sheet_xml(path, 1)
    # Read the saved XML itself: no formula element, every cell an inline string.
    assert "<f>" not in xml and "<f " not in xml
    assert xml.count('t="inlineStr"') == len(TRICKY)
    back = load_workbook(path).active
    for row, text in enumerate(TRICKY, start=1):
        assert back.cell(row, 1).value == text
        assert back.cell(row, 1).data_type == "s"


def test_plain_assignment_would_have_made_a_formula():
    # Guards the test above: without put(), openpyxl really does make these formulas/errors.
    ws = Workbook().active
    ws["A1"] = "=SUM(A1)"
    ws["A2"] = "#N/A"
    assert (ws["A1"].data_type, ws["A2"].data_type) == ("f", "e")


def test_safe_text_drops_characters_xml_cannot_hold_and_keeps_others():
    assert safe_text("Ann\x01 Lee\x1f") == "Ann Lee"
    assert safe_text("Zoë Ōtake") == "Zoë Ōtake"
    assert safe_text(12.5) == 12.5
    assert len(safe_text("x" * 40000)) == 32767


def test_replace_sheet_keeps_position_and_refuses_the_secretarys_sheets():
    wb = Workbook()
    wb.active.title = "Results"
    first = replace_sheet(wb, RATINGS_SHEET)
    wb.create_sheet("Club notes")
    first["A1"] = "old"
    again = replace_sheet(wb, RATINGS_SHEET)
    assert wb.sheetnames == ["Results", RATINGS_SHEET, "Club notes"]
    assert again["A1"].value is None
    with pytest.raises(ValueError):
        replace_sheet(wb, "Results")
    with pytest.raises(ValueError):
        remove_sheet(wb, "Club notes")


def test_new_tool_sheets_go_after_the_tools_sheets_and_before_the_state():
    wb = Workbook()
    wb.active.title = "Results"
    replace_sheet(wb, STATE_SHEET).sheet_state = "veryHidden"
    replace_sheet(wb, RATINGS_SHEET)
    wb.create_sheet("Club notes")
    replace_sheet(wb, WATCH_SHEET)
    assert wb.sheetnames == ["Results", RATINGS_SHEET, WATCH_SHEET, STATE_SHEET, "Club notes"]


def test_active_sheet_never_left_hidden():
    wb = Workbook()
    wb.active.title = "Results"
    replace_sheet(wb, RATINGS_SHEET)
    replace_sheet(wb, STATE_SHEET).sheet_state = "veryHidden"
    wb.active = 1  # Ratings; once it goes, index 1 would be the hidden state sheet
    remove_sheet(wb, RATINGS_SHEET)
    assert wb.active.title == "Results"


def test_table_has_filters_frozen_header_formats_and_survives_rewriting(tmp_path):
    wb = Workbook()
    wb.active.title = "Results"
    for _ in range(2):  # the second write replaces the first; table names stay unique
        ws = replace_sheet(wb, RATINGS_SHEET)
        count = write_table(
            ws, ["Player", "Rating", "Last played"],
            [("=SUM(A1)", 1523.4, dt.date(2026, 3, 1)), ("Bo", 1490.0, None)],
            formats={"Rating": RATING_FORMAT, "Last played": DATE_FORMAT},
        )
    assert count == 2
    path = tmp_path / "t.xlsx"
    wb.save(path)
    ws = load_workbook(path)[RATINGS_SHEET]
    (table,) = ws.tables.values()
    assert table.ref == "A1:C3"
    assert [c.name for c in table.tableColumns] == ["Player", "Rating", "Last played"]
    assert ws.freeze_panes == "A2"
    assert ws["B2"].number_format == "0" and ws["C2"].number_format == "yyyy-mm-dd"
    assert ws["A2"].value == "=SUM(A1)" and ws["A2"].data_type == "s"
    with zipfile.ZipFile(path) as z:
        (table_xml,) = [z.read(n).decode() for n in z.namelist() if n.startswith("xl/tables/")]
    assert re.search(r"<autoFilter ref=\"A1:C3\"", table_xml)  # the filter buttons


def test_empty_table_keeps_one_blank_data_row():
    ws = replace_sheet(Workbook(), RATINGS_SHEET)
    assert write_table(ws, ["Player", "Rating"], []) == 0
    assert next(iter(ws.tables.values())).ref == "A1:B2"


def test_table_refuses_duplicate_headers():
    ws = replace_sheet(Workbook(), RATINGS_SHEET)
    with pytest.raises(ValueError):
        write_table(ws, ["Player", "player"], [])


def _parts(path):
    with zipfile.ZipFile(path) as z:
        return {name: z.read(name) for name in z.namelist() if name != "docProps/core.xml"}  # core: the time


def test_a_styling_sets_what_the_cell_attribute_sets(tmp_path):
    """`Styling` (a style looked up once for many cells) against openpyxl's own attributes, byte for byte."""
    from openpyxl.styles import Alignment, Border, Font, PatternFill, Side

    from secretary.workbook.style import Styling, WrapsText

    styles = [("alignment", Alignment(vertical="top")), ("font", Font(name="Calibri", bold=True)),
              ("alignment", Alignment(wrap_text=True, vertical="top")), ("fill", PatternFill("solid", fgColor="DCE6F0")),
              ("border", Border(bottom=Side(style="thin", color="808080"))), ("font", Font(italic=True, size=10))]
    saved = []
    for fast in (False, True):
        wb = Workbook()
        ws = wb.active
        stylings = [Styling(wb, value) for _, value in styles] if fast else None
        for row in range(1, 40):
            for col in range(1, 6):
                cell = ws.cell(row, col)
                put(cell, f"r{row}c{col}" if (row + col) % 3 else row * col, RATING_FORMAT if col == 2 else None)
                for k, (attribute, value) in enumerate(styles):
                    if (row * (k + 1) + col) % (k + 2) == 0:  # an uneven mix, later ones over earlier ones
                        stylings[k](cell) if fast else setattr(cell, attribute, value)
        wraps = WrapsText(wb)
        assert [wraps(c) for r in ws.iter_rows() for c in r] == [bool(c.alignment.wrap_text) for r in ws.iter_rows() for c in r]
        path = tmp_path / f"styled-{fast}.xlsx"
        wb.save(path)
        saved.append(_parts(path))
    assert saved[0] == saved[1]
