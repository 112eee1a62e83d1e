"""Saving the secretary's workbook safely: never half-written, checked, with backups to go back to.

A save writes a new file beside the workbook, reads it back, copies the old
version into `backups/`, then swaps the new file in with one `os.replace`.
Any failure before the swap leaves the original untouched.

Load a workbook that will be saved with `load_for_update`: an .xlsm must be
loaded with `keep_vba=True` or its macros are lost, and a workbook loaded with
`data_only=True` holds values in place of formulas and must never be saved
over the original.

When the workbook holds content openpyxl would drop (see `fidelity`), the
tool's sheets go to a companion workbook `<name> (ratings).xlsx` beside it
instead, and the original is left alone.  The next update must then read the
state (and history, log) from `companion_path(path)`.
"""
from __future__ import annotations

import contextlib
import datetime as dt
import errno
import hashlib
import math
import os
import re
import secrets
import shutil
import stat
import time
import zipfile
from dataclasses import dataclass
from pathlib import Path

from openpyxl import load_workbook
from openpyxl.workbook.defined_name import DefinedNameDict
from openpyxl.workbook.workbook import Workbook

from secretary.errors import FileRefused
from secretary.workbook.fidelity import unsupported_content
from secretary.workbook.guard import check_readable
from secretary.workbook import toolsheets

BACKUP_FOLDER = "backups"
_TEMP_PREFIX = ".~secretary-"
_STALE_TEMP_SECONDS = 3600
_VBA_PART = "xl/vbaProject.bin"


@dataclass(frozen=True)
class SaveOutcome:
    """Where the outputs went and why."""

    path: Path  # the file written: the workbook itself or its companion
    backup: Path | None  # the copy of the previous version, if there was one
    companion: bool  # True when the outputs went to the companion workbook
    reason: str  # plain words for the secretary


@dataclass(frozen=True)
class FileStamp:
    """Enough about a file to tell whether another program saved it since: size, time, content hash."""

    size: int
    mtime_ns: int
    digest: str


def file_stamp(path: str | Path) -> FileStamp:
    """The stamp of the file at ``path`` now."""
    path = Path(path)
    info = path.stat()
    digest = hashlib.blake2b(digest_size=16)
    with path.open("rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return FileStamp(info.st_size, info.st_mtime_ns, digest.hexdigest())


def writable_workbook(path: str | Path) -> Path:
    """The file an update must write: a symbolic link's target (never the link); refuses a read-only file."""
    path = Path(path)
    if path.is_symlink():
        path = Path(os.path.realpath(path))
    if path.exists() and not path.stat().st_mode & stat.S_IWUSR:
        raise FileRefused(
            f"{path.name} is marked read-only, so the tool will not replace it; nothing was changed. "
            f"If it should be updated, remove the read-only mark (in the file's properties) and try again.")
    return path


def refuse_if_changed(path: Path, expected: FileStamp | None) -> None:
    """Refuse to swap in a new version when another program saved the workbook after it was read."""
    if expected is None or not path.exists():
        return
    if file_stamp(path) != expected:
        raise FileRefused(
            f"{path.name} was changed by another program while the update was running, so the update "
            f"was not saved and nothing of yours was overwritten. Run the update again.")


def load_for_update(path: str | Path) -> Workbook:
    """Load a workbook the way a later save needs it: formulas kept, macros kept for .xlsm."""
    path = check_readable(path)
    return load_workbook(path, keep_vba=_has_macros_suffix(path), keep_links=True)


def companion_path(path: str | Path) -> Path:
    """The companion workbook that receives the outputs when the workbook cannot be saved safely."""
    path = Path(path)
    return path.with_name(f"{path.stem} (ratings).xlsx")


def lock_files(path: str | Path) -> list[Path]:
    """Lock files beside `path` saying it is open in Excel (~$name) or LibreOffice (.~lock.name#)."""
    path = Path(path)
    name = path.name
    # Excel shortens long names by their first characters; accept those forms too.
    candidates = [f"~${name}", f"~${name[1:]}", f"~${name[2:]}", f".~lock.{name}#"]
    return [path.with_name(c) for c in dict.fromkeys(candidates) if path.with_name(c).exists()]


def backups_of(path: str | Path) -> list[Path]:
    """The backups of this workbook, newest first."""
    path = Path(path)
    folder = path.parent / BACKUP_FOLDER
    if not folder.is_dir():
        return []
    pattern = re.compile(re.escape(path.stem) + r"-(\d{8}-\d{6})(?:-(\d+))?" + re.escape(path.suffix) + "$")
    found = []
    for item in folder.iterdir():
        match = pattern.match(item.name)
        if match and item.is_file():
            found.append(((match.group(1), int(match.group(2) or 1)), item))
    return [item for _, item in sorted(found, reverse=True)]


def save_workbook(wb: Workbook, path: str | Path, *, keep: int = 10, expect: FileStamp | None = None) -> SaveOutcome:
    """Save safely over `path` (or to its companion when `path` holds content openpyxl would lose).

    ``expect``: the stamp of `path` when it was read; the save is refused if the file changed since."""
    path = writable_workbook(path)
    if getattr(wb, "_data_only", False):
        raise ValueError("this workbook was loaded with data_only=True; saving it would replace formulas by values")
    if keep < 1:
        raise ValueError("keep at least one backup")
    lost = unsupported_content(path) if path.exists() else []
    if not lost:
        if _has_macros_suffix(path) and wb.vba_archive is None:
            raise ValueError(f"{path.name} has macros: load it with load_for_update() so that they are kept")
        backup = _save_checked(wb, path, keep, expect)
        return SaveOutcome(path, backup, False, f"Saved {path.name}.")
    target = companion_path(path)
    with _only_tool_sheets(wb):
        backup = _save_checked(wb, target, keep)
    reason = (
        f"{path.name} holds content this tool cannot carry through a save unchanged "
        f"({'; '.join(lost)}). To keep it safe, {path.name} was not changed and the results "
        f"were written to {target.name} beside it."
    )
    return SaveOutcome(target, backup, True, reason)


@dataclass(frozen=True)
class BackupVersion:
    """One earlier version kept in the backups folder."""

    number: int  # 1 = the newest, as `secretary restore --list` shows it
    path: Path
    kept_at: dt.datetime  # when it was replaced by a newer version
    size: int
    current: bool  # the same content as the workbook now


def backup_versions(path: str | Path) -> list[BackupVersion]:
    """The earlier versions of the workbook, newest first, numbered from 1."""
    path = Path(path)
    now = file_stamp(path).digest if path.is_file() else None
    out = []
    for item in backups_of(path):
        try:
            kept_at = dt.datetime.strptime(re.search(r"-(\d{8}-\d{6})(?:-\d+)?$", item.stem).group(1), "%Y%m%d-%H%M%S")
        except ValueError:  # digits that are no date: not one of the tool's backups
            continue
        size = item.stat().st_size
        same = now is not None and size == path.stat().st_size and file_stamp(item).digest == now
        out.append(BackupVersion(len(out) + 1, item, kept_at, size, same))
    return out


def restore_previous(path: str | Path, *, pick: str | int | None = None) -> Path:
    """Bring back an earlier version: `pick` is its number in `backup_versions` or the start of its date
    and time ("2026-03-14" or "2026-03-14 20:15"); by default the newest that differs from the workbook now.
    The current file is kept as a backup first (so a restore can be undone), and no version is pruned."""
    path = writable_workbook(path)
    versions = backup_versions(path)
    if not versions:
        raise FileRefused(
            f"There is no earlier version of {path.name} to restore: the '{BACKUP_FOLDER}' folder "
            f"beside it holds no copy of it."
        )
    chosen = _chosen_version(path, versions, pick)
    _refuse_if_open(path)
    temp = _new_temp(path)
    try:
        shutil.copyfile(chosen.path, temp)
        _copy_mode(path, temp)
        if not zipfile.is_zipfile(temp):
            raise FileRefused(f"The backup {chosen.path.name} is damaged and cannot be restored; try an older one.")
        if path.exists():
            _backup(path)
        _replace(temp, path)
    except BaseException:
        _remove(temp)
        raise
    return chosen.path


def _chosen_version(path: Path, versions: list[BackupVersion], pick: str | int | None) -> BackupVersion:
    if pick is None:
        differing = [v for v in versions if not v.current]
        if not differing:
            raise FileRefused(f"Every earlier version of {path.name} kept is the same as the workbook now; "
                              "nothing was changed.")
        return differing[0]
    text = str(pick).strip()
    if text.isdigit():
        found = [v for v in versions if v.number == int(text)]
    else:
        found = [v for v in versions if f"{v.kept_at:%Y-%m-%d %H:%M:%S}".startswith(text.replace("T", " "))]
    if not found:
        raise FileRefused(
            f"No earlier version of {path.name} is numbered or dated '{text[:40]}'. "
            f"List them with: secretary restore --list \"{path.name}\"")
    if found[0].current:
        raise FileRefused(f"Version {found[0].number} is the same as {path.name} now; nothing was changed.")
    return found[0]


def _save_checked(wb: Workbook, target: Path, keep: int, expect: FileStamp | None = None) -> Path | None:
    """Write a temp file, check it, back up the old file, swap; the old file survives any failure."""
    target = writable_workbook(target)
    _refuse_if_open(target)
    _remove_stale_temps(target)
    temp = _new_temp(target)
    backup = None
    try:
        try:
            _write_temp(wb, temp)
        except OSError as exc:
            raise _plain_os_error(exc, target) from exc
        _check_copy(wb, temp, target)
        _copy_mode(target, temp)
        refuse_if_changed(target, expect)
        if target.exists():
            backup = _backup(target)
        _replace(temp, target)
    except BaseException:
        _remove(temp)
        raise
    _prune(target, keep)
    return backup


def _write_temp(wb: Workbook, temp: Path) -> None:
    """Write the workbook to the temp file (a seam the fault tests replace).

    The workbook asks to be recalculated when opened, so the secretary's own
    formulas that look up the tool's sheets show the new values."""
    wb.calculation.fullCalcOnLoad = True
    wb.save(temp)


def _refuse_if_open(path: Path) -> None:
    locks = lock_files(path)
    if locks:
        program = "LibreOffice" if locks[0].name.startswith(".~lock.") else "Excel"
        raise FileRefused(
            f"{path.name} is open in another program ({program}). Close it there and try again. "
            f"If it is not open anywhere, delete the leftover lock file '{locks[0].name}' beside it."
        )


def _new_temp(target: Path) -> Path:
    """An empty temp file in the target's folder (same disk, so the final swap is atomic)."""
    name = target.parent / f"{_TEMP_PREFIX}{secrets.token_hex(6)}{target.suffix}"
    try:
        # Not mkstemp: its files are private (0600); this one gets the usual permissions.
        fd = os.open(name, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o666)
    except OSError as exc:
        raise FileRefused(
            f"Cannot save in the folder '{target.parent}': it does not accept new files "
            f"(it may be read-only, full, or you may lack permission). Copy the workbook to a folder "
            f"you can write to, such as your Documents, and try again. ({exc.strerror})"
        ) from exc
    os.close(fd)
    return Path(name)


def _plain_os_error(exc: OSError, target: Path) -> FileRefused:
    if exc.errno == errno.ENOSPC:
        why = "the disk is full"
    elif isinstance(exc, PermissionError):
        why = "permission was refused"
    else:
        why = exc.strerror or str(exc)
    return FileRefused(f"Could not write the new version of {target.name} ({why}). {target.name} was not changed.")


def _replace(temp: Path, target: Path) -> None:
    try:
        os.replace(temp, target)
    except PermissionError as exc:
        raise FileRefused(
            f"{target.name} could not be replaced: it is probably open in another program. "
            f"Close it there and try again. Nothing was changed."
        ) from exc
    except OSError as exc:
        raise _plain_os_error(exc, target) from exc


def _copy_mode(target: Path, temp: Path) -> None:
    """Give the new file the old one's permissions (a temp file starts private to its owner)."""
    if target.exists():
        shutil.copymode(target, temp)


def _remove(path: Path) -> None:
    with contextlib.suppress(OSError):
        path.unlink()


def _remove_stale_temps(target: Path) -> None:
    """Temp files left by a save that was killed; old ones only, so a running save is not disturbed."""
    now = time.time()
    for item in target.parent.glob(_TEMP_PREFIX + "*" + target.suffix):
        with contextlib.suppress(OSError):
            if now - item.stat().st_mtime > _STALE_TEMP_SECONDS:
                item.unlink()


# ------------------------------------------------------------------ read-back check


def release(wb: Workbook) -> None:
    """Free a saved workbook's cells now: each cell and its sheet refer to each other, so without this only
    Python's cycle collector frees them (a full pass over every object of an update at a million rows)."""
    for ws in wb.worksheets:
        if hasattr(ws, "_cells"):
            ws._cells.clear()


def check_opens_again(temp: Path, target: Path, checked: frozenset = frozenset()) -> None:
    """The new version must pass the checks every command makes before it opens a workbook (sizes above
    all), so that no save ever leaves a workbook that the next command refuses (``checked``: see
    `guard.check_readable`)."""
    try:
        check_readable(temp, checked=checked)
    except FileRefused as exc:
        why = str(exc).replace(temp.name, target.name)
        raise _check_failed(target, f"the next command would refuse it: {why}") from None


def _check_copy(wb: Workbook, temp: Path, target: Path) -> None:
    """Read the new file back: same sheets, the tool's sheets cell for cell, the others' sizes."""
    check_opens_again(temp, target)
    try:
        copy = load_workbook(temp, read_only=True, keep_links=False)
    except Exception as exc:  # any failure to read means the copy is not fit to replace the original
        raise _check_failed(target, f"it cannot be read: {exc}") from exc
    try:
        if copy.sheetnames != wb.sheetnames:
            raise _check_failed(target, "its sheets differ")
        tool = set(toolsheets.of_workbook(wb).values())
        for name in wb.sheetnames:
            mine, theirs = wb[name], copy[name]
            if not hasattr(mine, "iter_rows"):
                continue  # a chart sheet holds no cells
            if name in tool:
                if _cells(mine) != _cells(theirs):
                    raise _check_failed(target, f"sheet '{name}' does not read back as written")
            elif (mine.max_row, mine.max_column) != (theirs.max_row, theirs.max_column):
                raise _check_failed(target, f"sheet '{name}' changed size")
    finally:
        copy.close()
    if _has_macros_suffix(target):
        _check_macros(temp, target, wb)


def _cells(ws) -> list[tuple]:
    """A sheet's values, comparable across a save (dates as date-times, floats to 16 digits)."""
    return comparable_rows(ws.iter_rows(values_only=True))


def comparable_rows(values) -> list[tuple]:
    """Rows of values as `_cells` gives them: comparable, trailing blanks and blank rows dropped."""
    rows = [tuple(_comparable(v) for v in row) for row in values]
    rows = [row[: _used_length(row)] for row in rows]
    while rows and not rows[-1]:
        rows.pop()
    return rows


def _used_length(row: tuple) -> int:
    n = len(row)
    while n and row[n - 1] is None:
        n -= 1
    return n


def _comparable(value: object) -> object:
    if isinstance(value, float) and math.isfinite(value) and not value.is_integer():
        # openpyxl writes 16 significant digits; rounding both sides the same way compares exactly
        # (rounding to 15 would round twice on one side and could differ in the last digit).
        return float(f"{value:.16g}")
    if isinstance(value, dt.datetime):
        return value
    if isinstance(value, dt.date):
        return dt.datetime.combine(value, dt.time())
    return None if value == "" else value


def _check_macros(temp: Path, target: Path, wb: Workbook) -> None:
    if target.exists():
        with zipfile.ZipFile(target) as z:
            before = z.read(_VBA_PART) if _VBA_PART in z.namelist() else None
    else:
        before = wb.vba_archive.read(_VBA_PART) if wb.vba_archive and _VBA_PART in wb.vba_archive.namelist() else None
    if before is None:
        return
    with zipfile.ZipFile(temp) as z:
        after = z.read(_VBA_PART) if _VBA_PART in z.namelist() else None
    if after != before:
        raise _check_failed(target, "its macros were not kept")


def _check_failed(target: Path, why: str) -> FileRefused:
    return FileRefused(
        f"The new version of {target.name} did not pass the check after saving ({why}), "
        f"so {target.name} was not changed. Please report this."
    )


def _has_macros_suffix(path: Path) -> bool:
    return path.suffix.lower() in (".xlsm", ".xltm")


# ------------------------------------------------------------------ backups


def _backup(path: Path) -> Path:
    """Copy the current file into backups/<stem>-<date-time><ext>."""
    folder = path.parent / BACKUP_FOLDER
    if folder.exists() and not folder.is_dir():
        raise FileRefused(
            f"Beside {path.name} there is a file called '{BACKUP_FOLDER}' where the tool keeps its folder of "
            f"earlier versions, so no backup could be made and {path.name} was not changed. Rename or move "
            f"that file and try again.")
    if folder.is_dir() and not folder.stat().st_mode & stat.S_IWUSR:
        raise _backup_refused(OSError(errno.EACCES, "it is read-only"), path, folder)
    try:
        folder.mkdir(exist_ok=True)
    except OSError as exc:
        raise _backup_refused(exc, path, folder) from exc
    stamp = dt.datetime.now().strftime("%Y%m%d-%H%M%S")
    same = _same_backup(path)
    if same is not None:  # this version is kept already: it moves up to now, so the ten kept stay distinct
        dest = _backup_name(path, folder, stamp)
        os.replace(same, dest)
        return dest
    dest = _backup_name(path, folder, stamp)
    try:
        shutil.copy2(path, dest)
    except OSError as exc:
        _remove(dest)
        raise _backup_refused(exc, path, folder) from exc
    return dest


def _same_backup(path: Path) -> Path | None:
    """The backup with the same content as the file at `path`, if one is kept."""
    size, digest = path.stat().st_size, None
    for item in backups_of(path):
        if item.stat().st_size == size:
            digest = digest or file_stamp(path).digest
            if file_stamp(item).digest == digest:
                return item
    return None


def _backup_name(path: Path, folder: Path, stamp: str) -> Path:
    """backups/<stem>-<date-time><ext>, numbered on within one second."""
    # Within one second, number on from the newest backup of that second (never reuse a pruned name).
    same_second = [b for b in backups_of(path) if b.name.startswith(f"{path.stem}-{stamp}")]
    if not same_second:
        return folder / f"{path.stem}-{stamp}{path.suffix}"
    last = re.search(r"-(\d+)$", same_second[0].stem[len(path.stem) + 1 + len(stamp):])
    return folder / f"{path.stem}-{stamp}-{int(last.group(1)) + 1 if last else 2}{path.suffix}"


def _backup_refused(exc: OSError, path: Path, folder: Path) -> FileRefused:
    why = "the disk is full" if exc.errno == errno.ENOSPC else (exc.strerror or str(exc)).lower()
    return FileRefused(
        f"No backup of {path.name} could be kept in the '{folder.name}' folder beside it ({why}), so "
        f"{path.name} was not changed. Make that folder writable (or move it away) and try again.")


def _prune(path: Path, keep: int) -> None:
    """Keep the newest `keep` backups (each a distinct version); a failure here never undoes a good save."""
    for old in backups_of(path)[keep:]:
        _remove(old)


# ------------------------------------------------------------------ companion workbook


@contextlib.contextmanager
def _only_tool_sheets(wb: Workbook):
    """For the length of a save, show openpyxl only the tool's sheets (the caller's workbook is restored)."""
    sheets = wb._sheets[:]
    saved = (wb._active_sheet_index, wb.vba_archive, wb.defined_names, wb._external_links, wb.template)
    tool = set(toolsheets.of_workbook(wb).values())
    markers = toolsheets.only_markers(wb)
    kept = [ws for ws in sheets if ws.title in tool]
    visible = [i for i, ws in enumerate(kept) if ws.sheet_state == "visible"]
    if not visible:
        raise ValueError("nothing to save in the companion workbook: no visible sheet of the tool's")
    try:
        wb._sheets[:] = kept
        wb._active_sheet_index = visible[0]
        # The secretary's names, links and macros refer to sheets left out; an .xlsx holds no macros.
        wb.vba_archive, wb.defined_names, wb._external_links, wb.template = None, DefinedNameDict(), [], False
        wb.defined_names.update(markers)  # the tool's own markers name only the tool's sheets
        yield
    finally:
        wb._sheets[:] = sheets
        wb._active_sheet_index, wb.vba_archive, wb.defined_names, wb._external_links, wb.template = saved
