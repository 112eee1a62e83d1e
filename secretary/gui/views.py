"""What the window shows, worked out on plain objects: no tkinter here, so it is testable without a display."""
from __future__ import annotations

import datetime as dt
import heapq
import itertools
import re
from dataclasses import dataclass, replace
from operator import itemgetter
from typing import Iterable, Mapping, Sequence

from secretary.model.division_table import INFERRED, LEVEL_SD, LEVEL_SD_MEANING
from secretary.model.notice import PAST_NOTE, fixture_note, is_past, percent
from secretary.model.notice import percent_chance as chance
from secretary.model.records import HOME_RULES
from secretary.model.sentences import naming, plural
from secretary.model.watch_sentences import GAP, GAP_MEANING, GAP_SD, GAP_SD_MEANING
from secretary.workbook import schema

# ------------------------------------------------------------------ the routine

STEPS = ("Check the results", "Update the ratings", "Review what changed", "Print the notice board")
SHORT_STEPS = (("Check results", "Update ratings", "Review changes", "Print board"),
               ("Check", "Update", "Review", "Print"))  # for narrow windows, longest first
RUNNING_WORDS = {"check": (0, "Checking\u2026"), "update": (1, "Updating\u2026"), "last": (1, "Reading\u2026"),
                 "settings": (0, "Saving settings\u2026"), "restore": (0, "Restoring\u2026")}
DONE, ATTENTION, WAITING = "done", "needs attention", "waiting"
STATE_WORDS = {DONE: "\u2713 Done", ATTENTION: "! Needs attention", WAITING: "Waiting"}


@dataclass(frozen=True)
class Session:
    """How far the secretary has got with the open workbook this time."""

    opened: bool = False
    checked: bool = False  # a check (or an update) has read the workbook
    errors: int = 0  # errors found by the last check
    updated: bool = False
    update_failed: bool = False
    reviewed: bool = False
    printed: bool = False
    notice_exists: bool = False  # a PDF notice board is already beside the workbook
    update_note: str = ""  # shown under step 2, e.g. "last update 16 Apr 2026"
    waiting_results: bool = False  # results or settings changed since the ratings shown were published

    def but(self, **changes) -> "Session":
        """A copy with some fields changed."""
        return replace(self, **changes)


def step_states(s: Session) -> tuple[str, ...]:
    """The state of each of the four steps."""
    check = ATTENTION if s.errors else (DONE if s.checked else WAITING)
    current = s.updated and not s.errors and not s.waiting_results
    update = DONE if current else (ATTENTION if s.update_failed else WAITING)
    review = DONE if s.reviewed else WAITING
    printed = DONE if s.printed else WAITING
    return check, update, review, printed


def steps_enabled(s: Session) -> tuple[bool, ...]:
    """Which steps can be started now."""
    ready = s.opened and s.checked and not s.errors
    return s.opened, ready, s.updated, s.updated or (s.opened and s.notice_exists)


def step_names(fits) -> tuple[str, ...]:
    """The longest set of step names for which ``fits(names)`` holds (the shortest set otherwise)."""
    for names in (STEPS, *SHORT_STEPS):
        if fits(names):
            return names
    return SHORT_STEPS[-1]


def window_size(screen: tuple[int, int], saved: tuple[int, int] | None = None) -> tuple[int, int]:
    """The window's first size: the remembered one if it still fits, else as much of the screen as suits.

    A taskbar (up to 48 pixels) and a title bar (about 32) are left free, so that the bottom edge,
    with the status line and Cancel, is on the screen.
    """
    most_w, most_h = screen[0], max(400, screen[1] - 80)
    if saved is not None and 600 <= saved[0] <= most_w and 400 <= saved[1] <= most_h:
        return saved
    return min(most_w, 1280), min(most_h, 800)


def smallest_size(screen: tuple[int, int]) -> tuple[int, int]:
    """The smallest the window may be dragged to (never more than the screen allows)."""
    return min(760, screen[0]), min(460, max(400, screen[1] - 80))


def next_step(s: Session) -> int | None:
    """The index of the step to do next (the highlighted one), None when there is nothing to do."""
    if not s.opened:
        return None
    for i, (state, enabled) in enumerate(zip(step_states(s), steps_enabled(s))):
        if state != DONE:
            return i if enabled else None
    return None


# ------------------------------------------------------------------ tables


@dataclass(frozen=True)
class Column:
    """One column of a table in the window: its id, heading, tooltip and width in characters."""

    key: str
    heading: str
    tip: str
    width: int = 10
    numeric: bool = False
    stretch: bool = False


@dataclass(frozen=True)
class Row:
    """One table row: ``values`` for sorting, ``shown`` for display, ``tags`` for colour."""

    iid: str
    values: tuple
    shown: tuple[str, ...]
    tags: tuple[str, ...] = ()


SORT_CHUNK = 500  # rows whose sort keys are worked out and sorted per step (a few ms: one turn of the event loop)
NUMBER, TEXT, BLANK = 0, 1, 2  # how a value sorts: numbers by size, then text, blanks always last


def sort_value(value: object) -> tuple[int, float | str]:
    """(NUMBER, the number) for numbers and dates, (TEXT, the text without regard to capitals), (BLANK, "")."""
    if value is None or value == "":
        return BLANK, ""
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return NUMBER, float(value)
    if isinstance(value, dt.date):
        return NUMBER, float(value.toordinal())
    return TEXT, str(value).casefold()


def sort_rows(rows: Sequence[Row], index: int, descending: bool = False) -> list[Row]:
    """Rows ordered by one column: numbers by size, then text alphabetically without regard to capitals
    (the other way round when ``descending``); blanks stay at the end either way."""
    steps = sort_steps(lambda start, end: rows[start:end], len(rows), index, descending, chunk=max(1, len(rows)))
    while True:
        try:
            next(steps)
        except StopIteration as done:
            return list(done.value)


def sort_steps(rows_of, count: int, index: int, descending: bool = False, chunk: int = SORT_CHUNK):
    """``sort_rows`` a chunk at a time, for a table that must not hold the window up: a generator that sorts
    ``chunk`` rows per step (``rows_of(start, end)`` gives them), yields between steps and returns an iterator
    over all ``count`` rows in order, merged from the sorted chunks as it is read. Equal values keep the
    order given, either way (the merge takes an earlier chunk's row first). The keys are plain numbers and
    strings, no tuple per row: 100,000 of those would set off the garbage collector's full passes."""
    runs, blanks = ([], []), []  # per kind: each chunk's (key, row) pairs in order, as iterators
    for start in range(0, count, chunk):
        if start:
            yield
        parts = ([], []), ([], [])  # per kind: keys, rows
        for row in rows_of(start, start + chunk):
            kind, key = sort_value(row.values[index])
            if kind == BLANK:
                blanks.append(row)
            else:
                parts[kind][0].append(key)
                parts[kind][1].append(row)
        for kind, (keys, rows) in enumerate(parts):
            order = sorted(range(len(keys)), key=keys.__getitem__, reverse=descending)
            runs[kind].append(zip([keys[i] for i in order], [rows[i] for i in order]))
    merged = [heapq.merge(*run, key=itemgetter(0), reverse=descending) for run in runs]  # a run is freed once read
    return itertools.chain(*(map(itemgetter(1), m) for m in (merged[::-1] if descending else merged)), blanks)


def matches(text: str, search: str) -> bool:
    """Whether a search (words in any order, capitals ignored) finds this text."""
    folded = text.casefold()
    return all(word in folded for word in search.casefold().split())


ALL_DIVISIONS = "All divisions"


def filter_rows(rows: Sequence[Row], search: str = "", division: str = ALL_DIVISIONS,
                name_index: int = 1, division_index: int = 4) -> list[Row]:
    """Rows whose player matches the search and who are in the chosen division."""
    if not search.split() and division in ("", ALL_DIVISIONS):
        return list(rows)  # nothing to leave out (the usual case, and the quick one for a big league)
    return [r for r in rows
            if matches(str(r.values[name_index]), search)
            and (division in ("", ALL_DIVISIONS) or r.values[division_index] == division)]


def divisions_of(rows: Iterable[Row], division_index: int = 4) -> list[str]:
    """The division filter's choices."""
    return [ALL_DIVISIONS] + sorted({str(r.values[division_index]) for r in rows if r.values[division_index]},
                                    key=str.casefold)


def points(x: float | None) -> str:
    return "" if x is None else f"{x:.0f}"


def signed(x: float | None) -> str:
    """Whole points with their sign ("+12", "-3", "0")."""
    if x is None:
        return ""
    n = round(x)
    return f"{n:+d}" if n else "0"


def band(rating: float, sd: float) -> str:
    """The rating's likely range, one ± either side, e.g. "1480 - 1560"."""
    return f"{rating - sd:.0f} \u2013 {rating + sd:.0f}"


def day(d: dt.date | None) -> str:
    return "" if d is None else d.strftime("%d %b %Y")


def player_detail(p, doubles: bool) -> str:
    """The line under a player's name in the Ratings panel; ``doubles``: the league has doubles, so say how many
    of the weighted games were doubles (the Ratings sheet's Doubles games, rounded as Weighted games is)."""
    new = "new this update; " if p.is_new or p.change is None else ""
    of_them = f" ({p.doubles_games:.0f} doubles)" if doubles else ""
    return (f"{p.division or 'no division'}: rating {p.rating:.0f} \u00b1 {p.sd:.0f} (likely {band(p.rating, p.sd)}); "
            f"{new}{p.games:.0f} weighted games{of_them}, last played {day(p.last_played)}.")


def stamp_day(stamp: str | None) -> str:
    """The day of an update's timestamp ("2026-04-16 10:30:00" -> "16 Apr 2026"); the text itself if odd."""
    try:
        return day(dt.date.fromisoformat((stamp or "")[:10]))
    except ValueError:
        return stamp or ""


RATING_COLUMNS = (
    Column("rank", "Rank", "Place in the league, best rating first; equal shown ratings share a place.", 3, True),
    Column("player", "Player", "The player's name as the Results sheet writes it.", 16, stretch=True),
    Column("rating", "Rating", "The player's estimated strength in points: higher is stronger.", 5, True),
    Column("change", "Change", "Points gained or lost since the previous update (blank for a new player).", 5, True),
    Column("division", "Division", "The division the player is counted in.", 10),
    Column("sd", "\u00b1", "How uncertain the rating is, in points: fewer or older games mean a bigger \u00b1.", 3, True),
    Column("games", "Weighted games", "Games played, old ones counting less (see Half-life in Settings), "
           "rounded to whole games: the Weighted games column of the Ratings sheet.", 6, True),
    Column("last", "Last played", "The date of the player's most recent result.", 10, True),
    Column("note", "Note", "New players, ratings that rest on few games, and divisions that the Players sheet "
           "does not give (taken from the player's most recent result) are marked here.", 12),
)


LEVEL_COLUMNS = (
    Column("division", "Division", "The division.", 11),
    Column("level", "Division level", "How strong the division is as a whole, in points above (+) or below (-) "
           "the starting rating (Centre); a player's rating is their division's level plus how far they stand "
           "from it (the division's level, a random effect fitted with the players).", 8, True),
    Column("sd", LEVEL_SD, f"{LEVEL_SD_MEANING} Technical term: the level's posterior SD. It stays wide even "
           "with many games, because games show a division's strength but not how it splits between the level "
           "and its players' own distances from it; blank when Division spread is 0 (fixed levels).", 6, True),
    Column("players", "Players", "Players counted in the division.", 6, True),
    Column("cross", "Games against other divisions", "Games against other divisions (older ones counting "
           "less): the games that set the level.", 9, True),
    Column("note", "Note", "How the level was set: from a starting level on the Divisions sheet, or still at it.",
           30, stretch=True),
)


def level_rows(levels: Sequence) -> list[Row]:
    """The divisions table (``division_table.DivisionLevel``), strongest first as given."""
    rows = []
    for d in levels:
        values = (d.label, d.level, d.sd, d.players, d.cross_games, d.note)
        shown = (d.label, signed(d.level), points(d.sd), str(d.players), f"{d.cross_games:.0f}", d.note)
        rows.append(Row(d.label, values, shown, () if d.cross_games or d.sd is None else ("flagged",)))
    return rows


def filled_columns(columns: Sequence[Column], rows: Sequence[Row]) -> list[str]:
    """The keys of the columns with something shown in at least one row (an empty one takes room for nothing)."""
    return [c.key for i, c in enumerate(columns) if any(r.shown[i] not in ("", None) for r in rows)]


def rating_rows(ratings: Sequence, few_games: float) -> list[Row]:
    """The Ratings table: best first, with shared places for equal shown ratings."""
    order = sorted(ratings, key=lambda p: (-p.rating, p.name.casefold()))  # the Ratings sheet's order
    # First ratings: everyone is new, so colour marks nobody out.
    marked = ("new",) if not all(p.is_new or p.change is None for p in order) else ()
    days: dict = {}  # each date's text once: many players last played on the same day
    rows, place = [], 0
    for position, p in enumerate(order, start=1):
        if position == 1 or round(p.rating) != round(order[position - 2].rating):
            place = position
        new = p.is_new or p.change is None
        notes = (["new this update"] if new else []) + (["few games"] if p.games < few_games else []) + (
            [INFERRED] if p.division_from == HOME_RULES[1] else [])
        values = (place, p.name, p.rating, None if new else p.change, p.division, p.sd, p.games,
                  p.last_played, ", ".join(notes))
        last = days.get(p.last_played)
        if last is None:
            last = days[p.last_played] = day(p.last_played)
        shown = (str(place), p.name, points(p.rating), "" if new else signed(p.change),
                 p.division, points(p.sd), f"{p.games:.0f}", last, values[-1])
        rows.append(Row(p.name, values, shown, marked if new else ()))
    return rows


# ------------------------------------------------------------------ problems

PROBLEM_COLUMNS = (
    Column("severity", "Kind", "Error or warning (the severity): errors stop the update until fixed; "
           "warnings do not.", 8),
    Column("sheet", "Sheet", "The sheet of the workbook where the problem is.", 9),
    Column("row", "Row", "The row number in that sheet.", 5, True),
    Column("column", "Column", "The column heading in that sheet.", 9),
    Column("found", "Found", "What the cell holds now.", 12),
    Column("problem", "Problem", "What is wrong, in plain words.", 30, stretch=True),
    Column("fix", "What to do", "How to put it right.", 30, stretch=True),
)


def problem_rows(problems: Sequence) -> list[Row]:
    """The Problems table: errors first, then warnings, each in sheet order."""
    return [problem_row(i, problems[i]) for i in problem_order(problems)]


def problem_order(problems: Sequence) -> list[int]:
    """The problems' indices, errors first, then warnings, each in sheet order (``problem_row`` makes the rows).

    Plain numbers, no pair per problem: 100,000 new tuples would set off the garbage collector's full passes.
    """
    errors = [i for i, p in enumerate(problems) if p.is_error]
    return errors + [i for i, p in enumerate(problems) if not p.is_error]


def problem_row(i: int, p) -> Row:
    """Row ``i`` of the Problems table: problem ``p``."""
    word = "Error" if p.is_error else "Warning"
    values = (word, p.sheet, p.row, p.column or "", p.found, p.problem, p.fix)
    shown = tuple("" if v is None else str(v) for v in values)
    return Row(str(i), values, shown, ("error" if p.is_error else "warning",))


def column_letter(number: int) -> str:
    """Spreadsheet column letters for a 1-based column number (1 -> A, 28 -> AB)."""
    letters = ""
    while number > 0:
        number, rest = divmod(number - 1, 26)
        letters = chr(65 + rest) + letters
    return letters


def cell_reference(problem, layouts: Mapping | None = None) -> str:
    """Where to look, as the spreadsheet names it: "Results!E12", or the sheet alone."""
    layout = (layouts or {}).get(problem.sheet)
    title = layout.title if layout is not None else problem.sheet
    sheet = f"'{title}'" if re.search(r"[^A-Za-z0-9_]", title) else title
    letter = ""
    if problem.column:
        if layout is not None:
            for key, header in layout.headers.items():
                if schema.header_key(header) == schema.header_key(problem.column):
                    letter = column_letter(layout.columns[key])
        if not letter and re.fullmatch(r"[A-Z]{1,3}", problem.column):
            letter = problem.column
    if problem.row is None:
        return f"{sheet}!{letter}:{letter}" if letter else f"the {title} sheet"
    return f"{sheet}!{letter}{problem.row}" if letter else f"{sheet} row {problem.row}"


def fix_line(problem, layouts: Mapping | None = None) -> str:
    """The prominent line under the Problems table for the chosen problem."""
    return f"Fix cell {cell_reference(problem, layouts)}: {problem.fix}"


def problems_summary(problems: Sequence) -> str:
    errors = sum(1 for p in problems if p.is_error)
    warnings = len(problems) - errors
    if not problems:
        return "No problems found: the results are ready for the update."
    if errors:
        return (f"{plural(errors, 'error')} to fix before the ratings can be updated"
                + (f", and {plural(warnings, 'warning')}." if warnings else "."))
    return f"{plural(warnings, 'warning')}; the update can go ahead."


def problem_detail(problem) -> str:
    """Everything about one problem, in full, for the pane under the Problems table."""
    found = "" if problem.found in (None, "") else f"\nFound: {problem.found}"
    kind = "Error (stops the update)" if problem.is_error else "Warning (the update can go ahead)"
    return f"{kind}: {problem.problem}{found}\nWhat to do: {problem.fix}"


# ------------------------------------------------------------------ what changed

PARTS = ("Own results", "Opponents re-rated", "Group shift", "Corrections")
PART_TIPS = (
    "Own results: the player's own new games, and their older games counting a little less.",
    "Opponents re-rated: players they met moved, which changes what their own results are worth.",
    "Group shift: whole divisions moved against each other.",
    "Corrections: old results edited or removed, or rating settings changed.",
)
MIN_SCALE = 10.0  # points: a bar chart's half-width never stands for less, so tiny changes look tiny


def movers(changes: Sequence, did_not_play: bool = False, search: str = "") -> list:
    """Players biggest change first (new players last); optionally only those who did not play."""
    searching = bool(search.split())  # no search: nobody is left out by name (quick for 20,000 players)
    chosen = [c for c in changes if (not searching or matches(c.name, search)) and (not did_not_play or not c.played)]
    return sorted(chosen, key=lambda c: (c.is_new, -abs(c.shown[2]), c.name.casefold()))


@dataclass(frozen=True)
class Bar:
    """One bar of a breakdown chart, in pixels from the chart's left edge."""

    label: str
    value: int
    x0: float
    x1: float


def common_scale(changes: Iterable) -> float:
    """Points that a chart's half-width stands for: the largest part of any of these changes (at least
    ``MIN_SCALE``), so that every player's bars are drawn to one scale and can be compared."""
    return max([MIN_SCALE] + [abs(v) for c in changes if not c.is_new for v in c.shown[3:7]])


TICK_STEPS = (5, 10, 20, 25, 50, 100, 200, 250, 500, 1000, 2000, 5000)


def axis_ticks(scale: float, most: int = 4) -> list[int]:
    """Round point values for the axis, from -scale to +scale, with at most ``most`` on each side of 0."""
    step = next((t for t in TICK_STEPS if scale / t <= most), TICK_STEPS[-1])
    n = int(scale // step)
    return [k * step for k in range(-n, n + 1)]


def bar_geometry(shown_parts: Sequence[int], width: float,
                 scale: float | None = None) -> tuple[float, tuple[Bar, ...]]:
    """Bars for the four parts around a zero line in the middle; returns (zero x, bars).

    The half-width stands for ``scale`` points (shared by all the players shown), or by default for
    the largest part (at least ``MIN_SCALE`` points).
    """
    zero = width / 2
    scale = scale or max([MIN_SCALE] + [abs(v) for v in shown_parts])
    k = zero / scale
    bars = tuple(Bar(label, int(v), zero + min(0, v) * k, zero + max(0, v) * k)
                 for label, v in zip(PARTS, shown_parts))
    return zero, bars


def named_sentence(c) -> str:
    """The change's sentence as the secretary reads it: about the player, by name ("Yvette won ...")."""
    return naming(c.sentence, c.name)


def change_headline(c) -> str:
    """"Ada Finch: 1512 -> 1530 (+18)", or the first rating of a new player."""
    before, after, change = c.shown[:3]
    if c.is_new:
        return f"{c.name}: first rating {after}"
    return f"{c.name}: {before} \u2192 {after} ({signed(change)})"


def changes_summary(updated) -> str:
    """The line above the What changed charts, from an update's results (None before any)."""
    if updated is None:
        return "Update the ratings to see what changed and why."
    if updated.first_update:
        return updated.note or "These are the first ratings: the next update will explain every change."
    text = (f"Since the last update: {updated.new_rows} new, {updated.edited_rows} edited and "
            f"{updated.removed_rows} removed result rows. Biggest changes first.")
    return text + (f" {updated.note}" if updated.note else "")


# ------------------------------------------------------------------ rating history chart


def line_points(history: Sequence[tuple[dt.date, float]], width: float, height: float,
                pad: float = 8.0) -> tuple[list[tuple[float, float]], float, float]:
    """Pixel points for a rating history; returns (points, lowest, highest) of the vertical axis."""
    if not history:
        return [], 0.0, 0.0
    ratings = [r for _, r in history]
    low, high = min(ratings), max(ratings)
    if high - low < 50:  # a flat line should look flat, not zoomed into noise
        mid = (high + low) / 2
        low, high = mid - 25, mid + 25
    first, last = history[0][0].toordinal(), history[-1][0].toordinal()
    span = max(last - first, 1)
    out = []
    for d, r in history:
        x = width / 2 if last == first else pad + (width - 2 * pad) * (d.toordinal() - first) / span
        y = pad + (height - 2 * pad) * (high - r) / (high - low)
        out.append((x, y))
    return out, low, high


# ------------------------------------------------------------------ watch list and fixtures

FIXTURE_COLUMNS = (
    Column("date", "Date", "When the match is to be played.", 10, True),
    Column("a", "Player A", "The first player named in the Fixtures sheet (with Partner A, for doubles).", 16,
           stretch=True),
    Column("b", "Player B", "The second player (with Partner B, for doubles).", 16, stretch=True),
    Column("race", "Race", "Games each needs to win (the fixture's race, else the usual race).", 6),
    Column("chance", "Chance A", "Player A's chance (side A's, for doubles) of winning the match at that race.", 7, True),
    Column("fair", "Fair race", "The handicap race closest to an even match (A's games - B's games).", 8),
    Column("fair_chance", "Chance A (fair)", "Player A's chance at the fair race: near 50% is even.", 9, True),
    Column("note", "Forecast note", "A past fixture (dated before the latest results), or where the chance could "
           "be far off: a player new to the ratings or with few games (chances are averaged over each rating's "
           "\u00b1).", 24,
           stretch=True),
)


PAST = PAST_NOTE


def fixture_rows(forecasts: Sequence, latest: dt.date | None = None) -> list[Row]:
    """The Fixtures table, coming fixtures first; those dated before ``latest`` (the newest result) are marked past
    and listed after them, as on the handicap card."""
    rows = []
    for i, f in enumerate(forecasts):
        fx = f.fixture
        past = is_past(fx.date, latest)
        note = fixture_note(f, latest)
        values = (fx.date, fx.label_a, fx.label_b, f"{f.race_a}-{f.race_b}", f.race_chance,
                  f"{f.fair_race_a}-{f.fair_race_b}", f.fair_chance, note)
        shown = (day(fx.date), fx.label_a, fx.label_b, values[3], chance(f.race_chance), values[5],
                 chance(f.fair_chance), values[7])
        rows.append(Row(str(i), values, shown, ("past",) if past else ("uncertain",) if note else ()))
    return sorted(rows, key=lambda r: "past" in r.tags)  # stable: date order within each


FIXTURE_CHOOSE = "Choose a fixture in the table to read its forecast note in full here."


def fixture_detail(f, latest: dt.date | None = None) -> str:
    """The chosen fixture in full, for the lines under the Fixtures table (its Forecast note column is
    too narrow for a long note)."""
    fx = f.fixture
    when = f"{day(fx.date)}, " if fx.date else ""
    note = fixture_note(f, latest) or "none: both ratings are sure enough for this chance"
    return (f"{when}{fx.label_a} v {fx.label_b}: race {f.race_a}-{f.race_b}, {fx.label_a} "
            f"{chance(f.race_chance)}; fair race {f.fair_race_a}-{f.fair_race_b}, {chance(f.fair_chance)}."
            f"\nForecast note: {note}.")


DIVISION_COLUMNS = (
    Column("division", "Division", "The division (the group whose level is compared with the others).", 14),
    Column("players", "Players", "Players counted in the division.", 6, True),
    Column("level", GAP, GAP_MEANING, 6, True),
    Column("gap_sd", GAP_SD, GAP_SD_MEANING, 6, True),
    Column("linked", "How well linked", "How well games against other divisions tie the division in: 100% is "
           "fully tied in, a low share means its level is mostly a guess. Technical term: linked share (how much "
           "of its gap to the rest games against other divisions pin down; 50% = to about ±104 points).", 9, True),
    Column("cross", "Games against other divisions", "Games (older ones counting less) against other "
           "divisions.", 9, True),
    Column("linkers", "Players who link it", "How many of its players met someone from another division.", 9,
           True),
    Column("todo", "What to do", "What would tie this division in better.", 40, stretch=True),
)

HELD_COLUMNS = (
    Column("player", "Player", "A player whose rating is held back: their results run ahead of it, and the "
           "starting assumption holds them (held by the prior).", 16),
    Column("division", "Division", "The division they are counted in.", 12),
    Column("rating", "Rating", "Their rating now, in points.", 6, True),
    Column("games", "Weighted games", "Games played, old ones counting less (see Half-life in Settings): the "
           "Weighted games column of the Watch list sheet.", 7, True),
    Column("won", "Weighted wins", "Games won, old ones counting less, as in Weighted games.", 7, True),
    Column("expected", "Expected at their rating", "Games their rating says they should have won.", 7, True),
    Column("held", "Points held back", "How much further their results alone would move them.", 8, True),
    Column("todo", "What to do", "What would settle their rating.", 40, stretch=True),
)

SUGGESTION_COLUMNS = (
    Column("a", "Player A", "First player of the suggested match.", 16),
    Column("b", "Player B", "Second player.", 16),
    Column("divisions", "Divisions", "Their divisions: a match across divisions ties their levels together.", 18),
    Column("race", "Race to", "The league's usual race.", 5),
    Column("chance", "A's chance per game", "Player A's chance of winning one game.", 9, True),
    Column("target", "Ties in", "The division whose level this match pins down most.", 12),
    Column("sd", f"{GAP_SD} now \u2192 after", "How uncertain that division's gap to the rest is now, and after "
           f"this match (with the ones above it): the Watch list's {GAP_SD}, not the {LEVEL_SD} on the Ratings "
           "sheet.", 14),
    Column("todo", "What to do", "The suggestion in plain words.", 36, stretch=True),
)


def division_rows(watch) -> list[Row]:
    rows = []
    for d in watch.divisions:
        values = (d.division or "(none)", d.players, d.relative_level, d.level_sd, d.linked_share, d.cross_games,
                  d.linking_players, d.what_to_do or "nothing: well linked")
        shown = (values[0], str(d.players), signed(d.relative_level), points(d.level_sd), percent(d.linked_share),
                 f"{d.cross_games:.0f}", str(d.linking_players), values[7])
        rows.append(Row(d.division or "(none)", values, shown, ("flagged",) if d.flagged else ()))
    return rows


def held_rows(watch) -> list[Row]:
    rows = []
    for h in watch.held:
        values = (h.name, h.division, h.rating, h.games, h.won, h.expected, h.held_points, h.what_to_do)
        shown = (h.name, h.division, points(h.rating), f"{h.games:.1f}", f"{h.won:.1f}", f"{h.expected:.1f}",
                 signed(h.held_points), h.what_to_do)
        rows.append(Row(h.name, values, shown, ("flagged",) if h.flagged else ()))
    return rows


def suggestion_rows(watch) -> list[Row]:
    rows = []
    for i, s in enumerate(watch.suggestions):
        values = (s.player_a, s.player_b, f"{s.division_a} v {s.division_b}", s.race, s.chance_a, s.target,
                  s.sd_before, s.what_to_do)
        shown = (*values[:3], f"{s.race}-{s.race}", chance(s.chance_a), s.target,
                 f"{s.sd_before:.0f} \u2192 {s.sd_after:.0f}", s.what_to_do)
        rows.append(Row(str(i), values, shown))
    return rows


def watch_lines(watch) -> list[str]:
    """The watch list's to-do lines, most important first (worded as on the command line)."""
    from secretary.model.watch_sentences import NOTHING_TO_DO, watch_lines as lines

    return lines(watch) or [NOTHING_TO_DO]


# ------------------------------------------------------------------ settings


def setting_text(spec, value) -> str:
    """A setting's value as the dialog's field shows it; blank when it is the default."""
    if value is None or value == spec.default:
        return ""
    return plain(value)


def default_text(spec) -> str:
    """The default as the secretary would type it."""
    return "blank" if spec.default == "" else plain(spec.default)


def plain(value) -> str:
    """A number without a pointless ".0"."""
    return str(int(value)) if isinstance(value, float) and value.is_integer() else str(value)


# The technical term behind a setting's plain name, for its tooltip (the screen keeps the plain name).
SETTING_TERMS = {
    "centre": "the prior mean, in points",
    "scale": "logistic scale: points for odds of 10 to 1 per game (as in Elo)",
    "skill_spread": "prior standard deviation of the players' strengths",
    "half_life_days": "exponential age weighting of games",
    "division_spread": "prior standard deviation of the division levels",
    "weakly_linked_below": "threshold on the linked share",
    "held_z": "z-score of the surplus of wins over the rating's expectation (held by the prior)",
    "few_games": "age-weighted games",
}


def setting_tip(spec) -> str:
    default = default_text(spec)
    term = SETTING_TERMS.get(spec.field)
    return (f"{spec.explanation}\nAllowed: {spec.allowed}. Leave it blank for the default ({default})."
            + (f"\nTechnical term: {term}." if term else ""))


def settings_messages(texts: Mapping[str, str]) -> dict[str, str]:
    """Per setting field, the message to show beside it ("" when the value is fine)."""
    messages, values = {}, {}
    for spec in schema.SETTINGS_TABLE:
        value, error = schema.validate_setting(spec.field, texts.get(spec.field, ""))
        messages[spec.field] = error or ""
        values[spec.field] = value
    if not messages["usual_race"] and not messages["longest_race"] \
            and values["usual_race"] > values["longest_race"]:
        messages["usual_race"] = f"must not be longer than the longest race ({values['longest_race']})"
    if not messages["shortest_race"] and not messages["longest_race"] \
            and values["shortest_race"] > values["longest_race"]:
        messages["shortest_race"] = f"must not be longer than the longest race ({values['longest_race']})"
    return messages


def can_save(messages: Mapping[str, str]) -> bool:
    return not any(messages.values())
