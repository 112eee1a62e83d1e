"""Grafting the tool's sheets into the secretary's .xlsx without re-writing the secretary's own sheets.

`graft_outputs` copies every part of the original package unchanged except
the tool's old sheets (and the tables, drawings and charts only they use),
adds the tool's new sheets taken from a small separately saved workbook, and
edits the few shared parts that must know about them: workbook.xml, its rels,
[Content_Types].xml, styles.xml (the new sheets' styles are appended and their
`s` indexes remapped) and calcChain.xml.  The new sheets' shared strings become
inline strings, so sharedStrings.xml stays as it was.

The caller saves `dest` the way `save.py` does: temp file, read back, backup,
`os.replace`.
"""
from __future__ import annotations

import io
import posixpath
import re
import zipfile
import zlib
from collections.abc import Iterable, Mapping
from pathlib import Path

from lxml import etree
from openpyxl import load_workbook
from openpyxl.workbook.workbook import Workbook
from openpyxl.writer.excel import ExcelWriter

from secretary.errors import FileRefused
from secretary.workbook import save
from secretary.workbook import cells, guard, toolsheets, zipcopy

MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
REL_NS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
PKG_REL = "http://schemas.openxmlformats.org/package/2006/relationships"
CT_NS = "http://schemas.openxmlformats.org/package/2006/content-types"
OFFICE_DOC = REL_NS + "/officeDocument"
CALC_CHAIN = REL_NS + "/calcChain"
XML_SPACE = "{http://www.w3.org/XML/1998/namespace}space"
_M = "{%s}" % MAIN
_R_ID = "{%s}id" % REL_NS
_LEGACY = ("legacyDrawing", "legacyDrawingHF", "oleObjects", "controls")
# The order of the parts of styles.xml that the schema requires.
_STYLE_ORDER = ("numFmts", "fonts", "fills", "borders", "cellStyleXfs", "cellXfs", "cellStyles",
                "dxfs", "tableStyles", "colors", "extLst")
_FIRST_CUSTOM_FORMAT = 164
# zlib's fastest level for the parts the graft writes: the tool's record of a million rows (80 MB of
# hexadecimal digests) deflates in 1.8 s instead of 7.8 s at the default level 6, and 4 % larger.
LEVEL = 1
_PARSER = etree.XMLParser(resolve_entities=False, no_network=True, huge_tree=True, remove_blank_text=False)


_SHARED_REF = re.compile(rb"""\st\s*=\s*["']s["']""")  # a cell whose value is a shared string
_NO_STRINGS = (b'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
               b'<sst xmlns="' + MAIN.encode() + b'" count="0" uniqueCount="0"/>')


STUB = "_secretary_without_rows"  # marks a tool sheet loaded without its rows, to be replaced before a save


class GraftRefused(FileRefused):
    """The tool's sheets cannot be grafted into this workbook; the caller falls back to a full save."""


def graft_outputs(original: str | Path, outputs_wb: Workbook, dest: str | Path) -> None:
    """Write to `dest` the original package with its tool sheets replaced by those of `outputs_wb`."""
    stubs = [ws.title for ws in outputs_wb.worksheets if getattr(ws, STUB, False)]
    if stubs:
        raise ValueError(f"tool sheets loaded without their rows were not rewritten: {stubs}")
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_STORED, allowZip64=True) as archive:
        ExcelWriter(outputs_wb, archive).save()  # as Workbook.save, but not deflated: the graft reads it at once
    new = _package_parts(buffer)
    del buffer  # only one copy of the tool's sheets in memory (a million rows' state is ~100 MB)
    _graft_parts(Path(original), new, Path(dest))


def save_grafted(path: str | Path, outputs_wb: Workbook, *, keep: int = 10,
                 expect: save.FileStamp | None = None) -> save.SaveOutcome:
    """Graft into `path` safely, as `save.save_workbook` saves: temp file, read back, backup, swap."""
    path = save.writable_workbook(path)
    if keep < 1:
        raise ValueError("keep at least one backup")
    save._refuse_if_open(path)
    save._remove_stale_temps(path)
    temp = save._new_temp(path)
    try:
        # The parts copied as stored passed the reader's checks, when the file is the one it read (``expect``
        # is checked before the swap); else every part is checked again.
        checked = guard.member_keys(path) if expect is not None else frozenset()
        try:
            graft_outputs(path, outputs_wb, temp)
        except OSError as exc:
            raise save._plain_os_error(exc, path) from exc
        _check_graft(path, outputs_wb, temp, checked)
        save._copy_mode(path, temp)
        save.refuse_if_changed(path, expect)
        backup = save._backup(path)
        save._replace(temp, path)
    except BaseException:
        save._remove(temp)
        raise
    save._prune(path, keep)
    return save.SaveOutcome(path, backup, False, f"Saved {path.name}.")


def _check_graft(path: Path, outputs_wb: Workbook, temp: Path, checked: frozenset = frozenset()) -> None:
    """Read the new file back: the secretary's sheets all there, the tool's sheets cell for cell.

    The tool's sheets are read back by calamine (see `cells`), a reader independent of the openpyxl
    that wrote them; a tool sheet calamine cannot read faithfully is read by openpyxl instead."""
    save.check_opens_again(temp, path, checked)
    try:
        before, tool_before = _sheet_names(path)
        names, tool = _sheet_names(temp)
        if [n for n in names if n not in tool] != [n for n in before if n not in tool_before]:
            raise save._check_failed(path, "its sheets differ")
        if [n for n in names if n in tool] != outputs_wb.sheetnames:
            raise save._check_failed(path, "the tool's sheets differ")
        copy = cells.Workbook(temp)
        try:
            fallback = []  # openpyxl's reading of the tool sheets, loaded only when needed
            for name in outputs_wb.sheetnames:
                if save._cells(outputs_wb[name]) != _read_back(copy, temp, name, fallback):
                    raise save._check_failed(path, f"sheet '{name}' does not read back as written")
        finally:
            copy.close()
    except FileRefused:
        raise
    except Exception as exc:  # any failure to read means the copy is not fit to replace the original
        raise save._check_failed(path, f"it cannot be read: {exc}") from exc


def _read_back(copy: cells.Workbook, temp: Path, name: str, fallback: list) -> list[tuple]:
    """A tool sheet's values as `save._cells` gives them, read from the saved file."""
    sheet = copy.read_cells(name)
    if sheet is not None and sheet.formulas == set():  # no formula: calamine's values are all there is
        return save.comparable_rows(sheet.rows)
    if not fallback:  # error values or formulas: only openpyxl reads them as they were written
        fallback.append(load_tool_sheets(temp))
    return save._cells(fallback[0][name])


def _sheet_names(path: Path) -> tuple[list[str], set[str]]:
    """Every sheet's name in order, and the names of the tool's sheets."""
    with zipfile.ZipFile(path) as z:
        parts = {"_rels/.rels": z.read("_rels/.rels")}
        wb = _xml(z.read(_workbook_part(parts)))
    return [el.get("name") for el in wb.find(f"{_M}sheets")], set(toolsheets.of_root(wb).values())


def load_tool_sheets(path: str | Path, cells: Iterable[str] | None = None) -> Workbook:
    """Only the tool's sheets of a workbook, loaded by openpyxl without parsing the secretary's sheets.

    openpyxl is given a package without the secretary's sheets, and without the
    shared strings when no tool sheet uses them (the graft writes its text
    inline): at a million rows those are almost all of the file.  ``cells``: the
    roles (schema sheet names) whose cells are wanted; the other tool sheets come
    without their rows (for an update that replaces them, see `STUB`), all when None."""
    path = Path(path)
    with zipfile.ZipFile(path) as z:
        parts = _Parts(z)
        wb_part = _workbook_part(parts)
        wb = _xml(parts[wb_part])
        targets = {r.get("Id"): (r.get("Type", ""), _resolve(wb_part, r.get("Target")))
                   for r in _xml(parts[_rels_name(wb_part)]) if r.get("TargetMode") != "External"}
        holder = wb.find(f"{_M}sheets")
        tool = set(toolsheets.of_root(wb).values())
        sheets = {el.get("name"): targets.get(el.get(_R_ID), ("", None))[1] for el in holder}
        for el in list(holder):
            if el.get("name") not in tool:
                holder.remove(el)
        if len(holder) == 0:
            empty = Workbook()
            empty.remove(empty.active)
            return empty
        roles = toolsheets.of_root(wb)
        _keep_tool_names(wb)
        theirs = {part for name, part in sheets.items() if name not in tool}
        wanted = set(roles) if cells is None else set(cells)
        stubs = {sheets[name]: _without_rows(parts[sheets[name]]) for role, name in roles.items()
                 if role not in wanted and sheets.get(name) in parts}
        strings = {part for kind, part in targets.values() if kind.endswith("/sharedStrings")}
        if any(_SHARED_REF.search(stubs.get(part) or parts[part])
               for name, part in sheets.items() if name in tool and part in parts):
            strings = set()  # a tool sheet written by a full save refers to the shared strings
        buffer = io.BytesIO()
        with zipfile.ZipFile(buffer, "w", zipfile.ZIP_STORED) as out:
            for info in z.infolist():
                if info.filename == wb_part:
                    out.writestr(info.filename, _bytes(wb))
                elif info.filename in stubs:
                    out.writestr(info.filename, stubs[info.filename])
                elif info.filename in strings:
                    out.writestr(info.filename, _NO_STRINGS)
                elif info.filename not in theirs:
                    zipcopy.copy_member(z, info, out)
    loaded = load_workbook(buffer, keep_links=False)
    for role, name in roles.items():
        if role not in wanted and name in loaded.sheetnames:
            setattr(loaded[name], STUB, True)
    return loaded


def _without_rows(part: bytes) -> bytes:
    """A worksheet part without its rows (its tab colour, selection and other settings kept)."""
    start, end = part.find(b"<sheetData"), part.rfind(b"</sheetData>")
    if start < 0 or end < start:
        return part  # no rows, or written in a way this byte search does not know: kept whole
    return part[:part.index(b">", start) + 1] + part[end:]


def _keep_tool_names(wb: etree._Element) -> None:
    """Of a workbook.xml holding only the tool's sheets: only the tool's markers, the first tab active."""
    defined = wb.find(f"{_M}definedNames")
    if defined is not None:  # the others count sheets by position and name the secretary's sheets
        for d in list(defined):
            if d.get("localSheetId") is not None or not toolsheets.is_marker(d.get("name")):
                defined.remove(d)
        if len(defined) == 0:
            wb.remove(defined)
    for view in wb.iter(f"{_M}workbookView"):
        view.set("activeTab", "0")
        view.attrib.pop("firstSheet", None)


def graft_package(original: str | Path, outputs: bytes, dest: str | Path) -> None:
    """As `graft_outputs`, with the tool's sheets given as a saved .xlsx package's bytes."""
    _graft_parts(Path(original), _package_parts(io.BytesIO(outputs)), Path(dest))


def _package_parts(package: io.BytesIO) -> dict[str, bytes]:
    with zipfile.ZipFile(package) as z:
        return {name: z.read(name) for name in z.namelist()}


def _graft_parts(original: Path, new: dict[str, bytes], dest: Path) -> None:
    """The graft of the tool's sheets given as the parts of their package."""
    try:
        source = zipfile.ZipFile(original)
    except (OSError, zipfile.BadZipFile) as exc:
        raise GraftRefused(f"{original.name} cannot be read as an .xlsx file ({exc}).") from exc
    with source:
        try:
            parts = _Graft(original.name, _Parts(source), new).run()
            _write_zip(dest, source, parts)
        except (zipfile.BadZipFile, zlib.error, EOFError) as exc:
            raise GraftRefused(f"{original.name} cannot be read as an .xlsx file ({exc}).") from exc


class _Parts(Mapping):
    """The parts of an open package by name, each inflated only when first asked for.

    Most parts (the secretary's sheets above all) are never inflated: the graft
    copies them as they are stored (see `zipcopy`)."""

    def __init__(self, archive: zipfile.ZipFile):
        self.archive = archive
        self._names = dict.fromkeys(archive.namelist())
        self._read: dict[str, bytes] = {}

    def __getitem__(self, name: str) -> bytes:
        if name not in self._names:
            raise KeyError(name)
        if name not in self._read:
            self._read[name] = self.archive.read(name)
        return self._read[name]

    def __contains__(self, name: object) -> bool:
        return name in self._names

    def __iter__(self):
        return iter(self._names)

    def __len__(self) -> int:
        return len(self._names)


# ------------------------------------------------------------------ package helpers


def _rels_name(part: str) -> str:
    folder, name = posixpath.split(part)
    return posixpath.join(folder, "_rels", name + ".rels")


def _resolve(source: str, target: str) -> str:
    if target.startswith("/"):
        return target.lstrip("/")
    return posixpath.normpath(posixpath.join(posixpath.dirname(source), target))


def _relative(source: str, target: str) -> str:
    return posixpath.relpath(target, posixpath.dirname(source) or ".")


def _xml(data: bytes) -> etree._Element:
    return etree.fromstring(data, _PARSER)


def _bytes(root: etree._Element) -> bytes:
    return etree.tostring(root, xml_declaration=True, encoding="UTF-8", standalone=True)


def _internal_targets(parts: dict[str, bytes], source: str) -> list[tuple[etree._Element, str]]:
    """The relationships of a part that point inside the package, with the part each points to."""
    rels = parts.get(_rels_name(source))
    if rels is None:
        return []
    out = []
    for rel in _xml(rels):
        if rel.get("TargetMode") != "External":
            out.append((rel, _resolve(source, rel.get("Target"))))
    return out


def _closure(parts: dict[str, bytes], roots, skip=frozenset()) -> set[str]:
    """Every part reachable from `roots` through relationships (not entering `skip`)."""
    seen, todo = set(), [r for r in roots if r not in skip]
    while todo:
        part = todo.pop()
        if part in seen:
            continue
        seen.add(part)
        todo.extend(t for _, t in _internal_targets(parts, part) if t not in skip and t not in seen)
    return seen


def _workbook_part(parts: dict[str, bytes]) -> str:
    for rel in _xml(parts["_rels/.rels"]):
        if rel.get("Type") == OFFICE_DOC:
            return rel.get("Target").lstrip("/")
    raise KeyError("officeDocument")


def _content_types(ct: etree._Element) -> tuple[dict[str, str], dict[str, str]]:
    defaults = {d.get("Extension").lower(): d.get("ContentType") for d in ct if d.tag == f"{{{CT_NS}}}Default"}
    overrides = {o.get("PartName").lstrip("/"): o.get("ContentType") for o in ct if o.tag == f"{{{CT_NS}}}Override"}
    return defaults, overrides


def _content_type(ct: etree._Element, part: str) -> str | None:
    defaults, overrides = _content_types(ct)
    return overrides.get(part) or defaults.get(part.rsplit(".", 1)[-1].lower())


# ------------------------------------------------------------------ the graft


class _Graft:
    """One graft: the original parts, the outputs' parts, and the parts being built."""

    def __init__(self, label: str, old: dict[str, bytes], new: dict[str, bytes]):
        self.label, self.old, self.new = label, old, new
        try:
            self.wb_part = _workbook_part(old)
            self.wb = _xml(old[self.wb_part])
            self.wb_rels = _xml(old[_rels_name(self.wb_part)])
            self.ct = _xml(old["[Content_Types].xml"])
        except (KeyError, etree.XMLSyntaxError) as exc:
            raise self._refuse(f"its package is damaged or not a workbook ({exc})") from exc
        self.new_wb_part = _workbook_part(new)
        self.new_wb = _xml(new[self.new_wb_part])
        self.new_ct = _xml(new["[Content_Types].xml"])
        # The parts this graft writes: new or edited bytes, None for a removed part; every other part of
        # the original is copied as it is stored.
        self.parts: dict[str, bytes | None] = {}

    def _refuse(self, why: str) -> GraftRefused:
        return GraftRefused(f"The tool's sheets cannot be added to {self.label} quickly: {why}.")

    def run(self) -> dict[str, bytes | None]:
        old_sheets = self._sheets(self.wb, self.wb_rels, self.wb_part)
        new_rels = _xml(self.new[_rels_name(self.new_wb_part)])
        new_sheets = self._sheets(self.new_wb, new_rels, self.new_wb_part)
        tool_names = [s["name"] for s in new_sheets]
        stray = [n for n in tool_names if n not in toolsheets.of_root(self.new_wb).values()]
        if stray:
            raise ValueError(f"the outputs workbook holds sheets that are not the tool's: {stray}")
        self.old_tool = set(toolsheets.of_root(self.wb).values())
        removed = [s for s in old_sheets if s["name"] in self.old_tool]
        kept = [s for s in old_sheets if s["name"] not in self.old_tool]
        clash = {s["name"].casefold() for s in kept} & {n.casefold() for n in tool_names}
        if clash:
            raise self._refuse(f"a sheet of yours is named like one of the tool's ({', '.join(sorted(clash))})")
        self._remove_parts(removed)
        self.styles = _StyleMerge(self)
        added = [self._add_sheet(s) for s in new_sheets]
        order = _order([s["name"] for s in old_sheets], tool_names, self.old_tool)
        self._rewrite_workbook(old_sheets, kept, removed, added, order)
        self.parts[self.styles.part] = _bytes(self.styles.root)
        self._fix_calc_chain({s["sheetId"] for s in removed})
        self.parts["[Content_Types].xml"] = _bytes(self.ct)
        return self.parts

    # --- sheets listed in a workbook.xml

    def _sheets(self, wb, rels, wb_part) -> list[dict]:
        by_id = {r.get("Id"): _resolve(wb_part, r.get("Target")) for r in rels}
        out = []
        for el in wb.find(f"{_M}sheets"):
            out.append({"el": el, "name": el.get("name"), "sheetId": el.get("sheetId"),
                        "state": el.get("state"), "part": by_id.get(el.get(_R_ID))})
        return out

    def _remove_parts(self, removed: list[dict]) -> None:
        """Drop the old tool sheets and every part that only they use."""
        gone = {s["part"] for s in removed}
        roots = [t for _, t in _internal_targets(self.old, "")]  # _rels/.rels is the rels of ""
        keep = _closure(self.old, roots, skip=gone)
        for part in _closure(self.old, gone) - keep:
            self.parts[part] = None
            self.parts[_rels_name(part)] = None
        for rel in list(self.wb_rels):
            if _resolve(self.wb_part, rel.get("Target")) in gone:
                self.wb_rels.remove(rel)
        for o in list(self.ct):
            if o.get("PartName") is not None and self.parts.get(o.get("PartName").lstrip("/"), b"") is None:
                self.ct.remove(o)
        self.parts = {k: v for k, v in self.parts.items() if not (v is None and k not in self.old)}

    def _present(self) -> list[str]:
        """The names of the parts the grafted package holds so far."""
        kept = [name for name in self.old if self.parts.get(name, b"") is not None]
        return kept + [name for name, data in self.parts.items() if data is not None and name not in self.old]

    def _data(self, part: str) -> bytes:
        return self.parts[part] if part in self.parts else self.old[part]

    def _taken(self) -> set[str]:
        return {name.casefold() for name in self._present()}

    def _fresh_name(self, part: str) -> str:
        folder, base = posixpath.split(part)
        match = re.fullmatch(r"(.*?)(\d*)(\.[^.]+)", base)
        stem, ext = (match.group(1), match.group(3)) if match else (base, "")
        taken, n = self._taken(), 1
        while posixpath.join(folder, f"{stem}{n}{ext}").casefold() in taken:
            n += 1
        return posixpath.join(folder, f"{stem}{n}{ext}")

    def _add_sheet(self, sheet: dict) -> dict:
        """Copy one output sheet and the parts it uses under fresh names; returns its workbook entry."""
        names: dict[str, str] = {}
        for part in sorted(_closure(self.new, [sheet["part"]])):
            names[part] = self._fresh_name(part)
            self.parts[names[part]] = b""  # reserve the name
        for part, fresh in names.items():
            data = self._transform(part, self.new[part])
            self.parts[fresh] = data
            rels = self.new.get(_rels_name(part))
            if rels is not None:
                root = _xml(rels)
                for rel in root:
                    if rel.get("TargetMode") != "External":
                        rel.set("Target", _relative(fresh, names[_resolve(part, rel.get("Target"))]))
                self.parts[_rels_name(fresh)] = _bytes(root)
            self._declare_type(fresh, _content_type(self.new_ct, part))
        return {**sheet, "part": names[sheet["part"]]}

    def _declare_type(self, part: str, content_type: str | None) -> None:
        if content_type is None:
            raise self._refuse(f"the part {part} has no content type")
        defaults, _ = _content_types(self.ct)
        if defaults.get(part.rsplit(".", 1)[-1].lower()) == content_type:
            return
        etree.SubElement(self.ct, f"{{{CT_NS}}}Override", PartName="/" + part, ContentType=content_type)

    def _transform(self, part: str, data: bytes) -> bytes:
        """Fit an output part to the original package: styles remapped, strings inline, ids unique."""
        if not part.endswith(".xml"):
            return data
        root = _xml(data)
        tag = etree.QName(root).localname
        if tag == "worksheet":
            for name in _LEGACY:
                if root.find(f"{_M}{name}") is not None:
                    raise self._refuse("a tool sheet holds comments or controls, which this fast save cannot carry")
            self._fix_worksheet(root)
        elif tag == "table":
            self._fix_table(root)
        elif tag not in ("wsDr", "chartSpace", "printerSettings"):
            raise self._refuse(f"a tool sheet uses a part this fast save does not know ({part})")
        return _bytes(root)

    def _fix_worksheet(self, root: etree._Element) -> None:
        strings = self._shared_strings()
        remap = self.styles.cell_xf
        for view in root.iter(f"{_M}sheetView"):
            view.attrib.pop("tabSelected", None)  # only the original's selected sheet stays selected
        for col in root.iter(f"{_M}col"):
            if col.get("style") is not None:
                col.set("style", str(remap(int(col.get("style")))))
        for row in root.iter(f"{_M}row"):
            if row.get("s") is not None:
                row.set("s", str(remap(int(row.get("s")))))
        for cell in root.iter(f"{_M}c"):
            if cell.get("s") is not None:
                cell.set("s", str(remap(int(cell.get("s")))))
            if cell.get("t") == "s":
                value = cell.find(f"{_M}v")
                cell.remove(value)
                inline = etree.SubElement(cell, f"{_M}is")
                for child in strings[int(value.text)]:
                    inline.append(_copy(child))
                cell.set("t", "inlineStr")
        for rule in root.iter(f"{_M}cfRule"):
            if rule.get("dxfId") is not None:
                rule.set("dxfId", str(self.styles.dxf(int(rule.get("dxfId")))))

    def _shared_strings(self) -> list[etree._Element]:
        if not hasattr(self, "_strings"):
            part = next((n for n in self.new if n.endswith("sharedStrings.xml")), None)
            items = list(_xml(self.new[part])) if part else []
            for item in items:
                for t in item.iter(f"{_M}t"):
                    t.set(XML_SPACE, "preserve")
            self._strings = items
        return self._strings

    def _fix_table(self, root: etree._Element) -> None:
        ids, names = self._table_ids()
        name = root.get("displayName") or root.get("name")
        if name and name.casefold() in names:
            raise self._refuse(f"it already holds a table or name called '{name}'")
        new_id = max(ids, default=0) + 1
        ids.add(new_id)
        names.add((name or "").casefold())
        root.set("id", str(new_id))
        for el in root.iter():
            for attr, value in el.attrib.items():
                if attr.endswith("DxfId"):
                    el.set(attr, str(self.styles.dxf(int(value))))

    def _table_ids(self) -> tuple[set[int], set[str]]:
        if not hasattr(self, "_tables"):
            ids, names = set(), set()
            for part in self._present():
                data = self._data(part) if part.startswith("xl/tables/") and part.endswith(".xml") else None
                if data:
                    table = _xml(data)
                    ids.add(int(table.get("id", 0)))
                    names.add((table.get("displayName") or table.get("name") or "").casefold())
            defined = self.wb.find(f"{_M}definedNames")
            names |= {d.get("name").casefold() for d in (defined if defined is not None else [])}
            self._tables = (ids, names)
        return self._tables

    # --- workbook.xml

    def _rewrite_workbook(self, old_sheets, kept, removed, added, order) -> None:
        holder = self.wb.find(f"{_M}sheets")
        by_name = {s["name"]: s for s in kept}
        old_ids = {s["name"]: s["sheetId"] for s in removed}
        next_sheet_id = max((int(s["sheetId"]) for s in old_sheets), default=0) + 1
        next_rel = max((int(m.group(1)) for r in self.wb_rels if (m := re.fullmatch(r"rId(\d+)", r.get("Id")))),
                       default=0) + 1
        for s in removed:
            holder.remove(s["el"])
        for s in added:
            rel_id = f"rId{next_rel}"
            next_rel += 1
            etree.SubElement(self.wb_rels, f"{{{PKG_REL}}}Relationship", Id=rel_id,
                             Type=REL_NS + "/worksheet", Target=_relative(self.wb_part, s["part"]))
            sheet_id = old_ids.get(s["name"])
            if sheet_id is None:
                sheet_id, next_sheet_id = str(next_sheet_id), next_sheet_id + 1
            el = etree.SubElement(holder, f"{_M}sheet")  # inside the tree, so r: takes the root's prefix
            el.set("name", s["name"])
            el.set("sheetId", sheet_id)
            if s["state"]:
                el.set("state", s["state"])
            el.set(_R_ID, rel_id)
            by_name[s["name"]] = {**s, "el": el}
        for s in list(holder):
            holder.remove(s)
        for name in order:
            holder.append(by_name[name]["el"])
        self.parts[_rels_name(self.wb_part)] = _bytes(self.wb_rels)
        old_index = [s["name"] for s in old_sheets]
        self._fix_defined_names(old_index, order)
        self._fix_views(old_index, order, by_name)
        _recalculate_on_open(self.wb)
        self.parts[self.wb_part] = _bytes(self.wb)

    def _fix_defined_names(self, old_index, order) -> None:
        defined = self.wb.find(f"{_M}definedNames")
        if defined is None:
            defined = etree.Element(f"{_M}definedNames")
            before = self.wb.find(f"{_M}externalReferences")
            (before if before is not None else self.wb.find(f"{_M}sheets")).addnext(defined)
        for d in list(defined):
            local = d.get("localSheetId")
            if local is None:
                if toolsheets.is_marker(d.get("name")):
                    defined.remove(d)  # the new markers come with the new sheets
                continue
            name = old_index[int(local)] if int(local) < len(old_index) else None
            if name is None or name in self.old_tool:
                defined.remove(d)  # the old tool sheet's own names go with it
            else:
                d.set("localSheetId", str(order.index(name)))
        new_names = self.new_wb.find(f"{_M}definedNames")
        new_index = [s.get("name") for s in self.new_wb.find(f"{_M}sheets")]
        for d in (new_names if new_names is not None else []):
            copy = _copy(d)
            if d.get("localSheetId") is not None:
                copy.set("localSheetId", str(order.index(new_index[int(d.get("localSheetId"))])))
            elif not toolsheets.is_marker(d.get("name")):
                raise self._refuse(f"the tool wrote a workbook-wide name '{d.get('name')}'")
            defined.append(copy)
        if len(defined) == 0:
            defined.getparent().remove(defined)

    def _fix_views(self, old_index, order, by_name) -> None:
        for view in self.wb.iter(f"{_M}workbookView"):
            active = int(view.get("activeTab", 0))
            name = old_index[active] if active < len(old_index) else None
            visible = [n for n in order if by_name[n]["el"].get("state") in (None, "visible")]
            if name not in visible:
                name = visible[0] if visible else order[0]
            view.set("activeTab", str(order.index(name)))
            if "firstSheet" in view.attrib:
                view.set("firstSheet", "0")

    def _fix_calc_chain(self, removed_ids: set[str]) -> None:
        """Forget the formulas of the removed sheets (their sheet ids are given to the new ones)."""
        for rel, part in _internal_targets(self.old, self.wb_part):
            if rel.get("Type") != CALC_CHAIN or part not in self._present():
                continue
            chain = _xml(self.old[part])
            sheet = None
            for c in list(chain):
                sheet = c.get("i", sheet)  # an entry without i is on the sheet of the entry before
                if sheet in removed_ids:
                    chain.remove(c)
            self.parts[part] = _bytes(chain)


# The elements of a workbook.xml that may follow calcPr, in the schema's order.
_AFTER_CALC = ("oleSize", "customWorkbookViews", "pivotCaches", "smartTagPr", "smartTagTypes",
               "webPublishing", "fileRecoveryPr", "webPublishObjects", "extLst")


def _recalculate_on_open(wb: etree._Element) -> None:
    """Ask the spreadsheet program to recalculate every formula on open, so the secretary's formulas
    that look up the tool's sheets show this week's values rather than the ones saved with them."""
    calc = wb.find(f"{_M}calcPr")
    if calc is None:
        calc = etree.Element(f"{_M}calcPr")
        follower = next((el for el in wb if etree.QName(el).localname in _AFTER_CALC), None)
        if follower is not None:
            follower.addprevious(calc)
        else:
            wb.append(calc)
    calc.set("fullCalcOnLoad", "1")


def _copy(el: etree._Element) -> etree._Element:
    return etree.fromstring(etree.tostring(el), _PARSER)


def _order(old: list[str], tool: list[str], old_tool: set[str]) -> list[str]:
    """Final sheet order: the secretary's as before, each tool sheet where it was, new ones beside them."""
    present = [n for n in tool if n in old_tool]
    if not present:
        return [n for n in old if n not in old_tool] + tool
    follow: dict[str, list[str]] = {n: [] for n in present}
    lead: list[str] = []  # new sheets that come before every sheet that was there
    anchor = None
    for n in tool:
        if n in old_tool:
            anchor = n
        elif anchor is None:
            lead.append(n)
        else:
            follow[anchor].append(n)
    out = []
    for n in old:
        if n not in old_tool:
            out.append(n)
        elif n in follow:
            if n == present[0]:
                out.extend(lead)
            out.extend([n, *follow[n]])
    return out


# ------------------------------------------------------------------ styles


class _StyleMerge:
    """Appends the outputs' styles to the original styles.xml (reusing equal entries) and maps indexes."""

    def __init__(self, graft: _Graft):
        self.graft = graft
        rels = [(r, t) for r, t in _internal_targets(graft.old, graft.wb_part) if r.get("Type").endswith("/styles")]
        new_rels = [t for r, t in _internal_targets(graft.new, graft.new_wb_part) if r.get("Type").endswith("/styles")]
        if not rels:
            raise graft._refuse("it has no styles part")
        self.part = rels[0][1]
        self.root = _xml(graft.old[self.part])
        self.src = _xml(graft.new[new_rels[0]])
        self._maps: dict[str, list[int]] = {}
        self._xf: dict[int, int] = {0: 0}  # plain cells look like the workbook's own plain cells
        self._dxf: dict[int, int] = {}
        self.formats = self._merge_formats()

    def _section(self, root, name, create=False):
        el = root.find(f"{_M}{name}")
        if el is None and create:
            el = etree.Element(f"{_M}{name}")
            later = _STYLE_ORDER[_STYLE_ORDER.index(name) + 1:]
            nxt = next((c for c in root if etree.QName(c).localname in later), None)
            if nxt is None:
                root.append(el)
            else:
                nxt.addprevious(el)
        return el

    def _merge_formats(self) -> dict[int, int]:
        mine = self._section(self.root, "numFmts", create=True)
        codes = {f.get("formatCode"): int(f.get("numFmtId")) for f in mine}
        top = max([_FIRST_CUSTOM_FORMAT - 1, *codes.values()])
        out = {}
        theirs = self.src.find(f"{_M}numFmts")
        for f in theirs if theirs is not None else []:
            code = f.get("formatCode")
            if code not in codes:
                top += 1
                codes[code] = top
                etree.SubElement(mine, f"{_M}numFmt", numFmtId=str(top), formatCode=code)
            out[int(f.get("numFmtId"))] = codes[code]
        mine.set("count", str(len(mine)))
        if len(mine) == 0:
            self.root.remove(mine)
        return out

    def _index(self, section: str, i: int) -> int:
        """Where entry `i` of the outputs' `section` (fonts, fills, borders) is in the merged styles."""
        if section not in self._maps:
            mine = self._section(self.root, section, create=True)
            known = {_key(el): k for k, el in enumerate(mine)}
            mapping = []
            for el in self.src.find(f"{_M}{section}"):
                key = _key(el)
                if key not in known:
                    known[key] = len(mine)
                    mine.append(_copy(el))
                mapping.append(known[key])
            mine.set("count", str(len(mine)))
            self._maps[section] = mapping
        return self._maps[section][i]

    def cell_xf(self, i: int) -> int:
        if i not in self._xf:
            xf = _copy(self.src.find(f"{_M}cellXfs")[i])
            fmt = int(xf.get("numFmtId", 0))
            xf.set("numFmtId", str(self.formats.get(fmt, fmt)))
            for attr, section in (("fontId", "fonts"), ("fillId", "fills"), ("borderId", "borders")):
                xf.set(attr, str(self._index(section, int(xf.get(attr, 0)))))
            xf.set("xfId", "0")  # the original's Normal style
            mine = self._section(self.root, "cellXfs", create=True)
            known = {_key(el): k for k, el in enumerate(mine)}
            key = _key(xf)
            if key not in known:
                known[key] = len(mine)
                mine.append(xf)
                mine.set("count", str(len(mine)))
            self._xf[i] = known[key]
        return self._xf[i]

    def dxf(self, i: int) -> int:
        if i not in self._dxf:
            xf = _copy(self.src.find(f"{_M}dxfs")[i])
            mine = self._section(self.root, "dxfs", create=True)
            known = {_key(el): k for k, el in enumerate(mine)}
            if _key(xf) not in known:
                known[_key(xf)] = len(mine)
                mine.append(xf)
                mine.set("count", str(len(mine)))
            self._dxf[i] = known[_key(xf)]
        return self._dxf[i]


def _key(el: etree._Element) -> bytes:
    """A style entry's identity: its canonical XML (attribute order and prefixes do not matter)."""
    return etree.tostring(el, method="c14n", exclusive=True)


# ------------------------------------------------------------------ writing


def _write_zip(dest: Path, source: zipfile.ZipFile, parts: dict[str, bytes | None]) -> None:
    """The original's parts in their order (as stored, unless edited), then the new ones."""
    with zipfile.ZipFile(dest, "w", zipfile.ZIP_DEFLATED) as z:
        for info in source.infolist():
            if info.filename not in parts:
                zipcopy.copy_member(source, info, z)
            elif parts[info.filename] is not None:
                fresh = zipfile.ZipInfo(info.filename, info.date_time)
                fresh.compress_type, fresh.external_attr = info.compress_type, info.external_attr
                z.writestr(fresh, parts[info.filename], compresslevel=LEVEL)
        names = set(source.namelist())
        for name, data in parts.items():
            if name not in names and data is not None:
                z.writestr(name, data, compresslevel=LEVEL)
