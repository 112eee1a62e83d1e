"""Texts longer than any cell can hold, found by streaming the package before any reader opens it.

A cell holds at most 32,767 characters (Excel's limit, which LibreOffice keeps too), so a crafted
file with a 100 MB "cell" was made by no spreadsheet program; reading it would cost about ten times
its size in memory.  A large sheet part (or the shared texts) is inflated a few MB at a time and the
longest run of bytes between two "<" is measured: a cell's text of 32,767 characters takes at most
10 bytes per character in the XML (``&#1114111;``), so a longer run cannot be a cell's text.  Small
parts are not looked at: whatever they hold, they are cheap to read (the checks then name the cell).
"""
from __future__ import annotations

import re
import zipfile
from pathlib import Path

import numpy as np

from secretary.errors import FileRefused

CELL_CHARACTERS = 32767  # the most a cell holds (Excel's specifications and limits)
LONGEST_RUN = CELL_CHARACTERS * 10  # bytes of XML such a text can take at most
SCAN_FROM = 16 * 1024 * 1024  # bytes unpacked: smaller parts are read as they are
_CHUNK = 4 * 1024 * 1024
_BLOCK = (LONGEST_RUN + 2) // 2  # any LONGEST_RUN + 1 bytes in a row hold a whole block of this size
_LT = ord("<")
_CELL = re.compile(rb'<c\b[^>]*?\br="([A-Z]{1,3})(\d{1,7})"')


def refuse_oversized_texts(path: Path, members, sheets: dict[str, str]) -> None:
    """Refuse the workbook when a large sheet part (or the shared texts) holds a text no cell can hold."""
    for member in members:
        name = member.filename
        if member.file_size < SCAN_FROM or not (name in sheets or name == "xl/sharedStrings.xml"):
            continue
        cell = _first_long_run(path, name)
        if cell is None:
            continue
        where = (f"the sheet '{sheets[name]}'" + (f", cell {cell}," if cell else "")) if name in sheets \
            else "its shared texts"
        raise FileRefused(
            f"{path.name} holds, in {where} a text longer than any cell can hold (more than "
            f"{CELL_CHARACTERS:,} characters), so no spreadsheet program wrote it as it is; it is refused "
            "to protect this computer. Delete that cell's content in your spreadsheet program, or restore "
            "a backup copy; nothing was changed.")


def _first_long_run(path: Path, part: str) -> str | None:
    """'' or the cell (like 'C6') where the first run longer than LONGEST_RUN starts; None when there is none."""
    run = 0  # bytes since the last "<" read so far
    tail = b""  # the last bytes before the current run, to name its cell
    with zipfile.ZipFile(path) as archive, archive.open(part) as stream:
        while chunk := stream.read(_CHUNK):
            first = chunk.find(b"<")
            if first < 0:
                run += len(chunk)
                if run > LONGEST_RUN:
                    return _cell(tail)
                continue
            if run + first > LONGEST_RUN:
                return _cell(tail)
            last = chunk.rfind(b"<")
            if _may_hold_a_long_run(chunk, first, last):
                starts = np.flatnonzero(np.frombuffer(chunk, np.uint8) == _LT)
                gaps = np.diff(starts) - 1
                if len(gaps) and int(gaps.max()) > LONGEST_RUN:
                    k = int(np.argmax(gaps > LONGEST_RUN))
                    return _cell(tail + chunk[:int(starts[k])])
            tail = (tail + chunk[:last])[-4096:] if last < 4096 else chunk[last - 4096:last]
            run = len(chunk) - last - 1
    return None


def _may_hold_a_long_run(chunk: bytes, first: int, last: int) -> bool:
    """Whether some run between two "<" of ``chunk[first:last + 1]`` may be longer than LONGEST_RUN.

    A run of LONGEST_RUN + 1 bytes holds a whole block of ``_BLOCK`` bytes counted from ``first``, so
    when every whole block holds a "<" there is none (one pass over the bytes instead of a list of
    every "<", a few a line)."""
    data = np.frombuffer(chunk, np.uint8, count=last + 1 - first, offset=first)
    blocks = len(data) // _BLOCK
    return blocks > 0 and not (data[:blocks * _BLOCK].reshape(blocks, _BLOCK) == _LT).any(axis=1).all()


def _cell(before: bytes) -> str:
    """The reference of the last cell opened in `before` ('' when none is there)."""
    found = None
    for found in _CELL.finditer(before[-4096:]):
        pass
    return (found.group(1) + found.group(2)).decode() if found else ""
