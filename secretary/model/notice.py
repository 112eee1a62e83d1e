"""What the notice board says: per division, the ranked players with their change and its reason.

Pure (no files, no spreadsheet or PDF library): the `Notice board` sheet and
the PDF notice board both print a ``Notice`` built here, so the two always
agree.  Figures are the breakdown's shown whole points (``PlayerChange.shown``),
whose four parts add up to the shown change.
"""
from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass
from itertools import groupby
from typing import TYPE_CHECKING, Iterable, Sequence

from secretary.model.division_table import DivisionLevel, level_sentence
from secretary.model.records import PlayerRating, Settings
from secretary.model.sentences import plural

if TYPE_CHECKING:  # pragma: no cover - typing only
    from secretary.model.breakdown import Breakdown, PlayerChange
    from secretary.model.fixtures import FixtureForecast

PART_NAMES = ("Own results", "Opponents re-rated", "Group shift", "Corrections")
# Okabe-Ito colours, one per part, told apart with every common kind of colour blindness; the printed
# board and the window's What changed tab both use them, so that a part looks the same everywhere.
PART_COLOURS = ("#0072B2", "#E69F00", "#009E73", "#CC79A7")
NO_DIVISION = "(no division)"
MONTHS = ("January", "February", "March", "April", "May", "June", "July", "August",
          "September", "October", "November", "December")
CHART_PLAYERS = 6  # biggest changes drawn per division

NOT_RATED = "{} not rated yet: this chance is a rough guess"
NO_DIVISION_NOTE = ("{} no results and no division on the Players sheet: this chance is a rough guess; "
                    "add {} there for a better one")
FAR_OFF_NOTE = "{} has {}: this chance could be far off"
ROUGH_NOTE = "{} has {}: treat this chance as rough"
PAST_NOTE = "past: dated before the latest results"  # a fixture before the newest result (window, sheet, card)

CLOSING = (
    "Ratings are estimates worked out from the results so far. The ± after a rating is its "
    "uncertainty: the fewer games a player has, the larger it is.",
    "The league committee makes the decisions (handicaps, seeding, prizes); the ratings are "
    "only there to help.",
    "Names are published following the local data-protection rules: anyone who would rather "
    "not be listed can ask the secretary.",
)


@dataclass(frozen=True)
class NoticeLine:
    """One player's line: rank in the division, rating, ± and the shown change with its parts (points)."""

    rank: int
    name: str
    rating: float
    sd: float
    change: int | None  # shown whole points; None for a first or new rating
    parts: tuple[int, int, int, int] | None  # shown own, opponents, group, corrections
    sentence: str


@dataclass(frozen=True)
class NoticeDivision:
    """One division's block of the notice board."""

    division: str  # printable label
    lines: tuple[NoticeLine, ...]

    def biggest_changes(self, most: int = CHART_PLAYERS) -> tuple[NoticeLine, ...]:
        """Up to ``most`` lines with a change, the largest absolute change first."""
        moved = [line for line in self.lines if line.change is not None and line.parts is not None]
        return tuple(sorted(moved, key=lambda line: (-abs(line.change), line.name.casefold()))[:most])


@dataclass(frozen=True)
class Notice:
    """Everything the printed notice board shows."""

    title: str
    dates: str  # the period covered, in words
    note: str  # one sentence about the whole update, or ""
    first_update: bool
    divisions: tuple[NoticeDivision, ...]
    removed: str  # a closing line about players no longer rated, or ""
    closing: tuple[str, ...] = CLOSING
    doubles: str = ""  # the week's doubles results in one paragraph, or ""
    levels: tuple[DivisionLevel, ...] = ()  # the divisions' levels, strongest first (only when they are fitted)
    level_sentence: str = ""  # what "division level" means, in one plain sentence ("" without levels)

    def levels_line(self) -> str:
        """``Premier +152 ± 31; Division One +4 ± 28; ...`` ("" without fitted levels)."""
        return "; ".join(f"{d.label} {d.level:+.0f} \u00b1 {d.sd:.0f}" for d in self.levels)


def percent(p: float) -> str:
    """A share as a whole percentage ("71%"), halves rounded up as a spreadsheet rounds them (0.5% is "1%")."""
    return f"{math.floor(100 * p + 0.5):d}%"


def percent_chance(p: float) -> str:
    """A chance as a whole percentage, but never "0%" or "100%" for one that is not certain: "<1%", ">99%"
    (the window, the handicap card and ``secretary fixtures``; the Fixtures sheet's number format says the same)."""
    if 0 < p < 0.005:
        return "<1%"
    if 0.995 <= p < 1:
        return ">99%"
    return percent(p)


def long_date(day: dt.date | None) -> str:
    """``10 March 2026`` (English month names whatever the computer's language)."""
    return "" if day is None else f"{day.day} {MONTHS[day.month - 1]} {day.year}"


def division_label(division: str) -> str:
    """A division's printable name; players without one are grouped under a plain label."""
    return division or NO_DIVISION


def division_order(ratings: Iterable[tuple[str, float]]) -> dict[str, int]:
    """Position of each division: strongest first (by its players' average rating), no division last.

    ``ratings`` holds ``(division, rating)`` per player; a league's top
    division usually comes first on a notice board, so strength is the order.
    """
    sums: dict[str, list[float]] = {}
    for division, rating in ratings:
        sums.setdefault(division, []).append(rating)
    order = sorted(sums, key=lambda d: (not d, -sum(sums[d]) / len(sums[d]), d.casefold()))
    return {d: k for k, d in enumerate(order)}


def league_title(settings: Settings, what: str) -> str:
    """``Riverside League: ratings`` or just ``Ratings`` when the league has no name."""
    name = settings.league_name.strip()
    return f"{name}: {what}" if name else what[:1].upper() + what[1:]


def period(breakdown: "Breakdown") -> str:
    """The dates the update covers, in words."""
    now = long_date(breakdown.reference_date)
    if breakdown.first_update or breakdown.previous_reference_date is None:
        return f"First ratings, from results up to {now}"
    before = long_date(breakdown.previous_reference_date)
    return f"Changes since the previous update: results up to {before}, now up to {now}"


def _ranked_lines(ratings: Sequence[PlayerRating], changes: dict[str, "PlayerChange"],
                  first_update: bool) -> tuple[NoticeLine, ...]:
    """The division's players best first; players with the same shown rating share a rank."""
    order = sorted(ratings, key=lambda p: (-round(p.rating), p.name.casefold()))
    lines, position = [], 0
    for _, tied in groupby(order, key=lambda p: round(p.rating)):
        tied = list(tied)
        rank = position + 1
        for p in tied:
            pc = changes.get(p.name)
            known = pc is not None and not first_update and not pc.is_new
            lines.append(NoticeLine(
                rank=rank, name=p.name, rating=p.rating, sd=p.sd,
                change=pc.shown[2] if known else None,
                parts=tuple(pc.shown[3:7]) if known else None,
                sentence=pc.sentence if pc is not None else "",
            ))
        position += len(tied)
    return tuple(lines)


DOUBLES_SHOWN = 12  # doubles results listed on the board; the rest are counted


def doubles_summary(rows: Iterable) -> str:
    """The update's new doubles results in one paragraph ("" when there were none), oldest first."""
    rows = sorted((r for r in rows if r.is_doubles and not r.void), key=lambda r: (r.date, r.row))
    if not rows:
        return ""
    shown = [f"{r.label_a} {r.games_a}-{r.games_b} {r.label_b}" for r in rows[:DOUBLES_SHOWN]]
    more = f"; and {len(rows) - DOUBLES_SHOWN} more" if len(rows) > DOUBLES_SHOWN else ""
    return "Doubles this week: " + "; ".join(shown) + more + "."


def build_notice(breakdown: "Breakdown", ratings: Sequence[PlayerRating], settings: Settings,
                 levels: Sequence[DivisionLevel] = ()) -> Notice:
    """The notice board's content: one block per division (strongest first), players ranked within it.

    ``levels`` is the divisions table (``division_table.level_table``); the board shows the levels only
    when they are fitted (a Division spread above 0), not when they are fixed at their starting levels.
    """
    fitted = tuple(d for d in levels if d.sd is not None)
    changes = {pc.name: pc for pc in breakdown.players}
    by_division: dict[str, list[PlayerRating]] = {}
    for p in ratings:
        by_division.setdefault(p.division, []).append(p)
    divisions = tuple(
        NoticeDivision(division_label(d), _ranked_lines(by_division[d], changes, breakdown.first_update))
        for d in division_order((p.division, p.rating) for p in ratings)
    )
    removed = ""
    if breakdown.removed_players:
        names = ", ".join(name for name, _ in breakdown.removed_players)
        removed = f"No longer listed (no rated games left): {names}."
    return Notice(
        title=league_title(settings, "ratings notice board"),
        dates=period(breakdown),
        note=breakdown.note,
        first_update=breakdown.first_update,
        divisions=divisions,
        removed=removed,
        doubles=doubles_summary(breakdown.changes.new),
        levels=fitted,
        level_sentence=level_sentence(settings) if fitted else "",
    )


def forecast_note(fc: "FixtureForecast") -> str:
    """How sure a fixture's chance is, in plain words ('' when it is sure enough).

    A player with no results and no division comes first, with what to do
    about it (``FixtureForecast.no_division``); then the players not rated yet;
    else the player whose rating is least sure when the posterior SD of the
    difference reaches the forecast's ``ROUGH`` or ``FAR_OFF`` thresholds
    (``secretary.model.fixtures``).
    """
    if fc.no_division:
        many = len(fc.no_division) > 1
        return NO_DIVISION_NOTE.format(f"{' and '.join(fc.no_division)} {'have' if many else 'has'}",
                                       "their divisions" if many else "their division")
    if fc.not_rated:
        names = " and ".join(fc.not_rated)
        return NOT_RATED.format(f"{names} {'are' if len(fc.not_rated) > 1 else 'is'}")
    name, games = fc.least_known
    shown = plural(int(f"{games:.0f}"), "game") if games >= 1 else "under 1 game"
    if fc.care == "far off":
        return FAR_OFF_NOTE.format(name, shown)
    return ROUGH_NOTE.format(name, shown) if fc.care == "rough" else ""


def is_past(fixture_date: dt.date | None, latest: dt.date | None) -> bool:
    """A fixture dated before the newest result (``latest``) is past (played, or not played on the day)."""
    return fixture_date is not None and latest is not None and fixture_date < latest


def fixture_note(fc: "FixtureForecast", latest: dt.date | None = None) -> str:
    """``PAST_NOTE`` for a past fixture, then how sure its chance is ('' when coming and sure enough)."""
    past = PAST_NOTE if is_past(fc.fixture.date, latest) else ""
    return "; ".join(n for n in (past, forecast_note(fc)) if n)
