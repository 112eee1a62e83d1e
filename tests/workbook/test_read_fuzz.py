"""Random cell contents in Results, Players and Settings give problems or a refusal, never a crash."""
from __future__ import annotations

import datetime as dt
import tempfile
from pathlib import Path

import openpyxl
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from openpyxl.cell.cell import ERROR_CODES, ILLEGAL_CHARACTERS_RE

from tests.workbook.league_books import PLAYERS_HEADERS, RESULTS_HEADERS, SETTINGS_HEADERS
from secretary.errors import SecretaryError
from secretary.workbook import schema
from secretary.workbook.cells import Workbook as ValuesBook
from secretary.workbook.read import read_workbook

text = st.text(min_size=0, max_size=12).filter(lambda s: not ILLEGAL_CHARACTERS_RE.search(s))
cell = st.one_of(
    st.none(),
    text,
    st.sampled_from(["void", "Void: rain", "=1/0", "=A1", "#N/A", "14/03/2026", "31/02/2026", "2026-03-14",
                     "Ada Finch", "ada  finch", "Ada Fitch", "Bram Oak", "  ", "-3", "2.5", "Centre", "Usual race"]),
    st.integers(min_value=-10, max_value=10**6),
    st.floats(allow_nan=True, allow_infinity=True, width=32),
    st.booleans(),
    st.dates(min_value=dt.date(1900, 3, 1), max_value=dt.date(2100, 12, 31)),
    st.datetimes(min_value=dt.datetime(1900, 3, 1), max_value=dt.datetime(2100, 12, 31)),
)
headers = st.one_of(st.just(list(RESULTS_HEADERS)), st.permutations(list(RESULTS_HEADERS)),
                    st.lists(st.one_of(text, st.sampled_from(RESULTS_HEADERS)), max_size=9))
rows = st.lists(st.lists(cell, min_size=0, max_size=9), min_size=0, max_size=8)
setting_rows = st.lists(st.tuples(st.one_of(st.sampled_from([s.label for s in schema.SETTINGS_TABLE]), cell), cell),
                        max_size=6)


def _write(path: Path, results_headers, results, players, settings_rows) -> None:
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Results"
    for row in [results_headers, *results]:
        ws.append(row)
    if players is not None:
        ws = wb.create_sheet("Players")
        for row in [list(PLAYERS_HEADERS), *players]:
            ws.append(row)
    if settings_rows is not None:
        ws = wb.create_sheet("Settings")
        for row in [list(SETTINGS_HEADERS), *settings_rows]:
            ws.append(list(row))
    wb.save(path)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(headers, rows, st.one_of(st.none(), rows), st.one_of(st.none(), setting_rows))
def test_random_cells_give_only_problems(results_headers, results, players, settings_rows):
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "fuzz.xlsx"
        _write(path, results_headers, results, players, settings_rows)
        try:
            book = read_workbook(path)
        except SecretaryError as refused:
            assert str(refused)
            return
        for problem in book.problems:
            assert problem.severity in ("error", "warning")
            assert problem.sheet in {"Results", "Players", "Settings", "Fixtures"}
            assert problem.problem and problem.fix
        for result in book.results:
            assert result.player_a and result.player_b and result.player_a != result.player_b
            assert result.games_a >= 0 and result.games_b >= 0 and isinstance(result.games_a, int)
        for field in ("centre", "scale", "longest_race"):
            value, error = schema.validate_setting(field, getattr(book.settings, field))
            assert error is None


@settings(max_examples=40, deadline=None)
@given(rows)
def test_fast_reader_agrees_with_openpyxl_on_random_cells(results):
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "scan.xlsx"
        _write(path, list(RESULTS_HEADERS), results, None, None)
        values = ValuesBook(path)
        fast = values.read_cells("Results")
        values.close()
        wb = openpyxl.load_workbook(path, read_only=True, data_only=True)
        ws = wb["Results"]
        ws.reset_dimensions()
        reference = [tuple(r) for r in ws.iter_rows(values_only=True)]
        wb.close()
        has_error = any(isinstance(v, str) and v.startswith("#") and v in ERROR_CODES for r in reference for v in r)
        if has_error:  # error values are left to openpyxl
            assert fast is None
            return
        assert fast is not None
        got, want = _trim(fast.rows), _trim(reference)
        assert [len(r) for r in got] == [len(r) for r in want]
        for mine, theirs in zip(got, want):
            assert all(_same(a, b) for a, b in zip(mine, theirs)), (mine, theirs)
        assert [[_kind(v) for v in r] for r in _trim(fast.rows)] == [[_kind(v) for v in r] for r in _trim(reference)]


def _same(a, b) -> bool:
    """Equal values; times within a millisecond (the two readers round sub-millisecond parts differently)."""
    if isinstance(a, dt.datetime) and isinstance(b, dt.datetime):
        return abs(a - b) <= dt.timedelta(milliseconds=1)
    return a == b


def _kind(value) -> str:
    """The type a check sees; a whole number may come back as int or float (1e16 is written '1e+16')."""
    return "number" if type(value) in (int, float) else type(value).__name__


def _trim(table):
    def same(v):  # NaN is never equal to itself
        return "nan" if isinstance(v, float) and v != v else v
    out = [tuple(same(v) for v in r) for r in table]
    out = [r[: max((i + 1 for i, v in enumerate(r) if v is not None), default=0)] for r in out]
    while out and not out[-1]:
        out.pop()
    return out
