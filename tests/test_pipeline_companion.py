"""A workbook holding content openpyxl would drop: outputs go to a companion, week after week."""
from __future__ import annotations

import hashlib

import openpyxl

from secretary.pipeline import last_update, make_notice, run_update
from secretary.workbook.save import companion_path
from tests.workbook import xlsx_samples as S


def test_companion_keeps_the_record_so_the_next_update_explains_its_changes(tmp_path):
    league = S.secretary_workbook(tmp_path / "league.xlsx", results=12)
    S.edit_zip(league, edit={"xl/drawings/drawing1.xml": S.insert_before("</wsDr>", S.SHAPE_ANCHOR)})
    original = hashlib.sha256(league.read_bytes()).hexdigest()

    first = run_update(league)
    assert first.companion and first.written == companion_path(league)
    assert "shapes, text boxes" in first.reason
    assert hashlib.sha256(league.read_bytes()).hexdigest() == original  # the secretary's file untouched
    assert first.breakdown.first_update

    # The next update finds the previous record in the companion: a real breakdown, not first ratings.
    second = run_update(league)
    assert not second.breakdown.first_update
    assert all(abs(p.change) < 1e-9 for p in second.breakdown.players)
    assert "Ratings" in openpyxl.load_workbook(second.written, read_only=True).sheetnames

    shown = last_update(league)  # the window's view of the last update reads the companion too
    assert [p.name for p in shown.ratings] == [p.name for p in second.ratings]
    assert make_notice(league, tmp_path / "again.pdf").is_file()
