"""Checks on the file itself, made before the spreadsheet library opens it."""
from __future__ import annotations

import posixpath
import zipfile
from dataclasses import dataclass
from pathlib import Path

from lxml import etree

from secretary.errors import FileRefused
from secretary.workbook import oversized

SUFFIXES = (".xlsx", ".xlsm")
MB = 1024 * 1024


@dataclass(frozen=True)
class Limits:
    """How large a workbook may unpack to.  The tool's own sheets (its hidden record of the last
    update, Ratings, Rating history ...) are counted apart from the secretary's parts, each against
    its own limit, so what the tool writes never pushes a workbook it accepted over a limit."""

    unpacked: int = 500 * MB  # the secretary's parts: far beyond any league's workbook
    tool_unpacked: int = 500 * MB  # the tool's own sheets: far beyond what it writes for 1,048,576 results
    ratio: float = 200  # uncompressed / compressed size, of each of the two
    ratio_floor: int = 50 * MB  # below this, parts may compress as well as they like


LIMITS = Limits()
_OLE_SIGNATURE = b"\xd0\xcf\x11\xe0"
_ZIP_SIGNATURE = b"PK\x03\x04"
_SAVE_AS = "save it as an Excel workbook (.xlsx) and try again"


def check_readable(path: str | Path, *, checked: frozenset = frozenset()) -> Path:
    """Refuse (with a plain reason) a file that is missing, not a workbook, locked, damaged or a zip bomb.

    ``checked``: the `member_keys` of a workbook that passed these checks and whose parts this file copies
    as stored (a grafted save); those parts' texts are not measured again (a million-row Results sheet
    is 375 MB to inflate and scan), every size limit still counts them."""
    path = Path(path)
    if not path.exists():
        raise FileRefused(f"There is no file at {path}. Check the name and the folder.")
    if path.is_dir():
        raise FileRefused(f"{path} is a folder, not a workbook. Choose the league's .xlsx file.")
    if path.suffix.lower() not in SUFFIXES:
        raise FileRefused(
            f"{path.name} is not an Excel workbook (.xlsx or .xlsm): {_SAVE_AS}.")
    try:
        with path.open("rb") as handle:
            head = handle.read(8)
    except OSError as exc:
        raise FileRefused(
            f"{path.name} cannot be opened ({exc.strerror or exc}). "
            "If it is open in another program, close it there and try again.") from None
    if head.startswith(_OLE_SIGNATURE):
        raise FileRefused(
            f"{path.name} is protected by a password (or is an old .xls file renamed). "
            f"Remove the password in your spreadsheet program, {_SAVE_AS}.")
    if not head.startswith(_ZIP_SIGNATURE):
        raise FileRefused(
            f"{path.name} is damaged or is not an Excel workbook. "
            f"Open it in your spreadsheet program, {_SAVE_AS}; or restore a backup copy.")
    _check_zip(path, checked)
    return path


def member_keys(path: str | Path) -> frozenset:
    """Each part of the package by its name, CRC and sizes: equal keys, the same part as stored (none when
    the file cannot be read as a zip: then nothing is taken as checked)."""
    try:
        with zipfile.ZipFile(path) as archive:
            return frozenset(map(_key, archive.infolist()))
    except (zipfile.BadZipFile, OSError, ValueError, EOFError):
        return frozenset()


def _key(member: zipfile.ZipInfo) -> tuple:
    return member.filename, member.CRC, member.file_size, member.compress_size


def _check_zip(path: Path, checked: frozenset = frozenset()) -> None:
    try:
        with zipfile.ZipFile(path) as archive:
            members = archive.infolist()
            names = {m.filename for m in members}
    except (zipfile.BadZipFile, OSError, ValueError, EOFError) as exc:
        raise FileRefused(
            f"{path.name} is damaged ({exc}). Restore a backup copy, or open it in your "
            f"spreadsheet program and {_SAVE_AS}.") from None
    if "[Content_Types].xml" not in names or "xl/workbook.xml" not in names:
        raise FileRefused(f"{path.name} is not an Excel workbook inside: {_SAVE_AS}.")
    _refuse_strict(path)
    limits = LIMITS
    if _too_large(members, min(limits.unpacked, limits.tool_unpacked), limits):  # else no need to tell them apart
        tool = _tool_parts(path, members)
        _refuse_if_too_large(path, [m for m in members if m.filename not in tool], limits.unpacked, limits, "")
        _refuse_if_too_large(path, [m for m in members if m.filename in tool], limits.tool_unpacked, limits,
                             "the tool's own sheets of ")
    unseen = [m for m in members if _key(m) not in checked]
    if any(m.file_size >= oversized.SCAN_FROM for m in unseen):
        oversized.refuse_oversized_texts(path, unseen, sheet_parts(path, members))


def _too_large(members, limit: int, limits: Limits) -> bool:
    unpacked = sum(m.file_size for m in members)
    packed = sum(m.compress_size for m in members) or 1
    return unpacked > limit or (unpacked > limits.ratio_floor and unpacked / packed > limits.ratio)


def _refuse_if_too_large(path: Path, members, limit: int, limits: Limits, whose: str) -> None:
    if _too_large(members, limit, limits):
        unpacked = sum(m.file_size for m in members)
        packed = sum(m.compress_size for m in members) or 1
        raise FileRefused(
            f"{whose}{path.name} would unpack from {packed / MB:.1f} MB to {unpacked / MB:.0f} MB, "
            "which no league workbook does; it is refused to protect this computer. "
            "Check where the file came from.")


_PARSER = etree.XMLParser(resolve_entities=False, no_network=True, huge_tree=True)
_SMALL_PART = 16 * MB  # workbook.xml and its rels are read only when no larger than this
_REL_ID = "{http://schemas.openxmlformats.org/officeDocument/2006/relationships}id"


def _tool_parts(path: Path, members) -> set[str]:
    """The package parts of the tool's own sheets (found by the tool's markers)."""
    from secretary.workbook import toolsheets

    found = sheet_parts(path, members)
    tool = set(toolsheets.find(found.defined, list(found.values())).values())
    return {part for part, sheet in found.items() if sheet in tool}


class SheetParts(dict):
    """Package part -> sheet name, with the workbook's defined names (name, text) beside."""

    defined: list = []


def sheet_parts(path: Path, members) -> SheetParts:
    """Which part holds which sheet, read from workbook.xml and its rels; empty when they are missing,
    damaged or themselves too large to read."""
    found = SheetParts()
    sizes = {m.filename: m.file_size for m in members}
    rels = "xl/_rels/workbook.xml.rels"
    if sizes.get("xl/workbook.xml", _SMALL_PART + 1) > _SMALL_PART or sizes.get(rels, _SMALL_PART + 1) > _SMALL_PART:
        return found
    try:
        with zipfile.ZipFile(path) as archive:
            root = etree.fromstring(archive.read("xl/workbook.xml"), _PARSER)
            links = etree.fromstring(archive.read(rels), _PARSER)
    except (etree.XMLSyntaxError, KeyError, zipfile.BadZipFile, OSError, ValueError):
        return found
    main = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"
    targets = {r.get("Id"): r.get("Target") or "" for r in links}
    for el in root.iter(f"{main}sheet"):
        target = targets.get(el.get(_REL_ID), "")
        part = target.lstrip("/") if target.startswith("/") else posixpath.normpath(posixpath.join("xl", target))
        found[part] = el.get("name")
    found.defined = [(d.get("name"), d.text) for d in root.iter(f"{main}definedName") if d.get("localSheetId") is None]
    return found


_STRICT_NAMESPACE = b"http://purl.oclc.org/ooxml/spreadsheetml/main"


def _refuse_strict(path: Path) -> None:
    """A workbook saved as "Strict Open XML" uses other names inside, which the reader does not know."""
    with zipfile.ZipFile(path) as archive, archive.open("xl/workbook.xml") as part:
        head = part.read(4096)
    if _STRICT_NAMESPACE in head:
        raise FileRefused(
            f"{path.name} is saved in the \"Strict Open XML Spreadsheet\" format, which this tool cannot "
            "read. In your spreadsheet program choose Save As, pick the ordinary \"Excel Workbook (.xlsx)\" "
            "type, and try again.")
