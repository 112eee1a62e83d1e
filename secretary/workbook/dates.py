"""A cell's value as a calendar date, or the reason it cannot be one."""
from __future__ import annotations

import datetime as dt
import re

EARLIEST_YEAR = 1900
LATEST_YEAR = 2199
# Excel's day numbers count from 30 Dec 1899 (its 1900 leap-year bug is before 1 Mar 1900).
_EXCEL_EPOCH = dt.date(1899, 12, 30)
# Day numbers accepted when a date arrives as a plain number: 1 Jan 1950 to 31 Dec 2199.
_SERIAL_RANGE = (18264, 109572)

_MONTHS = {
    name: number
    for number, names in enumerate(
        (("jan", "january"), ("feb", "february"), ("mar", "march"), ("apr", "april"),
         ("may",), ("jun", "june"), ("jul", "july"), ("aug", "august"),
         ("sep", "sept", "september"), ("oct", "october"), ("nov", "november"),
         ("dec", "december")),
        start=1,
    )
    for name in names
}
_MONTH_NAMES = ("January", "February", "March", "April", "May", "June", "July",
                "August", "September", "October", "November", "December")

_ISO = re.compile(r"(\d{4})-(\d{1,2})-(\d{1,2})(?:[ T]\d{1,2}:\d{2}(?::\d{2}(?:\.\d+)?)?)?")
_NUMERIC = re.compile(r"(\d{1,2})([/.\-])(\d{1,2})\2(\d{4}|\d{2})")
_DAY_MONTH_NAME = re.compile(r"(?:[a-z]+,?\s+)?(\d{1,2})(?:st|nd|rd|th)?[\s\-]+([a-z]+)\.?,?[\s\-]+(\d{4})")
_MONTH_NAME_DAY = re.compile(r"(?:[a-z]+,?\s+)?([a-z]+)\.?\s+(\d{1,2})(?:st|nd|rd|th)?,?\s+(\d{4})")

FORMS = "a date cell, or text like 2026-03-14, 14/03/2026 or 14 Mar 2026"


def parse_date(value: object, date_order: str = "day-first") -> tuple[dt.date | None, str | None]:
    """Read a cell value as a date: returns (date, None) or (None, why it is not a date)."""
    if value is None or (isinstance(value, str) and not value.strip()):
        return None, "the date is blank"
    if isinstance(value, dt.datetime):
        return _checked_year(value.date())
    if isinstance(value, dt.date):
        return _checked_year(value)
    if isinstance(value, bool):
        return None, f"not a date; write {FORMS}"
    if isinstance(value, (int, float)):
        return _from_serial(value)
    if isinstance(value, str):
        return _from_text(value.strip(), date_order)
    return None, f"not a date; write {FORMS}"


def _from_serial(number: float) -> tuple[dt.date | None, str | None]:
    if number != number or not _SERIAL_RANGE[0] <= number <= _SERIAL_RANGE[1]:
        return None, f"a number, not a date; format the cell as a date or write {FORMS}"
    return _EXCEL_EPOCH + dt.timedelta(days=int(number)), None


def _from_text(text: str, date_order: str) -> tuple[dt.date | None, str | None]:
    lowered = text.casefold()
    match = _ISO.fullmatch(lowered)
    if match:
        year, month, day = (int(g) for g in match.groups())
        return _make(year, month, day, "")
    match = _NUMERIC.fullmatch(lowered)
    if match:
        first, _, second, year = match.groups()
        year_number = int(year) + (2000 if len(year) == 2 else 0)
        if date_order == "month-first":
            month, day = int(first), int(second)
        else:
            day, month = int(first), int(second)
        note = f" (read {date_order}, as the Settings say)"
        return _make(year_number, month, day, note)
    for pattern, order in ((_DAY_MONTH_NAME, "dmy"), (_MONTH_NAME_DAY, "mdy")):
        match = pattern.fullmatch(lowered)
        if match:
            groups = match.groups()
            day_text, month_text = (groups[0], groups[1]) if order == "dmy" else (groups[1], groups[0])
            month = _MONTHS.get(month_text)
            if month is None:
                return None, f"'{month_text}' is not a month name"
            return _make(int(groups[2]), month, int(day_text), "")
    return None, f"not a date this tool can read; write {FORMS}"


def _make(year: int, month: int, day: int, note: str) -> tuple[dt.date | None, str | None]:
    if not 1 <= month <= 12:
        return None, f"there is no month {month}{note}"
    try:
        return _checked_year(dt.date(year, month, day))
    except ValueError:
        return None, f"{day} {_MONTH_NAMES[month - 1]} {year} does not exist{note}"


def _checked_year(date: dt.date) -> tuple[dt.date | None, str | None]:
    if not EARLIEST_YEAR <= date.year <= LATEST_YEAR:
        return None, f"the year {date.year} cannot be right"
    return date, None
