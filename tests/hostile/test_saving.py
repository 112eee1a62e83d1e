"""Saves and printouts: every save asks for recalculation, a PDF is never half written, and the
commands that walk through history refuse a league too short for it in plain words."""
from __future__ import annotations

import zipfile
from pathlib import Path

import openpyxl
import pytest
from lxml import etree

from secretary import pipeline
from secretary.report import layout
from tests.hostile.conftest import next_week, run_cli
from tests.workbook.league_books import rewrite_part, write_book

MAIN = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"


def _calc_on_load(path: Path) -> str | None:
    with zipfile.ZipFile(path) as z:
        calc = etree.fromstring(z.read("xl/workbook.xml")).find(f"{MAIN}calcPr")
    return None if calc is None else calc.get("fullCalcOnLoad")


@pytest.mark.parametrize("fixtures", [False, True], ids=["grafted", "full-save"])
def test_every_save_asks_for_recalculation_on_open(tmp_path, capsys, fixtures):
    made = write_book(tmp_path / "made.xlsx",
                      fixtures=[[None, "Ada Finch", "Bram Oak", None, None]] if fixtures else None)
    # As a spreadsheet program saves it: no request to recalculate (openpyxl itself always asks).
    path = rewrite_part(made, tmp_path / "league.xlsx", "xl/workbook.xml", b' fullCalcOnLoad="1"', b"")
    assert _calc_on_load(path) is None
    code, text = run_cli(capsys, "update", path)
    assert code == 0, text
    assert _calc_on_load(path) == "1"


def test_a_pdf_is_never_left_half_written(tmp_path, league, monkeypatch):
    assert pipeline.run_update(league).notice_pdf is not None
    pdf = pipeline.notice_pdf_path(league)
    before = pdf.read_bytes()

    def fails_midway(self, *args, **kwargs):
        with open(self.filename, "wb") as handle:
            handle.write(b"%PDF-1.4 half")
        raise OSError(28, "No space left on device")

    wb = openpyxl.load_workbook(league)
    wb["Results"].append(next_week()[-1])  # a new result, so the second update has something to do
    wb.save(league)
    monkeypatch.setattr(layout.SimpleDocTemplate, "build", fails_midway)
    outcome = pipeline.run_update(league)
    assert "printouts failed" in outcome.reason
    assert pdf.read_bytes() == before
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".~secretary-")]


@pytest.mark.parametrize("command", ["evaluate", "tune"])
def test_evaluate_and_tune_on_an_empty_league_say_why(tmp_path, capsys, command):
    path = write_book(tmp_path / "league.xlsx", results=[])
    code, text = run_cli(capsys, command, path)
    assert code == 1
    assert "nan" not in text
    assert "at least two" in text


def test_the_longest_name_allowed_prints_on_both_pdfs(tmp_path, capsys):
    """Case 4's trigger itself: a very long name (the longest the checks let through, in one word, which
    cannot wrap) used to break the PDF layout after the workbook was swapped in."""
    import datetime as dt

    from tests.report.poppler import MISSING, pdf_text, squeeze
    from tests.workbook.league_books import D, good_results

    longest = "W" * 100
    rows = good_results() + [[D + dt.timedelta(days=7), "Premier", longest, "Dev Pike", 5, 1, "", ""]]
    path = write_book(tmp_path / "league.xlsx", rows, fixtures=[[D.replace(day=28), longest, "Ada Finch", None, None]])
    code, text = run_cli(capsys, "update", path)
    assert code == 0 and "printouts failed" not in text, text
    if not MISSING:
        for pdf in (pipeline.notice_pdf_path(path), pipeline.handicap_pdf_path(path)):
            assert longest in squeeze(pdf_text(pdf)), pdf.name
