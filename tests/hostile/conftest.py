"""Small league workbooks and a way to run the real command line on them."""
from __future__ import annotations

import hashlib
from pathlib import Path

import pytest

from secretary.cli import main
from tests.workbook.league_books import good_results, write_book


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


@pytest.fixture
def league(tmp_path) -> Path:
    """A four-result league workbook (no Players sheet)."""
    return write_book(tmp_path / "league.xlsx", good_results())
