"""The window's view logic on plain objects: no display needed."""
from __future__ import annotations

import datetime as dt

import pytest

from secretary.gui import views
from secretary.model.records import PlayerRating, Problem
from secretary.pipeline import check_workbook
from secretary.workbook import schema
from tests.workbook.league_books import good_results, write_book

S = views.Session


def test_steps_follow_the_weekly_routine():
    nothing = S()
    assert views.step_states(nothing) == (views.WAITING,) * 4
    assert views.next_step(nothing) is None

    opened = S(opened=True)
    assert views.next_step(opened) == 0
    assert views.steps_enabled(opened) == (True, False, False, False)

    bad = opened.but(checked=True, errors=2)
    assert views.step_states(bad)[0] == views.ATTENTION
    assert views.next_step(bad) == 0  # fix and check again before anything else
    assert not views.steps_enabled(bad)[1]

    good = opened.but(checked=True)
    assert views.step_states(good)[:2] == (views.DONE, views.WAITING)
    assert views.next_step(good) == 1

    updated = good.but(updated=True)
    assert views.next_step(updated) == 2
    assert views.next_step(updated.but(reviewed=True)) == 3
    finished = updated.but(reviewed=True, printed=True)
    assert views.step_states(finished) == (views.DONE,) * 4
    assert views.next_step(finished) is None

    failed = good.but(update_failed=True)
    assert views.step_states(failed)[1] == views.ATTENTION
    assert views.next_step(failed) == 1
    # An old notice board beside the workbook can be printed without updating again.
    assert views.steps_enabled(good.but(notice_exists=True))[3]
    # Step 2 is never "Done" behind errors found since, or behind results not yet rated.
    assert views.step_states(updated.but(errors=1))[1] == views.WAITING
    assert views.step_states(updated.but(waiting_results=True))[1] == views.WAITING


def test_window_size_fits_the_screen_with_room_for_a_taskbar():
    for screen in ((1024, 600), (1366, 768), (800, 600), (1920, 1080)):
        width, height = views.window_size(screen)
        assert width <= screen[0] and height <= screen[1] - 80  # title bar and taskbar stay free
        small = views.smallest_size(screen)
        assert small[0] <= width and small[1] <= height
    assert views.window_size((1366, 768), saved=(900, 600)) == (900, 600)  # remembered
    assert views.window_size((1024, 600), saved=(1300, 760)) == views.window_size((1024, 600))  # too big now


def test_step_names_shorten_until_they_fit():
    assert views.step_names(lambda names: True) == views.STEPS
    assert views.step_names(lambda names: len("".join(names)) < 60) == views.SHORT_STEPS[0]
    assert views.step_names(lambda names: False) == views.SHORT_STEPS[-1]


def _rows(values):
    return [views.Row(str(i), (v,), (str(v),)) for i, v in enumerate(values)]


def test_sorting_is_numeric_for_numbers_and_keeps_blanks_last():
    rows = _rows([10, 9, None, 100, 2.5])
    assert [r.values[0] for r in views.sort_rows(rows, 0)] == [2.5, 9, 10, 100, None]
    assert [r.values[0] for r in views.sort_rows(rows, 0, descending=True)] == [100, 10, 9, 2.5, None]
    names = _rows(["bram", "Ada", "", "cleo"])
    assert [r.values[0] for r in views.sort_rows(names, 0)] == ["Ada", "bram", "cleo", ""]
    dates = _rows([dt.date(2026, 3, 2), dt.date(2025, 12, 30)])
    assert [r.values[0] for r in views.sort_rows(dates, 0)] == [dt.date(2025, 12, 30), dt.date(2026, 3, 2)]


def test_sorting_a_chunk_at_a_time_gives_python_s_own_stable_sort_with_blanks_last_either_way():
    values = [None if k % 11 == 0 else ("" if k % 13 == 0 else (k * 7919) % 97) for k in range(1234)]
    rows = _rows(values)  # many equal values: the order given must stay among them
    filled = [r for r in rows if r.values[0] not in (None, "")]
    blanks = [r for r in rows if r.values[0] in (None, "")]
    for descending in (False, True):
        steps = views.sort_steps(lambda a, b: rows[a:b], len(rows), 0, descending, chunk=100)
        turns = 0
        while True:
            try:
                next(steps)
                turns += 1
            except StopIteration as done:
                got = list(done.value)
                break
        assert turns == 12  # 13 chunks, a step between each two
        assert got == sorted(filled, key=lambda r: r.values[0], reverse=descending) + blanks
        assert views.sort_rows(rows, 0, descending) == got


def _rating(name, rating, division="Premier", change=None, games=20.0, sd=40.0):
    return PlayerRating(name=name, division=division, rating=rating, sd=sd, games=games, wins=games / 2,
                        last_played=dt.date(2026, 4, 1), change=change, is_new=change is None)


def test_rating_rows_rank_share_places_and_mark_new_players():
    ratings = [_rating("Cleo Marsh", 1500.2, change=3.0), _rating("Ada Finch", 1620.0, change=-4.4),
               _rating("Bram Oak", 1499.8, "Valley"), _rating("Dev Pike", 1400.0, change=0.2, games=3.0)]
    rows = views.rating_rows(ratings, few_games=10)
    assert [r.values[1] for r in rows] == ["Ada Finch", "Cleo Marsh", "Bram Oak", "Dev Pike"]
    assert [r.values[0] for r in rows] == [1, 2, 2, 4]  # 1499.8 and 1500.2 both show 1500
    by_name = {r.values[1]: r for r in rows}
    assert by_name["Bram Oak"].tags == ("new",) and by_name["Bram Oak"].shown[-1] == "new this update"
    assert by_name["Ada Finch"].shown[3] == "-4"
    assert by_name["Dev Pike"].shown[3] == "0" and by_name["Dev Pike"].shown[-1] == "few games"
    keys = [c.key for c in views.RATING_COLUMNS]
    assert (keys.index("player"), keys.index("division")) == (1, 4)  # filter_rows' defaults
    assert all(len(r.values) == len(r.shown) == len(keys) for r in rows)
    first = views.rating_rows([_rating("Ada Finch", 1620.0), _rating("Bram Oak", 1500.0)], few_games=10)
    assert [r.tags for r in first] == [(), ()] and [r.shown[-1] for r in first] == ["new this update"] * 2


def test_search_and_division_filter():
    rows = views.rating_rows([_rating("Ada Finch", 1600, change=1.0), _rating("Bram Oak", 1500, "Valley", 2.0),
                              _rating("Adam Oakley", 1450, "Valley", 0.0)], few_games=10)
    names = lambda rs: [r.values[1] for r in rs]  # noqa: E731
    assert names(views.filter_rows(rows, "oak")) == ["Bram Oak", "Adam Oakley"]
    assert names(views.filter_rows(rows, "OAK ad")) == ["Adam Oakley"]  # words in any order
    assert names(views.filter_rows(rows, "", "Valley")) == ["Bram Oak", "Adam Oakley"]
    assert names(views.filter_rows(rows, "ada", views.ALL_DIVISIONS)) == ["Ada Finch", "Adam Oakley"]
    assert views.divisions_of(rows) == [views.ALL_DIVISIONS, "Premier", "Valley"]


def test_bar_geometry_puts_zero_in_the_middle_and_scales_to_the_largest_part():
    zero, bars = views.bar_geometry((56, -2, 2, 0), 200)
    assert zero == 100
    assert [b.label for b in bars] == list(views.PARTS)
    assert (bars[0].x0, bars[0].x1) == (100, 200)  # the largest part fills its half
    assert bars[1].x0 == pytest.approx(100 - 2 * 100 / 56) and bars[1].x1 == 100
    assert bars[3].x0 == bars[3].x1 == 100
    # Tiny changes stay tiny: the half-width stands for at least MIN_SCALE points.
    _, small = views.bar_geometry((1, 0, 0, 0), 200)
    assert small[0].x1 - small[0].x0 == pytest.approx(100 / views.MIN_SCALE)
    # On a common scale, -11 is drawn an eighth as long as +88 in another player's chart.
    _, shared = views.bar_geometry((-11, 0, 0, 0), 200, scale=88)
    assert shared[0].x1 - shared[0].x0 == pytest.approx(100 * 11 / 88)


def test_common_scale_and_axis_ticks():
    class Change:
        def __init__(self, parts, new=False):
            self.shown, self.is_new = (0, 0, sum(parts), *parts), new

    assert views.common_scale([Change((93, 0, 0, 0)), Change((-11, 0, 0, 0))]) == 93
    assert views.common_scale([Change((2, 1, 0, 0))]) == views.MIN_SCALE
    assert views.common_scale([Change((500, 0, 0, 0), new=True), Change((4, 0, 0, 0))]) == views.MIN_SCALE
    assert views.axis_ticks(93) == [-75, -50, -25, 0, 25, 50, 75]
    assert views.axis_ticks(10) == [-10, -5, 0, 5, 10]
    ticks = views.axis_ticks(1234)
    assert 0 in ticks and max(ticks) <= 1234 and len(ticks) <= 9


def test_line_points_span_the_chart_and_keep_a_flat_line_flat():
    history = [(dt.date(2026, 1, 1), 1500.0), (dt.date(2026, 1, 11), 1600.0), (dt.date(2026, 1, 21), 1550.0)]
    pts, low, high = views.line_points(history, 220, 120, pad=10)
    assert (low, high) == (1500.0, 1600.0)
    assert [x for x, _ in pts] == [10, 110, 210]
    assert [y for _, y in pts] == [110, 10, 60]  # higher rating, higher on screen
    flat, low, high = views.line_points([(dt.date(2026, 1, 1), 1500.0)], 100, 100)
    assert flat == [(50, 50)] and high - low == 50


def test_movers_biggest_first_and_did_not_play_filter(demo_changes):
    ordered = views.movers(demo_changes)
    sizes = [abs(c.shown[2]) for c in ordered if not c.is_new]
    assert sizes == sorted(sizes, reverse=True)
    idle = views.movers(demo_changes, did_not_play=True)
    assert idle and all(not c.played for c in idle)
    assert len(idle) < len(ordered)


@pytest.fixture(scope="module")
def demo_changes(tmp_path_factory):
    """The demo league's second update (the new week), as the pipeline works it out."""
    import shutil

    from secretary.pipeline import DATA, append_results_csv, run_update

    folder = tmp_path_factory.mktemp("demo")
    path = folder / "league.xlsx"
    shutil.copyfile(DATA / "demo-league.xlsx", path)
    run_update(path)
    append_results_csv(path, DATA / "demo-new-week.csv")
    return run_update(path, dry_run=True).breakdown.players


def test_change_summary_and_headlines(demo_changes):
    assert views.changes_summary(None).startswith("Update the ratings")
    mover = views.movers(demo_changes)[0]
    before, after, change = mover.shown[:3]
    assert views.change_headline(mover) == f"{mover.name}: {before} \u2192 {after} ({views.signed(change)})"
    assert views.signed(0.4) == "0" and views.signed(-3.6) == "-4" and views.signed(12) == "+12"


def test_settings_messages_beside_each_field():
    fine = {spec.field: "" for spec in schema.SETTINGS_TABLE}
    assert views.can_save(views.settings_messages(fine))  # blanks mean the defaults
    bad = dict(fine, centre="abc", paper="A3")
    messages = views.settings_messages(bad)
    assert messages["centre"] == "Centre must be a number from 0 to 10000"
    assert messages["paper"] == "Paper must be A4 or Letter"
    assert not views.can_save(messages)
    races = views.settings_messages(dict(fine, usual_race="7", longest_race="5"))
    assert races["usual_race"] == "must not be longer than the longest race (5)"
    assert views.setting_text(schema.find_setting("centre"), 1500.0) == ""
    assert views.setting_text(schema.find_setting("centre"), 1600.0) == "1600"
    assert "Leave it blank for the default (1500)" in views.setting_tip(schema.find_setting("centre"))


def test_column_letters_follow_the_spreadsheet_convention():
    # Spreadsheet naming (Excel/LibreOffice): A..Z, then AA..AZ, BA..; column 16384 is XFD.
    assert [views.column_letter(n) for n in (1, 5, 26, 27, 28, 52, 53, 16384)] == \
        ["A", "E", "Z", "AA", "AB", "AZ", "BA", "XFD"]


def test_problem_rows_and_the_cell_to_fix(tmp_path):
    rows = good_results()
    rows[1][4] = "five"  # Games A of sheet row 3
    book = check_workbook(write_book(tmp_path / "bad.xlsx", rows))
    table = views.problem_rows(book.problems)
    assert table[0].values[:4] == ("Error", "Results", 3, "Games A")
    assert table[0].tags == ("error",)
    problem = book.problems[int(table[0].iid)]
    # Games A is the fifth column of the sheet written above: E.
    assert views.fix_line(problem, book.layouts).startswith("Fix cell Results!E3: ")
    warning = Problem("warning", "Rating history", None, None, "", "odd", "look")
    assert views.cell_reference(warning) == "the Rating history sheet"
    assert views.cell_reference(Problem("error", "Rating history", 4, "B", "", "x", "y")) == "'Rating history'!B4"
    assert views.problems_summary(book.problems).startswith("1 error to fix")
    assert views.problems_summary(()).startswith("No problems")


def test_fixture_rows_list_coming_fixtures_first_and_mark_the_past_ones():
    from tests.invented_league import forecasts, two_updates

    fcs = forecasts(two_updates()[1].results)
    latest = max(fc.fixture.date for fc in fcs)  # as if results had come in up to the last fixture day
    rows = views.fixture_rows(fcs, latest)
    past = [r for r in rows if "past" in r.tags]
    assert len(past) == sum(1 for fc in fcs if fc.fixture.date < latest) > 0
    assert [("past" in r.tags) for r in rows] == sorted("past" in r.tags for r in rows)  # coming first
    assert all(r.shown[-1].startswith(views.PAST) for r in past)
    assert not any(views.PAST in r.shown[-1] for r in rows if r not in past)
    assert [r.values[0] for r in rows if r not in past] == sorted(r.values[0] for r in rows if r not in past)
    assert all("past" not in r.tags for r in views.fixture_rows(fcs))  # no newest result: nothing is past
