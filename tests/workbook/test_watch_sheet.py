"""The Watch list sheet: its sections, plain headers, what-to-do lines, and names kept as text."""
import csv
import dataclasses
import datetime as dt
import itertools
import shutil
import subprocess

import numpy as np
import pytest
from openpyxl import Workbook, load_workbook
from scipy.special import expit

from secretary.model.league import fit_league
from secretary.model.linkage import watch_list
from secretary.model.records import Player, Result, Settings
from secretary.workbook.schema import WATCH_SHEET
from secretary.workbook.watch_sheet import DIVISION_HEADERS, HELD_HEADERS, MATCH_HEADERS, POOL_HEADERS, write_watch

# Invented players; Valley's names start with the characters a spreadsheet reads as formulas.
VALLEY = ("=Ada Moss", "+Bram Hale", "-Cleo Penn", "@Dai Rook", "Edie Vance", "Finn Yarrow")
TOWN = ("Gwen Ashby", "Hal Brook", "Ines Cole", "Jude Dunn", "Kit Ellis", "Lyra Frost")
HILL = ("Otto Ince", "Pia Jarrow", "Quin Kell", "Rosa Lind")
ISLAND = ("Milo Grey", "Nell Hart")


def league():
    rng = np.random.default_rng(4)
    strength = {n: rng.normal(0, 0.5) for n in VALLEY + TOWN + HILL + ISLAND}
    strength[VALLEY[0]] = 4.0  # dominant, in a division that plays nobody else
    results = []
    day = dt.date(2025, 3, 1)
    cup = tuple(zip(TOWN, HILL)) + tuple(zip(TOWN[2:], HILL))  # Town and Hill meet in the cup
    for names, division in ((VALLEY, "Valley"), (TOWN, "Town"), (HILL, "Hill"), (ISLAND, "Town"), *((c, "Cup") for c in cup)):
        for _ in range(2):
            for a, b in itertools.combinations(names, 2):
                ga = int(rng.binomial(7, expit(strength[a] - strength[b])))
                results.append(Result(day, a, b, ga, 7 - ga, division))
                day += dt.timedelta(days=1)
    players = ([Player(n, "Valley") for n in VALLEY] + [Player(n, "Town") for n in TOWN + ISLAND]
               + [Player(n, "Hill") for n in HILL])
    return watch_list(fit_league(results, Settings(held_z=1.0), players=players, with_uncertainty=False), results)


def column_a(ws):
    return [ws.cell(r, 1).value for r in range(1, ws.max_row + 1)]


def header_row_after(ws, title):
    row = column_a(ws).index(title) + 2  # the heading, then its notes (column A only), then the headers (1-based)
    while ws.cell(row, 2).value is None:
        row += 1
    # Positions are kept (None for a gap): the what-to-do column sits at the far right in every section.
    return row, [ws.cell(row, c).value for c in range(1, ws.max_column + 1)]


@pytest.fixture(scope="module")
def watch():
    return league()


@pytest.fixture()
def saved(tmp_path, watch):
    wb = Workbook()
    wb.remove(wb.active)
    write_watch(wb, watch)
    path = tmp_path / "watch.xlsx"
    wb.save(path)
    return path


def test_sections_in_order_with_plain_headers(saved, watch):
    ws = load_workbook(saved)[WATCH_SHEET]
    titles = ["Separate pools", "Divisions", "Held back", "Suggested linking matches"]
    rows = [column_a(ws).index(t) for t in titles]
    assert rows == sorted(rows)  # the separate pool is called out first
    for title, headers in zip(titles, (POOL_HEADERS, DIVISION_HEADERS, HELD_HEADERS, MATCH_HEADERS)):
        found = header_row_after(ws, title)[1]
        assert [h for h in found if h is not None] == list(headers)
        assert found.index("What to do") == max(len(h) for h in (POOL_HEADERS, DIVISION_HEADERS, HELD_HEADERS,
                                                                  MATCH_HEADERS)) - 1  # one column for all
    assert ws["B2"].value.date() == watch.reference_date


def test_rows_carry_the_numbers_and_what_to_do(saved, watch):
    ws = load_workbook(saved)[WATCH_SHEET]
    row, headers = header_row_after(ws, "Divisions")
    assert watch.divisions[0].division == "Valley"  # the least linked division comes first
    first = {h: ws.cell(row + 1, c).value for c, h in enumerate(headers, start=1)}
    valley = watch.division("Valley")
    assert first["Division"] == "Valley" and first["Needs attention"] == "yes"
    assert first["How well linked"] == pytest.approx(valley.linked_share)
    assert ws.cell(row + 1, headers.index("How well linked") + 1).number_format == "0%"
    assert first["What to do"] == valley.what_to_do and "Valley" in first["What to do"]

    row, headers = header_row_after(ws, "Held back")
    held = {h: ws.cell(row + 1, c).value for c, h in enumerate(headers, start=1)}
    assert held["Player"] == "=Ada Moss" and held["Needs attention"] == "yes"
    assert "outside Valley" in held["What to do"]

    row, headers = header_row_after(ws, "Suggested linking matches")
    shown = [ws.cell(row + 1 + k, 1).value for k in range(len(watch.suggestions))]
    assert shown == [m.player_a for m in watch.suggestions] and len(shown) == Settings().linking_matches
    assert ws.cell(row + 1 + len(shown), 1).value is None


def test_a_capped_held_back_list_says_how_many_more(tmp_path, watch):
    wb = Workbook()
    write_watch(wb, dataclasses.replace(watch, held_not_shown=7))
    ws = wb[WATCH_SHEET]
    row, _ = header_row_after(ws, "Held back")
    assert ws.cell(row + 1 + len(watch.held), 1).value == "and 7 more held back (weaker cases, not listed)"
    assert column_a(ws).index("Suggested linking matches") > row + 1 + len(watch.held)


def test_formula_like_names_stay_text(saved):
    ws = load_workbook(saved)[WATCH_SHEET]
    cells = [c for row in ws.iter_rows() for c in row if isinstance(c.value, str) and c.value[:1] in "=+-@"]
    assert {c.value for c in cells} & set(VALLEY[:4])
    assert all(c.data_type == "s" for c in cells)


def test_empty_sections_say_so(tmp_path):
    from secretary.model.linkage import WatchList

    wb = Workbook()
    write_watch(wb, WatchList(None, (), (), (), ()))
    ws = wb[WATCH_SHEET]
    assert "Separate pools" not in column_a(ws)
    assert column_a(ws).count("Nothing to report.") == 3


@pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice (soffice) is not installed")
def test_libreoffice_opens_the_sheet_and_shows_names_as_written(saved, tmp_path):
    out = tmp_path / "csv"
    subprocess.run(["soffice", "--headless", f"-env:UserInstallation=file://{tmp_path}/lo", "--convert-to", "csv",
                    "--outdir", str(out), str(saved)], check=True, capture_output=True, timeout=120)
    with open(out / "watch.csv", newline="", encoding="utf-8", errors="replace") as fh:
        cells = [c for row in csv.reader(fh) for c in row]
    for name in VALLEY[:4]:
        assert name in cells  # not evaluated as a formula (which would show a number or an error)
    assert "Suggested linking matches" in cells and not any(c.startswith("Err:") or c == "#NAME?" for c in cells)
