"""Writing the Settings sheet from the window, and reading the Rating history back."""
from __future__ import annotations

import datetime as dt
import shutil

import openpyxl
import pytest

from secretary.errors import SecretaryError
from secretary.pipeline import DATA, check_workbook, rating_history, run_update, save_settings
from secretary.workbook.save import backups_of
from tests.workbook.league_books import good_results, write_book


def settings_sheet(path):
    wb = openpyxl.load_workbook(path)
    return [tuple(r) for r in wb["Settings"].iter_rows(values_only=True)]


def test_values_replace_rows_and_new_ones_are_added(tmp_path):
    path = write_book(tmp_path / "league.xlsx", settings=[["Longest race", 9], ["Note", "kept as it is"]])
    save_settings(path, {"longest_race": "11", "Centre": "1600", "league_name": "=Harbour Nights", "scale": ""})
    rows = settings_sheet(path)
    assert rows[:3] == [("Setting", "Value"), ("Longest race", 11), ("Note", "kept as it is")]
    assert ("Centre", 1600) in rows and ("League name", "=Harbour Nights") in rows
    assert not any(r[0] == "Scale" for r in rows)  # a blank default is not written
    settings = check_workbook(path).settings
    assert (settings.longest_race, settings.centre, settings.league_name) == (11, 1600.0, "=Harbour Nights")
    assert len(backups_of(path)) == 1  # saved safely: the previous version was kept


def test_blank_clears_a_value_and_a_missing_sheet_is_made(tmp_path):
    path = write_book(tmp_path / "league.xlsx", settings=[["Centre", 1400]])
    save_settings(path, {"centre": " "})
    assert settings_sheet(path)[1] == ("Centre", None)
    assert check_workbook(path).settings.centre == 1500.0
    bare = write_book(tmp_path / "bare.xlsx", good_results())
    save_settings(bare, {"paper": "letter"})
    assert settings_sheet(bare) == [("Setting", "Value"), ("Paper", "Letter")]


def test_bad_values_are_refused_before_anything_is_written(tmp_path):
    path = write_book(tmp_path / "league.xlsx", settings=[["Centre", 1400]])
    before = path.read_bytes()
    with pytest.raises(SecretaryError, match="Centre must be a number from 0 to 10000"):
        save_settings(path, {"centre": "lots", "paper": "A4"})
    assert path.read_bytes() == before


def test_rating_history_reads_each_update(tmp_path):
    path = tmp_path / "league.xlsx"
    shutil.copyfile(DATA / "demo-league.xlsx", path)
    assert rating_history(path) == {}
    first = run_update(path)
    from secretary.pipeline import append_results_csv

    append_results_csv(path, DATA / "demo-new-week.csv")
    second = run_update(path)
    history = rating_history(path)
    assert set(history) == {p.name for p in second.ratings}
    top = second.ratings[0]
    dates = [d for d, _ in history[top.name]]
    assert dates == sorted(dates) and dates[-1] == second.log.reference_date
    assert isinstance(dates[0], dt.date) and len(dates) == 2
    assert history[top.name][-1][1] == pytest.approx(top.rating)
    assert history[first.ratings[0].name][0][1] == pytest.approx(first.ratings[0].rating)
