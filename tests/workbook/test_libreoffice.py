"""A second, independent reader: LibreOffice opens the saved workbook and shows what was written."""
import csv
import datetime as dt
import math
import shutil
import subprocess
from pathlib import Path

import pytest
from openpyxl import load_workbook

from secretary.model.records import PlayerRating, Settings
from secretary.workbook.fidelity import unsupported_content
from secretary.workbook.save import load_for_update, save_workbook
from secretary.workbook.state import read_state
from secretary.workbook.write import write_history, write_ratings

from tests.workbook import xlsx_samples as S
from tests.workbook.test_save import _write_outputs

pytestmark = [
    pytest.mark.slow,
    pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice (soffice) is not on PATH"),
]

# Separator, quote, UTF-8, from line 1, -, -, no forced text, detect numbers, raw values (not as
# shown), no formulas, keep spaces, -1 = every sheet to its own file (LibreOffice 7.2 and later).
CSV_EVERY_SHEET = "csv:Text - txt - csv (StarCalc):44,34,76,1,,0,false,true,false,false,false,-1"


def _convert(source: Path, out: Path, target: str, profile: Path) -> None:
    """Run LibreOffice headless with a private profile; its exit code is not trusted (outputs are checked)."""
    subprocess.run(
        ["soffice", f"-env:UserInstallation={profile.as_uri()}", "--headless",
         "--convert-to", target, "--outdir", str(out), str(source)],
        capture_output=True, timeout=180,
    )


def _ratings():
    names = [*S.FORMULA_NAMES, "Zoë Ōtake", "Ada Finch"]
    return [
        PlayerRating(name, "Premier", 1500 + 13.123456789 * i, 48.5 + i, 10.0 + i / 4, 5.0,
                     dt.date(2026, 3, 12), change=None if i == 2 else 2.5 - i, is_new=i == 2)
        for i, name in enumerate(names)
    ]


def test_libreoffice_reads_the_ratings_and_history_as_written(tmp_path):
    league = S.secretary_workbook(tmp_path / "league.xlsx")
    ratings = _ratings()
    wb = load_for_update(league)
    write_ratings(wb, ratings, Settings(few_games=11.0))
    write_history(wb, dt.date(2026, 3, 12), ratings)
    save_workbook(wb, league)
    expected = [list(r) for r in load_workbook(league)["Ratings"].iter_rows(values_only=True)]

    out = tmp_path / "csv"
    _convert(league, out, CSV_EVERY_SHEET, tmp_path / "profile")
    ratings_csv = out / "league-Ratings.csv"
    assert ratings_csv.exists(), f"LibreOffice wrote no Ratings file; it wrote {sorted(p.name for p in out.glob('*'))}"
    with ratings_csv.open(encoding="utf-8") as f:
        shown = list(csv.reader(f))
    assert shown[0] == [str(h) for h in expected[0]]
    assert len(shown) == len(expected) == len(ratings) + 1
    for got, want in zip(shown[1:], expected[1:]):
        assert got[1] == want[1]  # names as written, "=SUM(A1)" not computed
        for col in (0, 3, 4, 5):
            assert math.isclose(float(got[col]), want[col], rel_tol=1e-12)
        if want[6] is None:
            assert got[6] == ""
        else:
            assert math.isclose(float(got[6]), want[6], rel_tol=1e-12)
        assert got[7] == "2026-03-12" and got[8] == (want[8] or "")
    with (out / "league-Rating history.csv").open(encoding="utf-8") as f:
        history = list(csv.reader(f))
    assert history[0] == ["Player", "2026-03-12"]
    assert {row[0]: float(row[1]) for row in history[1:]} == pytest.approx({p.name: p.rating for p in ratings})


def test_state_survives_the_workbook_being_saved_again_by_libreoffice(tmp_path):
    league = S.secretary_workbook(tmp_path / "league.xlsx")
    wb = load_for_update(league)
    _write_outputs(wb, 0, n=500)
    save_workbook(wb, league)
    written = read_state(load_workbook(league))
    out = tmp_path / "resaved"
    _convert(league, out, "xlsx", tmp_path / "profile")
    resaved = out / "league.xlsx"
    assert resaved.exists(), "LibreOffice did not write the workbook"
    assert written is not None and read_state(load_workbook(resaved)) == written
    # A workbook the secretary keeps in LibreOffice can still be updated in place.
    assert unsupported_content(resaved) == []
    wb = load_for_update(resaved)
    _write_outputs(wb, 1, n=500)
    assert not save_workbook(wb, resaved).companion
    notes = load_workbook(resaved)[S.NOTES]
    assert (len(notes._charts), len(notes._images), notes["B3"].comment.text) == (
        1, 1, "Two tables were out of order.")
