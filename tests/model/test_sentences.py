"""Which plain-language template each kind of change gets."""
import pytest

from secretary.model.breakdown import PlayerChange, displayed_parts
from secretary.model.sentences import Context, division_label, sentence, worth_a_word


def change(own=0.0, opponents=0.0, group=0.0, corrections=0.0, before=1500.0, **kw):
    """A player's change with the shown figures made the way the breakdown makes them."""
    parts = [own, opponents, group, corrections]
    after = before + sum(parts)
    fields = dict(
        name="Ann Holt", division="Division One", before=before, after=after, change=after - before,
        own=own, opponents=opponents, group=group, corrections=corrections,
        shown=displayed_parts(before, after, parts), new_games=0, new_won=0, new_expected=0.0,
        played=False, is_new=False, top_opponents=(), sentence="", games=20, days_away=7,
    )
    fields.update(kw)
    return PlayerChange(**fields)


def test_a_part_is_named_only_when_big_enough():
    # >= 1 point, >= 20 % of the largest part, and not shown as 0.
    assert worth_a_word([18.0, 3.7, -0.9, 0.0], [18, 4, -1, 0]) == [True, True, False, False]
    assert worth_a_word([18.0, 3.5, 0, 0], [18, 3, 0, 0]) == [True, False, False, False]
    assert worth_a_word([0.4, 0.3, 0, 0], [1, 0, 0, 0]) == [False, False, False, False]


def test_played_and_beat_expectation():
    pc = change(own=18.2, played=True, new_games=14, new_won=9, new_expected=6.8)
    assert sentence(pc) == "You won 9 of 14 games this week, about 2 more than your rating expected: +18."


def test_played_and_fell_short_with_opponents_as_second_cause():
    pc = change(own=-12.4, opponents=-4.1, played=True, new_games=10, new_won=3, new_expected=5.6,
                top_opponents=(("Dee Varga", -3.0),))
    assert sentence(pc) == (
        "You won 3 of 10 games this week, about 3 fewer than your rating expected: -12. "
        "Players you have met (Dee Varga) did worse elsewhere, so your results against them count for a bit less: -4."
    )


def test_did_not_play_moved_through_opponents():
    pc = change(opponents=-6.2, own=-0.3, top_opponents=(("Dee Varga", -4.0), ("Ross Kell", -2.0)))
    assert sentence(pc) == (
        "You did not play this week. Players you met earlier (Dee Varga and Ross Kell) did worse elsewhere, "
        "so your results against them count for a bit less: -6."
    )


def test_group_shift_names_the_division_and_the_event():
    pc = change(group=7.3, opponents=0.6)
    at_event = Context(group_event="Open night", group_played_others=True)
    assert sentence(pc, at_event) == (
        "You did not play this week. Division One as a whole did well against the other divisions "
        "at the Open night, which lifts everyone in it: +7 (+8 in all)."
    )
    # No games against other divisions this week: no claim that the division beat anyone.
    assert sentence(pc) == ("You did not play this week. Division One as a whole moved up, which lifts "
                            "everyone in it: +7 (+8 in all).")  # "this week" once
    assert sentence(change(group=-3.0, division="Premier"), Context(group_played_others=True)).endswith(
        "The Premier division as a whole did less well against the other divisions, which lowers everyone in it: -3."
    )


@pytest.mark.parametrize("context, text", [
    (Context(edited_rows=1), "An earlier result was corrected: -3."),
    (Context(removed_rows=2), "Earlier results were removed: -3."),
    (Context(edited_rows=1, removed_rows=1), "Earlier results were corrected or removed: -3."),
    (Context(settings_changed=("skill_spread",)), "The league's settings changed: -3."),
    (Context(settings_changed=("scale",), edited_rows=1), "An earlier result was corrected and the league's settings changed: -3."),
])
def test_corrections(context, text):
    assert sentence(change(corrections=-3.2), context) == text


def test_newcomer_first_update_and_no_change():
    assert sentence(change(own=40.0, is_new=True, games=12)) == "First rating: based on 12 games."
    assert sentence(change(own=40.0, games=1), Context(first_update=True)) == "First rating: based on 1 game."



def test_a_rating_that_barely_moved_says_what_happened():
    # Shown 0 is never called a change; a shown +1 from under a point is never "no change".
    assert sentence(change(own=0.3, opponents=-0.2)) == "You did not play this week, and your rating stays where it was."
    assert sentence(change(own=0.6, opponents=0.3, before=1500.4)) == (
        "You did not play this week, and your rating hardly moved: +1.")
    assert sentence(change(own=0.2, days_away=150)) == (
        "You have not played for 5 months, and your rating stays where it was.")
    played = dict(played=True, new_games=3, new_won=2)
    assert sentence(change(own=0.1, new_expected=1.98, **played)) == (
        "You won 2 of 3 games this week, about as many as your rating expected, so your rating stays where it was.")
    assert sentence(change(own=0.4, new_expected=1.2, games=400, **played)) == (
        "You won 2 of 3 games this week, about 1 more than your rating expected, but that moves your rating "
        "by less than a point: no change.")
    assert sentence(change(own=0.7, new_expected=1.8, before=1500.4, **played)) == (
        "You won 2 of 3 games this week, a little more than your rating expected: hardly any change, +1.")
    assert sentence(change(own=0.1, new_expected=2.0, days_away=200, **played)) == (
        "Back after 7 months. You won 2 of 3 games this week, about as many as your rating expected, "
        "so your rating stays where it was.")


def test_back_after_a_gap_and_ageing():
    back = change(own=-20.0, ageing=-6.0, played=True, new_games=9, new_won=3, new_expected=4.9, days_away=200)
    assert sentence(back) == (
        "Back after 7 months. You won 3 of 9 games this week, about 2 fewer than your rating expected, "
        "and your older games now count less: -20."
    )
    away = change(own=-5.0, ageing=-5.0, days_away=120)
    assert sentence(away) == (
        "You have not played for 4 months. Your older games now count a little less, "
        "which moves you back toward the starting rating: -5."
    )
    back_in_time = Context(dates_moved_back=True)  # the newest rows were deleted: older games weigh more again
    assert sentence(change(own=2.0, ageing=2.0, days_away=3), back_in_time) == (
        "You did not play this week. The newest results were taken out, so your older games count a little more again: +2."
    )
    # This week's games pulled up, the fading of older wins pulled further down.
    mixed = change(own=-4.0, ageing=-9.0, played=True, new_games=5, new_won=4, new_expected=3.0)
    assert sentence(mixed).endswith("about 1 more than your rating expected, but your older games now count less: -4.")


def test_negligible_parts_are_never_claimed_as_causes():
    pc = change(own=30.0, opponents=4.0, group=0.9, corrections=-2.0, played=True,
                new_games=10, new_won=8, new_expected=5.0)
    text = sentence(pc, Context(edited_rows=1, group_played_others=True))
    assert "Players you have met" not in text  # 4 < 20 % of 30
    assert "Division" not in text and "corrected" not in text


def test_division_labels():
    assert division_label("Division Two") == "Division Two"
    assert division_label("Premier") == "the Premier division"
    assert division_label("") == "your division"
