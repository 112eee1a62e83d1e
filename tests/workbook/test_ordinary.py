"""The column-at-a-time check of ordinary Results rows gives exactly what the row-by-row checks give.

The reference is the reader with the fast path switched off (every row through
``read._results_row``): same records, same problems, in the same order, on
workbooks full of rows that are almost ordinary and on the whole corpus of bad
workbooks.
"""
from __future__ import annotations

import datetime as dt

import pytest

from secretary.workbook import ordinary, read
from secretary.workbook.read import read_workbook
from tests.workbook.bad_corpus import BAD_WORKBOOKS
from tests.workbook.league_books import D, write_book

LONG = "L" * 101  # one character over the longest name


def _tricky_rows() -> list[list]:
    """Rows that are ordinary, and rows that differ from ordinary in one cell each."""
    day = dt.datetime(2026, 3, 14)
    good = [day, "Premier", "Ada Finch", "Bram Oak", 5, 3, "League night", None]
    variants = [
        {}, {0: "2026-03-21"}, {0: "21/03/2026"}, {0: 46100}, {0: 46100.5}, {0: None}, {0: "soon"}, {0: True},
        {0: dt.datetime(1850, 1, 1)}, {0: dt.datetime(2026, 3, 14, 19, 30)},
        {1: None}, {1: LONG}, {1: "  premier "}, {1: 1}, {1: 1.0}, {1: True}, {1: "\u200bPremier"},
        {2: None}, {2: "  Ada Finch  "}, {2: "ada  finch"}, {2: LONG}, {2: 7}, {2: 7.0}, {2: True},
        {3: "Ada Finch"}, {3: " ADA FINCH"}, {3: "Cafe\u0301 Owl"}, {3: "Café Owl"},
        {4: 5.0}, {4: "5"}, {4: " 4 "}, {4: 2.5}, {4: -1}, {4: 99}, {4: True}, {4: None}, {4: "five"},
        {4: 0, 5: 0}, {4: 0, 5: 0, 7: "void: not played"}, {4: None, 5: None, 7: "Void"}, {4: 99, 7: "void"},
        {6: None}, {6: 3}, {6: "  Cup  "}, {7: "played late"}, {7: 0}, {7: "VOID "},
        {0: None, 1: None, 2: None, 3: None, 4: None, 5: None, 6: None, 7: None},  # a blank row
    ]
    rows = []
    for change in variants:
        row = list(good)
        for col, value in change.items():
            row[col] = value
        rows.append(row)
    return rows * 3 + [[D, "Premier", "Cleo Marsh", "Dev Pike", 4, 5, "", ""]]


def _read_both(path, monkeypatch):
    taken = []

    def counted(*args):
        out = ordinary.ordinary_rows(*args)
        taken.append(sum(r is not None for r in out))
        return out

    monkeypatch.setattr(read, "ordinary_rows", counted)
    fast = read_workbook(path)
    monkeypatch.setattr(read, "ordinary_rows", lambda columns, body, *rest: [None] * len(body))
    slow = read_workbook(path)
    return fast, slow, sum(taken)


def _same(fast, slow):
    assert fast.results == slow.results
    assert fast.problems == slow.problems
    assert fast.players == slow.players and fast.fixtures == slow.fixtures


def test_ordinary_rows_read_as_the_row_checks_read_them(tmp_path, monkeypatch):
    rows = _tricky_rows()
    path = write_book(tmp_path / "league.xlsx", rows, settings=[["Longest race", 9]],
                      players=[["Ada Finch", "Premier", None, "Ada F"], ["Bram Oak", "Premier", None, None]])
    fast, slow, taken = _read_both(path, monkeypatch)
    _same(fast, slow)
    assert taken >= 3 * 10  # the fast path did take the ordinary rows (else this test would prove nothing)
    assert len(slow.problems) > 30 and len(slow.results) > taken


def test_month_first_dates_and_a_sheet_of_unknown_columns(tmp_path, monkeypatch):
    rows = [[f"03/{d:02d}/2026", "Premier", "Ada Finch", "Bram Oak", 5, d % 5, "", ""] for d in range(1, 29)]
    path = write_book(tmp_path / "league.xlsx", rows, settings=[["Date order", "month-first"]])
    fast, slow, taken = _read_both(path, monkeypatch)
    _same(fast, slow)
    assert taken == 28 and fast.results[2].date == dt.date(2026, 3, 3)
    # A column the fast path does not know sends every row through the row checks.
    assert ordinary.ordinary_rows({"date": 1, "rack_count": 9}, [(D,)], 2, fast.settings, tuple) == [None]


@pytest.mark.parametrize("case", [c for c in BAD_WORKBOOKS if c.where is not None], ids=lambda c: c.case_id)
def test_every_bad_workbook_gets_the_same_problems(case, tmp_path, monkeypatch):
    path = case.build(tmp_path / "league.xlsx")
    fast, slow, _ = _read_both(path, monkeypatch)
    _same(fast, slow)


def test_a_sheet_with_partner_columns_singles_and_doubles(tmp_path, monkeypatch):
    from tests.workbook.league_books import RESULTS_HEADERS

    day = dt.datetime(2026, 3, 14)
    singles = [day, "Premier", "Ada Finch", "Bram Oak", 5, 3, "", None]
    partners = [(None, None), ("", "  "), ("Cleo Marsh", "Dev Pike"), ("Cleo Marsh", None), (None, "Dev Pike"),
                ("Ada Finch", "Dev Pike"), ("Cleo Marsh", "Bram Oak"), ("Cleo Marsh", "cleo marsh"), (0, None)]
    rows = [singles + list(p) for p in partners] * 2
    path = write_book(tmp_path / "league.xlsx", rows, results_headers=(*RESULTS_HEADERS, "Partner A", "Partner B"))
    fast, slow, taken = _read_both(path, monkeypatch)
    _same(fast, slow)
    assert taken == 4 and any(r.partner_a for r in fast.results)
