"""A league with doubles frames through the real weekly update: every sheet and the printouts account for them."""
from __future__ import annotations

import datetime as dt
import shutil
import subprocess

import openpyxl
import pytest

from secretary.cli import main
from secretary.model.league import fit_league
from secretary.model.records import Result, Settings
from tests.workbook.league_books import FIXTURES_HEADERS, RESULTS_HEADERS, write_book

WEEK1 = dt.date(2026, 3, 3)
WEEK2 = WEEK1 + dt.timedelta(days=7)
HEADERS = RESULTS_HEADERS + ("Partner A", "Partner B")
# Ann and Bea win a doubles frame together in week 1; in week 2 Bea alone beats strong players and Ann
# does not play, so Bea is re-rated up and the pair's win counts for less of Ann's doing.
WEEK1_ROWS = [
    [WEEK1, "Premier", "Ann Ash", "Cal Cole", 4, 1, "Team night", "", "Bea Bond", "Dot Dale"],
    [WEEK1, "Premier", "Cal Cole", "Dot Dale", 2, 2, "", "", None, None],
    [WEEK1, "Premier", "Eve Egan", "Cal Cole", 2, 2, "", "", None, None],
    [WEEK1, "Premier", "Eve Egan", "Dot Dale", 2, 2, "", "", None, None],
]
WEEK2_ROWS = [
    [WEEK2, "Premier", "Bea Bond", "Eve Egan", 5, 0, "", "", None, None],
    [WEEK2, "Premier", "Bea Bond", "Cal Cole", 5, 1, "", "", None, None],
    [WEEK2, "Premier", "Cal Cole", "Eve Egan", 3, 2, "Team night", "", "Dot Dale", "Fay Fenn"],
]


def table(ws) -> tuple[tuple, list[tuple]]:
    rows = [r for r in ws.iter_rows(values_only=True) if any(v is not None for v in r)]
    return rows[0], rows[1:]


def results(rows) -> list[Result]:
    return [Result(r[0], r[2], r[3], r[4], r[5], r[1], r[6], False, 0, r[8] or "", r[9] or "") for r in rows]


@pytest.fixture(scope="module")
def updated(tmp_path_factory):
    folder = tmp_path_factory.mktemp("doubles")
    path = write_book(folder / "league.xlsx", WEEK1_ROWS, results_headers=HEADERS,
                      fixtures_headers=FIXTURES_HEADERS + ("Partner A", "Partner B"),
                      fixtures=[[WEEK2 + dt.timedelta(days=7), "Ann Ash", "Cal Cole", None, None, "Bea Bond", "Eve Egan"]])
    assert main(["update", str(path)]) == 0
    wb = openpyxl.load_workbook(path)
    for row in WEEK2_ROWS:
        wb["Results"].append(row)
    wb.save(path)
    assert main(["update", str(path)]) == 0
    return path


def test_ratings_count_doubles_games_apart(updated):
    header, rows = table(openpyxl.load_workbook(updated)["Ratings"])
    assert header[5] == "Weighted games" and header[-1] == "Doubles games"
    fit = fit_league(results(WEEK1_ROWS + WEEK2_ROWS), Settings())
    by_name = {r[1]: r for r in rows}
    for name in fit.names:
        assert by_name[name][5] == pytest.approx(fit.games[fit.index(name)], abs=1e-9)
        assert by_name[name][-1] == pytest.approx(fit.doubles_games[fit.index(name)], abs=1e-9)
        assert by_name[name][3] == pytest.approx(fit.rating(name), abs=1e-9)
    # Ann played one doubles frame of 5 games and nothing else; Fay one of 5 (weighted by age)
    assert by_name["Ann Ash"][-1] == pytest.approx(by_name["Ann Ash"][5]) and by_name["Ann Ash"][-1] < 5


def test_why_it_changed_adds_up_and_names_the_re_rated_partner(updated):
    header, rows = table(openpyxl.load_workbook(updated)["Why it changed"])
    for row in rows:
        values = dict(zip(header, row))
        if values["Why"].startswith("First rating"):  # new this update: a first rating, no change
            assert values["Before"] is None and values["Change"] is None
            continue
        assert values["After"] - values["Before"] == values["Change"]
        assert sum(values[k] for k in ("Own results", "Opponents re-rated", "Group shift", "Corrections")) == values["Change"]
    ann = dict(zip(header, next(r for r in rows if r[0] == "Ann Ash")))
    assert ann["Opponents re-rated"] < 0
    assert "Your doubles partner Bea Bond did better elsewhere" in ann["Why"]


def test_notice_board_lists_the_weeks_doubles_on_the_sheet_and_the_pdf(updated):
    wanted = "Doubles this week: Cal Cole & Dot Dale 3-2 Eve Egan & Fay Fenn."
    texts = [r[0] for r in openpyxl.load_workbook(updated)["Notice board"].iter_rows(values_only=True)]
    assert wanted in texts
    if shutil.which("pdftotext") is None:
        pytest.skip("poppler's pdftotext is not installed")
    pdf = updated.with_name(f"{updated.stem} - notice board.pdf")
    text = " ".join(subprocess.run(["pdftotext", str(pdf), "-"], capture_output=True, text=True, check=True).stdout.split())
    assert wanted in text


def test_the_wall_page_lists_the_weeks_doubles(updated):
    """Page one, the page for the wall, names the week's doubles results (week 2's one doubles row)."""
    if shutil.which("pdftotext") is None:
        pytest.skip("poppler's pdftotext is not installed")
    [row] = [r for r in WEEK2_ROWS if r[8]]
    wanted = f"Doubles this week: {row[2]} & {row[8]} {row[4]}-{row[5]} {row[3]} & {row[9]}."
    pdf = updated.with_name(f"{updated.stem} - notice board.pdf")
    page_one = subprocess.run(["pdftotext", "-f", "1", "-l", "1", str(pdf), "-"], capture_output=True, text=True,
                              check=True).stdout
    assert wanted in " ".join(page_one.split())
    assert "Biggest movers this week" in page_one  # the movers still fit beside it


def test_a_doubles_fixture_gets_a_chance_and_a_fair_race(updated):
    header, rows = table(openpyxl.load_workbook(updated)["Fixtures"])
    values = dict(zip(header, rows[0]))
    assert 0 < values["Chance A"] < 1 and values["Fair race A"] >= 1 and values["Fair race B"] >= 1
    from secretary.model.fixtures import forecast
    from secretary.model.records import Fixture

    fit = fit_league(results(WEEK1_ROWS + WEEK2_ROWS), Settings())
    fc = forecast(Fixture(None, "Ann Ash", "Cal Cole", None, None, 0, "Bea Bond", "Eve Egan"), fit)
    assert values["Chance A"] == pytest.approx(fc.race_chance, abs=1e-12)
    assert (values["Fair race A"], values["Fair race B"]) == (fc.fair_race_a, fc.fair_race_b)


def test_the_handicap_card_names_both_players_of_each_side(updated):
    if shutil.which("pdftotext") is None:
        pytest.skip("poppler's pdftotext is not installed")
    pdf = updated.with_name(f"{updated.stem} - handicap card.pdf")
    text = " ".join(subprocess.run(["pdftotext", str(pdf), "-"], capture_output=True, text=True, check=True).stdout.split())
    assert "Ann Ash & Bea Bond races to" in text and "Cal Cole & Eve Egan races to" in text
    assert "v Cal Cole" in text and "& Eve Egan" in text


def test_a_league_of_doubles_only_updates_and_explains(tmp_path):
    # No singles at all: every per-player sum over the (empty) singles pairs must still be a float sum.
    rows = [[WEEK1, "Premier", "Ann Ash", "Cal Cole", 3, 1, "Team night", "", "Bea Bond", "Dot Dale"],
            [WEEK1, "Premier", "Ann Ash", "Bea Bond", 2, 3, "Team night", "", "Cal Cole", "Dot Dale"]]
    path = write_book(tmp_path / "league.xlsx", rows, results_headers=HEADERS)
    assert main(["update", str(path)]) == 0
    wb = openpyxl.load_workbook(path)
    wb["Results"].append([WEEK2, "Premier", "Bea Bond", "Ann Ash", 3, 0, "Team night", "", "Cal Cole", "Dot Dale"])
    wb.save(path)
    assert main(["update", str(path)]) == 0
    header, rows = table(openpyxl.load_workbook(path)["Why it changed"])
    for row in rows:
        values = dict(zip(header, row))
        assert sum(values[k] for k in ("Own results", "Opponents re-rated", "Group shift", "Corrections")) == values["Change"]
    assert {dict(zip(header, r))["Player"] for r in rows} == {"Ann Ash", "Bea Bond", "Cal Cole", "Dot Dale"}
