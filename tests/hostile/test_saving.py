"""What a save must never do: leave a stale formula, write through a link, replace a read-only file,
overwrite another program's save, claim the workbook was not changed when it was."""
from __future__ import annotations

import csv
import os
import shutil
import subprocess
import zipfile
from pathlib import Path

import openpyxl
import pytest
from lxml import etree

from secretary import pipeline
from secretary.report import layout
from tests.hostile.conftest import next_week, run_cli
from tests.workbook.league_books import write_book

MAIN = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"


def _calc_on_load(path: Path) -> str | None:
    with zipfile.ZipFile(path) as z:
        calc = etree.fromstring(z.read("xl/workbook.xml")).find(f"{MAIN}calcPr")
    return None if calc is None else calc.get("fullCalcOnLoad")


def _soffice(source: Path, outdir: Path, target: str, profile: Path) -> None:
    subprocess.run(["soffice", f"-env:UserInstallation={profile.as_uri()}", "--headless",
                    "--convert-to", target, "--outdir", str(outdir), str(source)],
                   capture_output=True, timeout=180)


def _ratings_of(path: Path) -> dict[str, float]:
    ws = openpyxl.load_workbook(path, read_only=True)["Ratings"]
    rows = list(ws.iter_rows(values_only=True))
    name, rating = rows[0].index("Player"), rows[0].index("Rating")
    return {r[name]: r[rating] for r in rows[1:] if r[name]}


@pytest.mark.parametrize("fixtures", [False, True], ids=["grafted", "full-save"])
def test_every_save_asks_for_recalculation_on_open(tmp_path, capsys, fixtures):
    made = write_book(tmp_path / "made.xlsx",
                      fixtures=[[None, "Ada Finch", "Bram Oak", None, None]] if fixtures else None)
    path = tmp_path / "league.xlsx"
    # As a spreadsheet program saves it: no request to recalculate (openpyxl itself always asks).
    with zipfile.ZipFile(made) as src, zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as dst:
        for item in src.infolist():
            data = src.read(item)
            if item.filename == "xl/workbook.xml":
                data = data.replace(b' fullCalcOnLoad="1"', b"")
            dst.writestr(item, data)
    assert _calc_on_load(path) is None
    code, text = run_cli(capsys, "update", path)
    assert code == 0, text
    assert _calc_on_load(path) == "1"


_ALWAYS_RECALCULATE = """<?xml version="1.0" encoding="UTF-8"?>
<oor:items xmlns:oor="http://openoffice.org/2001/registry" xmlns:xs="http://www.w3.org/2001/XMLSchema">
<item oor:path="/org.openoffice.Office.Calc/Formula/Load"><prop oor:name="OOXMLRecalcMode" oor:op="fuse"><value>0</value></prop></item>
</oor:items>
"""


@pytest.mark.slow
@pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice (soffice) is not on PATH")
def test_a_secretarys_lookup_into_ratings_shows_this_weeks_value(tmp_path, capsys):
    """The secretary's own VLOOKUP into Ratings, saved by a spreadsheet program with last week's value,
    shows this week's rating once the program recalculates on open.

    The workbook asks for that (calcPr fullCalcOnLoad, ECMA-376 Part 1, 18.2.2), which Excel obeys;
    LibreOffice obeys its own "Recalculation on file load" option instead (default: never for
    Excel files), so here its profile is set to recalculate, as a secretary using it would set it."""
    path = write_book(tmp_path / "league.xlsx")
    assert run_cli(capsys, "update", path)[0] == 0
    wb = openpyxl.load_workbook(path)
    wb.create_sheet("Lookup")["A1"] = '=VLOOKUP("Ada Finch",Ratings!B:D,3,FALSE)'
    for row in next_week()[4:]:
        wb["Results"].append(row)
    wb.save(path)
    # A real spreadsheet program saves it, caching the formula's value from last week's Ratings.
    _soffice(path, tmp_path / "saved", "xlsx", tmp_path / "profile-saving")
    shutil.copyfile(tmp_path / "saved" / "league.xlsx", path)
    stale = openpyxl.load_workbook(path, data_only=True)["Lookup"]["A1"].value
    assert run_cli(capsys, "update", path)[0] == 0
    assert _calc_on_load(path) == "1"
    new_rating = _ratings_of(path)["Ada Finch"]
    assert abs(stale - new_rating) > 1  # the check means something only if the week moved her
    profile = tmp_path / "profile-recalculating"
    (profile / "user").mkdir(parents=True)
    (profile / "user" / "registrymodifications.xcu").write_text(_ALWAYS_RECALCULATE, encoding="utf-8")
    out = tmp_path / "csv"
    _soffice(path, out, "csv:Text - txt - csv (StarCalc):44,34,76,1,,0,false,true,false,false,false,-1", profile)
    with open(out / "league-Lookup.csv", newline="", encoding="utf-8") as handle:
        shown = float(next(csv.reader(handle))[0])
    assert shown == pytest.approx(new_rating, abs=1e-6)


def test_updating_through_a_link_updates_the_real_workbook(tmp_path, capsys, league):
    link = tmp_path / "shortcut.xlsx"
    link.symlink_to(league)
    code, text = run_cli(capsys, "update", link)
    assert code == 0, text
    assert link.is_symlink() and link.resolve() == league.resolve()
    assert "Ratings" in openpyxl.load_workbook(league, read_only=True).sheetnames


def test_a_read_only_workbook_is_refused_and_left_alone(tmp_path, capsys, league):
    league.chmod(0o444)
    before = league.read_bytes()
    code, text = run_cli(capsys, "update", league)
    assert code == 1
    assert "read-only" in text and "nothing was changed" in text
    assert league.read_bytes() == before
    assert not (tmp_path / "backups").exists()


def test_a_save_by_another_program_during_the_update_is_not_overwritten(tmp_path, league, monkeypatch):
    """Another program saves the workbook while the update runs (here: just before the tool saves)."""
    def other_program(stage, fraction):
        if stage.startswith("Saving"):
            wb = openpyxl.load_workbook(league)
            wb["Results"].append(next_week()[-1])
            wb.save(league)

    with pytest.raises(pipeline.FileRefused, match="changed by another program"):
        pipeline.run_update(league, progress=other_program)
    assert len(list(openpyxl.load_workbook(league, read_only=True)["Results"].iter_rows())) == 6
    assert "Ratings" not in openpyxl.load_workbook(league, read_only=True).sheetnames


def test_out_must_be_a_workbook(tmp_path, capsys, league):
    code, text = run_cli(capsys, "update", league, "--out", tmp_path / "out.csv")
    assert code == 1
    assert "--out must name an Excel workbook" in text
    assert not (tmp_path / "out.csv").exists()


def test_a_printout_failure_after_the_save_is_reported_truthfully(tmp_path, capsys, league, monkeypatch):
    def broken(*args, **kwargs):
        raise RuntimeError("a layout bug")

    monkeypatch.setattr(pipeline, "write_notice_pdf", broken)
    code, text = run_cli(capsys, "update", league)
    assert code == 0, text
    assert "The workbook was saved; the printouts failed" in text
    assert "not changed" not in text
    assert "Ratings" in openpyxl.load_workbook(league, read_only=True).sheetnames


def test_a_pdf_is_never_left_half_written(tmp_path, league, monkeypatch):
    assert pipeline.run_update(league).notice_pdf is not None
    pdf = pipeline.notice_pdf_path(league)
    before = pdf.read_bytes()

    def fails_midway(self, *args, **kwargs):
        with open(self.filename, "wb") as handle:
            handle.write(b"%PDF-1.4 half")
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(layout.SimpleDocTemplate, "build", fails_midway)
    outcome = pipeline.run_update(league, now=None)
    assert "printouts failed" in outcome.reason
    assert pdf.read_bytes() == before
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".~secretary-")]


def test_a_file_called_backups_gets_a_plain_message(tmp_path, capsys, league):
    (tmp_path / "backups").write_text("not a folder")
    before = league.read_bytes()
    code, text = run_cli(capsys, "update", league)
    assert code == 1
    assert "a file called 'backups'" in text and "Rename or move" in text
    assert league.read_bytes() == before


def test_a_strict_open_xml_workbook_is_named_as_such(tmp_path, capsys, league):
    strict = tmp_path / "strict.xlsx"
    with zipfile.ZipFile(league) as src, zipfile.ZipFile(strict, "w") as dst:
        for item in src.infolist():
            data = src.read(item)
            if item.filename == "xl/workbook.xml":
                data = data.replace(b"http://schemas.openxmlformats.org/spreadsheetml/2006/main",
                                    b"http://purl.oclc.org/ooxml/spreadsheetml/main")
            dst.writestr(item, data)
    code, text = run_cli(capsys, "check", strict)
    assert code == 1
    assert "Strict Open XML" in text and "Save As" in text


@pytest.mark.parametrize("command", ["evaluate", "tune"])
def test_evaluate_and_tune_on_an_empty_league_say_why(tmp_path, capsys, command):
    path = write_book(tmp_path / "league.xlsx", results=[])
    code, text = run_cli(capsys, command, path)
    assert code == 1
    assert "nan" not in text
    assert "at least two" in text
