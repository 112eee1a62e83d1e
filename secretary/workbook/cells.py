"""Fast reading of one sheet's saved cell values, and of which cells hold formulas.

openpyxl's read-only mode builds an XML element per cell and needs about 1.5 s
for 20,000 result rows; a league workbook's sheet data is simple enough to scan
with a few regular expressions in a fraction of that.  The scan reads the saved
values (what ``data_only=True`` gives) and, in the same pass, notes which cells
hold a formula.  Anything it does not recognise makes it return None, and the
caller falls back to openpyxl; tests compare the two on files written by
openpyxl and by LibreOffice.  No entity is ever expanded (only the five XML
escapes and character references are decoded), so it is no XML-bomb risk.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

from openpyxl.utils.datetime import from_ISO8601, from_excel

_SHEET_DATA = re.compile(r"<(?:\w+:)?sheetData\b[^>]*?(?:/>|>(.*?)</(?:\w+:)?sheetData>)", re.S)
_CELL = re.compile(r"<(?:\w+:)?c\b([^>]*?)(?:/>|>(.*?)</(?:\w+:)?c>)", re.S)
_COMMON_ATTRS = re.compile(r'\s*r="([A-Z]{1,3})([0-9]+)"(?:\s+s="([0-9]+)")?(?:\s+t="(\w+)")?\s*')
_ATTR = re.compile(r"""([\w:]+)\s*=\s*(?:"([^"]*)"|'([^']*)')""")
_VALUE = re.compile(r"<(?:\w+:)?v\b[^>]*?(?:/>|>(.*?)</(?:\w+:)?v>)", re.S)
_FORMULA = re.compile(r"<(?:\w+:)?f\b")
_PHONETIC = re.compile(r"<(?:\w+:)?rPh\b.*?</(?:\w+:)?rPh>", re.S)
_TEXT = re.compile(r"<(?:\w+:)?t\b[^>]*?(?:/>|>(.*?)</(?:\w+:)?t>)", re.S)
_PLAIN_INLINE = re.compile(r"<is><t>([^<]*)</t></is>")
_REF = re.compile(r"([A-Z]{1,3})([0-9]+)")
_ESCAPE = re.compile(r"&(amp|lt|gt|quot|apos|#x[0-9a-fA-F]+|#[0-9]+);")
_NAMED = {"amp": "&", "lt": "<", "gt": ">", "quot": '"', "apos": "'"}
_COLUMNS: dict[str, int] = {}


@dataclass(frozen=True)
class SheetCells:
    """A sheet's saved values as rows (row 1 first, ragged, trailing blanks cut) and its formula cells."""

    rows: list[tuple]
    formulas: set[tuple[int, int]] | None  # (row, column), 1-based; None = not known


class _Unknown(Exception):
    """Something this scan does not handle; openpyxl will read the sheet instead."""


def _unescape(text: str) -> str:
    if "\r" in text:  # XML reads every line end as a line feed
        text = text.replace("\r\n", "\n").replace("\r", "\n")
    if "&" not in text:
        return text

    def one(match: re.Match) -> str:
        name = match.group(1)
        if name[0] != "#":
            return _NAMED[name]
        return chr(int(name[2:], 16) if name[1] in "xX" else int(name[1:]))

    return _ESCAPE.sub(one, text)


def _column(letters: str) -> int:
    number = _COLUMNS.get(letters)
    if number is None:
        number = 0
        for letter in letters:
            number = number * 26 + ord(letter) - 64
        _COLUMNS[letters] = number
    return number


def read_cells(ws) -> SheetCells | None:
    """Scan a read-only openpyxl worksheet's XML; None when the sheet needs openpyxl itself."""
    try:
        wb = ws.parent
        with wb._archive.open(ws._worksheet_path) as source:
            xml = source.read().decode("utf-8")
        return _scan(xml, ws._shared_strings, wb._date_formats, wb._timedelta_formats, wb.epoch)
    except (_Unknown, AttributeError, KeyError, IndexError, ValueError, OverflowError, UnicodeDecodeError):
        return None


def _scan(xml: str, shared: list, date_styles, timedelta_styles, epoch) -> SheetCells:
    data = _SHEET_DATA.search(xml)
    if data is None:
        raise _Unknown("no sheetData")
    cells: dict[int, dict[int, object]] = {}
    formulas: set[tuple[int, int]] = set()
    for attrs_text, inner in _CELL.findall(data.group(1) or ""):
        common = _COMMON_ATTRS.fullmatch(attrs_text)
        if common:  # the order every usual writer uses, read without building a dict
            letters, row_text, style, kind = common.groups()
        else:
            attrs = {m[0]: m[1] or m[2] for m in _ATTR.findall(attrs_text)}
            ref = _REF.fullmatch(attrs.get("r", ""))
            if ref is None:
                raise _Unknown("a cell without a reference")  # legal but rare: openpyxl counts them
            letters, row_text, style, kind = ref.group(1), ref.group(2), attrs.get("s"), attrs.get("t")
        row, column = int(row_text), _column(letters)
        if not inner:
            continue
        if ("<f" in inner or ":f" in inner) and _FORMULA.search(inner):
            formulas.add((row, column))
        if inner.startswith("<v>") and inner.endswith("</v>") and inner.count("<") == 2:
            text = inner[3:-4]  # the usual form: the saved value alone
        elif kind == "inlineStr":
            text = inner
        else:
            match = _VALUE.search(inner)
            text = match.group(1) if match else None
        if text:
            value = _value(kind or "n", int(style) if style else 0, text,
                           shared, date_styles, timedelta_styles, epoch)
            if value is not None:
                cells.setdefault(row, {})[column] = value
    rows: list[tuple] = []
    for number in range(1, max(cells, default=0) + 1):
        found = cells.get(number)
        if not found:
            rows.append(())
            continue
        line = [None] * max(found)
        for column, value in found.items():
            line[column - 1] = value
        rows.append(tuple(line))
    return SheetCells(rows, formulas)


def _value(kind: str, style: int, text: str, shared, date_styles, timedelta_styles, epoch):
    """The saved value of a cell; ``text`` is its <v> text, or the whole inside of an inline string."""
    if kind == "n":
        number = float(text) if ("." in text or "e" in text or "E" in text) else int(text)
        if style in date_styles:
            return from_excel(number, epoch, timedelta=style in timedelta_styles)
        return number
    if kind == "s":
        return shared[int(text)]
    if kind == "inlineStr":
        plain = _PLAIN_INLINE.fullmatch(text)
        if plain:
            return _unescape(plain.group(1))
        body = _PHONETIC.sub("", text)
        return "".join(_unescape(t or "") for t in _TEXT.findall(body))
    if kind == "b":
        return bool(int(text))
    if kind in ("str", "e"):
        return _unescape(text)
    if kind == "d":
        return from_ISO8601(text)
    raise _Unknown(f"cell type {kind}")
