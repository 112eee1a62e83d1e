"""Small league workbooks and a way to run the real command line on them."""
from __future__ import annotations

import datetime as dt
import hashlib
from pathlib import Path

import pytest

from secretary.cli import main
from tests.workbook.league_books import D, good_results, write_book


def digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


class Run:
    """``secretary ARGS`` through the real entry point: exit code and everything it printed."""

    def __init__(self, capsys):
        self.capsys = capsys

    def __call__(self, *args: str) -> tuple[int, str]:
        code = main([str(a) for a in args])
        out = self.capsys.readouterr()
        return code, out.out + out.err


@pytest.fixture
def run(capsys) -> Run:
    return Run(capsys)


def run_cli(capsys, *args: str) -> tuple[int, str]:
    """The same as the ``run`` fixture, for tests that hold ``capsys`` themselves."""
    return Run(capsys)(*args)


def next_week(rows=None) -> list[list]:
    """Two more results a week after `good_results`."""
    day = D + dt.timedelta(days=14)
    extra = [[day, "Premier", "Ada Finch", "Dev Pike", 5, 1, "", ""],
             [day, "Premier", "Bram Oak", "Cleo Marsh", 2, 5, "", ""]]
    return (good_results() if rows is None else rows) + extra


@pytest.fixture
def league(tmp_path) -> Path:
    """A four-result league workbook (no Players sheet)."""
    return write_book(tmp_path / "league.xlsx", good_results())
