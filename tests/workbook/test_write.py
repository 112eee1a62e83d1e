"""The tool's sheets: Ratings, Rating history and its chart, Update log, Problems."""
import datetime as dt
import re
import zipfile

from openpyxl import Workbook, load_workbook

from secretary.model.records import PlayerRating, Problem, Settings, UpdateLog
from secretary.workbook.schema import HISTORY_SHEET, LOG_SHEET, PROBLEMS_SHEET, RATINGS_SHEET
from secretary.workbook.write import (
    FEW_GAMES_NOTE,
    NEW_NOTE,
    RATINGS_HEADERS,
    settings_text,
    write_history,
    write_log,
    write_problems,
    write_ratings,
)


def _player(name, rating, *, games=20.0, change=1.5, division="Premier", is_new=False):
    return PlayerRating(name, division, rating, 60.0, games, games / 2, dt.date(2026, 3, 12),
                        change=change, is_new=is_new)


def _book():
    wb = Workbook()
    wb.active.title = "Results"
    return wb


def _saved(wb, tmp_path, name="out.xlsx"):
    path = tmp_path / name
    wb.save(path)
    return path


def _rows(ws):
    return [list(r) for r in ws.iter_rows(values_only=True)]


def test_ratings_ranked_best_first_with_shared_ranks_and_plain_notes(tmp_path):
    ratings = [
        _player("Cleo Marsh", 1480.2),
        _player("=SUM(A1)", 1612.4, change=-3.25),
        _player("Bram Oak", 1550.3),
        _player("Ada Finch", 1549.8, games=4.0, change=None, is_new=True),
    ]
    wb = _book()
    write_ratings(wb, ratings, Settings(few_games=10.0))
    ws = load_workbook(_saved(wb, tmp_path))[RATINGS_SHEET]
    rows = _rows(ws)
    assert tuple(rows[0]) == RATINGS_HEADERS
    assert [r[:2] for r in rows[1:]] == [[1, "=SUM(A1)"], [2, "Bram Oak"], [2, "Ada Finch"], [4, "Cleo Marsh"]]
    ada = rows[3]
    assert ada[6] is None  # no change for a new player ...
    assert ada[8] == f"{NEW_NOTE}; {FEW_GAMES_NOTE}"  # ... said in words instead
    assert rows[1][3] == 1612.4 and rows[1][6] == -3.25
    assert rows[1][7] == dt.datetime(2026, 3, 12)
    assert ws["B2"].data_type == "s"
    formats = {h: ws.cell(2, i + 1).number_format for i, h in enumerate(RATINGS_HEADERS)}
    assert (formats["Rating"], formats["±"], formats["Weighted games"], formats["Last played"]) == (
        "0", "0", "0.0", "yyyy-mm-dd")
    assert len(ws.tables) == 1 and ws.freeze_panes == "C2"


def test_history_adds_a_column_per_date_and_overwrites_the_same_date(tmp_path):
    wb = _book()
    first = [_player(f"P{i:02d}", 1500 + 10 * i) for i in range(12)]
    write_history(wb, dt.date(2026, 3, 5), first)
    path = _saved(wb, tmp_path)
    wb = load_workbook(path)
    second = [_player(f"P{i:02d}", 1400 + 10 * i) for i in range(1, 12)]  # P00 no longer rated
    write_history(wb, dt.date(2026, 3, 12), [_player("P01", 9999)])  # replaced just below
    write_history(wb, dt.date(2026, 3, 12), second)
    path = _saved(wb, tmp_path, "second.xlsx")
    ws = load_workbook(path)[HISTORY_SHEET]
    rows = _rows(ws)
    assert rows[0] == ["Player", "2026-03-05", "2026-03-12"]
    assert rows[1] == ["P11", 1610, 1510]
    assert rows[-1] == ["P00", 1500, None]  # kept, with a gap for the date it was not rated
    assert len(rows) == 13 and 9999 not in [r[2] for r in rows]


def test_history_chart_draws_the_top_ten_with_straight_lines(tmp_path):
    wb = _book()
    for week in range(3):
        write_history(wb, dt.date(2026, 3, 5) + dt.timedelta(weeks=week),
                      [_player(f"P{i:02d}", 1500 + 10 * i + week) for i in range(12)])
    path = _saved(wb, tmp_path)
    with zipfile.ZipFile(path) as z:
        charts = [n for n in z.namelist() if n.startswith("xl/charts/chart")]
        assert len(charts) == 1  # the old chart went with the old sheet
        xml = z.read(charts[0]).decode()
    assert "<lineChart>" in xml
    assert xml.count("<ser>") == 10
    # The XML writer may or may not put a space before "/>" (lxml does not).
    assert len(re.findall(r'<smooth val="0"\s*/>', xml)) == 10 and 'smooth val="1"' not in xml
    assert re.findall(r"<tx><strRef><f>'Rating history'!A(\d+)</f>", xml) == [str(r) for r in range(2, 12)]
    assert xml.count("<cat><strRef><f>'Rating history'!$B$1:$D$1</f>") == 10
    assert len(load_workbook(path)[HISTORY_SHEET]._charts) == 1


def test_update_log_appends_across_saves(tmp_path):
    wb = _book()
    entry = UpdateLog("2026-03-05T20:00:00+00:00", "0.1.0", dt.date(2026, 3, 5), 120, 118, 120, 0, 0,
                      Settings(), ("2 players not in Players",))
    write_log(wb, entry)
    wb = load_workbook(_saved(wb, tmp_path))
    write_log(wb, UpdateLog("2026-03-12T20:00:00", "0.1.0", dt.date(2026, 3, 12), 130, 128, 10, 1, 0,
                            Settings(scale=350.0)))
    ws = load_workbook(_saved(wb, tmp_path, "second.xlsx"))[LOG_SHEET]
    rows = _rows(ws)
    assert len(rows) == 3
    assert rows[1][:8] == [dt.datetime(2026, 3, 5, 20), "0.1.0", dt.datetime(2026, 3, 5), 120, 118, 120, 0, 0]
    assert rows[1][9] == "2 players not in Players" and rows[2][9] is None
    assert "Scale 350" in rows[2][8] and "Centre 1500" in rows[2][8]


def test_settings_text_is_short_and_names_every_setting_in_use():
    text = settings_text(Settings(league_name="Millbrook", skill_spread=200, half_life_days=365))
    assert text.startswith("Centre 1500; Scale 400; Skill spread 200; Half-life (days) 365")
    assert "League name Millbrook" in text
    assert "League name" not in settings_text(Settings())


def test_problems_sheet_lists_errors_first_and_goes_when_there_are_none(tmp_path):
    problems = [
        Problem("warning", "Results", 7, "Player A", "Bram  Oak", "not in Players", "Add the player."),
        Problem("error", "Results", 9, "Games A", "=2+1", "not a whole number", "Type the games won."),
    ]
    wb = _book()
    write_problems(wb, problems)
    ws = load_workbook(_saved(wb, tmp_path))[PROBLEMS_SHEET]
    rows = _rows(ws)
    assert rows[0] == ["Kind", "Sheet", "Row", "Column", "Found", "Problem", "What to do"]
    assert rows[1] == ["Error", "Results", 9, "Games A", "=2+1", "not a whole number", "Type the games won."]
    assert rows[2][0] == "Warning"
    write_problems(wb, [])
    assert PROBLEMS_SHEET not in wb.sheetnames
