"""Shared pieces of the hostile-input and fault-injection suite: small real workbooks, run through the real CLI."""
from __future__ import annotations

import datetime as dt
from pathlib import Path

import pytest

from secretary.cli import main
from tests.workbook.league_books import D, good_results, write_book


def run_cli(capsys, *args: str) -> tuple[int, str]:
    """Run `secretary ARGS` in-process through the real command line; returns the exit code and all output."""
    code = main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out + out.err


def next_week(rows=None) -> list[list]:
    """Two more results a week after `good_results`."""
    day = D + dt.timedelta(days=14)
    extra = [[day, "Premier", "Ada Finch", "Dev Pike", 5, 1, "", ""],
             [day, "Premier", "Bram Oak", "Cleo Marsh", 2, 5, "", ""]]
    return (good_results() if rows is None else rows) + extra


@pytest.fixture
def league(tmp_path) -> Path:
    """A small clean league workbook in its own folder."""
    return write_book(tmp_path / "league.xlsx")
