"""Files the update refuses, through the real command line: the message says what is wrong and what to
do, and every file in the folder is left exactly as it was (no backup, no temp file, no PDF)."""
from __future__ import annotations

import zipfile
from pathlib import Path

import openpyxl
import pytest

from tests.workbook.league_books import D, good_results, write_book


def _folder(path: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(path.parent.iterdir()) if p.is_file()}


def _lock(league: Path, name: str) -> Path:
    (league.parent / name).write_text("someone")
    return league


def _encrypted(league: Path, _: str) -> Path:
    league.write_bytes(b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(4096))  # the OLE box a password puts it in
    return league


def _damaged(league: Path, _: str) -> Path:
    league.write_bytes(league.read_bytes()[: league.stat().st_size // 2])
    return league


def _bomb(league: Path, _: str) -> Path:
    """A part that unpacks from a few hundred kB to 60 MB (over 200 times its packed size)."""
    with zipfile.ZipFile(league, "a", zipfile.ZIP_DEFLATED) as z:
        z.writestr("xl/media/padding.bin", bytes(60 * 2**20))
    return league


def _renamed(league: Path, _: str) -> Path:
    target = league.with_suffix(".csv")
    league.rename(target)
    return target


CASES = {
    "open in Excel": (_lock, "~$league.xlsx", ["is open in another program (Excel)", "Close it there"]),
    "open in LibreOffice": (_lock, ".~lock.league.xlsx#", ["is open in another program (LibreOffice)"]),
    "encrypted": (_encrypted, "", ["protected by a password", "Remove the password"]),
    "damaged": (_damaged, "", ["is damaged", "restore a backup copy"]),
    "zip bomb": (_bomb, "", ["would unpack from", "refused to protect this computer"]),
    "not a workbook": (_renamed, "", ["is not an Excel workbook (.xlsx or .xlsm)", "save it as an Excel workbook"]),
}


@pytest.mark.parametrize("case", CASES)
def test_a_file_the_tool_cannot_safely_use_is_refused_and_left_alone(tmp_path, run, case):
    make, name, expected = CASES[case]
    league = make(write_book(tmp_path / "league.xlsx", good_results()), name)
    before = _folder(league)
    code, out = run("update", league)
    assert code == 1, out
    for text in expected:
        assert text.lower() in out.lower(), out
    assert "Traceback" not in out and "Please report" not in out
    assert _folder(league) == before and not (tmp_path / "backups").exists()


def test_names_that_look_like_formulas_are_written_as_text(tmp_path, run):
    odd = ["=1+1", "+44 Pike", "-Dash", "@SUM(A1)"]
    rows = good_results() + [[D, "Premier", a, b, 5, 2, "", ""] for a, b in zip(odd, odd[1:])]
    league = write_book(tmp_path / "league.xlsx", rows)
    wb = openpyxl.load_workbook(league)
    for row in wb["Results"].iter_rows(min_row=2, min_col=3, max_col=4):
        for cell in row:
            cell.data_type = "s"  # typed as text in the secretary's sheet (a spreadsheet program shows them)
    wb.save(league)
    code, out = run("update", league)
    assert code == 0, out
    cells = [row[1] for row in openpyxl.load_workbook(league)["Ratings"].iter_rows(min_row=2)]
    written = {c.value: c.data_type for c in cells}
    assert {name: written.get(name) for name in odd} == {name: "s" for name in odd}
