"""The blank league workbook: the committed copies match the generator, and it reads cleanly."""
from __future__ import annotations

import shutil
import subprocess
from pathlib import Path

import openpyxl
import pytest

from secretary.errors import FileRefused
from secretary.model.records import Settings
from secretary.workbook import schema
from secretary.workbook.read import read_workbook
from secretary.workbook.template import PACKAGED_TEMPLATE, build_template, new_workbook

ROOT = Path(__file__).resolve().parents[2]
COMMITTED = (ROOT / "templates" / "league-template.xlsx", PACKAGED_TEMPLATE)


def _content(path: Path) -> dict:
    """What a reader of the file sees: sheets, cell values, checks on entry, frozen panes, widths."""
    wb = openpyxl.load_workbook(path)
    out = {"sheets": wb.sheetnames}
    for ws in wb.worksheets:
        out[ws.title] = {
            "values": [[c.value for c in row] for row in ws.iter_rows()],
            "validations": sorted((dv.type, dv.operator, dv.formula1, str(dv.sqref), dv.errorStyle)
                                  for dv in ws.data_validations.dataValidation),
            "freeze": ws.freeze_panes,
            "widths": {k: d.width for k, d in ws.column_dimensions.items()},
        }
    return out


@pytest.mark.parametrize("committed", COMMITTED, ids=["templates", "package-data"])
def test_committed_template_has_not_drifted_from_the_generator(committed, tmp_path):
    fresh = tmp_path / "fresh.xlsx"
    build_template().save(fresh)
    assert committed.exists(), "run: python templates/make_template.py"
    assert _content(committed) == _content(fresh), "run: python templates/make_template.py"


def test_template_layout():
    content = _content(PACKAGED_TEMPLATE)
    assert content["sheets"] == ["Instructions", "Results", "Players", "Divisions", "Settings", "Fixtures"]
    for spec in schema.INPUT_SHEETS:
        assert content[spec.name]["values"][0][: len(spec.columns)] == [c.header for c in spec.columns]
        assert content[spec.name]["freeze"] == "A2"
    checks = content["Results"]["validations"]
    assert ("whole", "greaterThanOrEqual", "0", "E2:E20001 F2:F20001", "stop") in checks
    assert ("date", "greaterThan", "DATE(1990,1,1)", "A2:A20001", "warning") in checks
    assert content["Divisions"]["validations"] == [("decimal", "between", "-1200", "B2:B20001", "warning")]
    words = " ".join(str(row[0]) for row in content["Instructions"]["values"] if row[0])
    for phrase in ("estimates", "±", "committee", "data-protection", "void"):
        assert phrase in words


def test_settings_sheet_lists_every_setting_with_its_default(tmp_path):
    rows = _content(PACKAGED_TEMPLATE)["Settings"]["values"][1:]
    assert [r[0] for r in rows] == [s.label for s in schema.SETTINGS_TABLE]
    defaults = {r[0]: r[2] for r in rows}
    # the defaults workbook.md states for the league's settings table
    assert (defaults["Centre"], defaults["Scale"], defaults["Longest race"]) == (1500, 400, 9)
    assert all(r[1] is None for r in rows)  # blank Value = the default, so later defaults still apply
    assert all(r[3] and "Allowed:" in r[3] for r in rows)


def test_new_workbook_copies_the_template_and_never_overwrites(tmp_path):
    target = new_workbook(tmp_path / "Riverside league.xlsx")
    book = read_workbook(target)
    assert book.problems == () and book.results == () and book.settings == Settings()
    with pytest.raises(FileRefused, match="already exists"):
        new_workbook(target)
    with pytest.raises(FileRefused, match=".xlsx"):
        new_workbook(tmp_path / "league.ods")
    with pytest.raises(FileRefused, match="does not exist"):
        new_workbook(tmp_path / "no such folder" / "league.xlsx")


def test_template_survives_a_save_in_libreoffice(tmp_path):
    """LibreOffice (a real spreadsheet program) opens and saves it; the tool still reads it cleanly."""
    if shutil.which("soffice") is None:
        pytest.skip("LibreOffice (soffice) is not installed")
    out = tmp_path / "out"
    subprocess.run(["soffice", "--headless", "--norestore", f"-env:UserInstallation=file://{tmp_path}/profile",
                    "--convert-to", "xlsx:Calc MS Excel 2007 XML", "--outdir", str(out), str(PACKAGED_TEMPLATE)],
                   check=True, capture_output=True, timeout=120)
    book = read_workbook(out / PACKAGED_TEMPLATE.name)
    assert book.problems == () and book.settings == Settings()
    assert book.layouts["Results"].columns["games_b"] == 6
