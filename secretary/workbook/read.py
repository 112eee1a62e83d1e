"""Read the league's workbook into typed records, collecting every problem found."""
from __future__ import annotations

import datetime as dt
import heapq
import warnings
from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path
from typing import Mapping, NamedTuple

import openpyxl

from secretary.errors import FileRefused, SecretaryError
from secretary.model.records import Division, Fixture, Player, Problem, PublishedState, Result, Settings
from secretary.workbook import guard, schema, toolsheets
from secretary.workbook.cells import SheetCells
from secretary.workbook.cells import Workbook as ValuesBook
from secretary.workbook.dates import parse_date
from secretary.workbook.names import MAX_NAME_LENGTH, CloseIndex, Mention, clean, merge_aliases, name_key, resolve
from secretary.workbook.ordinary import ordinary_rows
from secretary.workbook.partners import PARTNERS, SEATS, seat_faults

from secretary.workbook.state import read_state, state_from_rows

HEADER_SEARCH_ROWS = 10  # a title line or two above the headers is allowed
SHOWN_LENGTH = 80  # characters of a cell's value shown in a message at most
DIVISIONS_LISTED = 8  # a message about an unknown division names at most this many known ones
OUTLIER_ROWS = 5  # at most this many rows dated far after the rest count as typing slips
_SHEET_ORDER = {spec.name: i for i, spec in enumerate(schema.INPUT_SHEETS)}
_FORMULA_FIX = "Open and save the workbook in your spreadsheet program, or type the value."


@dataclass(frozen=True)
class SheetLayout:
    """Where an input sheet's columns are: its title, header row and 1-based column numbers."""

    title: str
    header_row: int
    columns: Mapping[str, int]  # column key (see schema) -> 1-based column number
    headers: Mapping[str, str]  # column key -> the header as the secretary wrote it


@dataclass(frozen=True)
class LeagueBook:
    """Everything read from the workbook, with every problem found."""

    path: Path
    results: tuple[Result, ...]
    players: tuple[Player, ...]
    settings: Settings
    fixtures: tuple[Fixture, ...]
    problems: tuple[Problem, ...]
    divisions: tuple[Division, ...] = ()  # the Divisions sheet, under the Results' spelling
    state: PublishedState | None = None
    sheet_names: tuple[str, ...] = ()
    tool_sheets: dict[str, str] = field(default_factory=dict)  # role -> name of the tool's sheets (see toolsheets)
    layouts: Mapping[str, SheetLayout] = field(default_factory=dict)  # by schema sheet name
    formula_cells: tuple[tuple[str, int, int], ...] = ()  # (sheet, row, column) without saved value

    @property
    def errors(self) -> tuple[Problem, ...]:
        return tuple(p for p in self.problems if p.is_error)

    @property
    def warnings(self) -> tuple[Problem, ...]:
        return tuple(p for p in self.problems if not p.is_error)

    @property
    def has_errors(self) -> bool:
        return any(p.is_error for p in self.problems)


def shown(value: object) -> str:
    """A cell value as the secretary would recognise it in a message."""
    if value is None:
        return ""
    if isinstance(value, dt.datetime):
        return value.date().isoformat() if value.time() == dt.time() else value.isoformat(sep=" ")
    if isinstance(value, dt.date):
        return value.isoformat()
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    text = str(value)
    if len(text) > SHOWN_LENGTH:  # a message shows the start of a long value, never all of it
        return f"{text[:SHOWN_LENGTH - 20]}... ({len(text):,} characters)"
    return text


def _blank(value: object) -> bool:
    return value is None or (isinstance(value, str) and not value.strip())


def whole_number(value: object, low: int = 0) -> tuple[int | None, str | None]:
    """A cell as a whole number >= low: (number, None) or (None, what is wrong)."""
    if _blank(value):
        return None, "blank"
    number = schema.as_number(value)
    if number is None:
        return None, "not a number"
    if not number.is_integer():
        return None, "not a whole number"
    if number < low:
        return None, "negative" if number < 0 else f"less than {low}"
    return int(number), None


class _Sheet:
    """One input sheet's rows (values only) and where its columns are."""

    def __init__(self, spec: schema.SheetSpec, title: str, cells: SheetCells, reader: "_Reader"):
        self.spec, self.title, self.rows, self.reader = spec, title, cells.rows, reader
        self.formulas = cells.formulas  # None when only openpyxl could read the sheet
        self.header_row, self.columns, self.headers = self._find_headers()
        self.missing = [c for c in spec.required_columns if c.key not in self.columns]
        for column in self.missing:
            found = [shown(v) for v in self._row(self.header_row) if not _blank(v)]
            reader.add("error", spec.name, self.header_row, column.header, "",
                       f"the column '{column.header}' is missing (headers found: "
                       f"{', '.join(found) if found else 'none'})",
                       f"Add a column headed '{column.header}' to the {spec.name} sheet.")

    def _row(self, number: int) -> tuple:
        return self.rows[number - 1] if 0 < number <= len(self.rows) else ()

    def _find_headers(self) -> tuple[int, dict[str, int], dict[str, str]]:
        wanted = {schema.header_key(c.header): c.key for c in self.spec.columns}
        best = (0, 1, {}, {})
        for number in range(1, min(HEADER_SEARCH_ROWS, len(self.rows)) + 1):
            columns, headers = {}, {}
            for index, value in enumerate(self._row(number), start=1):
                key = wanted.get(schema.header_key(value)) if isinstance(value, str) else None
                if key and key not in columns:
                    columns[key], headers[key] = index, clean(value)
            if len(columns) > best[0]:
                best = (len(columns), number, columns, headers)
        return best[1], best[2], best[3]

    def records(self):
        """(row number, {key: value}) for every row below the headers that is not blank."""
        for number in range(self.header_row + 1, len(self.rows) + 1):
            values = self.values(number)
            if not all(_blank(v) for v in values.values()):
                yield number, values

    def values(self, number: int) -> dict:
        """{key: value} of one row."""
        row = self.rows[number - 1]
        return {key: row[i - 1] if i <= len(row) else None for key, i in self.columns.items()}

    def header(self, key: str) -> str:
        return self.headers.get(key, self.spec.column(key).header)

    def layout(self) -> SheetLayout:
        return SheetLayout(self.title, self.header_row, dict(self.columns), dict(self.headers))


class _Reader:
    """Holds the problems found while one workbook is read."""

    def __init__(self):
        self.problems: list[Problem] = []
        # Blank cells that may hide a formula without a saved value:
        # (sheet title, row, col) -> (index of the "blank" problem or None, sheet name, header)
        self.blank_cells: dict[tuple[str, int, int], tuple[int | None, str, str]] = {}

    def add(self, severity, sheet, row, column, found, problem, fix) -> int:
        self.problems.append(Problem(severity, sheet, row, column, shown(found), problem, fix))
        return len(self.problems) - 1

    def note_blank(self, sheet: _Sheet, row: int, key: str, problem_index: int | None) -> None:
        self.blank_cells[(sheet.title, row, sheet.columns[key])] = (problem_index, sheet.spec.name, sheet.header(key))


def read_workbook(path: str | Path, *, wb=None) -> LeagueBook:
    """Read the league workbook at ``path``; ``wb`` may be the same file already loaded (not read-only)."""
    path = guard.check_readable(path)  # before any reader opens the file
    values_wb = _open_values(path)
    try:
        return _read(path, values_wb, wb)
    finally:
        values_wb.close()


def _damaged(path: Path, exc: Exception) -> FileRefused:
    return FileRefused(
        f"{path.name} could not be read as an Excel workbook ({type(exc).__name__}: {exc}). "
        "Open it in your spreadsheet program, save it as .xlsx and try again.")


def _open_values(path: Path) -> ValuesBook:
    try:
        return ValuesBook(path)
    except SecretaryError:
        raise
    except Exception as exc:  # the readers' many ways of saying "damaged"
        raise _damaged(path, exc) from None


def _load(path: Path, data_only: bool):
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # unsupported extensions are harmless for reading
            return openpyxl.load_workbook(path, read_only=True, data_only=data_only)
    except SecretaryError:
        raise
    except Exception as exc:  # the library's many ways of saying "damaged"
        raise _damaged(path, exc) from None


def _sheet_cells(values_wb: ValuesBook, title: str, path: Path) -> SheetCells:
    """A sheet's saved values; the formula cells too when they are known without openpyxl."""
    fast = values_wb.read_cells(title)
    if fast is not None:
        return fast
    slow_wb = _load(path, data_only=True)  # error values, or a sheet calamine cannot read
    try:
        ws = slow_wb[title]
        ws.reset_dimensions()  # some programs write a wrong size; read what is really there
        return SheetCells(list(ws.iter_rows(values_only=True)), None)
    except Exception as exc:
        raise FileRefused(
            f"The sheet '{title}' in {path.name} is damaged ({type(exc).__name__}: {exc}). "
            "Open the workbook in your spreadsheet program, save it and try again.") from None
    finally:
        slow_wb.close()


def _read(path: Path, values_wb, wb) -> LeagueBook:
    reader = _Reader()
    titles = {schema.header_key(t): t for t in reversed(values_wb.sheetnames)}
    sheets: dict[str, _Sheet] = {}
    for spec in schema.INPUT_SHEETS:
        title = titles.get(schema.header_key(spec.name))
        if title is not None:
            sheets[spec.name] = _Sheet(spec, title, _sheet_cells(values_wb, title, path), reader)
        elif spec.required:
            reader.add("error", spec.name, None, None, ", ".join(values_wb.sheetnames),
                       f"the workbook has no sheet called '{spec.name}'",
                       f"Add a sheet named '{spec.name}' with the results, or rename the sheet that holds them.")
    settings = _read_settings(sheets.get(schema.SETTINGS.name), reader)
    players = _read_players(sheets.get(schema.PLAYERS.name), reader)
    divisions = _read_divisions(sheets.get(schema.DIVISIONS.name), settings, reader)
    rows = _read_results(sheets.get(schema.RESULTS.name), settings, reader)
    fixtures = _read_fixtures(sheets.get(schema.FIXTURES.name), settings, reader)
    _note_blank_partners(sheets.get(schema.FIXTURES.name), reader)  # the Results' in _read_results
    formula_cells = _check_formulas(path, wb, sheets, reader)
    results, players, fixtures = _link_names(rows, players, fixtures, sheets, reader)
    divisions = _link_divisions(divisions, results, players, sheets.get(schema.DIVISIONS.name), reader)
    _check_results(results, sheets.get(schema.RESULTS.name), reader)
    tool = toolsheets.of_package(path)
    state = _read_state(wb, values_wb, tool, reader)
    problems = sorted(reader.problems, key=lambda p: (not p.is_error, _SHEET_ORDER.get(p.sheet, 9), p.row or 0))
    return LeagueBook(
        path=path, results=results, players=players, settings=settings, fixtures=fixtures,
        divisions=divisions, problems=tuple(problems), state=state, sheet_names=tuple(values_wb.sheetnames), tool_sheets=tool,
        layouts={name: sheet.layout() for name, sheet in sheets.items()},
        formula_cells=formula_cells)


# ----------------------------------------------------------------- Settings


def _read_settings(sheet: _Sheet | None, reader: _Reader) -> Settings:
    if sheet is None or sheet.missing:
        return Settings()
    name, col_setting, col_value = sheet.spec.name, sheet.header("setting"), sheet.header("value")
    chosen: dict[str, object] = {}
    where: dict[str, int] = {}
    for row, values in sheet.records():
        label, raw = values["setting"], values["value"]
        if _blank(label) and _blank(raw):
            continue  # only the template's explanation columns are filled
        if _blank(label):
            reader.add("error", name, row, col_setting, "", "a value without a setting name",
                       f"Write the setting's name in the '{col_setting}' column, or delete the row.")
            continue
        spec = schema.find_setting(str(label))
        if spec is None:
            reader.add("error", name, row, col_setting, label, "this is not a setting the tool knows",
                       f"Use one of: {schema.known_labels()}.")
            continue
        if spec.field in where:
            reader.add("error", name, row, col_setting, label,
                       f"this setting is given twice (also row {where[spec.field]})", "Keep one of the two rows.")
            continue
        where[spec.field] = row
        value, error = schema.validate_setting(spec.field, raw)
        if error:
            reader.add("error", name, row, col_value, raw, error, f"Write {spec.allowed}, or leave it blank for the default.")
        elif _blank(raw):
            reader.note_blank(sheet, row, "value", None)
        else:
            chosen[spec.field] = value
    settings = Settings().replace(**chosen)
    if settings.usual_race > settings.longest_race:
        field_name = "usual_race" if "usual_race" in where else "longest_race"
        reader.add("error", name, where.get(field_name), col_value, getattr(settings, field_name),
                   f"the usual race ({settings.usual_race}) is longer than the longest race ({settings.longest_race})",
                   "Make the longest race at least as long as the usual race.")
    if settings.shortest_race > settings.longest_race:
        field_name = "shortest_race" if "shortest_race" in where else "longest_race"
        reader.add("error", name, where.get(field_name), col_value, getattr(settings, field_name),
                   f"the shortest race ({settings.shortest_race}) is longer than the longest race "
                   f"({settings.longest_race})", "Make the shortest race at most as long as the longest race.")
    return settings


# ------------------------------------------------------------------ Players


def _read_players(sheet: _Sheet | None, reader: _Reader) -> list[Player]:
    if sheet is None or sheet.missing:
        return []
    name = sheet.spec.name
    players = []
    for row, values in sheet.records():
        player = clean(values["player"])
        if not player:
            index = reader.add("error", name, row, sheet.header("player"), "", "the player's name is blank",
                               "Write the name, or delete the row.")
            reader.note_blank(sheet, row, "player", index)
            continue
        if len(player) > MAX_NAME_LENGTH:  # as on the Results sheet, where such a name is refused too
            reader.add("error", name, row, sheet.header("player"), player, _too_long(player),
                       "Write the player's name alone in the cell.")
            continue
        starting = None
        raw = values.get("starting")
        if _blank(raw):
            if "starting" in sheet.columns:
                reader.note_blank(sheet, row, "starting", None)
        else:
            starting = schema.as_number(raw)
            if starting is None:
                reader.add("error", name, row, sheet.header("starting"), raw, "the starting rating is not a number",
                           "Write a number in points (like 1650), or leave it blank.")
        aliases = tuple(a for a in (clean(s) for s in str(values.get("aliases") or "").split(schema.ALIAS_SEPARATOR)) if a)
        for alias in (a for a in aliases if len(a) > MAX_NAME_LENGTH):
            reader.add("error", name, row, sheet.header("aliases"), alias, _too_long(alias),
                       f"Write only the player's other names, separated by '{schema.ALIAS_SEPARATOR}'.")
        division = clean(values.get("division"))
        if len(division) > MAX_NAME_LENGTH:
            reader.add("error", name, row, sheet.header("division"), division, _too_long(division, "a division's"),
                       "Write the division's name alone in the cell.")
            division = ""
        players.append(Player(player, division, starting, tuple(a for a in aliases if len(a) <= MAX_NAME_LENGTH), row))
    return players


def _too_long(name: str, whose: str = "a player's") -> str:
    return f"this name is {len(name):,} characters long; {whose} name has at most {MAX_NAME_LENGTH}"


# ---------------------------------------------------------------- Divisions


def _read_divisions(sheet: _Sheet | None, settings: Settings, reader: _Reader) -> list[Division]:
    """The Divisions sheet's rows with a readable starting level (blank = 0), each division once."""
    if sheet is None or sheet.missing:
        return []
    name, col_division = sheet.spec.name, sheet.header("division")
    bound = schema.LEVEL_SCALES * settings.scale
    divisions, where = [], {}
    for row, values in sheet.records():
        division, raw = clean(values["division"]), values.get("starting")
        if not division:
            if not _blank(raw):
                reader.add("error", name, row, col_division, "", "a starting level without a division",
                           f"Write the division's name in the '{col_division}' column, or delete the row.")
            continue  # a row with only a note is the secretary's remark
        key = name_key(division)
        if key in where:
            reader.add("error", name, row, col_division, division,
                       f"this division is listed twice (also row {where[key]})", "Keep one of the two rows.")
            continue
        where[key] = row
        level = 0.0
        if _blank(raw):
            if "starting" in sheet.columns:
                reader.note_blank(sheet, row, "starting", None)
        else:
            level = schema.as_number(raw)
            if level is None or abs(level) > bound:
                _bad_level(reader, sheet, row, raw, level, settings)
                continue
        divisions.append(Division(division, float(level), clean(values.get("note")), row))
    return divisions


def _bad_level(reader: _Reader, sheet: _Sheet, row: int, raw, level: float | None, settings: Settings) -> None:
    bound = schema.LEVEL_SCALES * settings.scale
    what = "not a number" if level is None else \
        f"further from the centre than {bound:.0f} points ({schema.LEVEL_SCALES} times the Scale)"
    fix = (f"Write the division's level in points above (+) or below (-) the Centre ({settings.centre:.0f}), "
           f"like +150 or -150, from -{bound:.0f} to +{bound:.0f}; or leave it blank for 0.")
    if level is not None and abs(level - settings.centre) <= bound:
        fix = f"{shown(level)} looks like a rating; the level is relative to the Centre, so write " \
              f"{level - settings.centre:+.0f}. " + fix
    reader.add("error", sheet.spec.name, row, sheet.header("starting"), raw, f"the starting level is {what}", fix)


def _link_divisions(divisions: list[Division], results, players, sheet: _Sheet | None,
                    reader: _Reader) -> tuple[Division, ...]:
    """The Divisions sheet's divisions under the Results' spelling; unknown ones are errors."""
    known = {name_key(d): d for d in (*(r.division for r in results), *(p.division for p in players)) if d}
    out, index = [], None
    for d in divisions:
        spelling = known.get(name_key(d.name), d.name if not known else None)  # no divisions yet: nothing to check
        if spelling is None:
            index = index or CloseIndex(sorted(set(known.values())))
            close = index.matches(d.name)
            hint = f"; close spellings: {', '.join(map(shown, close))}" if close else ""
            listed = sorted(set(known.values()), key=str.casefold)
            reader.add("error", sheet.spec.name, d.row, sheet.header("division"), d.name,
                       f"no result in Results and no player in Players has the division '{shown(d.name)}'{hint}",
                       "Write the division as the Results sheet's Division column does ("
                       f"{', '.join(listed[:DIVISIONS_LISTED])}{', ...' if len(listed) > DIVISIONS_LISTED else ''}),"
                       " or delete the row.")
            continue
        out.append(Division(spelling, d.starting_level, d.note, d.row))
    return tuple(out)


# ------------------------------------------------------------------ Results


class _Row(NamedTuple):
    """A Results row that passed the cell checks, names still as written (a tuple: a million are made)."""

    row: int
    date: dt.date
    division: str
    a: str
    b: str
    games_a: int
    games_b: int
    event: str
    void: bool
    pa: str = ""  # partners as written ("" in a singles row)
    pb: str = ""


def _read_results(sheet: _Sheet | None, settings: Settings, reader: _Reader) -> list[_Row]:
    if sheet is None or sheet.missing:
        return []
    rows = []
    first = sheet.header_row + 1
    body = sheet.rows[sheet.header_row:]
    checked = ordinary_rows(sheet.columns, body, first, settings, _Row)
    for row, parsed in enumerate(checked, start=first):
        if parsed is None:
            values = sheet.values(row)
            if all(_blank(v) for v in values.values()):
                continue
            void = str(values.get("note") or "").strip().casefold().startswith(schema.VOID_PREFIX)
            parsed = _results_row(sheet, row, values, settings, reader, void)
        if parsed is not None:
            rows.append(parsed)
    _note_blank_partners(sheet, reader)
    sheet.rows = sheet.rows[:sheet.header_row]  # the cells are records now: freed (a million rows: ~0.5 GB)
    return rows


def _results_row(sheet: _Sheet, row: int, values: dict, settings: Settings, reader: _Reader, void: bool):
    """One row's checks; the rows that pass them all are found faster by `ordinary.ordinary_rows`, so a
    new check here needs its twin there."""
    # A void row is not rated, so its faults only warn (and an unusable one is left out).
    severity = "warning" if void else "error"
    name = sheet.spec.name
    ok = True

    def fault(key, found, problem, fix, blank=False):
        nonlocal ok
        ok = False
        index = reader.add(severity, name, row, sheet.header(key), found, problem, fix)
        if blank:
            reader.note_blank(sheet, row, key, index)

    date, why = parse_date(values["date"], settings.date_order)
    if date is None:
        blank = _blank(values["date"])
        fault("date", values["date"], why if blank else f"unreadable date: {why}",
              "Write the date the match was played.", blank=blank)
    division = clean(values["division"])
    if not division:
        fault("division", "", "the division is blank",
              "Write the division (or the event, like 'Open night') where the match was played.", blank=True)
    elif len(division) > MAX_NAME_LENGTH:
        fault("division", division, _too_long(division, "a division's"), "Write the division's name alone in the cell.")
    spellings = {}
    for key in [k for k in SEATS if k in values]:
        spelling = str(values[key]).strip() if values[key] is not None else ""
        spellings[key] = spelling
        if not spelling and key not in PARTNERS:
            fault(key, "", "the player's name is blank", "Write the player's name.", blank=True)
        elif len(spelling) > MAX_NAME_LENGTH:
            fault(key, spelling, _too_long(spelling), "Write the player's name alone in the cell.")
    for key, found, problem, fix in seat_faults(spellings, {k: sheet.header(k) for k in SEATS}, name_key):
        fault(key, found, problem, fix, blank=not found and key in sheet.columns)
    games = []
    for key in ("games_a", "games_b"):
        number, wrong = whole_number(values[key])
        if number is None and void:
            number = 0  # a void match may have no score
        elif number is None:
            fault(key, values[key], f"the games won are {wrong}",
                  "Write the games (racks or frames) won, a whole number of 0 or more.", blank=wrong == "blank")
        games.append(number)
        if number is not None and number > settings.longest_race and not void:
            fault(key, values[key], f"{number} games won in one match is more than the Longest race "
                  f"({settings.longest_race}) on the Settings sheet",
                  "Correct the score; if matches in this league really run longer, raise 'Longest race' "
                  "on the Settings sheet.")
    if games == [0, 0] and not void and ok:
        fault("games_b", values["games_b"], "both players won 0 games",
              "Write the real score, or start the Note with 'void' to keep the row unrated.")
    if not ok:
        return None
    return _Row(row, date, division, spellings["player_a"], spellings["player_b"], games[0], games[1],
                clean(values.get("event")), void, spellings.get("partner_a", ""), spellings.get("partner_b", ""))


# ----------------------------------------------------------------- Fixtures


def _read_fixtures(sheet: _Sheet | None, settings: Settings, reader: _Reader) -> list[tuple[int, dict]]:
    if sheet is None or sheet.missing:
        return []
    name = sheet.spec.name
    fixtures = []
    for row, values in sheet.records():
        ok = True
        date = None
        if _blank(values.get("date")):
            if "date" in sheet.columns:
                reader.note_blank(sheet, row, "date", None)
        else:
            date, why = parse_date(values["date"], settings.date_order)
            if date is None:
                ok = False
                reader.add("error", name, row, sheet.header("date"), values["date"], f"unreadable date: {why}",
                           "Write the date of the match, or leave it blank.")
        for key in ("player_a", "player_b"):
            if _blank(values[key]):
                ok = False
                reader.note_blank(sheet, row, key, reader.add(
                    "error", name, row, sheet.header(key), "", "the player's name is blank",
                    "Write the player's name, or delete the row."))
        spellings = {key: clean(values[key]) for key in SEATS if key in values}
        for key, found, problem, fix in seat_faults(spellings, {k: sheet.header(k) for k in SEATS}, name_key):
            ok = False
            reader.add("error", name, row, sheet.header(key), found, problem, fix)
        races = [values.get("race_a"), values.get("race_b")]
        parsed_races: list[int | None] = [None, None]
        if not all(_blank(r) for r in races):
            for i, key in enumerate(("race_a", "race_b")):
                number, wrong = whole_number(races[i], low=1)
                if number is None:
                    ok = False
                    index = reader.add(
                        "error", name, row, sheet.header(key), races[i], f"the race is {wrong}",
                        "Write both races as whole numbers of games (1 or more), or leave both blank.")
                    if wrong == "blank" and key in sheet.columns:
                        reader.note_blank(sheet, row, key, index)
                parsed_races[i] = number
        if ok:
            fixtures.append((row, dict(values, date=date, race_a=parsed_races[0], race_b=parsed_races[1])))
    return fixtures


# ----------------------------------------------------- formulas without values


def _note_blank_partners(sheet: _Sheet | None, reader: _Reader) -> None:
    """Blank Partner A/B cells that may hold a formula: a blank partner makes a row singles, so an unsaved
    formula there would misread it.  Only the cells the sheet's byte search found formulas in, when it
    placed them all (calamine read it); else every blank partner cell of a row that is not blank."""
    if sheet is None or sheet.missing:
        return
    keys = {sheet.columns[k]: k for k in PARTNERS if k in sheet.columns}
    if not keys:
        return
    if sheet.formulas is not None:
        cells = sorted((r, c) for r, c in sheet.formulas if c in keys and r > sheet.header_row)
    else:
        cells = [(r, c) for r, _ in sheet.records() for c in keys]
    for row, col in cells:
        value = sheet.rows[row - 1][col - 1] if row <= len(sheet.rows) and col <= len(sheet.rows[row - 1]) else None
        if _blank(value) and (sheet.title, row, col) not in reader.blank_cells:
            reader.note_blank(sheet, row, keys[col], None)


def _check_formulas(path: Path, wb, sheets: dict[str, _Sheet], reader: _Reader) -> tuple[tuple[str, int, int], ...]:
    """Turn blank cells that really hold a formula with no saved value into problems."""
    scanned = {s.title: s.formulas for s in sheets.values() if s.formulas is not None}
    found = {(t, r, c) for t, r, c in reader.blank_cells if t in scanned and (r, c) in scanned[t]}
    unscanned = {cell for cell in reader.blank_cells if cell[0] not in scanned}
    if unscanned:
        found |= _formula_cells(path, wb, unscanned)
    for title, row, col in sorted(found):
        index, sheet_name, header = reader.blank_cells[(title, row, col)]
        problem = Problem("error", sheet_name, row, header, "", "a formula without a saved value", _FORMULA_FIX)
        if index is None:
            reader.problems.append(problem)
        else:
            reader.problems[index] = problem
    return tuple(sorted(found))


def _formula_cells(path: Path, wb, cells: set[tuple[str, int, int]]) -> set[tuple[str, int, int]]:
    found = set()
    titles = {title for title, _, _ in cells}
    if wb is not None:
        for title, row, col in cells:
            # Look the cell up without creating it: the caller's workbook must not change.
            cells_of = getattr(wb[title], "_cells", {}) if title in wb.sheetnames else {}
            cell = cells_of.get((row, col))
            if cell is not None and _is_formula(cell):
                found.add((title, row, col))
        return found
    formulas_wb = _load(path, data_only=False)
    try:
        for title in titles:
            wanted = {(r, c) for t, r, c in cells if t == title}
            last = max(r for r, _ in wanted)
            ws = formulas_wb[title]
            ws.reset_dimensions()
            for row in ws.iter_rows(max_row=last):
                for cell in row:
                    if (getattr(cell, "row", None), getattr(cell, "column", None)) in wanted and _is_formula(cell):
                        found.add((title, cell.row, cell.column))
    except SecretaryError:
        raise
    except Exception as exc:
        raise FileRefused(f"{path.name} could not be read ({type(exc).__name__}: {exc}).") from None
    finally:
        formulas_wb.close()
    return found


def _is_formula(cell) -> bool:
    value = cell.value
    return cell.data_type == "f" or (isinstance(value, str) and value.startswith("=")) or hasattr(value, "text")


# ------------------------------------------------------------ names and links


def _link_names(rows: list[_Row], players: list[Player], fixture_rows: list[tuple[int, dict]],
                sheets: dict[str, _Sheet], reader: _Reader):
    results_sheet = sheets.get(schema.RESULTS.name)
    known, problems = merge_aliases(players)
    reader.problems.extend(problems)
    mentions, times = _first_mentions(rows, results_sheet)
    display, counts, problems = resolve(mentions, known, schema.RESULTS.name, times)
    reader.problems.extend(problems)
    divisions = _division_spellings(r.division for r in rows)
    shown_as = {m.spelling: display[name_key(m.spelling)] for m in mentions}
    division_of = {d: divisions[name_key(d)] for d in dict.fromkeys(r.division for r in rows)}
    results = []
    for r in rows:
        a, b = shown_as[r.a], shown_as[r.b]
        pa, pb = (shown_as[r.pa], shown_as[r.pb]) if r.pa else ("", "")
        repeated = a == b if not pa else len({a, pa, b, pb}) < 4  # only then can "Also known as" have merged two
        if repeated and _merged_by_aliases(r, (a, pa, b, pb), results_sheet, reader):
            continue
        results.append(Result(r.date, a, b, r.games_a, r.games_b, division_of[r.division],
                              r.event, r.void, r.row, pa, pb))
    first_row = {}
    for mention in mentions:
        first_row.setdefault(shown_as[mention.spelling], mention)
    if players:
        _check_players_sheet(players, known, first_row, divisions, sheets, reader)
    else:
        _check_close_spellings(first_row, counts, reader)
    players = [Player(p.name, divisions.get(name_key(p.division), p.division), p.starting, p.aliases, p.row)
               for p in players]
    fixtures = _link_fixtures(fixture_rows, known, display, sheets.get(schema.FIXTURES.name), reader)
    return tuple(results), tuple(players), fixtures


def _first_mentions(rows: list[_Row], sheet: _Sheet | None) -> tuple[list[Mention], Counter]:
    """The first mention of each spelling of a name (in each row: A, B, then the partners) and how often
    each is written."""
    if sheet is None or not rows:
        return [], Counter()
    columns = [sheet.header(k) for k in ("player_a", "player_b", "partner_a", "partner_b")]
    first: dict[str, Mention] = {}
    times: Counter = Counter()
    for r in rows:
        for spelling, column in zip((r.a, r.b, r.pa, r.pb) if r.pa else (r.a, r.b), columns):
            if spelling not in first:
                first[spelling] = Mention(spelling, r.row, column)
    times.update(r.a for r in rows)
    times.update(r.b for r in rows)
    times.update(p for r in rows if r.pa for p in (r.pa, r.pb))
    return list(first.values()), times


def _merged_by_aliases(r: _Row, names, sheet: _Sheet, reader: _Reader) -> bool:
    """Two spellings of one row that "Also known as" merges into one player: an error naming the cell."""
    spelled = dict(zip(SEATS, (r.a, r.pa, r.b, r.pb)))
    seen: dict[str, str] = {}
    for key, name in zip(SEATS, names):
        if name and name in seen:
            first = seen[name]
            reader.add("error", schema.RESULTS.name, r.row, sheet.header(key), spelled[key],
                       f"'{spelled[first]}' and '{spelled[key]}' are the same player ({name}) by 'Also known as'",
                       "Check the two names." if not r.pa else "Check the four names.")
            return True
        seen[name] = key
    return False


def _division_spellings(spellings) -> dict[str, str]:
    counts: dict[str, Counter] = {}
    for spelling, times in Counter(spellings).items():  # first seen first, so a tie keeps the first seen
        counts.setdefault(name_key(spelling), Counter())[spelling] += times
    return {key: c.most_common(1)[0][0] for key, c in counts.items()}


def _check_players_sheet(players, known, first_row, divisions, sheets, reader: _Reader) -> None:
    index = CloseIndex([p.name for p in players] + list(first_row))
    listed = CloseIndex([p.name for p in players])
    for display, mention in first_row.items():
        if name_key(display) not in known:
            slip = listed.matches(display, n=1)
            if slip:  # one typing slip from a listed player: an error, with the listed spelling to write
                reader.add("error", schema.RESULTS.name, mention.row, mention.column, mention.spelling,
                           f"not in Players, but spelled like '{slip[0]}'",
                           f"Write '{slip[0]}' if it is that player, or add '{display}' to Players.")
                continue
            close = index.matches(display)
            hint = f"; close spellings: {', '.join(map(shown, close))}" if close else ""
            reader.add("warning", schema.RESULTS.name, mention.row, mention.column, mention.spelling,
                       f"'{shown(display)}' is not in Players{hint}",
                       "Add the player to the Players sheet, or correct the spelling (the player is rated anyway).")
    sheet = sheets[schema.PLAYERS.name]
    if "division" not in sheet.columns or not divisions:
        return
    warned = set()
    for player in players:
        key = name_key(player.division)
        if key and key not in divisions and key not in warned:
            warned.add(key)
            reader.add("warning", schema.PLAYERS.name, player.row, sheet.header("division"), player.division,
                       f"no result in the Results sheet has the division '{shown(player.division)}'",
                       "Check the spelling against the Results sheet's Division column.")


def _check_close_spellings(first_row: dict[str, Mention], counts: Counter, reader: _Reader) -> None:
    for one, other in CloseIndex(first_row).pairs():
        rare, common = sorted((one, other), key=lambda n: (counts[n], n))
        mention = first_row[rare]
        reader.add("warning", schema.RESULTS.name, mention.row, mention.column, mention.spelling,
                   f"'{rare}' ({counts[rare]} row(s)) is spelled like '{common}' ({counts[common]} row(s)): "
                   "the same player?",
                   "If so, correct the spelling or list it under 'Also known as' on a Players sheet; "
                   "if they are two players, list both on a Players sheet.")


def _link_fixtures(fixture_rows, known, display, sheet: _Sheet | None, reader: _Reader) -> tuple[Fixture, ...]:
    if sheet is None:
        return ()
    everyone = dict(display)
    everyone.update(known)
    index = None
    fixtures = []
    for row, values in fixture_rows:
        names = []
        for key in [k for k in SEATS if clean(values.get(k))]:
            spelling = clean(values[key])
            name = everyone.get(name_key(spelling))
            if name is None and len(spelling) > MAX_NAME_LENGTH:
                reader.add("error", schema.FIXTURES.name, row, sheet.header(key), spelling, _too_long(spelling),
                           "Write the player's name alone in the cell.")
            elif name is None:
                index = index or CloseIndex(set(everyone.values()))
                close = index.matches(spelling)
                hint = f"; close spellings: {', '.join(map(shown, close))}" if close else ""
                reader.add("warning", schema.FIXTURES.name, row, sheet.header(key), spelling,
                           f"'{shown(spelling)}' has no results and is not in Players{hint}",
                           "Check the spelling; a new player's chances are only a guess.")
            names.append(spelling if name is None else name)
        a, pa, b, pb = names if len(names) == 4 else (names[0], "", names[1], "")
        fixtures.append(Fixture(values["date"], a, b, values["race_a"], values["race_b"], row, pa, pb))
    return tuple(fixtures)


# ------------------------------------------------------------ whole-sheet checks


def _check_results(results: tuple[Result, ...], sheet: _Sheet | None, reader: _Reader) -> None:
    if sheet is None:
        return
    seen: dict[tuple, int] = {}
    fold = _Folded()
    for r in results:
        if r.partner_a and r.partner_b:
            one, other = (_side(r.side_a, fold), r.games_a), (_side(r.side_b, fold), r.games_b)
            key = (r.date, (one, other) if one <= other else (other, one), fold[r.division], r.void)
        else:  # singles: the same sides flat (a key of another length, so never equal to a doubles one)
            a, ga, b, gb = fold[r.player_a], r.games_a, fold[r.player_b], r.games_b
            key = (r.date, *((a, ga, b, gb) if (a, ga) <= (b, gb) else (b, gb, a, ga)), fold[r.division], r.void)
        if key in seen:
            reader.add("warning", sheet.spec.name, r.row, None, f"{r.label_a} {r.games_a}-{r.games_b} {r.label_b}",
                       f"the same result as row {seen[key]}",
                       "Delete one of the two rows if the match was entered twice; "
                       "if they really played twice that day, nothing to do.")
        else:
            seen[key] = r.row
    today = dt.date.today()  # the one place the clock is read: a result cannot be dated after today
    for r in results:
        if r.date > today and not r.void:
            reader.add("error", sheet.spec.name, r.row, sheet.header("date"), r.date,
                       f"this date is after today ({today.isoformat()})",
                       "Check the date (often the year); a match is entered once it has been played.")
    # The newest few, as sorted(..., reverse=True) would order them (heapq.nlargest is documented so).
    dated = heapq.nlargest(OUTLIER_ROWS + 1, (r for r in results if r.date <= today), key=lambda r: r.date)
    cut = 0
    for i in range(min(OUTLIER_ROWS, len(dated) - 1)):
        if (dated[i].date - dated[i + 1].date).days > 365:
            cut = i + 1
    for r in dated[:cut]:
        reader.add("error", sheet.spec.name, r.row, sheet.header("date"), r.date,
                   f"this date is more than a year after every other result (the newest other is "
                   f"{dated[cut].date.isoformat()})", "Check the year.")


class _Folded(dict):
    """text -> text.casefold(), worked out once per distinct text."""

    def __missing__(self, text: str) -> str:
        self[text] = text.casefold()
        return self[text]


def _side(names: tuple[str, ...], fold: _Folded) -> tuple[str, ...]:
    """A side's players, capitals folded, in order (so that partners written either way round match)."""
    return (fold[names[0]],) if len(names) == 1 else tuple(sorted(fold[n] for n in names))


def _read_state(wb, values_wb: ValuesBook, tool: dict[str, str], reader: _Reader) -> PublishedState | None:
    title = tool.get(schema.STATE_SHEET)
    if title is None or title not in values_wb.sheetnames:
        return None
    try:
        if wb is not None:
            return read_state(wb)
        return state_from_rows(values_wb.rows(title))
    except SecretaryError as exc:
        reader.add("warning", schema.STATE_SHEET, None, None, "", f"the tool's hidden sheet could not be read ({exc})",
                   "Nothing to do: this update's breakdown of changes starts afresh.")
        return None
