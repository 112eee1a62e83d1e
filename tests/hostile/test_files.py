"""Paths, races, read-only files, Strict Open XML, the backups folder, the printouts after a save."""
from __future__ import annotations

import csv
import os
import re
import shutil
import stat
import subprocess
import zipfile
from pathlib import Path

import openpyxl
import pytest

from secretary.pipeline import notice_pdf_path, run_update
from secretary.errors import FileRefused
from tests.hostile.conftest import digest


def test_update_through_a_symbolic_link_updates_the_real_workbook(league, tmp_path, run):
    link = tmp_path / "link.xlsx"
    link.symlink_to(league)
    code, out = run("update", link)
    assert code == 0, out
    assert link.is_symlink() and os.readlink(link) == str(league)
    assert "Ratings" in openpyxl.load_workbook(league, read_only=True).sheetnames


def test_a_read_only_workbook_is_refused_and_left_alone(league, run):
    league.chmod(stat.S_IRUSR | stat.S_IRGRP)
    before = digest(league)
    code, out = run("update", league)
    assert code == 1
    assert "read-only" in out and "nothing was changed" in out
    assert digest(league) == before and not (league.parent / "backups").exists()


def test_a_workbook_saved_by_another_program_during_the_update_is_not_overwritten(league):
    def other_program_saves(stage, fraction):
        if stage == "Saving the workbook safely":
            wb = openpyxl.load_workbook(league)
            wb["Results"].append(["2026-03-28", "Premier", "Ada Finch", "Dev Pike", 5, 1])
            wb.save(league)

    with pytest.raises(FileRefused, match="changed by another program.*Run the update again"):
        run_update(league, progress=other_program_saves)
    rows = list(openpyxl.load_workbook(league)["Results"].iter_rows(values_only=True))
    assert rows[-1][2:4] == ("Ada Finch", "Dev Pike")  # the other program's new row is still there
    assert not (league.parent / "backups").exists()


def _make_strict(path: Path) -> None:
    """Rewrite the package's main namespace the way "Strict Open XML Spreadsheet" files spell it."""
    with zipfile.ZipFile(path) as z:
        parts = {i.filename: z.read(i) for i in z.infolist()}
    for name in parts:
        if name.endswith(".xml"):
            parts[name] = parts[name].replace(b"http://schemas.openxmlformats.org/spreadsheetml/2006/main",
                                              b"http://purl.oclc.org/ooxml/spreadsheetml/main")
    with zipfile.ZipFile(path, "w") as z:
        for name, data in parts.items():
            z.writestr(name, data)


def test_a_strict_open_xml_workbook_gets_a_message_saying_what_to_do(league, run):
    _make_strict(league)
    before = digest(league)
    code, out = run("update", league)
    assert code == 1
    assert "Strict Open XML" in out and "Save As" in out and "Excel Workbook (.xlsx)" in out
    assert "no sheet called" not in out and digest(league) == before


def test_a_file_called_backups_beside_the_workbook_is_named_in_the_message(league, run):
    (league.parent / "backups").write_text("not a folder")
    before = digest(league)
    code, out = run("update", league)
    assert code == 1
    assert "file called 'backups'" in out and "league.xlsx was not changed" in out
    assert digest(league) == before


def test_a_read_only_backups_folder_is_named_in_the_message(league, run):
    folder = league.parent / "backups"
    folder.mkdir()
    folder.chmod(stat.S_IRUSR | stat.S_IXUSR)
    before = digest(league)
    try:
        code, out = run("update", league)
    finally:
        folder.chmod(stat.S_IRWXU)
    assert code == 1
    assert "'backups' folder" in out and "read-only" in out and "league.xlsx was not changed" in out
    assert digest(league) == before


def test_printouts_that_fail_after_the_save_say_the_workbook_was_saved(league, run):
    notice_pdf_path(league).mkdir()  # a folder where the PDF goes: the PDF cannot be written
    code, out = run("update", league)
    assert code == 0
    assert "The workbook was saved; the printouts failed because" in out
    assert "Ratings" in openpyxl.load_workbook(league, read_only=True).sheetnames
    assert not [p for p in league.parent.iterdir() if p.name.startswith(".~secretary")]  # no half PDF left


def test_update_out_to_a_csv_file_is_refused_before_anything_is_written(league, run):
    before = sorted(p.name for p in league.parent.iterdir())
    code, out = run("update", league, "--out", league.parent / "out.csv")
    assert code == 1
    assert "--out must name an Excel workbook" in out and "nothing was written" in out
    assert "Please report" not in out and sorted(p.name for p in league.parent.iterdir()) == before


def _as_excel_saved_it(path: Path, cell: str, value: str) -> None:
    """Give the formula in `cell` of the first sheet a saved value (last week's) and the workbook the
    calculation properties Excel writes (no request to recalculate on open)."""
    with zipfile.ZipFile(path) as z:
        parts = {i.filename: z.read(i) for i in z.infolist()}
    xml = parts["xl/worksheets/sheet1.xml"].decode()
    xml, n = re.subn(rf'(<c r="{cell}"[^>]*>\s*<f>[^<]*</f>)\s*(<v>[^<]*</v>)?', rf"\1<v>{value}</v>", xml)
    assert n == 1
    parts["xl/worksheets/sheet1.xml"] = xml.encode()
    parts["xl/workbook.xml"] = re.sub(rb"<calcPr[^>]*/>", b'<calcPr calcId="191029"/>', parts["xl/workbook.xml"])
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for name, data in parts.items():
            z.writestr(name, data)


# LibreOffice's own setting "Recalculation on file load" (Excel 2007 and newer) set to "Always": what
# fullCalcOnLoad asks a spreadsheet program to do (ECMA-376 Part 1, 18.2.2 calcPr). LibreOffice's
# default ("Never recalculate") ignores the request, so the request itself is checked in workbook.xml.
_RECALC_ALWAYS = """<?xml version="1.0" encoding="UTF-8"?>
<oor:items xmlns:oor="http://openoffice.org/2001/registry" xmlns:xs="http://www.w3.org/2001/XMLSchema">
<item oor:path="/org.openoffice.Office.Calc/Formula/Load"><prop oor:name="OOXMLRecalcMode" oor:op="fuse">
<value>0</value></prop></item></oor:items>
"""


@pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice (soffice) is not on PATH")
@pytest.mark.parametrize("through", ["graft", "full save"])
def test_the_secretarys_lookup_into_ratings_shows_this_weeks_value_when_opened(tmp_path, run, through):
    from tests.workbook.league_books import good_results, write_book
    from tests.workbook.test_libreoffice import CSV_EVERY_SHEET, _convert

    league = write_book(tmp_path / "league.xlsx", good_results(),
                        fixtures=[["2026-04-04", "Ada Finch", "Dev Pike", 5, 5]] if through == "full save" else None)
    assert run("update", league)[0] == 0
    wb = openpyxl.load_workbook(league)
    mine = wb.create_sheet("Mine", 0)
    mine["A1"] = '=VLOOKUP("Ada Finch",Ratings!B:D,3,FALSE)'
    wb["Results"].append(["2026-03-28", "Premier", "Ada Finch", "Dev Pike", 5, 1])  # this week's result
    wb.save(league)
    _as_excel_saved_it(league, "A1", "999")
    code, out = run("update", league)
    assert code == 0, out
    with zipfile.ZipFile(league) as z:
        assert re.search(rb'<calcPr[^>]*fullCalcOnLoad="(1|true)"', z.read("xl/workbook.xml"))
    rating = {r[1]: r[3] for r in openpyxl.load_workbook(league)["Ratings"].iter_rows(min_row=2, values_only=True)}
    profile = tmp_path / "profile"
    (profile / "user").mkdir(parents=True)
    (profile / "user" / "registrymodifications.xcu").write_text(_RECALC_ALWAYS)
    _convert(league, tmp_path / "csv", CSV_EVERY_SHEET, profile)
    with (tmp_path / "csv" / "league-Mine.csv").open(encoding="utf-8") as f:
        shown = float(next(csv.reader(f))[0])
    assert shown == pytest.approx(rating["Ada Finch"], abs=1e-9)


def test_a_problem_in_the_printouts_after_the_save_is_reported_truthfully(league, run, monkeypatch):
    from reportlab.platypus.doctemplate import LayoutError

    import secretary.pipeline as pipeline

    def breaks(*args, **kwargs):
        raise LayoutError("Flowable too large")

    monkeypatch.setattr(pipeline, "write_notice_pdf", breaks)
    code, out = run("update", league)
    assert code == 0
    assert "The workbook was saved; the printouts failed because" in out and "was not changed" not in out
    assert "Ratings" in openpyxl.load_workbook(league, read_only=True).sheetnames


def test_a_failure_after_the_save_never_claims_the_workbook_was_not_changed(league, run, monkeypatch):
    import secretary.cli as cli

    def breaks(outcome):
        raise RuntimeError("a bug in the summary")

    monkeypatch.setattr(cli, "summary", breaks)
    code, out = run("update", league)
    assert code == 3
    assert "was not changed" not in out and "the workbook was saved" in out
