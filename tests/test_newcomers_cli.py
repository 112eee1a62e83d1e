"""Fixtures with players who have no results, through the real command line on a workbook written by openpyxl:
the Fixtures sheet's chance and fair race are the mixture over the divisions (worked out independently in
tests/newcomer_league.py), and the sheet, `secretary fixtures` and the handicap card say the same note."""
from __future__ import annotations

import subprocess
import sys

import openpyxl
import pytest

from secretary.model.races import fair_race_predictive, predictive_race_chance
from secretary.pipeline import handicap_pdf_path, starting_levels
from secretary.workbook.read import read_workbook
from tests import newcomer_league as newcomers
from tests.report.poppler import pdf_text, squeeze
from tests.workbook.league_books import FIXTURES_HEADERS, write_book

COMMAND = [sys.executable, "-m", "secretary.cli"]
SPREAD = 250.0  # Division spread, points: free levels


def league_book(path):
    """The newcomers' league as a workbook: Results, Players (two with no results), Settings, Fixtures."""
    rows = [[r.date, r.division, r.player_a, r.player_b, r.games_a, r.games_b, "", ""] for r in newcomers.results()]
    fixtures = [[f.date, f.player_a, f.player_b, None, None, f.partner_a or None, f.partner_b or None]
                for f in newcomers.fixtures()]
    return write_book(path, rows, players=[[p.name, p.division, None, None] for p in newcomers.players()],
                      settings=[["Division spread", SPREAD]], fixtures=fixtures,
                      fixtures_headers=FIXTURES_HEADERS + ("Partner A", "Partner B"))


@pytest.fixture(scope="module")
def updated(tmp_path_factory):
    path = league_book(tmp_path_factory.mktemp("newcomers") / "league.xlsx")
    done = subprocess.run(COMMAND + ["update", str(path)], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    return path


def expected(path):
    """Per fixture: the predictive chance at the usual race, the fair race and its chance, from the same fit
    and the enumerated mixture."""
    from secretary.model.league import fit_league

    book = read_workbook(path)
    settings = book.settings
    assert settings.division_spread == SPREAD
    fit = fit_league(book.results, settings, players=book.players, starting_levels=starting_levels(book))
    out = []
    for fixture in newcomers.fixtures():
        mean, var = newcomers.by_enumeration(fit, fixture, newcomers.shares())
        fair = fair_race_predictive(mean, var, settings.longest_race, settings.shortest_race, settings.usual_race)
        out.append((predictive_race_chance(mean, var, settings.usual_race, settings.usual_race), fair))
    return out


def test_the_fixtures_sheet_holds_the_mixtures_chance_and_fair_race(updated):
    wb = openpyxl.load_workbook(updated, read_only=True)
    rows = list(wb["Fixtures"].iter_rows(values_only=True))
    wb.close()
    head, body = rows[0], rows[1:]
    col = {h: head.index(h) for h in ("Chance A", "Fair race A", "Fair race B", "Forecast note")}
    wanted = expected(updated)
    assert len(body) == len(wanted) == 4
    for row, (chance, fair) in zip(body, wanted):
        assert row[col["Chance A"]] == pytest.approx(chance, abs=1e-9)
        assert (row[col["Fair race A"]], row[col["Fair race B"]]) == fair
    notes = [row[col["Forecast note"]] for row in body]
    assert notes[0] == notes[3] == ("Pia Wren has no results and no division on the Players sheet: this chance is "
                                    "a rough guess; add their division there for a better one")
    assert notes[1].startswith("Pia Wren and Otto Vane have no results and no division on the Players sheet")
    assert notes[2] == "Nell Quarry is not rated yet: this chance is a rough guess"
    # The same words on the handicap card the update printed.
    card = squeeze(pdf_text(handicap_pdf_path(updated)))
    assert all(squeeze(note) in card for note in notes)


def test_secretary_fixtures_prints_the_same_chances_and_notes(updated):
    done = subprocess.run(COMMAND + ["fixtures", str(updated)], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    lines = [ln.strip() for ln in done.stdout.splitlines() if " v " in ln and "fair race" in ln]
    assert len(lines) == 4
    for line, (chance, fair), fixture in zip(lines, expected(updated), newcomers.fixtures()):
        assert f"{fixture.label_a} {chance:.0%} to win a race" in line
        assert f"fair race {fair[0]}-{fair[1]}" in line
    assert lines[0].endswith("(Pia Wren has no results and no division on the Players sheet: this chance is a "
                             "rough guess; add their division there for a better one)")
    assert "Otto Vane have no results and no division" in lines[1]
    assert lines[2].endswith("(Nell Quarry is not rated yet: this chance is a rough guess)")

