"""Writing the Settings sheet from the window's settings dialog, saved safely."""
from __future__ import annotations

from pathlib import Path
from typing import Mapping

from secretary.errors import FileRefused, SecretaryError
from secretary.workbook import fidelity, save, schema
from secretary.workbook.read import HEADER_SEARCH_ROWS
from secretary.workbook.style import put


def checked_values(values: Mapping[str, object]) -> dict[str, object]:
    """Every value checked against the settings table: field -> value (None = blank, the default)."""
    out, wrong = {}, []
    for key, raw in values.items():
        spec = schema.find_setting(key)
        value, error = schema.validate_setting(key, raw)
        if error:
            wrong.append(error)
            continue
        blank = raw is None or (isinstance(raw, str) and not raw.strip())
        out[spec.field] = None if blank else value
    if wrong:
        raise SecretaryError("The settings were not saved: " + "; ".join(wrong) + ".")
    return out


def _find_sheet(wb):
    for ws in wb.worksheets:
        if schema.header_key(ws.title) == schema.header_key(schema.SETTINGS.name):
            return ws
    ws = wb.create_sheet(schema.SETTINGS.name)
    ws.append([schema.SETTINGS.column("setting").header, schema.SETTINGS.column("value").header])
    return ws


def _columns(ws) -> tuple[int, int, int]:
    """Header row, Setting column and Value column (1-based)."""
    wanted = {schema.header_key(schema.SETTINGS.column(k).header): k for k in ("setting", "value")}
    for row in ws.iter_rows(min_row=1, max_row=HEADER_SEARCH_ROWS):
        found = {wanted[schema.header_key(c.value)]: c.column for c in row
                 if isinstance(c.value, str) and schema.header_key(c.value) in wanted}
        if len(found) == 2:
            return row[0].row, found["setting"], found["value"]
    raise FileRefused(f"The '{ws.title}' sheet has no 'Setting' and 'Value' headers in its first "
                      f"{HEADER_SEARCH_ROWS} rows; add them, or delete the sheet so that a new one is made.")


def write_settings(path: str | Path, values: Mapping[str, object]) -> Path:
    """Write ``values`` (field or label -> value; blank = default) into the Settings sheet and save safely."""
    path = Path(path)
    checked = checked_values(values)
    lost = fidelity.unsupported_content(path)
    if lost:
        raise FileRefused(f"{path.name} holds content this tool cannot carry through a save unchanged "
                          f"({'; '.join(lost)}), so the settings were not saved. Change them in the "
                          "Settings sheet with your spreadsheet program.")
    wb = save.load_for_update(path)
    ws = _find_sheet(wb)
    header, col_setting, col_value = _columns(ws)
    rows = {}
    for r in range(header + 1, ws.max_row + 1):
        spec = schema.find_setting(str(ws.cell(r, col_setting).value or ""))
        if spec is not None:
            rows.setdefault(spec.field, r)
    next_row = ws.max_row + 1
    for spec in schema.SETTINGS_TABLE:
        if spec.field not in checked:
            continue
        row = rows.get(spec.field)
        if row is None:
            if checked[spec.field] is None:
                continue  # a default need not be written
            row, next_row = next_row, next_row + 1
            put(ws.cell(row, col_setting), spec.label)
        put(ws.cell(row, col_value), checked[spec.field])
    return save.save_workbook(wb, path).path
