"""Small league workbooks for the reading tests, written with openpyxl from plain rows."""
from __future__ import annotations

import datetime as dt
import zipfile
from pathlib import Path
from typing import Sequence

from openpyxl import Workbook

RESULTS_HEADERS = ("Date", "Division", "Player A", "Player B", "Games A", "Games B", "Event", "Note")
PLAYERS_HEADERS = ("Player", "Division", "Starting rating", "Also known as")
DIVISIONS_HEADERS = ("Division", "Starting level", "Note")
SETTINGS_HEADERS = ("Setting", "Value")
FIXTURES_HEADERS = ("Date", "Player A", "Player B", "Race A", "Race B")

D = dt.date(2026, 3, 14)


def good_results() -> list[list]:
    """Four clean results among invented players (sheet rows 2 to 5)."""
    return [
        [D, "Premier", "Ada Finch", "Bram Oak", 5, 3, "", ""],
        [D, "Premier", "Cleo Marsh", "Dev Pike", 4, 5, "", ""],
        [D + dt.timedelta(days=7), "Premier", "Ada Finch", "Cleo Marsh", 5, 2, "", ""],
        [D + dt.timedelta(days=7), "Premier", "Bram Oak", "Dev Pike", 5, 4, "", ""],
    ]


def write_book(
    path: Path,
    results: Sequence[Sequence] | None = None,
    *,
    results_headers: Sequence[str] = RESULTS_HEADERS,
    players: Sequence[Sequence] | None = None,
    players_headers: Sequence[str] = PLAYERS_HEADERS,
    divisions: Sequence[Sequence] | None = None,
    settings: Sequence[Sequence] | None = None,
    fixtures: Sequence[Sequence] | None = None,
    fixtures_headers: Sequence[str] = FIXTURES_HEADERS,
    results_sheet: str | None = "Results",
) -> Path:
    """Write a workbook; a sheet given as None is left out (Results too, with results_sheet=None)."""
    wb = Workbook()
    wb.remove(wb.active)
    if results_sheet is not None:
        _sheet(wb, results_sheet, results_headers, good_results() if results is None else results)
    if players is not None:
        _sheet(wb, "Players", players_headers, players)
    if divisions is not None:
        _sheet(wb, "Divisions", DIVISIONS_HEADERS, divisions)
    if settings is not None:
        _sheet(wb, "Settings", SETTINGS_HEADERS, settings)
    if fixtures is not None:
        _sheet(wb, "Fixtures", fixtures_headers, fixtures)
    if not wb.sheetnames:
        wb.create_sheet("Notes")
    wb.save(path)
    return path


def _sheet(wb: Workbook, title: str, headers: Sequence[str], rows: Sequence[Sequence]) -> None:
    ws = wb.create_sheet(title)
    ws.append(list(headers))
    for row in rows:
        ws.append(list(row))


def rewrite_part(source: Path, dest: Path, part: str, old: bytes, new: bytes) -> Path:
    """Copy the workbook (a zip) with the first `old` in one part replaced by `new`, as another
    program might have written it; the part must contain `old`, so a test cannot pass vacuously."""
    with zipfile.ZipFile(source) as src, zipfile.ZipFile(dest, "w", zipfile.ZIP_DEFLATED) as dst:
        for item in src.infolist():
            data = src.read(item.filename)
            if item.filename == part:
                assert old in data, (part, old)
                data = data.replace(old, new, 1)
            dst.writestr(item, data)
    return dest
