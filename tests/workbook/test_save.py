"""Safe saving: the secretary's content survives, failures leave the original intact, backups work."""
import datetime as dt
import io
import os
import shutil
import signal
import subprocess
import sys
import textwrap
import time
import zipfile
from pathlib import Path

import pytest
from openpyxl import load_workbook

from secretary.errors import FileRefused
from secretary.model.records import PlayerRating, PublishedState, Settings, UpdateLog
from secretary.workbook import save as save_module
from secretary.workbook.save import (
    backups_of,
    companion_path,
    load_for_update,
    restore_previous,
    save_workbook,
)
from secretary.workbook.schema import HISTORY_SHEET, LOG_SHEET, RATINGS_SHEET, STATE_SHEET
from secretary.workbook.state import read_state, write_state
from secretary.workbook.write import write_history, write_log, write_ratings

from tests.workbook import xlsx_samples as S

REPO = Path(__file__).resolve().parents[2]


def _ratings(week: int, n: int = 6):
    return [
        PlayerRating(f"Player {i}", "Premier", 1500 + 7.25 * i + week, 55.0, 12.0, 6.0, dt.date(2026, 3, 5),
                     change=float(week))
        for i in range(n)
    ]


def _write_outputs(wb, week: int, n: int = 6):
    date = dt.date(2026, 3, 5) + dt.timedelta(weeks=week)
    ratings = _ratings(week, n)
    write_ratings(wb, ratings, Settings())
    write_history(wb, date, ratings)
    write_log(wb, UpdateLog(f"{date}T21:00:00", "0.1.0", date, 10, 10, 1, 0, 0, Settings()))
    write_state(wb, PublishedState(f"{date}T21:00:00", date, {p.name: p.rating for p in ratings},
                                   {p.name: p.sd for p in ratings}, (("id", "fp"),)))


def _update(path: Path, week: int):
    wb = load_for_update(path)
    _write_outputs(wb, week)
    return save_workbook(wb, path)


def _snapshot(path: Path) -> dict:
    """Everything of the secretary's two sheets a save could lose."""
    wb = load_workbook(path)
    # the secretary's names (the tool's own markers of its sheets aside: see toolsheets)
    out = {"names": {n: d.attr_text for n, d in wb.defined_names.items() if not n.startswith("_secretary_sheet_")}}
    for name in ("Results", S.NOTES):
        ws = wb[name]
        out[name] = {
            "cells": [[(c.value, c.data_type, c.font.b, c.font.sz, c.font.color and c.font.color.rgb,
                        c.fill.fgColor.rgb, c.number_format) for c in row] for row in ws.iter_rows()],
            "merged": sorted(str(r) for r in ws.merged_cells.ranges),
            "validation": [(str(v.sqref), v.type, v.formula1, v.formula2) for v in ws.data_validations.dataValidation],
            "conditional": [str(cf.sqref) for cf in ws.conditional_formatting],
            "charts": len(ws._charts),
            "images": len(ws._images),
            "comments": [(c.coordinate, c.comment.text) for row in ws.iter_rows() for c in row if c.comment],
        }
    return out


def _files(folder: Path) -> dict:
    return {p.relative_to(folder): p.read_bytes() for p in folder.rglob("*") if p.is_file()}


@pytest.fixture
def league(tmp_path):
    folder = tmp_path / "league"
    folder.mkdir()
    return S.secretary_workbook(folder / "league.xlsx")


def test_two_updates_keep_every_piece_of_the_secretarys_content(league):
    before = _snapshot(league)
    # The sample really holds what the check is about (so the comparison cannot pass on empty sheets).
    notes = before[S.NOTES]
    assert notes["charts"] == 1 and notes["images"] == 1 and notes["merged"] == ["A1:D1"]
    assert notes["comments"] == [("B3", "Two tables were out of order.")]
    assert notes["validation"] == [("B3:B7", "whole", "0", "10")] and notes["conditional"] == ["D3:D7"]
    assert ("=SUM(D3:D7)", "f") == notes["cells"][2][5][:2]
    assert before["names"] == {"Fees": "'Club notes'!$C$3:$C$7"}
    for week in range(2):
        outcome = _update(league, week)
        assert not outcome.companion and outcome.path == league
    assert _snapshot(league) == before
    wb = load_workbook(league)
    assert wb.sheetnames == ["Results", S.NOTES, RATINGS_SHEET, HISTORY_SHEET, LOG_SHEET, STATE_SHEET]
    assert wb[LOG_SHEET].max_row == 3 and wb[HISTORY_SHEET].max_column == 3
    assert read_state(wb).reference_date == dt.date(2026, 3, 12)
    for name in S.FORMULA_NAMES:  # the formula-like names in Results are still text
        assert any(c.value == name and c.data_type == "s" for row in wb["Results"].iter_rows() for c in row)


@pytest.mark.parametrize("lock", ["~$league.xlsx", ".~lock.league.xlsx#"])
def test_open_elsewhere_is_refused_and_nothing_changes(league, lock):
    (league.parent / lock).write_text("someone")
    files = _files(league.parent)
    wb = load_for_update(league)
    _write_outputs(wb, 0)
    with pytest.raises(FileRefused, match="is open in another program") as refused:
        save_workbook(wb, league)
    assert lock in str(refused.value)
    assert _files(league.parent) == files  # byte for byte, and no backup or temp file


def test_failure_while_writing_leaves_the_original(league, monkeypatch):
    files = _files(league.parent)

    def half_then_fail(wb, temp):
        buffer = io.BytesIO()
        wb.save(buffer)
        Path(temp).write_bytes(buffer.getvalue()[: len(buffer.getvalue()) // 2])
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(save_module, "_write_temp", half_then_fail)
    wb = load_for_update(league)
    _write_outputs(wb, 0)
    with pytest.raises(FileRefused, match="disk is full.*was not changed"):
        save_workbook(wb, league)
    assert _files(league.parent) == files


def test_a_copy_that_does_not_read_back_as_written_is_not_used(league, monkeypatch):
    files = _files(league.parent)
    original = league.read_bytes()
    monkeypatch.setattr(save_module, "_write_temp", lambda wb, temp: Path(temp).write_bytes(original))
    wb = load_for_update(league)
    _write_outputs(wb, 0)
    with pytest.raises(FileRefused, match="did not pass the check"):
        save_workbook(wb, league)
    assert _files(league.parent) == files


CHILD = textwrap.dedent("""
    import sys
    sys.path.insert(0, sys.argv[2])
    sys.path.insert(0, sys.argv[3])
    from tests.workbook.test_save import _write_outputs
    from secretary.workbook.save import load_for_update, save_workbook
    wb = load_for_update(sys.argv[1])
    _write_outputs(wb, 0, n=3000)
    print("saving", flush=True)
    save_workbook(wb, sys.argv[1])
    print("saved", flush=True)
""")


@pytest.mark.slow
def test_killed_in_the_middle_of_a_save_leaves_the_original(tmp_path):
    folder = tmp_path / "big"
    folder.mkdir()
    league = S.secretary_workbook(folder / "league.xlsx", results=20_000)
    original = league.read_bytes()
    child = subprocess.Popen(
        [sys.executable, "-c", CHILD, str(league), str(REPO), str(Path(__file__).parent)],
        stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
    )
    try:
        deadline = time.monotonic() + 120
        while not list(folder.glob(".~secretary-*")):
            assert child.poll() is None, child.stderr.read()
            assert time.monotonic() < deadline, "the save never started"
            time.sleep(0.005)
        child.send_signal(signal.SIGKILL)
    finally:
        child.wait(timeout=30)
    assert child.returncode == -signal.SIGKILL
    assert "saved" not in child.stdout.read()  # killed before the save finished
    assert league.read_bytes() == original
    assert load_workbook(league, read_only=True).sheetnames == ["Results", S.NOTES]


def _immutable(path: Path, on: bool) -> bool:
    """chattr +i: refuses changes even to root, who ignores ordinary permissions (tests run as root)."""
    if shutil.which("chattr") is None:
        return False
    return subprocess.run(["chattr", "+i" if on else "-i", str(path)], capture_output=True).returncode == 0


def test_folder_that_accepts_no_new_files_gives_a_clear_message(league):
    # A chmod 0o555 folder does not stop root; an immutable folder does, for everyone.
    files = _files(league.parent)
    wb = load_for_update(league)
    _write_outputs(wb, 0)
    if not _immutable(league.parent, True):
        pytest.skip("chattr +i is not available on this file system, so no folder refuses root here")
    try:
        with pytest.raises(FileRefused, match="does not accept new files"):
            save_workbook(wb, league)
    finally:
        _immutable(league.parent, False)
    assert _files(league.parent) == files


def test_file_that_cannot_be_replaced_is_reported_as_probably_open(league):
    # On Windows a workbook open in Excel cannot be replaced; an immutable file behaves the same here.
    wb = load_for_update(league)
    _write_outputs(wb, 0)
    original = league.read_bytes()
    if not _immutable(league, True):
        pytest.skip("chattr +i is not available on this file system")
    try:
        with pytest.raises(FileRefused, match="probably open in another program"):
            save_workbook(wb, league)
    finally:
        _immutable(league, False)
    assert league.read_bytes() == original
    assert not list(league.parent.glob(".~secretary-*"))


def test_backups_keep_the_newest_ten_and_restore_can_be_undone(league):
    for week in range(12):
        outcome = _update(league, week)
    backups = backups_of(league)
    assert len(backups) == 10
    assert backups[0] == outcome.backup  # newest first
    assert read_state(load_workbook(backups[0])).reference_date == dt.date(2026, 3, 5) + dt.timedelta(weeks=10)
    restored = restore_previous(league)
    assert restored == backups[0]
    assert read_state(load_workbook(league)).reference_date == dt.date(2026, 3, 5) + dt.timedelta(weeks=10)
    assert len(backups_of(league)) == 11  # the version replaced is kept too: a restore evicts no version
    restore_previous(league)  # undo: the version before the restore comes back
    assert read_state(load_workbook(league)).reference_date == dt.date(2026, 3, 5) + dt.timedelta(weeks=11)


def test_temp_files_left_by_a_killed_save_are_cleared_once_old(league):
    stale, fresh = league.with_name(".~secretary-dead.xlsx"), league.with_name(".~secretary-live.xlsx")
    stale.write_bytes(b"half a workbook")
    fresh.write_bytes(b"a save running right now")
    two_hours_ago = time.time() - 7200
    os.utime(stale, (two_hours_ago, two_hours_ago))
    _update(league, 0)
    assert not stale.exists() and fresh.exists()


def test_restore_without_backups_says_so(league):
    with pytest.raises(FileRefused, match="no earlier version"):
        restore_previous(league)


def test_permissions_of_the_workbook_are_kept(league):
    os.chmod(league, 0o640)
    _update(league, 0)
    assert league.stat().st_mode & 0o777 == 0o640


def test_workbook_loaded_for_values_only_is_never_saved(league):
    wb = load_workbook(league, data_only=True)
    with pytest.raises(ValueError, match="data_only"):
        save_workbook(wb, league)


def _make_xlsm(tmp_path) -> tuple[Path, bytes]:
    """An .xlsm: the sample workbook with a macro project part, wired the way Excel wires it."""
    source = S.secretary_workbook(tmp_path / "plain.xlsx")
    macros = b"\xd0\xcf\x11\xe0 pretend VBA project " + os.urandom(64)
    S.edit_zip(source, add={"xl/vbaProject.bin": macros}, edit={
        "[Content_Types].xml": lambda x: x.replace(
            "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml",
            "application/vnd.ms-excel.sheet.macroEnabled.main+xml").replace(
            "<Default ", '<Default Extension="bin" ContentType="application/vnd.ms-office.vbaProject"/><Default ',
            1),
        "xl/_rels/workbook.xml.rels": S.insert_before("</Relationships>", (
            '<Relationship Id="rIdVba" Type="http://schemas.microsoft.com/office/2006/relationships/vbaProject" '
            'Target="vbaProject.bin"/>')),
    })
    path = source.with_name("league.xlsm")
    source.rename(path)
    return path, macros


def test_macros_survive_and_a_load_that_would_lose_them_is_refused(tmp_path):
    path, macros = _make_xlsm(tmp_path)
    with pytest.raises(ValueError, match="load_for_update"):
        save_workbook(load_workbook(path), path)
    for week in range(2):
        _update(path, week)
    with zipfile.ZipFile(path) as z:
        assert z.read("xl/vbaProject.bin") == macros
        assert "macroEnabled" in z.read("[Content_Types].xml").decode()
    assert RATINGS_SHEET in load_workbook(path, keep_vba=True).sheetnames


def test_content_openpyxl_would_lose_sends_the_outputs_to_a_companion(league):
    S.edit_zip(league, edit={"xl/drawings/drawing1.xml": S.insert_before("</wsDr>", S.SHAPE_ANCHOR)})
    original = league.read_bytes()
    wb = load_for_update(league)
    _write_outputs(wb, 0)
    outcome = save_workbook(wb, league)
    assert outcome.companion and outcome.path == companion_path(league) == league.with_name("league (ratings).xlsx")
    assert "shapes, text boxes" in outcome.reason and "Club notes" in outcome.reason
    assert league.read_bytes() == original
    assert wb.sheetnames[:2] == ["Results", S.NOTES] and "Fees" in wb.defined_names  # caller's workbook restored
    companion = load_workbook(outcome.path)
    assert companion.sheetnames == [RATINGS_SHEET, HISTORY_SHEET, LOG_SHEET, STATE_SHEET]
    assert companion.active.title == RATINGS_SHEET
    assert all(n.startswith("_secretary_sheet_") for n in companion.defined_names)  # only the tool's markers
    assert read_state(companion).reference_date == dt.date(2026, 3, 5)
    second = save_workbook(wb, league)
    assert second.companion and second.backup is not None and second.backup.parent.name == "backups"
