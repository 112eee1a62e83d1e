"""A secretary's own sheets named like the tool's are never replaced, renamed or deleted."""
from __future__ import annotations

import re
import zipfile
from pathlib import Path

import openpyxl

from tests.workbook.league_books import good_results, write_book


def _with_own_sheet(path: Path, title: str, rows) -> Path:
    write_book(path, good_results())
    wb = openpyxl.load_workbook(path)
    ws = wb.create_sheet(title)
    for row in rows:
        ws.append(row)
    wb.save(path)
    return path


def _values(path: Path, title: str) -> list[tuple]:
    return list(openpyxl.load_workbook(path)[title].iter_rows(values_only=True))


def _part_of(path: Path, title: str) -> bytes:
    """The bytes of a sheet's part in the package."""
    with zipfile.ZipFile(path) as z:
        wb, rels = z.read("xl/workbook.xml").decode(), z.read("xl/_rels/workbook.xml.rels").decode()
        rid = re.search(rf'<sheet [^>]*name="{re.escape(title)}"[^>]*r:id="(rId\d+)"', wb).group(1)
        target = re.search(rf'Id="{rid}"[^>]*Target="([^"]+)"|Target="([^"]+)"[^>]*Id="{rid}"', rels)
        return z.read("xl/" + (target.group(1) or target.group(2)).lstrip("/").removeprefix("xl/"))


def test_an_own_sheet_called_ratings_is_kept_and_the_tools_goes_beside_it(tmp_path, run):
    mine = [("Team", "Points"), ("Red Lions", 12), ("Blue Cues", 9)]
    league = _with_own_sheet(tmp_path / "league.xlsx", "Ratings", mine)
    code, out = run("update", league)
    assert code == 0, out
    assert _values(league, "Ratings") == mine
    tool = _values(league, "Ratings (tool)")
    assert tool[0][:4] == ("Rank", "Player", "Division", "Rating") and len(tool) == 5
    assert "'Ratings (tool)' (a sheet of yours is called 'Ratings')" in out
    assert "Your own sheets were left exactly as they were" in out
    code, out = run("update", league)  # and again: the same two sheets, nothing piles up
    assert code == 0, out
    assert _values(league, "Ratings") == mine
    assert [n for n in openpyxl.load_workbook(league).sheetnames if "atings" in n] == ["Ratings", "Ratings (tool)"]


def test_an_own_problems_sheet_is_not_deleted_when_there_are_no_problems(tmp_path, run):
    mine = [("Problem", "Who"), ("Broken cue rack", "Ada")]
    league = _with_own_sheet(tmp_path / "league.xlsx", "Problems", mine)
    assert run("update", league)[0] == 0
    assert _values(league, "Problems") == mine


def test_an_own_sheet_called_ratings_in_lower_case_does_not_make_sheets_pile_up(tmp_path, run):
    mine = [("my notes on ratings",)]
    league = _with_own_sheet(tmp_path / "league.xlsx", "ratings", mine)
    assert run("update", league)[0] == 0
    names = openpyxl.load_workbook(league).sheetnames
    own_part = _part_of(league, "ratings")
    for _ in range(2):
        code, out = run("update", league)
        assert code == 0, out
        assert openpyxl.load_workbook(league).sheetnames == names
        assert _part_of(league, "ratings") == own_part  # grafted: the secretary's sheet not rewritten
    assert "Ratings (tool)" in names and not [n for n in names if re.fullmatch(r"Ratings\d+", n)]
    assert _values(league, "ratings") == mine


def test_a_workbook_last_updated_before_the_markers_keeps_its_tool_sheets(tmp_path, run):
    league = write_book(tmp_path / "league.xlsx", good_results())
    assert run("update", league)[0] == 0
    with zipfile.ZipFile(league) as z:  # take the markers out, as an earlier version wrote it
        parts = {i.filename: z.read(i) for i in z.infolist()}
    parts["xl/workbook.xml"] = re.sub(rb'<definedName name="_secretary_sheet_[^"]*"[^>]*>[^<]*</definedName>', b"",
                                      parts["xl/workbook.xml"])
    with zipfile.ZipFile(league, "w", zipfile.ZIP_DEFLATED) as z:
        for name, data in parts.items():
            z.writestr(name, data)
    names = openpyxl.load_workbook(league).sheetnames
    code, out = run("update", league, "--force")
    assert code == 0, out
    assert openpyxl.load_workbook(league).sheetnames == names and "(tool)" not in out
    assert "Since the last update: 0 new" in out  # the state was found and read
