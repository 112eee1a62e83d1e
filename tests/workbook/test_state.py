"""The very-hidden state sheet: exact round trip, tolerance of damage, and 100 000 result rows."""
import dataclasses
import datetime as dt
import hashlib
import re

import pytest
from openpyxl import Workbook, load_workbook

from secretary.model.records import PublishedState, Settings, TuneCheck
from secretary.workbook.schema import STATE_SHEET
from secretary.workbook.state import read_state, write_state


def _digest(*parts):
    return hashlib.blake2b("|".join(map(str, parts)).encode(), digest_size=8).hexdigest()


def _state(n_rows=5, n_players=4, settings=Settings()):
    names = ["=SUM(A1)", "Zoë Ōtake", "-Tom-", "Ann \"Ace\" Lee", *[f"Player {i}" for i in range(n_players)]]
    return PublishedState(
        updated_at="2026-03-14T21:05:00+00:00",
        reference_date=dt.date(2026, 3, 12),
        ratings={n: 1500 + (i + 1) / 3 + 1e-9 / 7 for i, n in enumerate(names)},  # 17 significant digits
        sds={n: 40 + (i + 1) / 7 for i, n in enumerate(names)},
        rows=tuple((_digest("id", i), _digest("fp", i)) for i in range(n_rows)),
        settings=settings,
    )


def _round_trip(state, tmp_path):
    wb = Workbook()
    wb.active.title = "Results"
    write_state(wb, state)
    path = tmp_path / "state.xlsx"
    wb.save(path)
    return load_workbook(path)


def test_round_trip_is_exact_and_sheet_is_very_hidden(tmp_path):
    settings = Settings(centre=1200.0, skill_spread=175.5, half_life_days=0.0, longest_race=11,
                        date_order="month-first", league_name="Millbrook =Cue= League", paper="Letter")
    state = _state(settings=settings)
    wb = _round_trip(state, tmp_path)
    back = read_state(wb)
    assert back == state  # floats compared exactly: full precision kept
    assert back.settings == settings
    assert wb[STATE_SHEET].sheet_state == "veryHidden"
    assert wb.active.title == "Results"


def test_absent_state_is_none():
    assert read_state(Workbook()) is None


@pytest.mark.parametrize("damage", ["cut", "edited", "cleared", "wrong_format", "bad_number", "bad_date"])
def test_damaged_state_is_none_without_raising(tmp_path, damage):
    wb = _round_trip(_state(), tmp_path)
    ws = wb[STATE_SHEET]
    text = ws["B3"].value
    if damage == "cut":
        ws["B3"].value = text[: len(text) // 2]
    elif damage == "edited":
        ws["B3"].value = text.replace('"rows"', '"rowz"')
    elif damage == "cleared":
        ws.delete_rows(1, ws.max_row)
    elif damage == "wrong_format":
        ws["B3"].value = text.replace('"format":1', '"format":99')
    elif damage == "bad_number":
        ws["B3"].value = re.sub(r"\[1500\.3333\d*,", '["x",', text, count=1)
    elif damage == "bad_date":
        ws["B3"].value = text.replace("2026-03-12", "2026-13-12")
    assert ws["B3"].value != text or damage == "cleared"
    assert read_state(wb) is None


def test_settings_missing_from_an_older_state_fall_back_to_defaults(tmp_path):
    wb = _round_trip(_state(settings=Settings(centre=1000.0)), tmp_path)
    ws = wb[STATE_SHEET]
    ws["B3"].value = ws["B3"].value.replace('"few_games":10.0', '"unknown_setting":3')
    back = read_state(wb)
    assert back.settings == Settings(centre=1000.0)


def test_refuses_to_publish_a_rating_that_is_not_a_number():
    state = _state()
    bad = PublishedState(state.updated_at, state.reference_date, {**state.ratings, "X": float("nan")},
                         {**state.sds, "X": 1.0}, state.rows)
    with pytest.raises(ValueError):
        write_state(Workbook(), bad)


def test_hundred_thousand_rows_round_trip_compactly(tmp_path):
    state = _state(n_rows=100_000, n_players=3000)
    wb = _round_trip(state, tmp_path)
    back = read_state(wb)
    assert back == state
    assert wb[STATE_SHEET].max_row < 200  # compact: about 800 result rows per cell


def test_the_tune_check_round_trips_and_a_damaged_one_is_dropped(tmp_path):
    check = TuneCheck(dt.date(2026, 3, 12), Settings(skill_spread=60.0), 0.0051234567890123, 679.0, 150.0)
    state = dataclasses.replace(_state(), tune_check=check)
    assert read_state(_round_trip(state, tmp_path)) == state
    wb = Workbook()
    write_state(wb, state)
    ws = wb[STATE_SHEET]
    ws.cell(3, 2).value = ws.cell(3, 2).value.replace('"gain":0.0051234567890123', '"gain":"x"')
    back = read_state(wb)
    assert back is not None and back.tune_check is None and back.ratings == state.ratings
