"""The tool's columns in the secretary's Fixtures sheet: written by header, every other cell untouched."""
import datetime as dt

import pytest
from openpyxl import Workbook, load_workbook
from openpyxl.styles import Font


from secretary.model.notice import forecast_note
from secretary.workbook.fixtures_sheet import CHANCE, FAIR_A, FAIR_B, NOTE, TOOL_HEADERS, write_fixture_columns
from tests.invented_league import FIXTURES, SETTINGS, chance_by_integral, forecasts, two_updates

TITLE_ROWS = 1  # a title line above the headers, as secretaries like to write
HEADERS = ("Date", "Player A", "Player B", "Race A", "Race B", "Venue", "Referee")


@pytest.fixture(scope="module")
def results():
    return two_updates()[1].results


def secretary_book(path, extra_rows=()):
    """A Fixtures sheet as a secretary might keep it: title, styled headers, own columns, a formula."""
    wb = Workbook()
    ws = wb.active
    ws.title = "Fixtures"
    ws["A1"] = "Spring fixtures"
    ws["A1"].font = Font(bold=True, size=14)
    ws.append(list(HEADERS))
    for cell in ws[2]:
        cell.font = Font(bold=True, color="1F4E79")
    for k, (day, a, b, ra, rb) in enumerate(FIXTURES):
        ws.append([day, a, b, ra, rb, "The Anchor" if k % 2 else "Mill Lane", f"=\"Ref \"&{k + 1}"])
    for row in extra_rows:
        ws.append(list(row))
    for r in range(3, ws.max_row + 1):
        ws.cell(r, 1).number_format = "dd/mm/yyyy"
        for col in (2, 3):  # names like "=Dev Pike" are text, whatever they start with
            ws.cell(r, col).data_type = "s"
    wb.create_sheet("Notes")["B2"] = "bring chalk"
    wb.save(path)
    return path


def cells(ws):
    return {(c.row, c.column): (c.value, c.number_format, c.font.b, c.data_type) for row in ws.iter_rows() for c in row
            if c.value is not None}


def run(path, fcs):
    wb = load_workbook(path)
    written = write_fixture_columns(wb, fcs, SETTINGS)
    wb.save(path)
    return written


def test_only_the_tool_columns_change(tmp_path, results):
    path = secretary_book(tmp_path / "league.xlsx")
    before = load_workbook(path)
    fcs = forecasts(results, first_row=TITLE_ROWS + 2)
    assert run(path, fcs) == len(FIXTURES)
    after = load_workbook(path)
    ws = after["Fixtures"]
    header = [c.value for c in ws[TITLE_ROWS + 1]]
    assert header == [*HEADERS, *TOOL_HEADERS]  # added after the last used column, in order
    tool_columns = set(range(len(HEADERS) + 1, len(HEADERS) + len(TOOL_HEADERS) + 1))
    old, new = cells(before["Fixtures"]), cells(ws)
    assert {k: v for k, v in new.items() if k[1] not in tool_columns} == old
    assert cells(after["Notes"]) == cells(before["Notes"])
    assert ws["G3"].value.startswith("=") and ws["G3"].data_type == "f"  # the secretary's formula is kept
    for r in range(TITLE_ROWS + 2, TITLE_ROWS + 2 + len(FIXTURES)):
        assert ws.cell(r, 2).data_type == "s" and ws.cell(r, 3).data_type == "s"
    assert ws.cell(TITLE_ROWS + 1, len(HEADERS) + 1).font.b  # styled like the secretary's headers


def test_values_formats_and_notes(tmp_path, results):
    path = secretary_book(tmp_path / "league.xlsx")
    fcs = forecasts(results, first_row=TITLE_ROWS + 2)
    run(path, fcs)
    ws = load_workbook(path)["Fixtures"]
    where = {c.value: c.column for c in ws[TITLE_ROWS + 1]}
    for fc in fcs:
        r = fc.fixture.row
        assert ws.cell(r, 2).value == fc.fixture.player_a
        chance = ws.cell(r, where[CHANCE])
        # A's chance of getting race_a games first, averaged over the posterior of the difference.
        # Source: docs/checks.md section 4 (scipy.stats.nbinom.cdf(b-1, a, p)), integrated by the trapezoid rule.
        assert chance.value == pytest.approx(chance_by_integral(fc, fc.race_a, fc.race_b), abs=1e-6)
        assert chance.number_format == '[<0.005]"<1%";[>=0.995]">99%";0%'  # shown by LibreOffice: test_chance_format
        assert (ws.cell(r, where[FAIR_A]).value, ws.cell(r, where[FAIR_B]).value) == (fc.fair_race_a, fc.fair_race_b)
    notes = {ws.cell(fc.fixture.row, 2).value: ws.cell(fc.fixture.row, where[NOTE]).value for fc in fcs}
    assert notes["Otto Newman"] == "Otto Newman is not rated yet: this chance is a rough guess"
    assert notes["Nia Quell"] == "Nia Quell has 7 games: this chance could be far off"
    assert {notes[fc.fixture.player_a] for fc in fcs if fc.care == ""} <= {None}


def test_second_run_finds_its_columns_and_clears_stale_rows(tmp_path, results):
    path = secretary_book(tmp_path / "league.xlsx", extra_rows=[(dt.date(2026, 3, 25), "Kit Ellis", "Ines Cole")])
    fcs = forecasts(results, first_row=TITLE_ROWS + 2)
    wb = load_workbook(path)
    ws = wb["Fixtures"]
    ws.cell(TITLE_ROWS + 1, 9).value = "  chance a "  # the secretary's own spelling of a tool header
    wb.save(path)
    run(path, fcs)
    extra = TITLE_ROWS + 2 + len(FIXTURES)
    wb = load_workbook(path)
    ws = wb["Fixtures"]
    ws.cell(extra, 9).value = 0.99  # last week's figure for a fixture the model is not given this time
    wb.save(path)
    run(path, fcs)
    ws = load_workbook(path)["Fixtures"]
    header = [c.value for c in ws[TITLE_ROWS + 1]]
    assert header.count("  chance a ") == 1 and CHANCE not in header
    assert len(header) == len(HEADERS) + len(TOOL_HEADERS) + 1  # H stays empty; nothing added twice
    assert ws.cell(extra, 9).value is None
    assert ws.cell(extra, 2).value == "Kit Ellis"  # the secretary's row itself is kept


def test_no_fixtures_sheet_changes_nothing(tmp_path, results):
    wb = Workbook()
    wb.active.title = "Results"
    assert write_fixture_columns(wb, forecasts(results), SETTINGS) == 0
    assert wb.sheetnames == ["Results"] and wb["Results"].max_column == 1


def test_a_fixture_before_the_newest_result_is_noted_past(tmp_path, results):
    path = secretary_book(tmp_path / "league.xlsx")
    fcs = forecasts(results, first_row=TITLE_ROWS + 2)
    latest = max(day for day, *_ in FIXTURES)  # as if results had come in up to the last fixture day
    wb = load_workbook(path)
    write_fixture_columns(wb, fcs, SETTINGS, latest=latest)
    ws = wb["Fixtures"]
    note = {c.value: c.column for c in ws[TITLE_ROWS + 1]}[NOTE]
    for fc in fcs:
        text = ws.cell(fc.fixture.row, note).value or ""
        past = fc.fixture.date < latest
        assert text.startswith("past: dated before the latest results") == past, (fc.fixture, text)
        if past and fc.care:  # the forecast's own note follows the mark
            assert text.endswith("; " + forecast_note(fc))
