"""Reading the Rating history sheet back: each player's published ratings by update date."""
from __future__ import annotations

import datetime as dt
import warnings
from pathlib import Path

import openpyxl

from secretary.workbook.guard import check_readable
from secretary.workbook.schema import HISTORY_SHEET
from secretary.workbook.style import tool_sheet
from secretary.workbook.write import _read_history


def read_rating_history(path: str | Path) -> dict[str, list[tuple[dt.date, float]]]:
    """Per player (as last spelt), their ratings in date order; empty when the sheet is absent."""
    path = check_readable(path)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # unsupported extensions are harmless for reading
        wb = openpyxl.load_workbook(path, read_only=True, data_only=True)
    try:
        if tool_sheet(wb, HISTORY_SHEET) is None:
            return {}
        names, history = _read_history(wb)
    finally:
        wb.close()
    dates = sorted(history)
    return {name: [(d, history[d][key]) for d in dates if key in history[d]] for key, name in names.items()}
