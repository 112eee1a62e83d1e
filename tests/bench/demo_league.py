"""The invented demo league (``demo/league.xlsx``) as records, read by the tool's own reader."""
from __future__ import annotations

from pathlib import Path

from secretary.model.records import Player, Result
from secretary.workbook.read import read_workbook

DEMO = Path(__file__).resolve().parents[2] / "demo" / "league.xlsx"


def demo_league(path: Path = DEMO) -> tuple[tuple[Result, ...], tuple[Player, ...]]:
    """The demo's results and players (void rows included; they are marked and not rated)."""
    book = read_workbook(path)
    return book.results, book.players
