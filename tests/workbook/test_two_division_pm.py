"""A division's two ± are named apart wherever they are shown, and each name is the quantity it claims.

The divisions table's "± of the level" (Ratings sheet, window, notice board) is the level's posterior SD
against the average of all the divisions; the watch list's "± of the gap" is that of the level minus the
other divisions' average.  Since ``L_d - mean(L) = (D - 1) / D * (L_d - mean of the others)``, the second
is exactly ``D / (D - 1)`` times the first (docs/model.md, section 4): through the real update on a workbook
written with openpyxl, three divisions, one of them weakly linked.
"""
from __future__ import annotations

import datetime as dt
import itertools

import openpyxl
import pytest

from secretary.gui import views
from secretary.pipeline import notice_pdf_path, run_update
from tests.report.poppler import needs_poppler, pdf_text, squeeze
from tests.workbook.league_books import D, write_book

DIVISIONS = {"Top": ("Ada Finch", "Bram Oak", "Cleo Marsh", "Dev Pike"),
             "Middle": ("Eve Stone", "Fay Reed", "Gus Hale", "Hal Crane"),
             "Valley": ("Ian Moss", "Jo Vale", "Kim Ford", "Lou Brent")}
CROSS = [("Ada Finch", "Eve Stone"), ("Bram Oak", "Fay Reed"), ("Cleo Marsh", "Gus Hale"),
         ("Dev Pike", "Hal Crane"), ("Eve Stone", "Ian Moss")]  # the Valley meets another division once


def _rows() -> list[list]:
    rows = []
    for week in range(3):
        day = D + dt.timedelta(days=7 * week)
        for division, players in DIVISIONS.items():
            for k, (a, b) in enumerate(itertools.combinations(players, 2)):
                rows.append([day, division, a, b, 5, (k + week) % 5, "", ""])
    for k, (a, b) in enumerate(CROSS):
        rows.append([D + dt.timedelta(days=1 + 3 * k), "Cup", a, b, 5, 3, "", ""])
    return rows


@pytest.fixture(scope="module")
def league(tmp_path_factory):
    players = [[p, d, None, None] for d, names in DIVISIONS.items() for p in names]
    path = write_book(tmp_path_factory.mktemp("pm") / "league.xlsx", _rows(), players=players)
    run_update(path)
    return path


def _rows_of(path, sheet):
    return list(openpyxl.load_workbook(path, read_only=True)[sheet].iter_rows(values_only=True))


def _table_after(rows, heading):
    """The header row holding ``heading`` and the rows under it (as dicts) down to a blank first cell."""
    start = next(k for k, r in enumerate(rows) if heading in r)
    header = rows[start]
    first = next(k for k, c in enumerate(header) if c)
    body = []
    for r in rows[start + 1:]:
        if r[first] is None:
            break
        body.append(dict(zip(header, r)))
    return header, body


def test_the_sheets_name_the_two_pm_apart_and_each_is_what_it_says(league):
    level_header, levels = _table_after(_rows_of(league, "Ratings"), "Division level")
    assert "± of the level" in level_header and "± of the gap" not in level_header
    watch = _rows_of(league, "Watch list")
    gap_header, gaps = _table_after(watch, "Gap to the rest")
    assert ("Gap to the rest", "± of the gap") == gap_header[3:5]
    assert "± of the level" not in gap_header and "Against the rest" not in gap_header
    of_level = {r["Division"]: r["± of the level"] for r in levels}
    of_gap = {r["Division"]: r["± of the gap"] for r in gaps}
    assert set(of_level) == set(of_gap) == set(DIVISIONS)
    for division in DIVISIONS:
        assert of_gap[division] == pytest.approx(of_level[division] * 3 / 2, rel=1e-6)
    # The sheet says what the gap and its ± are, and that the level's ± is another figure.
    notes = [c for r in watch for c in r if isinstance(c, str)]
    assert any(n.startswith("± of the gap: how uncertain the gap to the rest is") and "± of the level" in n
               for n in notes)


def test_suggested_matches_quote_the_pm_of_the_gap(league):
    header, matches = _table_after(_rows_of(league, "Watch list"), "Player A")
    assert {"± of the gap now", "± of the gap after"} <= set(header)
    assert matches and all(m["Ties in"] == "Valley" for m in matches)
    first = matches[0]
    assert first["What to do"].endswith(
        f"the gap between Valley and the rest of the league would then be known to "
        f"±{first['± of the gap after']:.0f} points instead of ±{first['± of the gap now']:.0f}.")


def test_the_window_headings_and_tooltips_tell_the_two_apart():
    level = {c.heading: c.tip for c in views.LEVEL_COLUMNS}
    division = {c.heading: c.tip for c in views.DIVISION_COLUMNS}
    suggestion = {c.heading: c.tip for c in views.SUGGESTION_COLUMNS}
    assert "± of the level" in level and "Watch list's ± of the gap" in level["± of the level"]
    assert {"Gap to the rest", "± of the gap"} <= set(division)
    assert "Not the ± of the level on the Ratings sheet" in division["± of the gap"]
    assert "± of the gap now → after" in suggestion
    assert not {"±", "Against the rest"} & (set(level) | set(division) | set(suggestion))


@needs_poppler
def test_the_notice_board_names_its_pm_as_the_level_s(league):
    wall = squeeze(pdf_text(notice_pdf_path(league)).split("\f")[0])
    assert squeeze("the ± after it (the ± of the level) is how uncertain it is.") in wall
    assert squeeze("± of the gap") not in wall
