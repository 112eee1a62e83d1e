"""Names: one spelling per player, "Also known as" merges, and close-spelling hints that stay fast."""
from __future__ import annotations

import random

from secretary.model.records import Player
from secretary.workbook.names import CloseIndex, Mention, clean, merge_aliases, name_key, resolve


def test_clean_and_key():
    assert clean("  John \t  Smith\u00a0 ") == "John Smith"
    assert name_key(" JOHN  smith") == name_key("John Smith") == "john smith"
    assert clean(None) == "" and clean(42) == "42"


def test_most_used_spelling_is_kept_and_others_warned_once():
    mentions = [Mention("John Smith", 2, "Player A"), Mention("john smith", 3, "Player B"),
                Mention("John Smith", 4, "Player A"), Mention("john smith", 5, "Player A"),
                Mention("John  Smith", 6, "Player A"), Mention("John Smith ", 7, "Player B"),
                Mention("Ann Lee", 2, "Player B")]
    display, counts, problems = resolve(mentions, {}, "Results")
    assert display["john smith"] == "John Smith"
    assert counts["John Smith"] == 6
    where = sorted((p.row, p.found) for p in problems)
    # the trailing space alone is not worth a warning; each other spelling is warned at its first row
    assert where == [(3, "john smith"), (6, "John  Smith")]
    assert all(p.severity == "warning" and "John Smith" in p.problem for p in problems)


def test_players_sheet_spelling_wins_and_aliases_merge_silently():
    players = [Player("Ann LEE", "Premier", None, ("Annie Lee", "A Lee"), 2), Player("Bo Ng", "", None, (), 3)]
    known, problems = merge_aliases(players)
    assert problems == []
    mentions = [Mention("Ann Lee", 2, "Player A"), Mention("Ann Lee", 3, "Player A"),
                Mention("annie lee", 4, "Player A"), Mention("Bo Ng", 2, "Player B")]
    display, counts, problems = resolve(mentions, known, "Results")
    assert display["ann lee"] == display["annie lee"] == "Ann LEE"
    assert counts["Ann LEE"] == 3
    assert [(p.row, p.found) for p in problems] == [(2, "Ann Lee")]  # case differs from the Players sheet


def test_alias_conflicts_are_errors():
    players = [Player("Ann Lee", aliases=("Bo Ng",), row=2), Player("Bo Ng", row=3),
               Player("Cy Doe", aliases=("C. Doe",), row=4), Player("Di Roe", aliases=("c. doe",), row=5),
               Player("ANN LEE", row=6)]
    _, problems = merge_aliases(players)
    assert sorted((p.row, p.column) for p in problems) == [
        (2, "Also known as"), (5, "Also known as"), (6, "Player")]
    assert all(p.is_error for p in problems)


def test_close_spellings_found_and_distinct_names_left_alone():
    index = CloseIndex(["John Smith", "Jon Smith", "Jhon Smith", "Mary Jones", "Mary Jane", "Al Li", "Al Lu",
                        "Steven Clarke", "Stephen Clarke"])
    pairs = index.pairs()
    assert ("John Smith", "Jon Smith") in pairs  # a letter dropped
    assert ("Jhon Smith", "John Smith") in pairs  # two letters swapped
    assert ("Jhon Smith", "Jon Smith") in pairs
    assert all("Mary" not in a for a, _ in pairs)
    assert ("Al Li", "Al Lu") not in pairs  # too short for one letter to mean much
    assert ("Stephen Clarke", "Steven Clarke") not in pairs  # two slips apart: not suggested
    assert sorted(index.matches("jon smith")) == ["Jhon Smith", "John Smith"]  # equally close
    assert index.matches("Nobody Here") == []


def test_close_spellings_scale_to_a_large_league():
    rng = random.Random(7)
    letters = "abcdefghijklmnopqrstuvwxyz"
    names = {"".join(rng.choice(letters) for _ in range(rng.randint(4, 8))).title() + " "
             + "".join(rng.choice(letters) for _ in range(rng.randint(4, 9))).title() for _ in range(3000)}
    names = sorted(names)
    typo = names[10][:3] + names[10][4:]
    pairs = CloseIndex(names + [typo]).pairs()
    assert tuple(sorted((typo, names[10]))) in pairs


def test_closeness_agrees_with_difflib_for_one_slip():
    """Independent check: Python's difflib.SequenceMatcher.ratio on the same pairs."""
    import difflib

    from secretary.workbook.names import _closeness

    for a, b in [("jon smith", "john smith"), ("ada fitch", "ada finch"), ("jhon smith", "john smith"),
                 ("tom hart", "tim hart"), ("al li", "al lu"), ("mcdonald", "mc donald")]:
        assert abs(_closeness(a, b) - difflib.SequenceMatcher(None, a, b).ratio()) < 1e-12, (a, b)
    assert _closeness("team 1", "team 2") == 0.0
