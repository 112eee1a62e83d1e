"""Adding result rows to the secretary's Results sheet, as they would type them, saved safely."""
from __future__ import annotations

import datetime as dt
from pathlib import Path
from typing import Mapping, Sequence

from secretary.errors import FileRefused
from secretary.workbook import schema
from secretary.workbook.save import load_for_update, save_workbook
from secretary.workbook.style import put

HEADER_SEARCH_ROWS = 10


def _typed(key: str, text: object) -> object:
    """CSV text -> the cell value a secretary would type: real dates and whole numbers."""
    if not isinstance(text, str) or not text.strip():
        return text if not isinstance(text, str) else None
    text = text.strip()
    if key == "date":
        try:
            return dt.date.fromisoformat(text)
        except ValueError:
            return text
    if key in ("games_a", "games_b") and text.isdigit():
        return int(text)
    return text


def append_results(path: str | Path, rows: Sequence[Mapping[str, object]]) -> int:
    """Append ``rows`` (keyed by the Results headers) under the last result; returns rows added."""
    path = Path(path)
    wb = load_for_update(path)
    title = next((t for t in wb.sheetnames if schema.header_key(t) == schema.header_key(schema.RESULTS.name)), None)
    if title is None:
        raise FileRefused(f"{path.name} has no '{schema.RESULTS.name}' sheet to add results to.")
    ws = wb[title]
    wanted = {schema.header_key(c.header): c.key for c in schema.RESULTS.columns}
    for header_row in range(1, HEADER_SEARCH_ROWS + 1):
        columns = {wanted[schema.header_key(c.value)]: c.column for c in ws[header_row] if schema.header_key(c.value) in wanted}
        if all(c.key in columns for c in schema.RESULTS.required_columns):
            break
    else:
        raise FileRefused(f"The '{title}' sheet of {path.name} has no header row with the result columns.")
    last = next((row for row in range(ws.max_row, header_row, -1)
                 if any(ws.cell(row, col).value not in (None, "") for col in columns.values())), header_row)
    by_header = {schema.header_key(c.header): c.key for c in schema.RESULTS.columns}
    for offset, row in enumerate(rows, start=1):
        for header, text in row.items():
            key = by_header.get(schema.header_key(header))
            if key in columns:
                put(ws.cell(last + offset, columns[key]), _typed(key, text), "yyyy-mm-dd" if key == "date" else None)
    saved = save_workbook(wb, path)
    if saved.companion:
        raise FileRefused(saved.reason + " Add the new results in your spreadsheet program instead.")
    return len(rows)
