"""Sorting today's result rows against the rows the previous update stored."""
import datetime as dt
from dataclasses import replace

from secretary.model.changes import all_new, compare_rows
from secretary.model.records import Result, fingerprint, identity

D1, D2, D3 = dt.date(2025, 3, 4), dt.date(2025, 3, 11), dt.date(2025, 3, 18)


def stored(rows):
    return tuple((identity(r), fingerprint(r)) for r in rows)


OLD = [
    Result(D1, "Ann Holt", "Bea Marsh", 5, 3, "One"),
    Result(D1, "Cal Penn", "Dee Varga", 2, 5, "One"),
    Result(D2, "Ann Holt", "Cal Penn", 5, 4, "One"),
]


def test_nothing_changed_all_rows_unchanged():
    ch = compare_rows(OLD, stored(OLD))
    assert (ch.new_rows, ch.edited_rows, ch.removed_rows, ch.unchanged_rows) == (0, 0, 0, 3)
    assert ch.previous_data == tuple(OLD) and ch.current_data == tuple(OLD)
    assert not ch.corrected


def test_new_edited_removed_are_told_apart():
    edited = replace(OLD[0], games_b=4)
    added = Result(D3, "Bea Marsh", "Dee Varga", 5, 1, "One")
    now = [edited, OLD[2], added]  # OLD[1] deleted from the sheet
    ch = compare_rows(now, stored(OLD))
    assert ch.new == (added,)
    assert ch.edited == (edited,)
    assert ch.unchanged == (OLD[2],)
    assert ch.removed == (identity(OLD[1]),)
    assert ch.corrected
    # D0: last update's rows as they stand now, the edit in its corrected form, the removed row gone.
    assert set(ch.previous_data) == {edited, OLD[2]}
    assert set(ch.current_data) == {edited, OLD[2], added}


def test_swapping_the_two_players_is_an_edit_not_a_new_match():
    swapped = Result(D1, "Bea Marsh", "Ann Holt", 3, 5, "One")  # same match written the other way round
    ch = compare_rows([swapped, *OLD[1:]], stored(OLD))
    assert ch.edited == (swapped,) and ch.new == () and ch.removed == ()


def test_identity_collisions_match_as_multisets():
    twice = [OLD[0], OLD[0]]  # the same two players met twice on one evening with the same score
    base = stored(twice)
    assert compare_rows(twice, base).unchanged_rows == 2
    one_left = compare_rows([OLD[0]], base)
    assert (one_left.unchanged_rows, one_left.removed_rows, one_left.new_rows) == (1, 1, 0)
    other_score = replace(OLD[0], games_a=1, games_b=5)
    one_edited = compare_rows([OLD[0], other_score], base)
    assert one_edited.unchanged == (OLD[0],) and one_edited.edited == (other_score,)
    third = compare_rows([OLD[0], other_score, OLD[0]], base)
    assert (third.unchanged_rows, third.edited_rows, third.new_rows) == (2, 0, 1)


def test_void_rows():
    voided = replace(OLD[1], void=True)
    ch = compare_rows([OLD[0], voided, OLD[2]], stored(OLD))
    assert ch.edited == (voided,)  # an edit that takes the row out of the rating
    assert voided not in ch.previous_data and voided not in ch.current_data
    never_rated = Result(D3, "Ann Holt", "Dee Varga", 0, 5, void=True)
    ch = compare_rows([*OLD, never_rated], stored(OLD))
    assert ch.new == () and ch.ignored == (never_rated,)


def test_kinds_keep_sheet_order_and_first_update_counts_all_new():
    rows = [OLD[2], OLD[0], OLD[1]]
    ch = compare_rows(rows, stored(OLD))
    assert ch.unchanged == tuple(rows)
    first = all_new([*OLD, replace(OLD[0], void=True)])
    assert first.new == tuple(OLD) and first.previous_data == () and len(first.ignored) == 1
