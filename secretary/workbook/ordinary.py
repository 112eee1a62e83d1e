"""The Results rows that pass every row check, found a column at a time.

Most of a league's rows are ordinary: a date, a division, two different names
(no partners: singles), two whole scores within the Longest race, no "void" note.  Checking them one
cell at a time costs most of a read at a million rows, so each column's
distinct values are checked once (a league repeats a few hundred dates and a
few thousand names) and a row is ordinary when all its cells are.  Every other
row goes through the full row checks (``read._results_row``), which name the
problem; an ordinary row gets exactly the fields those checks would give it.

A new check in ``read._results_row`` needs its twin here (or its column left
out of ``KEYS``, which sends every row of such a sheet through the full checks).
"""
from __future__ import annotations

import datetime as dt
from itertools import count
from operator import itemgetter
from typing import Callable, Mapping, Sequence

from secretary.workbook import schema
from secretary.workbook.dates import parse_date
from secretary.workbook.names import MAX_NAME_LENGTH, clean, name_key

# The Results columns this module knows; a sheet with any other known column is checked row by row.
KEYS = frozenset({"date", "division", "player_a", "player_b", "partner_a", "partner_b", "games_a", "games_b",
                  "event", "note"})
_TEXT = frozenset({str, type(None)})
# Values of these types are equal only when a check gives them the same answer (1 == 1.0, but not True).
_NUMBERS = frozenset({int, float, str, type(None)})
_DATES = frozenset({dt.datetime, dt.date, str, type(None)})


def ordinary_rows(columns: Mapping[str, int], body: Sequence[Sequence], first_row: int,
                  settings, make: Callable) -> list:
    """For each row of ``body`` (sheet row ``first_row`` first): ``make(row, date, division, a, b,
    games_a, games_b, event, False)`` (not void) when the row passes every check, else None."""
    if not set(columns) <= KEYS:
        return [None] * len(body)
    longest, order = settings.longest_race, settings.date_order
    width = min(map(len, body), default=0)  # calamine's rows are all as wide as the sheet

    def column(key):
        index = columns.get(key)
        if index is None:
            return [None] * len(body)
        if index <= width:
            return list(map(itemgetter(index - 1), body))
        return [row[index - 1] if index <= len(row) else None for row in body]

    dates = _checked(column("date"), lambda v: parse_date(v, order)[0], _DATES)
    divisions = _checked(column("division"), _division, _TEXT)
    names_a = _checked(column("player_a"), _spelling, _TEXT)
    names_b = _checked(column("player_b"), _spelling, _TEXT)
    keys_a, keys_b = (_checked(names, _key, _TEXT) for names in (names_a, names_b))
    games_a, games_b = (_checked(column(k), lambda v: _score(v, longest), _NUMBERS) for k in ("games_a", "games_b"))
    events = _checked(column("event"), clean, _TEXT)
    plain = _checked(column("note"), _not_void, _TEXT)
    singles = [a and b for a, b in zip(*(_checked(column(k), _no_partner, _TEXT) for k in ("partner_a", "partner_b")))]
    out = []
    for number, date, division, a, b, key_a, key_b, ga, gb, event, rated, single in zip(
            count(first_row), dates, divisions, names_a, names_b, keys_a, keys_b, games_a, games_b, events, plain,
            singles):
        if (date is None or division is None or a is None or b is None or key_a == key_b or ga is None
                or gb is None or not rated or ga == gb == 0 or not single):
            out.append(None)
        else:
            out.append(make(number, date, division, a, b, ga, gb, event, False))
    return out


def _checked(values: list, check: Callable, safe: frozenset) -> list:
    """``check`` of every value, worked out once per distinct value when the values' types allow it."""
    if set(map(type, values)) <= safe:
        known = {v: check(v) for v in dict.fromkeys(values)}
        return list(map(known.__getitem__, values))
    return list(map(check, values))


def _division(value) -> str | None:
    division = clean(value)
    return division if division and len(division) <= MAX_NAME_LENGTH else None


def _spelling(value) -> str | None:
    spelling = str(value).strip() if value is not None else ""
    return spelling if spelling and len(spelling) <= MAX_NAME_LENGTH else None


def _no_partner(value) -> bool:
    return value is None or not str(value).strip()


def _key(spelling: str | None) -> str | None:
    return name_key(spelling) if spelling is not None else None


def _score(value, longest: int) -> int | None:
    """Games won, when it is a whole number from 0 to the Longest race (as ``read.whole_number`` reads it)."""
    if value is None or isinstance(value, bool) or (isinstance(value, str) and not value.strip()):
        return None
    number = schema.as_number(value)
    if number is None or not number.is_integer() or not 0 <= number <= longest:
        return None
    return int(number)


def _not_void(note) -> bool:
    return not str(note or "").strip().casefold().startswith(schema.VOID_PREFIX)
