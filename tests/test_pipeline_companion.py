"""Workbooks holding content openpyxl would drop: grafted in place, or (with fixtures to fill) a companion."""
from __future__ import annotations

import datetime as dt
import hashlib
import zipfile

import openpyxl

from secretary.pipeline import last_update, make_notice, run_update
from secretary.workbook.save import companion_path
from tests.workbook import xlsx_samples as S


def with_text_box(path, fixtures: bool):
    """The sample secretary workbook with a text box (which openpyxl drops), and optionally fixtures."""
    league = S.secretary_workbook(path, results=12)
    if fixtures:
        wb = openpyxl.load_workbook(league)
        ws = wb.create_sheet("Fixtures")
        ws.append(["Date", "Player A", "Player B"])
        ws.append([dt.date(2026, 4, 1), "Ada Finch", "Bram Oak"])
        wb.save(league)
    S.edit_zip(league, edit={"xl/drawings/drawing1.xml": S.insert_before("</wsDr>", S.SHAPE_ANCHOR)})
    return league


def parts(path):
    with zipfile.ZipFile(path) as z:
        return {name: z.read(name) for name in z.namelist()}


def test_a_workbook_openpyxl_could_not_keep_is_updated_in_place_with_its_own_parts_untouched(tmp_path):
    league = with_text_box(tmp_path / "league.xlsx", fixtures=False)
    before = parts(league)

    first = run_update(league)
    assert not first.companion and first.written == league
    after = parts(league)
    # Every part of the secretary's own sheets (the text box's drawing included) is byte for byte the same.
    kept = [name for name in before if name.startswith(("xl/worksheets/", "xl/drawings/", "xl/charts/", "xl/media/"))]
    assert kept and all(after[name] == before[name] for name in kept)
    assert b"Bring your own cue" in after["xl/drawings/drawing1.xml"]

    second = run_update(league, force=True)  # nothing new, so only a forced update writes again
    assert not second.breakdown.first_update
    assert all(abs(p.change) < 1e-9 for p in second.breakdown.players)
    assert [p.name for p in last_update(league).ratings] == [p.name for p in second.ratings]


def test_with_fixtures_to_fill_the_outputs_go_to_a_companion_that_keeps_the_record(tmp_path):
    league = with_text_box(tmp_path / "league.xlsx", fixtures=True)
    original = hashlib.sha256(league.read_bytes()).hexdigest()

    first = run_update(league)
    assert first.companion and first.written == companion_path(league)
    assert "shapes, text boxes" in first.reason
    assert hashlib.sha256(league.read_bytes()).hexdigest() == original  # the secretary's file untouched
    assert first.breakdown.first_update

    # The next update finds the previous record in the companion: a real breakdown, not first ratings.
    second = run_update(league, force=True)  # nothing new, so only a forced update writes again
    assert not second.breakdown.first_update
    assert all(abs(p.change) < 1e-9 for p in second.breakdown.players)
    assert "Ratings" in openpyxl.load_workbook(second.written, read_only=True).sheetnames

    shown = last_update(league)  # the window's view of the last update reads the companion too
    assert [p.name for p in shown.ratings] == [p.name for p in second.ratings]
    assert make_notice(league, tmp_path / "again.pdf").is_file()
