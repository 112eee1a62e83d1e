"""Cell values to dates: real dates, ISO text, day-first or month-first text, month names."""
from __future__ import annotations

import datetime as dt

import pytest

from secretary.workbook.dates import parse_date

MARCH_14 = dt.date(2026, 3, 14)


@pytest.mark.parametrize("value, order, expected", [
    (dt.datetime(2026, 3, 14, 19, 30), "day-first", MARCH_14),
    (MARCH_14, "day-first", MARCH_14),
    ("2026-03-14", "day-first", MARCH_14),
    ("2026-3-14", "month-first", MARCH_14),
    ("2026-03-14 00:00:00", "day-first", MARCH_14),
    ("14/03/2026", "day-first", MARCH_14),
    ("14.3.2026", "day-first", MARCH_14),
    ("14-03-2026", "day-first", MARCH_14),
    ("14/3/26", "day-first", MARCH_14),
    ("03/14/2026", "month-first", MARCH_14),
    ("03/04/2026", "day-first", dt.date(2026, 4, 3)),
    ("03/04/2026", "month-first", dt.date(2026, 3, 4)),
    ("14 Mar 2026", "month-first", MARCH_14),
    ("14 March 2026", "day-first", MARCH_14),
    ("Sat 14 Mar 2026", "day-first", MARCH_14),
    ("14th March, 2026", "day-first", MARCH_14),
    ("March 14, 2026", "day-first", MARCH_14),
    ("  14-mar-2026 ", "day-first", MARCH_14),
    ("29/02/2028", "day-first", dt.date(2028, 2, 29)),
    # Excel's day number for 14 Mar 2026 (=DATE(2026,3,14) shows 46095 in General format)
    (46095, "day-first", MARCH_14),
])
def test_readable_dates(value, order, expected):
    assert parse_date(value, order) == (expected, None)


@pytest.mark.parametrize("value, says", [
    (None, "blank"),
    ("   ", "blank"),
    ("31/02/2026", "31 February 2026 does not exist"),
    ("29/02/2026", "does not exist"),
    ("14/03/2026x", "not a date"),
    ("03/14/2026", "no month 14"),
    ("14 Smarch 2026", "not a month name"),
    ("next Tuesday", "not a date"),
    (3.5, "a number, not a date"),
    (True, "not a date"),
    ("0001-01-01", "year 1"),
    (dt.date(1850, 1, 1), "year 1850"),
])
def test_unreadable_dates_say_why(value, says):
    date, why = parse_date(value, "day-first")
    assert date is None
    assert says in why
