"""The notice board's division levels: from the levels model, with one plain sentence, read back with poppler.

The league is the Divisions-sheet test's (tests/workbook/test_divisions_sheet.py): two divisions that
play no other, so each division's level is exactly its starting level and its ± exactly the prior's
against the levels' average, Division spread * sqrt(1 - 1/2) (the posterior of a level no game sees is its
prior), which is what the board must print.
"""
from __future__ import annotations

import math

import openpyxl

from secretary.cli import main
from secretary.model.division_table import level_sentence
from secretary.model.records import Settings
from secretary.pipeline import notice_pdf_path
from tests.report.poppler import needs_poppler, pdf_text, render_page, squeeze
from tests.workbook.league_books import write_book
from tests.workbook.test_divisions_sheet import _players, tiered_results

pytestmark = needs_poppler


def _league(tmp_path, **sheets):
    path = write_book(tmp_path / "league.xlsx", tiered_results(), players=_players(),
                      divisions=[["Top", 150, ""], ["Bottom", -150, ""]], **sheets)
    assert main(["update", str(path)]) == 0
    return path


def test_the_wall_page_prints_each_division_level_with_its_pm_and_what_a_level_is(tmp_path, capsys):
    path = _league(tmp_path)
    pages = pdf_text(notice_pdf_path(path)).split("\f")
    wall = squeeze(pages[0])
    assert squeeze("Division levels") in wall
    # No game between the two: each keeps its starting level and the prior's ± against the levels' average,
    # Division spread * sqrt(1 - 1/2) (docs/model.md 1, Uncertainty).
    pm = f"{Settings().division_spread * math.sqrt(0.5):.0f}"
    assert squeeze(f"Top +150 ± {pm}; Bottom -150 ± {pm}") in wall  # strongest first
    assert squeeze(level_sentence(Settings())) in wall
    assert squeeze("the full list") in squeeze(pages[1])  # the wall page is still one page
    render_page(notice_pdf_path(path), "notice-board-levels-page1")
    # The Notice board sheet prints the same Notice: the same levels and sentence.
    cells = [c for row in openpyxl.load_workbook(path, read_only=True)["Notice board"].iter_rows(values_only=True)
             for c in row if isinstance(c, str)]
    assert f"Division levels: Top +150 ± {pm}; Bottom -150 ± {pm}" in cells
    assert level_sentence(Settings()) in cells


def test_fixed_levels_are_not_printed_as_if_the_games_had_set_them(tmp_path, capsys):
    path = _league(tmp_path, settings=[["Division spread", 0]])
    text = squeeze(pdf_text(notice_pdf_path(path)))
    assert squeeze("Division levels") not in text and squeeze("A division level is") not in text
