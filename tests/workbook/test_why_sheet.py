"""The `Why it changed` sheet: shown rows add up, sorted by division then size of change, names kept as text."""
import csv
import io
import shutil
import subprocess

import pytest
from openpyxl import Workbook, load_workbook

from dataclasses import replace

from secretary.model.breakdown import explain_changes, shown_round
from secretary.model.notice import build_notice, division_order
from secretary.workbook.schema import WHY_SHEET
from secretary.workbook.why_sheet import WHY_HEADERS, write_why
from tests.invented_league import SETTINGS, players, two_updates

PARTS = slice(5, 9)  # Own results .. Corrections


@pytest.fixture(scope="module")
def updates():
    return two_updates()


def saved(tmp_path, breakdown, name="why.xlsx"):
    wb = Workbook()
    wb.remove(wb.active)
    write_why(wb, breakdown, SETTINGS)
    path = tmp_path / name
    wb.save(path)
    return path


def data_rows(ws):
    return [list(r) for r in ws.iter_rows(min_row=2, max_col=len(WHY_HEADERS), values_only=True) if r[0] is not None]


def test_every_row_adds_up_and_matches_the_published_rating(tmp_path, updates):
    update = updates[1]
    ws = load_workbook(saved(tmp_path, update.breakdown))[WHY_SHEET]
    assert [c.value for c in ws[1]] == list(WHY_HEADERS)
    rows = [r for r in data_rows(ws) if isinstance(r[2], int)]
    new = {p.name for p in update.breakdown.players if p.is_new}
    assert len(rows) + len(new) == len(update.breakdown.players) == len(update.ratings)
    published = {p.name: p.rating for p in update.ratings}
    for name, _, before, after, *rest in (r for r in data_rows(ws) if r[0] in new):
        assert before is None and set(rest[:5]) == {None}, name  # a first rating: no Before, no change
        assert after == shown_round(published[name]), name
    for name, _, before, after, change, *rest in rows:
        parts = rest[:4]
        assert all(isinstance(v, int) for v in (before, after, change, *parts)), name
        assert after - before == change, name
        assert sum(parts) == change, name  # the four shown parts add up to the shown change
        assert after == shown_round(published[name]), name  # the same figure as the published rating


def test_sorted_by_division_then_largest_change(tmp_path, updates):
    update = updates[1]
    ws = load_workbook(saved(tmp_path, update.breakdown))[WHY_SHEET]
    rows = [r for r in data_rows(ws) if isinstance(r[2], int)]
    order = division_order((p.division, p.rating) for p in update.ratings)
    divisions = [r[1] for r in rows]
    assert [order[d] for d in divisions] == sorted(order[d] for d in divisions)
    assert len({d for d in divisions}) == 3
    for division in set(divisions):
        sizes = [abs(r[4]) for r in rows if r[1] == division]
        assert sizes == sorted(sizes, reverse=True)


def test_sheet_format_freeze_filter_and_text_names(tmp_path, updates):
    update = updates[1]
    ws = load_workbook(saved(tmp_path, update.breakdown))[WHY_SHEET]
    assert ws.freeze_panes == "B2"
    assert len(ws.tables) == 1  # an Excel table: filter buttons on every header
    for col in range(5, 10):  # Change and the four parts
        assert ws.cell(2, col).number_format == "+0;-0;0"
    names = {ws.cell(r, 1).value: ws.cell(r, 1) for r in range(2, ws.max_row + 1)}
    for formula_like in ("=Dev Pike", "+Hal Brook", "@Jude Dunn"):
        assert names[formula_like].data_type == "s"  # text, never a formula
    sentences = {r[0]: r[9] for r in data_rows(ws)}
    for pc in update.breakdown.players:
        assert sentences[pc.name] == pc.sentence


def test_first_update_explains_instead_of_an_empty_table(tmp_path, updates):
    ws = load_workbook(saved(tmp_path, updates[0].breakdown))[WHY_SHEET]
    text = " ".join(str(c.value) for row in ws.iter_rows() for c in row if c.value is not None)
    assert "first ratings" in text
    assert "Own results" in text and "Corrections" in text
    assert not ws.tables


def test_players_no_longer_rated_are_listed_below(tmp_path, updates):
    first, second = updates
    gone = "Søren Øby"
    rows = [replace(r, void=True) if gone in (r.player_a, r.player_b) else r for r in second.results]
    breakdown = explain_changes(rows, first.published, SETTINGS, players())
    assert [name for name, _ in breakdown.removed_players] == [gone]
    ws = load_workbook(saved(tmp_path, breakdown))[WHY_SHEET]
    below = [ws.cell(r, 1).value for r in range(len(breakdown.players) + 2, ws.max_row + 1)]
    assert any(isinstance(v, str) and v.startswith("No longer rated") and gone in v for v in below)
    assert gone in build_notice(breakdown, second.ratings, SETTINGS).removed


@pytest.mark.slow
@pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice (soffice) not installed")
def test_displayed_figures_add_up_in_a_spreadsheet_program(tmp_path, updates):
    """LibreOffice shows the numbers as a reader sees them (signed format): each row still adds up."""
    path = saved(tmp_path, updates[1].breakdown)
    subprocess.run(["soffice", "--headless", f"-env:UserInstallation=file://{tmp_path}/lo", "--convert-to",
                    "csv:Text - txt - csv (StarCalc):44,34,76,1,,0,false,true,true", "--outdir", str(tmp_path),
                    str(path)], check=True, capture_output=True, timeout=120)
    rows = list(csv.reader(io.open(tmp_path / "why.csv", encoding="utf-8")))
    assert rows[0] == list(WHY_HEADERS)
    shown = [r for r in rows[1:] if r and r[4]]
    assert len(shown) == sum(not p.is_new for p in updates[1].breakdown.players)  # a first rating: no Change
    for r in shown:
        change, parts = int(r[4]), [int(v) for v in r[PARTS]]
        assert (r[4].startswith("+") or change <= 0)  # gains are shown with their plus sign
        assert sum(parts) == change == int(r[3]) - int(r[2]), r
