"""The workbook's sheets, columns and settings: the one place that names them.

Pure Python (no openpyxl) so that the window's settings dialog can import it.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass, fields

from secretary.model.records import Settings

# ---------------------------------------------------------------- input sheets


@dataclass(frozen=True)
class Column:
    """One column of an input sheet: its record field, its header and whether it must be there."""

    key: str
    header: str
    required: bool = False
    width: float = 14.0  # characters, for the blank template


@dataclass(frozen=True)
class SheetSpec:
    """One input sheet: its name, whether the workbook must have it, and its columns."""

    name: str
    required: bool
    columns: tuple[Column, ...]

    @property
    def required_columns(self) -> tuple[Column, ...]:
        return tuple(c for c in self.columns if c.required)

    def column(self, key: str) -> Column:
        return next(c for c in self.columns if c.key == key)


RESULTS = SheetSpec(
    "Results",
    True,
    (
        Column("date", "Date", True, 12),
        Column("division", "Division", True, 16),
        Column("player_a", "Player A", True, 22),
        Column("player_b", "Player B", True, 22),
        Column("games_a", "Games A", True, 9),
        Column("games_b", "Games B", True, 9),
        Column("partner_a", "Partner A", False, 22),  # doubles: both partners given
        Column("partner_b", "Partner B", False, 22),
        Column("event", "Event", False, 18),
        Column("note", "Note", False, 24),
    ),
)

PLAYERS = SheetSpec(
    "Players",
    False,
    (
        Column("player", "Player", True, 22),
        Column("division", "Division", False, 16),
        Column("starting", "Starting rating", False, 15),
        Column("aliases", "Also known as", False, 36),
    ),
)

DIVISIONS = SheetSpec(
    "Divisions",
    False,
    (
        Column("division", "Division", True, 16),
        Column("starting", "Starting level", False, 15),
        Column("note", "Note", False, 40),
    ),
)
# A starting level is at most this many Scales from the centre (3 x 400 = 1200 points: a division
# expected to win about 1,000 games to 1 against an average one); anything further is a typing slip.
LEVEL_SCALES = 3

SETTINGS = SheetSpec(
    "Settings",
    False,
    (
        Column("setting", "Setting", True, 26),
        Column("value", "Value", True, 14),
        # Shown in the blank template for the secretary; the reader ignores them.
        Column("default", "Default", False, 12),
        Column("explanation", "What it means", False, 80),
    ),
)

FIXTURES = SheetSpec(
    "Fixtures",
    False,
    (
        Column("date", "Date", False, 12),
        Column("player_a", "Player A", True, 22),
        Column("player_b", "Player B", True, 22),
        Column("race_a", "Race A", False, 8),
        Column("race_b", "Race B", False, 8),
        Column("partner_a", "Partner A", False, 22),  # a doubles fixture: both partners given
        Column("partner_b", "Partner B", False, 22),
    ),
)

INPUT_SHEETS = (RESULTS, PLAYERS, DIVISIONS, SETTINGS, FIXTURES)

VOID_PREFIX = "void"  # a Results row whose Note starts with this is kept but not rated
ALIAS_SEPARATOR = ";"

# --------------------------------------------------------------- output sheets

RATINGS_SHEET = "Ratings"
WHY_SHEET = "Why it changed"
WATCH_SHEET = "Watch list"
HISTORY_SHEET = "Rating history"
NOTICE_SHEET = "Notice board"
LOG_SHEET = "Update log"
PROBLEMS_SHEET = "Problems"
STATE_SHEET = "_secretary_state"  # very hidden
INSTRUCTIONS_SHEET = "Instructions"  # only in the blank template

OUTPUT_SHEETS = (
    RATINGS_SHEET,
    WHY_SHEET,
    WATCH_SHEET,
    HISTORY_SHEET,
    NOTICE_SHEET,
    LOG_SHEET,
    PROBLEMS_SHEET,
    STATE_SHEET,
)


def header_key(text: object) -> str:
    """How headers and sheet names are compared: case-insensitive, spaces around ignored."""
    return " ".join(str(text).split()).casefold() if text is not None else ""


# -------------------------------------------------------------- settings table


@dataclass(frozen=True)
class SettingSpec:
    """One setting: its sheet label, its type and allowed values, and what it means."""

    field: str
    label: str
    kind: str  # "number", "whole", "choice" or "text"
    explanation: str
    low: float | None = None
    high: float | None = None
    choices: tuple[str, ...] = ()
    aliases: tuple[str, ...] = ()

    @property
    def default(self):
        """The default, read from the Settings record (never restated here)."""
        return getattr(Settings(), self.field)

    @property
    def allowed(self) -> str:
        """The allowed values in plain words."""
        if self.kind == "choice":
            return " or ".join(self.choices)
        if self.kind == "text":
            return f"any text up to {int(self.high)} characters"
        whole = "a whole number" if self.kind == "whole" else "a number"
        return f"{whole} from {_plain(self.low)} to {_plain(self.high)}"


def _plain(x: float | None) -> str:
    if x is None:
        return ""
    return str(int(x)) if float(x).is_integer() else str(x)


SETTINGS_TABLE: tuple[SettingSpec, ...] = (
    SettingSpec("centre", "Centre", "number",
                "The rating of an average newcomer.", 0, 10000, aliases=("center",)),
    SettingSpec("scale", "Scale", "number",
                "Rating points between two players when the stronger one is expected "
                "to win 10 games for every 1 the other wins.", 10, 2000),
    SettingSpec("skill_spread", "Skill spread", "number",
                "How far, in points, players usually are from the starting rating; "
                "smaller values hold newcomers closer to it.", 10, 2000),
    SettingSpec("half_life_days", "Half-life (days)", "number",
                "Age in days at which an old game counts half as much as a new one "
                "(0 = games never age).", 0, 36500, aliases=("half-life", "half life")),
    SettingSpec("division_spread", "Division spread", "number",
                "How far, in points, division levels usually are from each other; each division's level "
                "is judged from games between divisions (0 = one pool, no levels).", 0, 2000),
    SettingSpec("longest_race", "Longest race", "whole",
                "The longest race (first to this many games) to suggest for a fair match.", 1, 50),
    SettingSpec("shortest_race", "Shortest race", "whole",
                "The shortest race to suggest for a fair match: no player is asked to win fewer games "
                "(a rule of thumb: shorter races are mostly luck).", 1, 50),
    SettingSpec("usual_race", "Usual race", "whole",
                "The race the league usually plays, used for predicted chances.", 1, 50),
    SettingSpec("date_order", "Date order", "choice",
                "How to read text dates like 03/04/2026: day-first means 3 April, "
                "month-first means 4 March.", choices=("day-first", "month-first")),
    SettingSpec("league_name", "League name", "text",
                "The league's name, shown on the notice board.", high=100),
    SettingSpec("paper", "Paper", "choice",
                "The paper size of the printed notice board.", choices=("A4", "Letter")),
    SettingSpec("weakly_linked_below", "Weakly linked below", "number",
                "A division is on the watch list when its games against other divisions pin its "
                "gap to the rest less well than this share (0 to 1; 0.5 = to about "
                "±104 points).", 0, 1),
    SettingSpec("held_z", "Held back from", "number",
                "How surprising (in standard deviations) a player's results must be before "
                "the watch list says the starting assumption is holding them back.", 0.1, 10,
                aliases=("Held by the prior at z",)),  # its earlier name: workbooks that use it still read
    SettingSpec("linking_matches", "Linking matches to suggest", "whole",
                "How many matches between divisions the watch list suggests.", 0, 50),
    SettingSpec("dominant_share", "Dominant win share", "number",
                "A player in a weakly linked division who wins at least this share of their games "
                "goes on the watch list: their true level cannot show until they play outside.", 0.5, 1.0),
    SettingSpec("few_games", "Few games", "number",
                "Players with fewer (age-weighted) games than this are marked as uncertain.",
                0, 1000),
)

assert {s.field for s in SETTINGS_TABLE} == {f.name for f in fields(Settings)}


def _label_key(text: str) -> str:
    return re.sub(r"[^0-9a-z]", "", str(text).casefold())


_SPEC_BY_KEY: dict[str, SettingSpec] = {}
for _spec in SETTINGS_TABLE:
    for _name in (_spec.field, _spec.label, *_spec.aliases):
        _SPEC_BY_KEY[_label_key(_name)] = _spec


def find_setting(label_or_field: str) -> SettingSpec | None:
    """The setting a sheet label (or field name) means, or None when unknown."""
    return _SPEC_BY_KEY.get(_label_key(label_or_field))


def known_labels() -> str:
    """The setting labels, for a message about an unknown one."""
    return ", ".join(s.label for s in SETTINGS_TABLE)


def validate_setting(label_or_field: str, raw_value: object):
    """Check one setting's value: returns (value, None) or (None, plain-words error message).

    A blank value means the default.
    """
    spec = find_setting(label_or_field)
    if spec is None:
        return None, f"'{label_or_field}' is not a setting this tool knows (known: {known_labels()})"
    if raw_value is None or (isinstance(raw_value, str) and not raw_value.strip()):
        return spec.default, None
    wrong = f"{spec.label} must be {spec.allowed}"
    if spec.kind == "text":
        text = " ".join(str(raw_value).split())
        return (text, None) if len(text) <= spec.high else (None, wrong)
    if spec.kind == "choice":
        return _choice(spec, raw_value, wrong)
    number = as_number(raw_value)
    if number is None or not spec.low <= number <= spec.high:
        return None, wrong
    if spec.kind == "whole":
        if not number.is_integer():
            return None, wrong
        return int(number), None
    return float(number), None


def _choice(spec: SettingSpec, raw_value: object, wrong: str):
    given = re.sub(r"[\s_]+", "-", str(raw_value).strip()).casefold()
    for choice in spec.choices:
        if given == choice.casefold():
            return choice, None
    return None, wrong


def as_number(raw_value: object) -> float | None:
    """A finite number from a cell value or typed text; None for anything else."""
    if isinstance(raw_value, bool):
        return None
    if isinstance(raw_value, (int, float)):
        value = float(raw_value)
    elif isinstance(raw_value, str):
        try:
            value = float(raw_value.strip())
        except ValueError:
            return None
    else:
        return None
    return value if math.isfinite(value) else None
