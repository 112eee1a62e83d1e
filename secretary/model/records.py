"""Typed records at the boundaries: plain, frozen, and free of any I/O.

Everything the workbook reader produces and the pipeline passes around is one
of these.  Ratings in records are in display points; the model converts to
log-odds strengths internally (see ``secretary.model.scale``).
"""
from __future__ import annotations

import datetime as dt
import hashlib
from dataclasses import dataclass, field
from typing import Mapping


class _Sides:
    """The two sides of a match or fixture: one player each in singles, two in doubles (both partners given)."""

    @property
    def is_doubles(self) -> bool:
        return bool(self.partner_a and self.partner_b)

    @property
    def side_a(self) -> tuple[str, ...]:
        """Side A's players (one in singles, two in doubles)."""
        return (self.player_a, self.partner_a) if self.is_doubles else (self.player_a,)

    @property
    def side_b(self) -> tuple[str, ...]:
        return (self.player_b, self.partner_b) if self.is_doubles else (self.player_b,)

    @property
    def players(self) -> tuple[str, ...]:
        """Everyone in the match, side A first."""
        return self.side_a + self.side_b

    @property
    def label_a(self) -> str:
        """Side A as printed: "Ann Pike" or "Ann Pike & Cy Dunn"."""
        return " & ".join(self.side_a)

    @property
    def label_b(self) -> str:
        return " & ".join(self.side_b)


@dataclass(frozen=True)
class Result(_Sides):
    """One match between two sides: the games (racks/frames) each side won.

    A singles match has one player a side; a doubles match (both partners given)
    has two, and a side's strength is the mean of its players' strengths.
    """

    date: dt.date
    player_a: str
    player_b: str
    games_a: int
    games_b: int
    division: str = ""
    event: str = ""
    void: bool = False  # kept in the workbook but not rated
    row: int = 0  # row in the Results sheet (0 = not from a sheet)
    partner_a: str = ""  # side A's second player in a doubles match ("" = singles)
    partner_b: str = ""  # side B's second player

    def __post_init__(self):
        # Room for the row's digests (see `identity`), made with every record so that all records keep
        # sharing one layout of attributes (added later, each record would grow by some 800 bytes).
        object.__setattr__(self, "_identity", None)
        object.__setattr__(self, "_fingerprint", None)


@dataclass(frozen=True)
class Player:
    """A player as the Players sheet describes them."""

    name: str
    division: str = ""
    starting: float | None = None  # starting rating in points, if known
    aliases: tuple[str, ...] = ()
    row: int = 0


@dataclass(frozen=True)
class Division:
    """A division as the optional Divisions sheet describes it."""

    name: str
    starting_level: float = 0.0  # points relative to the centre
    note: str = ""
    row: int = 0


@dataclass(frozen=True)
class Fixture(_Sides):
    """A match still to be played (singles, or doubles with both partners); races are optional."""

    date: dt.date | None
    player_a: str
    player_b: str
    race_a: int | None = None
    race_b: int | None = None
    row: int = 0
    partner_a: str = ""
    partner_b: str = ""


# Defaults chosen by walk-forward evaluation (see README, "How good are the
# ratings").  They live here only; every other place reads them from Settings.
# Run: `python tests/bench/choose_defaults.py --refine 14` (2026-12-02, home
# division = latest result), the lowest mean walk-forward predictive log-loss
# per game over the demo league and the real badminton and tennis sets: it
# chose half-life 339 days, skill spread 175, division spread 400 (mean
# 0.63737).  Flat around it (`--score`): 480 / 175 / 283, 400 and 566 score
# 0.63739, 0.63738, 0.63739; 480 / 150 / 300 0.63750, 480 / 200 / 283 0.63760,
# 480 / 175 / 100 0.63765.  Shipped: 480 / 175 / 300 (a round value inside the
# flat stretch of division spreads; half-life 339 gains nothing measurable).
# The watch list's linkage does not depend on the division spread.
DEFAULT_SKILL_SPREAD = 175.0  # points
DEFAULT_HALF_LIFE_DAYS = 480.0  # days
DEFAULT_DIVISION_SPREAD = 300.0  # points: SD of the division levels' prior (0 = one pool)


@dataclass(frozen=True)
class Settings:
    """The league's settings (the Settings sheet), every field with a default."""

    centre: float = 1500.0
    scale: float = 400.0
    skill_spread: float = DEFAULT_SKILL_SPREAD  # points: SD of the prior
    half_life_days: float = DEFAULT_HALF_LIFE_DAYS  # 0 = games never age
    division_spread: float = DEFAULT_DIVISION_SPREAD  # points: SD of the division levels (0 = one pool)
    longest_race: int = 9
    shortest_race: int = 2  # no fair race asks either player for fewer games (rule of thumb)
    usual_race: int = 5
    date_order: str = "day-first"  # or "month-first"
    league_name: str = ""
    paper: str = "A4"  # or "Letter"
    weakly_linked_below: float = 0.5  # linked share under which a division is flagged
    held_z: float = 1.0  # surplus z-score at which a player counts as held (one SD: rule of thumb)
    linking_matches: int = 6  # suggested linking matches to list
    dominant_share: float = 0.75  # share of games won that marks a dominant player in a weak division
    few_games: float = 10.0  # weighted games under which a prediction is uncertain

    def replace(self, **changes) -> "Settings":
        """A copy with some fields changed (the stored defaults never change)."""
        from dataclasses import replace

        return replace(self, **changes)


@dataclass(frozen=True)
class Problem:
    """Something wrong in the workbook: an error stops the update, a warning does not."""

    severity: str  # "error" or "warning"
    sheet: str
    row: int | None  # 1-based sheet row, None for a whole sheet or column
    column: str | None  # the header as the secretary wrote it (or the letter)
    found: str  # the value found, as text ("" when blank)
    problem: str  # what is wrong, in plain words
    fix: str  # what to do

    @property
    def is_error(self) -> bool:
        return self.severity == "error"

    def __str__(self) -> str:
        where = self.sheet
        if self.row is not None:
            where += f", row {self.row}"
        if self.column:
            where += f", column {self.column}"
        found = f" (found: {self.found!r})" if self.found != "" else ""
        return f"{self.severity.upper()} {where}: {self.problem}{found}. {self.fix}"


@dataclass(frozen=True)
class TuneCheck:
    """The last check of whether ``secretary tune`` would pay off (kept in the hidden state).

    checked_through : newest result date at the check
    settings : the settings checked; the suggestion stands only while they are unchanged
    gain : walk-forward predictive log-loss per game (nats) that the tuned settings would save
    half_life_days, skill_spread, division_spread : what tuning found (division spread None: not checked)
    """

    checked_through: dt.date
    settings: Settings
    gain: float
    half_life_days: float
    skill_spread: float
    division_spread: float | None = None


@dataclass(frozen=True)
class PublishedState:
    """What the previous update published; kept in the workbook's hidden sheet."""

    updated_at: str  # ISO timestamp of the update
    reference_date: dt.date  # newest result date at that update
    ratings: Mapping[str, float]  # published rating, points, per player
    sds: Mapping[str, float]  # published ± (points) per player
    rows: tuple[tuple[str, str], ...]  # (identity, fingerprint) of each result included
    settings: Settings = field(default_factory=Settings)
    previous: "PublishedState | None" = None  # the update before, so its breakdown can be rebuilt
    tune_check: TuneCheck | None = None  # the last check of whether tuning would pay off
    inputs: str = ""  # digest of everything the update read (rows, settings, players, ...) and the tool's version
    starting_levels: Mapping[str, float] | None = None  # the Divisions sheet's levels it used (None: not kept)


def _digest(*parts: object) -> str:
    text = "\x1f".join(map(str, parts))
    return hashlib.blake2b(text.encode("utf-8"), digest_size=8).hexdigest()


def _kept(result: Result, name: str, make) -> str:
    """A row's digest, worked out once and kept on the record itself (the update, its breakdown and the
    state all ask for every row's digests; a cache keyed by the record would hash it on every look-up
    and, bounded, forget a million rows).  Not a field: equality, hashing and printing ignore it."""
    kept = result.__dict__.get(name)
    if kept is None:
        kept = make(result)
        object.__setattr__(result, name, kept)
    return kept


def identity(result: Result) -> str:
    """Which match a row is (date and the two players), whatever its score says."""
    return _kept(result, "_identity", _identity)


def fingerprint(result: Result) -> str:
    """Everything about a row that the rating uses; changes when the row is edited."""
    return _kept(result, "_fingerprint", _fingerprint)


def row_digests(results) -> tuple[list[str], list[str]]:
    """Every row's ``identity`` and ``fingerprint`` (two lists in row order), each worked out once.

    The same digests as `identity` and `fingerprint` row by row (and kept on the records as they keep
    them), with each date's text and each name's folded capitals worked out once for all the rows:
    a league repeats a few hundred dates and a few thousand names over up to a million rows."""
    iso: dict[dt.date, str] = {}
    fold: dict[str, str] = {}
    blake = hashlib.blake2b
    identities, fingerprints = [], []
    for result in results:
        kept = result.__dict__
        ident, fp = kept.get("_identity"), kept.get("_fingerprint")
        if ident is None or fp is None:
            if result.partner_a and result.partner_b:  # doubles: the row-by-row definitions
                ident, fp = identity(result), fingerprint(result)
            else:
                day = iso.get(result.date) or iso.setdefault(result.date, result.date.isoformat())
                a = fold.get(result.player_a) or fold.setdefault(result.player_a, result.player_a.casefold())
                b = fold.get(result.player_b) or fold.setdefault(result.player_b, result.player_b.casefold())
                if ident is None:  # as _identity: the date and the two folded names in sorted order
                    text = "\x1f".join((day, a, b) if a <= b else (day, b, a))
                    ident = kept["_identity"] = blake(text.encode("utf-8"), digest_size=8).hexdigest()
                if fp is None:  # as _fingerprint, singles
                    division = fold.get(result.division)
                    if division is None:
                        division = fold.setdefault(result.division, result.division.casefold())
                    text = "\x1f".join((day, a, b, str(result.games_a), str(result.games_b), division,
                                         str(result.void)))
                    fp = kept["_fingerprint"] = blake(text.encode("utf-8"), digest_size=8).hexdigest()
        identities.append(ident)
        fingerprints.append(fp)
    return identities, fingerprints


def _identity(result: Result) -> str:
    if result.is_doubles:  # the two sides, whatever the order of partners or sides
        sides = sorted("+".join(sorted(name.casefold() for name in side)) for side in (result.side_a, result.side_b))
        return _digest(result.date.isoformat(), *sides)
    a, b = sorted((result.player_a.casefold(), result.player_b.casefold()))
    return _digest(result.date.isoformat(), a, b)


def _fingerprint(result: Result) -> str:
    partners = (result.partner_a.casefold(), result.partner_b.casefold()) if result.is_doubles else ()
    return _digest(
        result.date.isoformat(),
        result.player_a.casefold(),
        result.player_b.casefold(),
        result.games_a,
        result.games_b,
        result.division.casefold(),
        result.void,
        *partners,
    )


# How a player's home division was found: the Players sheet's Division, else the division of their most
# recent result (a player who changed division is counted in the one they play in now), else none.
HOME_RULES = ("Players sheet", "latest results", "no results")


@dataclass(frozen=True)
class PlayerRating:
    """One line of the published ratings."""

    name: str
    division: str
    rating: float  # points
    sd: float  # ± one standard deviation, points
    games: float  # age-weighted games played
    wins: float  # age-weighted games won
    last_played: dt.date | None
    change: float | None = None  # shown whole points since the previous update (the Why it changed sheet's Change); None = new
    is_new: bool = False  # first published this update
    doubles_games: float = 0.0  # age-weighted doubles games played (included in ``games``)
    division_from: str = ""  # how the division was found: one of HOME_RULES ("" when not known)


@dataclass(frozen=True)
class UpdateLog:
    """One row of the Update log sheet."""

    updated_at: str  # ISO timestamp
    version: str
    reference_date: dt.date
    rows_read: int
    rows_rated: int
    new_rows: int
    changed_rows: int
    removed_rows: int
    settings: Settings
    warnings: tuple[str, ...] = ()
