"""Which sheets are the tool's: recognised by a marker of the tool's own, never by their names.

Each sheet the tool writes is pointed at by a hidden workbook-wide defined name of the tool's,
``_secretary_sheet_<role>`` (e.g. ``_secretary_sheet_ratings`` = ``'Ratings'!$A$1``).  A
spreadsheet program keeps such a name pointing at its sheet when the sheet is renamed or moved
(Excel and LibreOffice both do), turns it into ``#REF!`` when the sheet is deleted, and does not
give it to a copy of the sheet.  So a sheet of the secretary's that happens to be called
"Ratings" (or "ratings") is never taken for the tool's and is never replaced, renamed or deleted:
the tool's sheet gets a name of its own instead ("Ratings (tool)", see `free_name`).

A workbook last updated before the markers existed has the tool's very-hidden state sheet,
unmarked: then (and only then) the sheets called by the tool's names are taken as the tool's,
and they are marked by that update.
"""
from __future__ import annotations

import re
import zipfile
from pathlib import Path
from typing import Iterable, Sequence

from lxml import etree
from openpyxl.workbook.defined_name import DefinedName

from secretary.workbook.schema import (
    HISTORY_SHEET, LOG_SHEET, NOTICE_SHEET, OUTPUT_SHEETS, PROBLEMS_SHEET, RATINGS_SHEET, STATE_SHEET,
    WATCH_SHEET, WHY_SHEET,
)

PREFIX = "_secretary_sheet_"
# Each tool sheet's role (its usual name) and the word its marker ends with.
ROLE_KEYS = {RATINGS_SHEET: "ratings", WHY_SHEET: "why", WATCH_SHEET: "watch", HISTORY_SHEET: "history",
             NOTICE_SHEET: "notice", LOG_SHEET: "log", PROBLEMS_SHEET: "problems", STATE_SHEET: "state"}
_BY_KEY = {key: role for role, key in ROLE_KEYS.items()}
_TARGET = re.compile(r"=?\s*(?:'((?:[^']|'')+)'|([^'!]+))!\$?A\$?1\s*")
_MAIN = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"
_PARSER = etree.XMLParser(resolve_entities=False, no_network=True, huge_tree=True)


def marker(role: str) -> str:
    """The defined name that marks the tool's sheet of this role."""
    return PREFIX + ROLE_KEYS[role]


def is_marker(name: str | None) -> bool:
    return bool(name) and name.casefold().startswith(PREFIX)


def reference(sheet: str) -> str:
    """What a marker holds: the first cell of the sheet (the name is quoted, quotes doubled)."""
    return "'" + sheet.replace("'", "''") + "'!$A$1"


def find(defined: Iterable[tuple[str, str | None]], sheet_names: Sequence[str]) -> dict[str, str]:
    """The tool's sheets, role -> current sheet name, from a workbook's defined names (name, text)."""
    present = {n.casefold(): n for n in sheet_names}
    found: dict[str, str] = {}
    for name, text in defined:
        role = _BY_KEY.get(name[len(PREFIX):].casefold()) if is_marker(name) else None
        match = _TARGET.fullmatch(text or "")
        if role is None or match is None or role in found:
            continue
        sheet = match.group(1).replace("''", "'") if match.group(1) is not None else match.group(2)
        sheet = present.get(sheet.casefold())
        if sheet is not None and sheet not in found.values():
            found[role] = sheet
    if STATE_SHEET not in found and STATE_SHEET in sheet_names:  # last updated before the markers
        for role in OUTPUT_SHEETS:
            if role not in found and role in sheet_names and role not in found.values():
                found[role] = role
    return found


def free_name(role: str, taken: Iterable[str]) -> str:
    """A name for a new tool sheet that no sheet has (sheet names are compared regardless of case)."""
    taken = {t.casefold() for t in taken}
    for candidate in (role, f"{role} (tool)", *(f"{role} (tool {i})" for i in range(2, 1000))):
        if candidate.casefold() not in taken:
            return candidate
    raise ValueError(f"no free sheet name for {role!r}")


def clash_note(found: dict[str, str]) -> str | None:
    """Plain words for tool sheets that could not take their usual name, or None."""
    moved = [(role, name) for role, name in found.items() if role != name and role != STATE_SHEET]
    if not moved:
        return None
    listed = "; ".join(f"'{name}' (a sheet of yours is called '{role}')" for role, name in moved)
    return (f"The tool's sheets went to {listed}. Your own sheets were left exactly as they were; "
            "rename yours if you would like the tool's sheets to take their usual names.")


# ------------------------------------------------------------------ openpyxl workbooks


def of_workbook(wb) -> dict[str, str]:
    """The tool's sheets of an openpyxl workbook."""
    return find(((name, d.attr_text) for name, d in wb.defined_names.items()), wb.sheetnames)


def mark(wb, role: str, sheet: str) -> None:
    """Point the role's marker at `sheet`."""
    name = marker(role)
    for old in [n for n in wb.defined_names if n.casefold() == name]:
        del wb.defined_names[old]
    wb.defined_names[name] = DefinedName(name, attr_text=reference(sheet), hidden=True)


def only_markers(wb) -> dict[str, DefinedName]:
    """The markers among a workbook's defined names."""
    return {n: d for n, d in wb.defined_names.items() if is_marker(n)}


# ------------------------------------------------------------------ packages


def of_root(root: etree._Element) -> dict[str, str]:
    """The tool's sheets, from a parsed workbook.xml."""
    sheets = [el.get("name") for el in root.iter(f"{_MAIN}sheet")]
    defined = [(d.get("name"), d.text) for d in root.iter(f"{_MAIN}definedName") if d.get("localSheetId") is None]
    return find(defined, sheets)


def of_package(path: str | Path) -> dict[str, str]:
    """The tool's sheets of the .xlsx at `path`, read from its workbook.xml alone."""
    with zipfile.ZipFile(path) as z:
        names = set(z.namelist())
        part = "xl/workbook.xml"
        if part not in names:  # the rare package whose workbook part lives elsewhere
            rels = etree.fromstring(z.read("_rels/.rels"), _PARSER)
            part = next(r.get("Target").lstrip("/") for r in rels if r.get("Type", "").endswith("/officeDocument"))
        return of_root(etree.fromstring(z.read(part), _PARSER))
