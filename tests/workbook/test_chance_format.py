"""The Fixtures sheet's chance format, as a real spreadsheet program (LibreOffice headless) shows it: a chance
that is not certain never reads 0% or 100%, as on the handicap card and in the window."""
import csv
import shutil
import subprocess

import pytest
from openpyxl import Workbook

from secretary.workbook.fixtures_sheet import CHANCE_FORMAT

pytestmark = [
    pytest.mark.slow,
    pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice (soffice) is not on PATH"),
]

# As test_libreoffice.CSV_EVERY_SHEET, but the cells as shown (the ninth token), one sheet.
CSV_AS_SHOWN = "csv:Text - txt - csv (StarCalc):44,34,76,1,,0,false,true,true,false,false"


def test_libreoffice_shows_an_extreme_chance_as_under_1_or_over_99_percent(tmp_path):
    chances = [0.0009, 0.0049, 0.005, 0.42, 0.9949, 0.995, 0.9993]
    wb = Workbook()
    for row, p in enumerate(chances, start=1):
        wb.active.cell(row, 1, p).number_format = CHANCE_FORMAT
    wb.save(tmp_path / "chances.xlsx")
    subprocess.run(["soffice", f"-env:UserInstallation={(tmp_path / 'profile').as_uri()}", "--headless",
                    "--convert-to", CSV_AS_SHOWN, "--outdir", str(tmp_path / "out"), str(tmp_path / "chances.xlsx")],
                   capture_output=True, timeout=180)
    with (tmp_path / "out" / "chances.csv").open(encoding="utf-8") as f:
        shown = [row[0] for row in csv.reader(f)]
    assert shown == ["<1%", "<1%", "1%", "42%", "99%", ">99%", ">99%"]
