"""Plain-language sentences for the notice board, made from a player's numbers.

One template per cause.  A part is *worth a word* when it moved the player by
at least ``MIN_POINTS`` points, by at least ``MIN_SHARE`` of the largest part,
and shows as a non-zero whole number; smaller parts are never named as a
cause.  Never more than two sentences: the two largest parts' clauses, or,
when a lead is needed ("You did not play this week.", "Back after 7
months."), the lead and the largest part's clause.  Figures quoted are the shown whole points, and the games
quoted are this update's new games with the number the player's pre-week
rating expected them to win (the sum over those games of the pre-week chance).
A player who played is told how their games went (first, when other parts moved
them more; "Back after 7 months." says it already), and
when the figures quoted do not add up to the shown change (a part left unsaid),
or it is shown as 0, the sentence ends with it: "(-5 in all)", "(no change in all)".
When no part is worth a word the sentence still says what the week was (played
about as expected, did not play) and the shown change: 0 is "stays where it
was", never a change, and a shown +1 is "hardly moved", never "no change".
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # pragma: no cover - typing only
    from secretary.model.breakdown import PlayerChange

MIN_POINTS = 1.0
MIN_SHARE = 0.2
LONG_GAP_DAYS = 90  # a player away this long is "back after a gap"
DAYS_PER_MONTH = 30.44
AS_EXPECTED = 0.05  # games: a week's wins this close to the expected number are "about as many as expected"
WEEK = " this week"  # said once per sentence: by the lead or the first clause that needs it


@dataclass(frozen=True)
class Context:
    """What the sentence needs to know beyond the player's own numbers."""

    first_update: bool = False
    settings_changed: tuple[str, ...] = ()
    edited_rows: int = 0
    removed_rows: int = 0
    group_event: str = ""  # the usual event name of the division's games against other divisions
    group_played_others: bool = False  # the division had new games against other divisions
    dates_moved_back: bool = False  # the newest result is older than last time's (the latest rows were removed)


def signed(points: int) -> str:
    """``+18`` / ``-6`` / ``0``."""
    return f"{points:+d}" if points else "0"


def worth_a_word(values, shown) -> list[bool]:
    """Which parts are big enough to be named as a cause."""
    largest = max((abs(v) for v in values), default=0.0)
    return [abs(v) >= MIN_POINTS and abs(v) >= MIN_SHARE * largest and s != 0 for v, s in zip(values, shown)]


def _games(k: int) -> str:
    return f"{k} game" if k == 1 else f"{k} games"


def _names(items) -> str:
    names = [name for name, _ in items]
    if len(names) <= 1:
        return "".join(names)
    return ", ".join(names[:-1]) + " and " + names[-1]


def _months(days: int) -> str:
    months = max(1, round(days / DAYS_PER_MONTH))
    return "a month" if months == 1 else f"{months} months"


def division_label(division: str) -> str:
    """How a division is named inside a sentence."""
    if not division.strip():
        return "your division"
    if any(word in division.casefold() for word in ("division", "league", "group", "section", "tier")):
        return division
    return f"the {division} division"


def _surprise(pc: "PlayerChange") -> float:
    """Games won this week minus the games the pre-week rating expected."""
    return pc.new_won - pc.new_expected


def _week(pc: "PlayerChange", when: str = WEEK) -> str:
    """``You won 2 of 3 games this week, about as many as your rating expected`` (no full stop); ``when=""``
    leaves out "this week" (said already)."""
    diff = _surprise(pc)
    word = "more" if diff > 0 else "fewer"
    if abs(diff) >= 0.5:
        phrase = f"about {math.floor(abs(diff) + 0.5)} {word} than your rating expected"
    elif abs(diff) >= AS_EXPECTED:
        phrase = f"a little {word} than your rating expected"
    else:
        phrase = "about as many as your rating expected"
    return f"You won {pc.new_won} of {_games(pc.new_games)}{when}, {phrase}"


def _still(pc: "PlayerChange", change: int, lead: list[str]) -> str:
    """The sentence when no part is worth a word: what the week was, and the shown change (0 or a point or so).

    A shown change of 0 is never called a change, and a shown +1 never "no change": the figure quoted is
    the one the sheets show (``PlayerChange.shown``).
    """
    if not pc.played:
        away = lead[0].rstrip(".")  # "You did not play this week" or "You have not played for 4 months"
        if change == 0:
            return f"{away}, and your rating stays where it was."
        return f"{away}, and your rating hardly moved: {signed(change)}."
    head = " ".join(lead + [_week(pc)])
    if change:
        return f"{head}: hardly any change, {signed(change)}."
    if abs(_surprise(pc)) < AS_EXPECTED:
        return f"{head}, so your rating stays where it was."
    return f"{head}, but that moves your rating by less than a point: no change."


def _own(pc: "PlayerChange", points: int, context: Context, when: str = WEEK) -> str:
    if not pc.played and context.dates_moved_back:
        return f"The newest results were taken out, so your older games count a little more again: {signed(points)}."
    if not pc.played:
        return f"Your older games now count a little less, which moves you back toward the starting rating: {signed(points)}."
    diff = _surprise(pc)
    head = _week(pc, when)
    if points == 0:  # said only to tell that the player played: no figure, so no cause claimed
        return f"{head}."
    ageing_counts = abs(pc.ageing) >= MIN_POINTS and abs(pc.ageing) >= MIN_SHARE * abs(pc.own)
    if not ageing_counts:  # (games that disagree in sign can only come from very uneven age weights)
        return f"{head}: {signed(points)}."
    # Older games losing weight moved the player too (toward the starting rating).
    joint = "but" if abs(diff) >= AS_EXPECTED and (diff > 0) != (pc.ageing > 0) else "and"
    less = "more" if context.dates_moved_back else "less"
    return f"{head}, {joint} your older games now count {less}: {signed(points)}."


def _opponents(pc: "PlayerChange", points: int) -> str:
    partners = getattr(pc, "top_partners", ())
    if partners and (not pc.top_opponents or abs(partners[0][1]) >= abs(pc.top_opponents[0][1])):
        return _partners(partners, points)
    who = "Players you met earlier" if not pc.played else "Players you have met"
    if pc.top_opponents:
        who += f" ({_names(pc.top_opponents)})"
    how = "better" if points > 0 else "worse"
    much = "a bit " if abs(points) < 10 else ""
    more = "more" if points > 0 else "less"
    return f"{who} did {how} elsewhere, so your results against them count for {much}{more}: {signed(points)}."


def _partners(partners, points: int) -> str:
    """A partner re-rated up takes a larger share of the side's wins: you move the other way."""
    who = "Your doubles partner" if len(partners) == 1 else "Your doubles partners"
    how = "worse" if points > 0 else "better"
    much = "a bit " if abs(points) < 10 else ""
    more = "more" if points > 0 else "less"
    return (f"{who} {_names(partners)} did {how} elsewhere, so your doubles results together "
            f"count for {much}{more} for you: {signed(points)}.")


def _group(pc: "PlayerChange", points: int, context: Context, when: str = WEEK) -> str:
    label = division_label(pc.division)
    label = label[0].upper() + label[1:]
    moves = "lifts" if points > 0 else "lowers"
    if context.group_played_others:
        how = "did well" if points > 0 else "did less well"
        event = context.group_event
        at = "" if not event else f" at {event}" if event.casefold().startswith("the ") else f" at the {event}"
        return f"{label} as a whole {how} against the other divisions{at}, which {moves} everyone in it: {signed(points)}."
    way = "up" if points > 0 else "down"
    return f"{label} as a whole moved {way}{when}, which {moves} everyone in it: {signed(points)}."


def _corrections(points: int, context: Context) -> str:
    rows = context.edited_rows + context.removed_rows
    if rows:
        how = "corrected" if not context.removed_rows else "removed" if not context.edited_rows else "corrected or removed"
        what = f"An earlier result was {how}" if rows == 1 else f"Earlier results were {how}"
    if context.settings_changed and rows:
        return f"{what} and the league's settings changed: {signed(points)}."
    if context.settings_changed:
        return f"The league's settings changed: {signed(points)}."
    if rows:
        return f"{what}: {signed(points)}."
    return f"Earlier ratings were recalculated: {signed(points)}."


def sentence(pc: "PlayerChange", context: Context = Context()) -> str:
    """One or two short sentences saying, in plain words, why the player's rating moved."""
    if context.first_update or pc.is_new:
        return f"First rating: based on {_games(pc.games)}."
    _, _, change, *shown = pc.shown
    values = list(pc.parts)
    big = worth_a_word(values, shown)
    order = sorted((k for k in range(4) if big[k]), key=lambda k: -abs(values[k]))
    away = pc.days_away is not None and pc.days_away >= LONG_GAP_DAYS
    lead = []
    if pc.played and away:
        lead.append(f"Back after {_months(pc.days_away)}.")
    elif not pc.played and (not order or order[0] != 3):  # a correction needs no "you did not play"
        lead.append(f"You have not played for {_months(pc.days_away)}." if away else "You did not play this week.")
    if not order:
        return _still(pc, change, lead)
    picked = order[: 1 if lead else 2]  # never more than two sentences
    if pc.played and not lead and 0 not in picked:
        picked = [0, order[0]]  # how their own games went comes first, even when that moved them little
    clauses = _clauses(picked, pc, shown, context, lead)
    return " ".join(lead + _in_all(clauses, [shown[k] for k in picked], change))


def _clauses(picked: list[int], pc: "PlayerChange", shown, context: Context, lead: list[str]) -> list[str]:
    """The picked parts' sentences, saying "this week" only once: in the lead or the first that needs it."""
    out, said = [], any(WEEK in text for text in lead)
    for k in picked:
        out.append(_clause(k, pc, shown[k], context, "" if said else WEEK))
        said = said or WEEK in out[-1]
    return out


def _clause(k: int, pc: "PlayerChange", points: int, context: Context, when: str = WEEK) -> str:
    """The sentence for part ``k`` (own, opponents, group, corrections) with its shown points; ``when``:
    " this week", or "" when the sentence before has said it."""
    if k == 0:
        return _own(pc, points, context, when)
    if k == 1:
        return _opponents(pc, points)
    return _group(pc, points, context, when) if k == 2 else _corrections(points, context)


def _in_all(clauses: list[str], figures: list[int], change: int) -> list[str]:
    """The clauses with the shown change after the last figure when the figures quoted do not add up to it
    (parts left unsaid), or when the change is shown as 0: "+7 (no change in all)", "-6 (-5 in all)"."""
    if change and sum(figures) == change:
        return clauses
    last = max(k for k, f in enumerate(figures) if f)
    tail = "no change in all" if change == 0 else f"{signed(change)} in all"
    return [c[:-1] + f" ({tail})." if k == last else c for k, c in enumerate(clauses)]


def update_note(state_missing: bool, first: bool, settings_changed) -> str:
    """The one sentence about the whole update ("" when nothing special)."""
    if state_missing:
        return "The record of the previous update was missing, so these are shown as first ratings with no breakdown."
    if first:
        return "First update: these are first ratings, so there is nothing to compare with yet."
    if settings_changed:
        return "The league's settings changed since the previous update; the effect is in the corrections column."
    return ""


IRREGULAR_PLURALS = {"match": "matches", "division": "divisions", "is": "are", "was": "were", "has": "have"}


def plural(n: int, word: str, many: str | None = None) -> str:
    """A count with its noun in the right number: ``plural(1, "warning")`` -> "1 warning", 2 -> "2 warnings"."""
    if n == 1:
        return f"{n} {word}"
    *lead, last = word.split(" ")
    return f"{n} {many or ' '.join([*lead, IRREGULAR_PLURALS.get(last) or last + 's'])}"


# The printed sentences speak to the player ("You won ..."); the window's reader is the secretary, so
# there the player is named instead. Every second-person phrase the templates above use is listed here.
_NAMED = (("You have not played", "{name} has not played"), ("You did not play", "{name} did not play"),
          ("You won", "{name} won"), ("Players you met", "Players they met"),
          ("Players you have met", "Players they have met"), ("moves you back", "moves them back"),
          ("for you:", "for them:"),
          ("Your", "Their"), ("your", "their"))


def naming(text: str, name: str) -> str:
    """A sentence from ``sentence`` told about the player rather than to them ("Yvette won 4 of 5 ...")."""
    first = name.split()[0] if name.split() else name
    for spoken, told in _NAMED:
        text = text.replace(spoken, told.format(name=first))
    return text
