"""A corpus of bad workbooks, one defect each, with where the reader must point.

Each entry's ``build(path)`` writes the workbook at ``path`` (or beside it, when
the defect is the file's type) and returns the file to give the reader.
``where`` is the (sheet, row, column) of the expected problem, or None when the
whole file must be refused with a ``SecretaryError`` whose message contains
``says``.  Importable by other tests (the command line's, for instance).
"""
from __future__ import annotations

import datetime as dt
import zipfile
from dataclasses import dataclass
from pathlib import Path
from typing import Callable

from tests.workbook.league_books import D, RESULTS_HEADERS, good_results, write_book


@dataclass(frozen=True)
class BadWorkbook:
    case_id: str
    build: Callable[[Path], Path]
    where: tuple[str, int | None, str | None] | None  # None: the file is refused
    severity: str = "error"  # "error", "warning" or "refused"
    says: str = ""  # a phrase the problem (or refusal message) must contain


def _results_with(row_index: int, column: str, value) -> Callable[[Path], Path]:
    """Good results with one cell changed (row_index 0 is sheet row 2)."""
    def build(path: Path) -> Path:
        rows = good_results()
        rows[row_index][RESULTS_HEADERS.index(column)] = value
        return write_book(path, rows)
    return build


def _doubles_row(partner_a, partner_b) -> Callable[[Path], Path]:
    """Good results and a doubles row (sheet row 6: Ada Finch and ``partner_a`` v Cleo Marsh and ``partner_b``)."""
    def build(path: Path) -> Path:
        rows = [row + [None, None] for row in good_results()]
        rows.append([D, "Premier", "Ada Finch", "Cleo Marsh", 3, 1, "", "", partner_a, partner_b])
        return write_book(path, rows, results_headers=RESULTS_HEADERS + ("Partner A", "Partner B"))
    return build


def _extra_result(*row) -> Callable[[Path], Path]:
    def build(path: Path) -> Path:
        return write_book(path, good_results() + [list(row)])
    return build


def _with(**sheets) -> Callable[[Path], Path]:
    def build(path: Path) -> Path:
        return write_book(path, **sheets)
    return build


def _without_column(column: str) -> Callable[[Path], Path]:
    def build(path: Path) -> Path:
        i = RESULTS_HEADERS.index(column)
        headers = RESULTS_HEADERS[:i] + RESULTS_HEADERS[i + 1:]
        return write_book(path, [r[:i] + r[i + 1:] for r in good_results()], results_headers=headers)
    return build


def _bytes(suffix: str, data: bytes) -> Callable[[Path], Path]:
    def build(path: Path) -> Path:
        target = path.with_suffix(suffix)
        target.write_bytes(data)
        return target
    return build


def _truncated(path: Path) -> Path:
    write_book(path)
    data = path.read_bytes()
    path.write_bytes(data[: len(data) // 2])
    return path


def _zip_bomb(path: Path) -> Path:
    write_book(path)
    with zipfile.ZipFile(path, "a", compression=zipfile.ZIP_DEFLATED) as archive:
        archive.writestr("xl/media/padding.bin", bytes(64 * 1024 * 1024))
    return path


def _not_a_workbook_zip(path: Path) -> Path:
    with zipfile.ZipFile(path, "w") as archive:
        archive.writestr("word/document.xml", "<document/>")
    return path


def _folder(path: Path) -> Path:
    path.mkdir()
    return path


PLAYERS = [["Ada Finch", "Premier", None, None], ["Bram Oak", "Premier", None, None],
           ["Cleo Marsh", "Premier", None, None], ["Dev Pike", "Premier", None, None]]
LATER = D + dt.timedelta(days=14)

BAD_WORKBOOKS: tuple[BadWorkbook, ...] = (
    # the Results sheet and its columns
    BadWorkbook("no-results-sheet", _with(results_sheet=None), ("Results", None, None), says="no sheet"),
    BadWorkbook("missing-games-b", _without_column("Games B"), ("Results", 1, "Games B"), says="missing"),
    BadWorkbook("missing-player-a", _without_column("Player A"), ("Results", 1, "Player A"), says="headers found"),
    BadWorkbook("missing-date", _without_column("Date"), ("Results", 1, "Date")),
    # one cell wrong
    BadWorkbook("blank-games", _results_with(1, "Games A", None), ("Results", 3, "Games A"), says="blank"),
    BadWorkbook("text-games", _results_with(1, "Games A", "three"), ("Results", 3, "Games A"), says="not a number"),
    BadWorkbook("negative-games", _results_with(2, "Games B", -1), ("Results", 4, "Games B"), says="negative"),
    BadWorkbook("fractional-games", _results_with(0, "Games B", 2.5), ("Results", 2, "Games B"), says="whole"),
    BadWorkbook("both-zero", _extra_result(LATER, "Premier", "Ada Finch", "Dev Pike", 0, 0),
                ("Results", 6, "Games B"), says="both players won 0"),
    BadWorkbook("self-play", _results_with(1, "Player B", "Cleo Marsh"), ("Results", 3, "Player B"), says="themself"),
    BadWorkbook("self-play-case", _results_with(1, "Player B", " cleo  MARSH"), ("Results", 3, "Player B")),
    BadWorkbook("doubles-one-partner", _doubles_row("Bram Oak", None), ("Results", 6, "Partner B"),
                says="needs two players on each side"),
    BadWorkbook("doubles-twice-on-a-side", _doubles_row("ADA FINCH", "Dev Pike"), ("Results", 6, "Partner A"),
                says="written twice on side A"),
    BadWorkbook("doubles-both-sides", _doubles_row("Bram Oak", "Ada Finch"), ("Results", 6, "Partner B"),
                says="on both sides"),
    BadWorkbook("blank-player", _results_with(3, "Player A", "  "), ("Results", 5, "Player A"), says="blank"),
    BadWorkbook("blank-division", _results_with(0, "Division", None), ("Results", 2, "Division"), says="division"),
    BadWorkbook("unreadable-date", _results_with(2, "Date", "next Tuesday"), ("Results", 4, "Date"), says="unreadable"),
    BadWorkbook("impossible-date", _results_with(2, "Date", "31/02/2026"), ("Results", 4, "Date"), says="does not exist"),
    BadWorkbook("month-thirteen", _results_with(1, "Date", "14/13/2026"), ("Results", 3, "Date"), says="month 13"),
    BadWorkbook("blank-date", _results_with(0, "Date", None), ("Results", 2, "Date"), says="blank"),
    BadWorkbook("far-future-date", _results_with(3, "Date", dt.date(2062, 3, 21)), ("Results", 5, "Date"),
                says="after today"),
    BadWorkbook("formula-games", _results_with(1, "Games B", "=E3+1"), ("Results", 3, "Games B"),
                says="formula without a saved value"),
    BadWorkbook("formula-name", _results_with(2, "Player A", '=UPPER("ada finch")'), ("Results", 4, "Player A"),
                says="formula without a saved value"),
    # warnings in Results
    BadWorkbook("duplicate-row", _extra_result(D, "Premier", "Bram Oak", "Ada Finch", 3, 5, "", ""),
                ("Results", 6, None), "warning", says="row 2"),
    BadWorkbook("case-variant", _extra_result(LATER, "Premier", "ada finch", "Dev Pike", 5, 1),
                ("Results", 6, "Player A"), "warning", says="Ada Finch"),
    BadWorkbook("close-spelling", _extra_result(LATER, "Premier", "Ada Fitch", "Dev Pike", 5, 1),
                ("Results", 6, "Player A"), "warning", says="Ada Finch"),
    # Players
    BadWorkbook("not-in-players", _with(players=PLAYERS[:3]), ("Results", 3, "Player B"), "warning",
                says="not in Players"),
    BadWorkbook("players-unknown-division", _with(players=PLAYERS + [["Eve Stone", "Premeir", None, None]]),
                ("Players", 6, "Division"), "warning", says="Premeir"),
    BadWorkbook("players-duplicate", _with(players=PLAYERS + [["ada finch", "Premier", None, None]]),
                ("Players", 6, "Player"), says="twice"),
    BadWorkbook("alias-is-other-player", _with(players=[["Ada Finch", "Premier", None, "Bram Oak"]] + PLAYERS[1:]),
                ("Players", 2, "Also known as"), says="another player"),
    BadWorkbook("alias-given-twice", _with(players=[["Ada Finch", "", None, "A. Finch"], ["Bram Oak", "", None, "a. finch"]]
                                       + PLAYERS[2:]), ("Players", 3, "Also known as"), says="also listed"),
    BadWorkbook("starting-rating-text", _with(players=[["Ada Finch", "Premier", "strong", None]] + PLAYERS[1:]),
                ("Players", 2, "Starting rating"), says="not a number"),
    BadWorkbook("players-blank-name", _with(players=PLAYERS + [[None, "Premier", 1600, None]]),
                ("Players", 6, "Player"), says="blank"),
    BadWorkbook("players-missing-column", _with(players=[["Premier"]], players_headers=("Division",)),
                ("Players", 1, "Player"), says="missing"),
    BadWorkbook("alias-merges-both-sides", _with(players=[["Ada Finch", "", None, "Bram Oak Jr"]] + PLAYERS[2:],
                                             results=good_results() + [[LATER, "Premier", "Ada Finch", "bram oak jr", 5, 1]]),
                ("Results", 6, "Player B"), says="same player"),
    # Divisions
    BadWorkbook("divisions-unknown", _with(divisions=[["Premier", 100, ""], ["Premeir", 50, ""]]),
                ("Divisions", 3, "Division"), says="close spellings: Premier"),
    BadWorkbook("divisions-text-level", _with(divisions=[["Premier", "high", "the top tier"]]),
                ("Divisions", 2, "Starting level"), says="not a number"),
    BadWorkbook("divisions-duplicate", _with(divisions=[["Premier", 100, ""], [" premier ", 50, ""]]),
                ("Divisions", 3, "Division"), says="twice (also row 2)"),
    BadWorkbook("divisions-absurd-level", _with(divisions=[["Premier", 1650, "typed as a rating"]]),
                ("Divisions", 2, "Starting level"), says="further from the centre than 1200 points"),
    BadWorkbook("divisions-level-without-division", _with(divisions=[[None, 150, "top"]]),
                ("Divisions", 2, "Division"), says="without a division"),
    BadWorkbook("divisions-formula-level", _with(divisions=[["Premier", "=100+50", ""]]),
                ("Divisions", 2, "Starting level"), says="formula without a saved value"),
    # Settings
    BadWorkbook("setting-out-of-range", _with(settings=[["Longest race", 500]]), ("Settings", 2, "Value"),
                says="from 1 to 50"),
    BadWorkbook("setting-not-a-number", _with(settings=[["Centre", "fifteen hundred"]]), ("Settings", 2, "Value"),
                says="Centre must be"),
    BadWorkbook("unknown-setting", _with(settings=[["Centre", 1500], ["Colour", "green"]]), ("Settings", 3, "Setting"),
                says="Half-life (days)"),
    BadWorkbook("bad-date-order", _with(settings=[["Date order", "sideways"]]), ("Settings", 2, "Value"),
                says="day-first or month-first"),
    BadWorkbook("setting-twice", _with(settings=[["Scale", 400], ["scale", 300]]), ("Settings", 3, "Setting"),
                says="twice"),
    BadWorkbook("usual-race-too-long", _with(settings=[["Longest race", 7], ["Usual race", 9]]),
                ("Settings", 3, "Value"), says="longer than the longest"),
    BadWorkbook("formula-setting", _with(settings=[["Scale", "=200*2"]]), ("Settings", 2, "Value"),
                says="formula"),
    # Fixtures
    BadWorkbook("fixture-unknown-player", _with(fixtures=[[LATER, "Ada Finch", "Zed Quill", None, None]]),
                ("Fixtures", 2, "Player B"), "warning", says="Zed Quill"),
    BadWorkbook("fixture-text-race", _with(fixtures=[[LATER, "Ada Finch", "Bram Oak", "two", 3]]),
                ("Fixtures", 2, "Race A"), says="not a number"),
    BadWorkbook("fixture-one-race", _with(fixtures=[[LATER, "Ada Finch", "Bram Oak", 4, None]]),
                ("Fixtures", 2, "Race B"), says="blank"),
    BadWorkbook("fixture-zero-race", _with(fixtures=[[LATER, "Ada Finch", "Bram Oak", 0, 3]]),
                ("Fixtures", 2, "Race A"), says="less than 1"),
    BadWorkbook("fixture-bad-date", _with(fixtures=[["30/02/2026", "Ada Finch", "Bram Oak", None, None]]),
                ("Fixtures", 2, "Date"), says="does not exist"),
    # the file itself
    BadWorkbook("csv-file", _bytes(".csv", b"Date,Division\n"), None, "refused", says="save it as an Excel workbook"),
    BadWorkbook("ods-file", _bytes(".ods", b"PK\x03\x04"), None, "refused", says="save it as an Excel workbook"),
    BadWorkbook("encrypted", _bytes(".xlsx", b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(504)), None, "refused",
                says="password"),
    BadWorkbook("not-a-zip", _bytes(".xlsx", b"Date,Division,Player A\n"), None, "refused", says="damaged"),
    BadWorkbook("truncated", _truncated, None, "refused", says="damaged"),
    BadWorkbook("zip-bomb", _zip_bomb, None, "refused", says="MB"),
    BadWorkbook("zip-not-a-workbook", _not_a_workbook_zip, None, "refused", says="not an Excel workbook"),
    BadWorkbook("missing-file", lambda path: path, None, "refused", says="no file"),
    BadWorkbook("folder", _folder, None, "refused", says="folder"),
)
