"""Content of an .xlsx file that openpyxl would lose on a save, found by looking inside the zip.

What openpyxl keeps (checked by round trips in tests/workbook/test_fidelity.py):
cell values, formulas, styles, merged cells, data validation, conditional
formatting, defined names, tables, comments (as notes), charts, and pictures
(the latter only when Pillow is installed).  Everything listed below is
dropped or, for pivot tables, carried through too unreliably to risk.
"""
from __future__ import annotations

import importlib.util
import posixpath
import re
import zipfile
from pathlib import Path

from defusedxml import ElementTree

# Zip parts whose mere presence means content openpyxl does not write back.
_PARTS = (
    ("xl/pivotTables/", "pivot tables"),
    ("xl/slicers/", "slicers"),
    ("xl/slicerCaches/", "slicers"),
    ("xl/timelines/", "timelines"),
    ("xl/threadedComments/", "threaded comments (conversations with replies)"),
    ("xl/richData/", "pictures placed in cells"),
    ("xl/metadata.xml", "formulas that spill into neighbouring cells, or pictures in cells"),
    ("xl/featurePropertyBag/", "checkboxes in cells"),
    ("xl/ctrlProps/", "form controls (buttons, check boxes, lists)"),
    ("xl/activeX/", "ActiveX controls"),
    ("xl/embeddings/", "embedded objects (files or documents inside the workbook)"),
    ("xl/charts/chartEx", "newer chart types (waterfall, histogram, treemap, funnel, map)"),
    ("xl/macrosheets/", "old-style macro sheets"),
    ("xl/dialogsheets/", "dialog sheets"),
    ("xl/model/", "a data model (Power Pivot)"),
    ("xl/connections.xml", "data connections or queries"),
    ("xl/queryTables/", "query tables"),
)

# Worksheet elements openpyxl does not read (it keeps only what it models).
_SHEET_TAGS = (
    (b"picture", "a background picture"),
    (b"oleObjects", "embedded objects (files or documents inside the workbook)"),
    (b"controls", "form controls (buttons, check boxes, lists)"),
    (b"legacyDrawingHF", "pictures in the page header or footer"),
    (b"protectedRanges", "ranges unlocked for editing on a protected sheet"),
)

# Newer-Excel extensions of a worksheet, by the first element inside <ext>.
_SHEET_EXTENSIONS = {
    "sparklineGroups": "sparklines (small charts in cells)",
    "conditionalFormattings": "newer conditional formatting (data bars, icon sets, rules using other sheets)",
    "dataValidations": "drop-down lists that take their choices from another sheet",
    "slicerList": "slicers",
    "timelineRefs": "timelines",
    "tableSlicerCache": "slicers",
    "id": None,  # the link from a conditional-format rule to its extension: judged there
}

# Newer-Excel extensions of the workbook that matter; the rest (calculation hints) are harmless.
_WORKBOOK_EXTENSIONS = {
    "slicerCaches": "slicers",
    "pivotCaches": "pivot tables",
    "timelineCacheRefs": "timelines",
    "dataModel": "a data model (Power Pivot)",
}

_CHART_URI = "http://schemas.openxmlformats.org/drawingml/2006/chart"
_ANCHORS = {"twoCellAnchor", "oneCellAnchor", "absoluteAnchor"}
_ANCHOR_PLACING = {"from", "to", "ext", "pos", "clientData"}
_EXT_CHILD = re.compile(rb"<(?:\w+:)?ext\b[^>]*>\s*<(?:\w+:)?(\w+)")
_VML_OBJECT = re.compile(r'ObjectType\s*=\s*"(\w+)"')


def unsupported_content(path: str | Path) -> list[str]:
    """Plain descriptions of what a save with openpyxl would lose (empty when nothing)."""
    found: dict[str, list[str]] = {}

    def note(what: str, sheet: str | None = None) -> None:
        sheets = found.setdefault(what, [])
        if sheet and sheet not in sheets:
            sheets.append(sheet)

    try:
        _inspect(path, note)
    except Exception:  # a workbook this cannot read is not one to overwrite on trust
        note("parts this tool could not inspect")
    return [what + (" on " + ", ".join(f"'{s}'" for s in sheets) if sheets else "")
            for what, sheets in found.items()]


def _inspect(path: str | Path, note) -> None:
    with zipfile.ZipFile(path) as z:
        names = set(z.namelist())
        for prefix, what in _PARTS:
            if any(n.startswith(prefix) for n in names):
                note(what)
        _check_workbook_extensions(z, note)
        for sheet, part in _sheet_parts(z).items():
            if part in names:
                try:
                    _check_sheet(z, names, sheet, part, note)
                except Exception:  # a part that cannot be inspected cannot be promised to survive
                    note("parts this tool could not inspect", sheet)


def _check_workbook_extensions(z: zipfile.ZipFile, note) -> None:
    for name in _extensions(z.read("xl/workbook.xml")):
        what = _WORKBOOK_EXTENSIONS.get(name)
        if what:
            note(what)


def _check_sheet(z: zipfile.ZipFile, names: set[str], sheet: str, part: str, note) -> None:
    xml = z.read(part)
    # Everything after the cells: cell text cannot hold markup, so a tag found here is real.
    end = max(xml.rfind(b"</sheetData>"), xml.rfind(b"<sheetData/>"), xml.rfind(b"<sheetData />"), 0)
    tail = xml[end:]
    for tag, what in _SHEET_TAGS:
        if re.search(rb"<(?:\w+:)?" + tag + rb"[\s/>]", tail):
            note(what, sheet)
    for name in _extensions(tail):
        what = _SHEET_EXTENSIONS.get(name, f"newer Excel features ({name})")
        if what:
            note(what, sheet)
    for kind, target in _relations(z, part):
        if target not in names:
            continue
        if kind.endswith("/drawing"):
            _check_drawing(z, target, sheet, note)
        elif kind.endswith("/vmlDrawing"):
            objects = set(_VML_OBJECT.findall(z.read(target).decode("utf-8", "replace")))
            if objects - {"Note"}:
                note("form controls (buttons, check boxes, lists)", sheet)


def _extensions(xml: bytes) -> list[str]:
    """The first element inside each <ext> from the first extension list on."""
    start = re.search(rb"<(?:\w+:)?extLst[\s>]", xml)
    return [name.decode() for name in _EXT_CHILD.findall(xml, start.start())] if start else []


def _check_drawing(z: zipfile.ZipFile, part: str, sheet: str, note) -> None:
    root = ElementTree.fromstring(z.read(part))
    pictures = False
    for anchor in root:
        if _local(anchor.tag) not in _ANCHORS:
            continue
        for child in anchor:
            kind = _local(child.tag)
            if kind in _ANCHOR_PLACING:
                continue
            if kind == "pic":
                pictures = True
            elif kind == "graphicFrame" and _is_chart(child):
                continue
            else:
                note("shapes, text boxes or other drawn objects", sheet)
    if pictures and importlib.util.find_spec("PIL") is None:
        note("pictures (they are kept only when the Pillow package is installed)", sheet)


def _is_chart(frame) -> bool:
    return any(_local(e.tag) == "graphicData" and e.get("uri") == _CHART_URI for e in frame.iter())


def _sheet_parts(z: zipfile.ZipFile) -> dict[str, str]:
    """Worksheet name -> zip part, from workbook.xml and its relations."""
    root = ElementTree.fromstring(z.read("xl/workbook.xml"))
    targets = {rid: target for rid, (_, target) in _relations_by_id(z, "xl/workbook.xml").items()}
    out = {}
    for el in root.iter():
        if _local(el.tag) == "sheet":
            rid = next((v for k, v in el.attrib.items() if _local(k) == "id"), None)
            if rid in targets:
                out[el.get("name", "")] = targets[rid]
    return out


def _relations(z: zipfile.ZipFile, part: str) -> list[tuple[str, str]]:
    return list(_relations_by_id(z, part).values())


def _relations_by_id(z: zipfile.ZipFile, part: str) -> dict[str, tuple[str, str]]:
    """A part's relations: id -> (type, target part path)."""
    folder, name = posixpath.split(part)
    rels = posixpath.join(folder, "_rels", name + ".rels")
    try:
        root = ElementTree.fromstring(z.read(rels))
    except KeyError:
        return {}
    out = {}
    for el in root:
        if el.get("TargetMode") == "External":
            continue
        target = el.get("Target", "")
        target = target[1:] if target.startswith("/") else posixpath.normpath(posixpath.join(folder, target))
        out[el.get("Id", "")] = (el.get("Type", ""), target)
    return out


def _local(tag: str) -> str:
    return tag.rsplit("}", 1)[-1]
