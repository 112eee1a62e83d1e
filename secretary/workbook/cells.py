"""Fast reading of the input sheets' saved cell values with python-calamine (a maintained Rust reader).

calamine reads the saved values (what openpyxl's ``data_only=True`` gives)
about ten times faster than openpyxl's read-only mode.  It does not say which
cells hold a formula, and it shows error values (``#N/A``) as blank, so each
sheet's XML is first searched for a formula or an error cell (a byte search,
no parsing):

- neither: calamine's values are complete and the sheet has no formula cells;
- formulas only: calamine's values are right; the same search notes each
  formula's cell from the ``<c r="..">`` tag just before it (``formulas``),
  or, when a tag cannot be placed, leaves that to openpyxl (``formulas`` is None);
- error cells: the whole sheet is left to openpyxl (``read_cells`` gives None).

Values come back as openpyxl gives them: blanks as None, whole numbers as
int, dates as datetime; rows from row 1 and column A, one tuple per row.
The caller runs ``guard.check_readable`` before anything here opens a file.
"""
from __future__ import annotations

import datetime as dt
import re
import zipfile
from dataclasses import dataclass
from pathlib import Path, PurePosixPath

import defusedxml.ElementTree as SafeTree
import numpy as np
import python_calamine

_FORMULA = re.compile(rb"<(?:\w+:)?f[\s>/]")
_ERROR = re.compile(rb"""\st\s*=\s*["']e["']""")
_CELL_OPEN = re.compile(rb"<(?:\w+:)?c\s([^<>]*)>\s*$")  # the cell tag right before a formula
_REF = re.compile(rb"""(?:^|\s)r\s*=\s*["']([A-Z]{1,3})([0-9]+)["']""")
_F, _E, _LT, _COLON, _QUOTE, _APOSTROPHE = b"fe<:\"'"
_CHUNK = 1 << 22  # bytes of sheet XML searched at once
_OVERLAP = 512  # bytes kept between chunks so that no marker is cut in two
_MAIN = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"
_RELS = "{http://schemas.openxmlformats.org/package/2006/relationships}"
_REL_ID = "{http://schemas.openxmlformats.org/officeDocument/2006/relationships}id"


@dataclass(frozen=True)
class SheetCells:
    """A sheet's saved values as rows (row 1 first, from column A) and its formula cells."""

    rows: list[tuple]
    formulas: set[tuple[int, int]] | None  # (row, column), 1-based; None = not known


class Workbook:
    """One workbook opened for reading values: sheet titles, and each sheet's cells on demand."""

    def __init__(self, path: Path):
        self.path = path
        self._book = python_calamine.CalamineWorkbook.from_path(str(path))
        self.sheetnames: list[str] = list(self._book.sheet_names)
        self._members = _members_of(path)
        self._markers: dict[str, tuple[set[tuple[int, int]] | None, bool]] = {}  # searched when first read

    def _marked(self, title: str) -> tuple[set[tuple[int, int]] | None, bool]:
        """(its formula cells or None if not placed, holds an error value) of one sheet, by a byte search."""
        if title not in self._markers:
            member = self._members.get(title)
            if member is None:
                return None, True
            with zipfile.ZipFile(self.path) as archive:
                self._markers[title] = _search(archive, member)
        return self._markers[title]

    def read_cells(self, title: str) -> SheetCells | None:
        """The sheet's values; None when only openpyxl can read it faithfully (error cells, or unreadable)."""
        formulas, error = self._marked(title)
        if error:
            return None
        try:
            table = self._book.get_sheet_by_name(title).to_python(skip_empty_area=False)
        except python_calamine.CalamineError:
            return None
        for number, row in enumerate(table):  # in place: each raw row is freed as soon as it is converted
            table[number] = tuple(map(_cell, row))
        return SheetCells(table, formulas)

    def rows(self, title: str) -> list[tuple]:
        """Every row of a sheet (blanks as None), for small sheets such as the tool's own."""
        cells = self.read_cells(title)
        return cells.rows if cells is not None else []

    def close(self) -> None:
        self._book.close()


def _cell(value):
    """One calamine value as openpyxl gives it."""
    kind = value.__class__
    if kind is str:
        return value or None
    if kind is float:
        return int(value) if value.is_integer() else value
    if kind is dt.date:
        return dt.datetime(value.year, value.month, value.day)
    return value


def _members_of(path: Path) -> dict[str, str]:
    """Sheet title -> its part in the package."""
    with zipfile.ZipFile(path) as archive:
        return _sheet_members(archive)


def _sheet_members(archive: zipfile.ZipFile) -> dict[str, str]:
    """Sheet title -> its part in the package, from workbook.xml and its relationships."""
    book = SafeTree.fromstring(archive.read("xl/workbook.xml"))
    try:
        rels = SafeTree.fromstring(archive.read("xl/_rels/workbook.xml.rels"))
    except KeyError:
        return {}
    targets = {rel.get("Id"): rel.get("Target", "") for rel in rels.iter(f"{_RELS}Relationship")}
    members = {}
    for sheet in book.iter(f"{_MAIN}sheet"):
        target = targets.get(sheet.get(_REL_ID), "")
        part = target.lstrip("/") if target.startswith("/") else str(PurePosixPath("xl") / target)
        members[sheet.get("name")] = str(PurePosixPath(part))
    return members


def _search(archive: zipfile.ZipFile, member: str) -> tuple[set[tuple[int, int]] | None, bool]:
    formulas: set[tuple[int, int]] | None = set()
    error = False
    try:
        with archive.open(member) as source:
            tail = b""
            while not error:  # an error value leaves the whole sheet to openpyxl
                chunk = source.read(_CHUNK)
                if not chunk:
                    break
                text = tail + chunk
                # These tests skip the regular expressions on almost every chunk.
                formula, maybe_error = _hints(text)
                if formulas is not None and formula:
                    formulas = _formula_cells(text, len(tail), formulas)
                error = error or (maybe_error and _ERROR.search(text) is not None)
                tail = text[-_OVERLAP:]
    except KeyError:
        return None, True  # a sheet whose part is missing: leave it to openpyxl
    return formulas, error


def _hints(text: bytes) -> tuple[bool, bool]:
    """(``b"<f" in text or b":f" in text``, ``b'"e"' in text or b"'e'" in text``), by whole-array tests:
    Python's search for a two-byte text starting with "<" crawls through sheet XML (a "<" every few
    bytes: 20 ms for each 4 MB, 8 s for the Results sheet of a million rows)."""
    data = np.frombuffer(text, np.uint8)
    before_f = data[np.flatnonzero(data[1:] == _F)]
    formula = bool(((before_f == _LT) | (before_f == _COLON)).any())
    at_e = np.flatnonzero(data[1:-1] == _E)
    before_e, after_e = data[at_e], data[at_e + 2]
    error = bool(((before_e == after_e) & ((before_e == _QUOTE) | (before_e == _APOSTROPHE))).any())
    return formula, error


def _formula_cells(text: bytes, seen: int, found: set[tuple[int, int]]) -> set[tuple[int, int]] | None:
    """``found`` with the (row, column) of every formula in ``text`` not ending in its first ``seen`` bytes
    (the previous chunk's tail); None when one cannot be placed."""
    for match in _FORMULA.finditer(text):
        start = match.start()
        if match.end() <= seen:
            continue  # found in the previous chunk
        tag = _CELL_OPEN.search(text, max(0, start - _OVERLAP + 8), start)
        ref = _REF.search(tag.group(1)) if tag else None
        if ref is None:
            return None  # a cell without a reference, or a tag too long to see
        column = 0
        for letter in ref.group(1):
            column = column * 26 + letter - 64
        found.add((int(ref.group(2)), column))
    return found
