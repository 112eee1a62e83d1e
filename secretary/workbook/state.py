"""The very-hidden state sheet: what the previous update published, for the next update's breakdown.

The state is one JSON document (floats in full precision, every text escaped to
ASCII so that no cell can hold a character XML refuses) cut into cells of
column B.  One cell holds about 800 result rows, so 100 000 rows take some 130
cells: far cheaper to write and read than one sheet row per result.  The update
before (``previous``) keeps its rows as runs of this update's (``row_runs``): they
are mostly the same rows, and written out again they doubled the record.
"""
from __future__ import annotations

import datetime as dt
import json
import math
from dataclasses import fields
from itertools import chain
from typing import Sequence

from openpyxl.workbook.workbook import Workbook

from secretary.model.records import PublishedState, Settings, TuneCheck
from secretary.workbook.schema import STATE_SHEET
from secretary.workbook.style import put, replace_sheet, tool_sheet

FORMAT = 1
_CHUNK = 30000  # characters per cell, under Excel's 32 767
_TITLE = "Kept by the secretary tool for the next update. Do not edit; deleting it only loses next week's breakdown."


def write_state(wb: Workbook, state: PublishedState) -> None:
    """Write (replace) the very-hidden state sheet."""
    for name, value in (*state.ratings.items(), *state.sds.items()):
        if not math.isfinite(value):
            raise ValueError(f"published rating of {name!r} is not a finite number: {value!r}")
    document = _document(state)
    if state.previous is not None:  # one update back only: enough to rebuild this update's breakdown
        document["previous"] = _document(state.previous, like=state.rows)
    if state.tune_check is not None:
        c = state.tune_check
        document["tune_check"] = {"checked_through": c.checked_through.isoformat(), "settings": _settings(c.settings),
                                  "gain": float(c.gain), "half_life_days": float(c.half_life_days),
                                  "skill_spread": float(c.skill_spread)}
        if c.division_spread is not None:
            document["tune_check"]["division_spread"] = float(c.division_spread)
    text = json.dumps(document, ensure_ascii=True, separators=(",", ":"))
    ws = replace_sheet(wb, STATE_SHEET)
    put(ws.cell(1, 1), _TITLE)
    put(ws.cell(2, 1), "format")
    ws.cell(2, 2).value = FORMAT
    for i, start in enumerate(range(0, len(text), _CHUNK)):
        put(ws.cell(3 + i, 1), "data")
        put(ws.cell(3 + i, 2), text[start:start + _CHUNK])
    ws.sheet_state = "veryHidden"


def _document(state: PublishedState, like: tuple[tuple[str, str], ...] | None = None) -> dict:
    """The state as JSON; with ``like`` (the rows of the update after it) its rows as runs of those."""
    return {
        "format": FORMAT,
        "updated_at": state.updated_at,
        "reference_date": state.reference_date.isoformat(),
        "settings": _settings(state.settings),
        "ratings": {name: [float(r), float(state.sds[name])] for name, r in state.ratings.items()},
        **({"rows": state.rows} if like is None else  # pairs: JSON writes a tuple as a list
           {"row_runs": row_runs(state.rows, like)}),
        "inputs": state.inputs,
        **({} if state.starting_levels is None else
           {"starting_levels": {name: float(level) for name, level in state.starting_levels.items()}}),
    }


def _settings(settings: Settings) -> dict:
    return {f.name: getattr(settings, f.name) for f in fields(Settings)}


def _parse_settings(stored: dict) -> Settings:
    defaults = Settings()
    return Settings(**{f.name: _same_kind(stored.get(f.name), getattr(defaults, f.name)) for f in fields(Settings)})


def _parse_tune_check(doc: object) -> TuneCheck | None:
    """The stored tune check; None when absent or damaged (it is only run again)."""
    try:
        return TuneCheck(dt.date.fromisoformat(doc["checked_through"]), _parse_settings(doc["settings"]),
                         _finite(doc["gain"]), _finite(doc["half_life_days"]), _finite(doc["skill_spread"]),
                         _finite(doc["division_spread"]) if "division_spread" in doc else None)
    except Exception:
        return None


def read_state(wb: Workbook) -> PublishedState | None:
    """The state written by the previous update; None when absent or damaged (never raises)."""
    ws = tool_sheet(wb, STATE_SHEET)
    if ws is None:
        return None
    try:
        rows = ws.iter_rows(max_col=2, values_only=True)
    except Exception:
        return None
    return state_from_rows(rows)


def state_from_rows(rows) -> PublishedState | None:
    """The state from the state sheet's rows (values of columns A and B, row 1 first); None when damaged."""
    try:
        chunks = [
            row[1]
            for number, row in enumerate(rows, start=1)
            if number >= 3 and len(row) >= 2 and row[0] == "data" and isinstance(row[1], str)
        ]
        return _parse(json.loads("".join(chunks)))
    except Exception:  # a damaged or hand-edited sheet only costs the breakdown
        return None


def _parse(doc: dict, like: tuple[tuple[str, str], ...] | None = None) -> PublishedState | None:
    if doc.get("format") != FORMAT:
        return None
    ratings, sds = {}, {}
    for name, (rating, sd) in doc["ratings"].items():
        ratings[str(name)], sds[str(name)] = _finite(rating), _finite(sd)
    settings = _parse_settings(doc.get("settings", {}))
    if "rows" in doc or like is None:
        rows = _pairs(doc["rows"])
    else:
        rows = rows_from_runs(doc["row_runs"], like)
    previous = doc.get("previous")
    return PublishedState(
        previous=_parse(previous, like=rows) if isinstance(previous, dict) else None,
        updated_at=str(doc["updated_at"]),
        reference_date=dt.date.fromisoformat(doc["reference_date"]),
        ratings=ratings,
        sds=sds,
        rows=rows,
        settings=settings,
        tune_check=_parse_tune_check(doc.get("tune_check")),
        inputs=str(doc.get("inputs", "")),
        starting_levels=_levels(doc.get("starting_levels")),
    )


def _pairs(stored: list) -> tuple[tuple[str, str], ...]:
    """The stored rows as (identity, fingerprint) pairs of text: a million of them read as whole lists."""
    rows = tuple(map(tuple, stored))
    if set(map(len, rows)) <= {2} and set(map(type, chain.from_iterable(rows))) <= {str}:
        return rows
    return tuple((str(identity), str(fp)) for identity, fp in stored)  # anything else, as it always read


def row_runs(rows: Sequence[tuple[str, str]], like: Sequence[tuple[str, str]]) -> list[list]:
    """``rows`` written against ``like``: ``[start, stop]`` stands for ``like[start:stop]``, an
    ``[identity, fingerprint]`` pair for itself.  An update's rows are mostly the update before's, so the
    update before's are a few runs instead of as many pairs again (at a million rows, 40 MB less to save)."""
    first: dict[tuple[str, str], int] = {}
    for k, pair in enumerate(like):
        first.setdefault(pair, k)
    runs: list[list] = []
    following = -1  # the index in ``like`` that would carry the last run on
    for pair in rows:
        if 0 <= following < len(like) and like[following] == pair:
            runs[-1][1] += 1
            following += 1
            continue
        start = first.get(pair)
        if start is None:
            runs.append(list(pair))
            following = -1
        else:
            runs.append([start, start + 1])
            following = start + 1
    return runs


def rows_from_runs(runs: Sequence[list], like: Sequence[tuple[str, str]]) -> tuple[tuple[str, str], ...]:
    """The rows that `row_runs` wrote against ``like``; raises ValueError on anything else."""
    rows: list[tuple[str, str]] = []
    for run in runs:
        one, other = run
        if type(one) is int and type(other) is int and 0 <= one <= other <= len(like):
            rows.extend(like[one:other])
        elif isinstance(one, str) and isinstance(other, str):
            rows.append((one, other))
        else:
            raise ValueError(f"not a run of rows: {run!r}")
    return tuple(rows)


def _levels(doc: object) -> dict[str, float] | None:
    """The starting levels an update used; None when the record predates them or is not a table."""
    if not isinstance(doc, dict):
        return None
    return {str(name): _finite(level) for name, level in doc.items()}


def _finite(value: object) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise ValueError("not a finite number")
    return float(value)


def _same_kind(value: object, default: object) -> object:
    """A stored setting of the default's type, or the default when missing or of another type."""
    if value is None or isinstance(value, bool):
        return default
    if isinstance(default, float) and isinstance(value, (int, float)):
        return float(value)
    return value if type(value) is type(default) else default
