"""The very-hidden state sheet: exact round trip, tolerance of damage, and 100 000 result rows."""
import dataclasses
import datetime as dt
import hashlib
import json
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


def _week_before(rows, rng):
    """Last update's rows against this one's: most the same, some missing, edited, repeated or moved."""
    out = []
    for pair in rows:
        roll = rng.random()
        if roll < 0.05:
            continue
        out.append((pair[0], _digest("edited", pair)) if roll < 0.08 else pair)
        if roll > 0.98:
            out.append(rng.choice(rows))
    out[len(out) // 3:len(out) // 3] = [(_digest("old id", i), _digest("old fp", i)) for i in range(3)]  # gone since
    return tuple(out)


@pytest.mark.parametrize("seed", range(4))
def test_the_update_befores_rows_as_runs_are_its_rows(seed):
    from random import Random

    from secretary.workbook.state import row_runs, rows_from_runs

    rng = Random(seed)
    like = tuple((_digest("id", i % 900), _digest("fp", i)) for i in range(3000))  # identities repeat
    for rows in (_week_before(like, rng), like, (), like[::-1], tuple(rng.sample(like, 200)) + like[:5]):
        runs = row_runs(rows, like)
        assert rows_from_runs(runs, like) == rows
        assert all(isinstance(a, str) or like[a:b] for a, b in runs)  # no empty run
    assert len(row_runs(like[:2000] + like[2100:], like)) == 2  # the usual week: two runs


def test_the_update_before_round_trips_through_its_runs(tmp_path):
    now = _state(n_rows=5000)
    before = dataclasses.replace(_state(n_rows=4000), rows=now.rows[100:4100] + (("gone", "row"),))
    state = dataclasses.replace(now, previous=before)
    wb = _round_trip(state, tmp_path)
    assert read_state(wb) == state
    text = "".join(v for v in (c.value for c in wb[STATE_SHEET]["B"]) if isinstance(v, str))
    assert text.count(now.rows[200][1]) == 1  # a row the two updates share is written once
    # A record written before the runs (the update before's rows in full) still reads.
    ws = wb[STATE_SHEET]
    old = text.replace('"row_runs":[[100,4100],["gone","row"]]',
                       '"rows":' + json.dumps([list(pair) for pair in before.rows], separators=(",", ":")))
    assert old != text
    for row in range(3, ws.max_row + 1):
        ws.cell(row, 2).value = None
    for k, start in enumerate(range(0, len(old), 30000)):
        ws.cell(3 + k, 1).value, ws.cell(3 + k, 2).value = "data", old[start:start + 30000]
    assert read_state(wb) == state


def test_a_damaged_run_is_a_damaged_state(tmp_path):
    state = dataclasses.replace(_state(n_rows=50), previous=_state(n_rows=40))
    wb = _round_trip(state, tmp_path)
    ws = wb[STATE_SHEET]
    text = ws["B3"].value
    for damaged in ('"row_runs":[[0,51]]', '"row_runs":[[-1,40]]', '"row_runs":[[0,true]]', '"row_runs":[[0,"x"]]'):
        ws["B3"].value = text.replace('"row_runs":[[0,40]]', damaged)
        assert ws["B3"].value != text and read_state(wb) is None


def test_rows_not_all_text_read_as_text_as_before(tmp_path):
    state = _state(n_rows=3)
    wb = _round_trip(state, tmp_path)
    ws = wb[STATE_SHEET]
    first = json.dumps(list(state.rows[0]), separators=(",", ":"))
    ws["B3"].value = ws["B3"].value.replace(first, f'["{state.rows[0][0]}",12345]')
    assert read_state(wb).rows == ((state.rows[0][0], "12345"), *state.rows[1:])
