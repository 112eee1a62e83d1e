"""Checks on the file itself, made before the spreadsheet library opens it."""
from __future__ import annotations

import zipfile
from pathlib import Path

from secretary.errors import FileRefused

SUFFIXES = (".xlsx", ".xlsm")
MAX_UNCOMPRESSED = 500 * 1024 * 1024  # bytes: far beyond any league's workbook
MAX_RATIO = 200  # uncompressed / compressed size of the whole file
_RATIO_FLOOR = 50 * 1024 * 1024  # small files may compress as well as they like
_OLE_SIGNATURE = b"\xd0\xcf\x11\xe0"
_ZIP_SIGNATURE = b"PK\x03\x04"
_SAVE_AS = "save it as an Excel workbook (.xlsx) and try again"


def check_readable(path: str | Path) -> Path:
    """Refuse (with a plain reason) a file that is missing, not a workbook, locked, damaged or a zip bomb."""
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
    _check_zip(path)
    return path


def _check_zip(path: Path) -> None:
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
    unpacked = sum(m.file_size for m in members)
    packed = sum(m.compress_size for m in members) or 1
    if unpacked > MAX_UNCOMPRESSED or (unpacked > _RATIO_FLOOR and unpacked / packed > MAX_RATIO):
        raise FileRefused(
            f"{path.name} would unpack from {packed / 2**20:.1f} MB to {unpacked / 2**20:.0f} MB, "
            "which no league workbook does; it is refused to protect this computer. "
            "Check where the file came from.")


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
