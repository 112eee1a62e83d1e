"""The blank league workbook: built from the schema, shipped in the package, copied for a new league."""
from __future__ import annotations

import math
import shutil
from pathlib import Path

from openpyxl import Workbook
from openpyxl.utils import get_column_letter
from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.worksheet.datavalidation import DataValidation

from secretary.errors import FileRefused
from secretary.model.records import Settings
from secretary.workbook import schema

PACKAGED_TEMPLATE = Path(__file__).resolve().parents[1] / "data" / "league-template.xlsx"
VALIDATED_ROWS = 20000  # the data-entry checks cover this many rows below the headers

INSTRUCTIONS = (
    ("How to use this workbook", True),
    ("", False),
    ("This workbook holds your league's results. The rating tool reads it and adds its own "
     "sheets (Ratings, Why it changed, Watch list, Rating history, Notice board, Update log, "
     "Problems). It never changes the sheets you type in.", False),
    ("", False),
    ("Results (needed)", True),
    ("One row per match. Date: the day it was played (a date, or text like 2026-03-14). "
     "Division: the division or event where it was played. Player A and Player B: the two names, "
     "written the same way every week. Games A and Games B: the games (racks or frames) each "
     "won, whole numbers. Partner A and Partner B: for a doubles frame only, each side's second "
     "player (leave both blank for singles). Event and Note are free text; a row whose Note starts "
     "with 'void' is kept but not rated.", False),
    ("Players (optional)", True),
    ("One row per player: the name as used in Results, the home division, a starting rating when "
     "you already know the player's level, and other spellings of the name (separated by ;) "
     "under 'Also known as', which are merged into this player.", False),
    ("Divisions (optional)", True),
    ("One row per division, for a league whose divisions are tiers: the division as written in Results, "
     "and its starting level in points above (+) or below (-) the Centre, for example +150 for the top "
     "division and -150 for the bottom one. Blank means 0. The games between divisions then move each "
     "division's level from there.", False),
    ("Settings (optional)", True),
    ("Leave a Value blank to use the default shown beside it. The 'What it means' column says "
     "what each setting does.", False),
    ("Fixtures (optional)", True),
    ("Matches still to be played (Partner A and Partner B for a doubles frame). The tool adds "
     "side A's chance and a fair handicap race.", False),
    ("", False),
    ("Good to know", True),
    ("Ratings are estimates: each comes with a ± that says how sure it is. Few games mean a "
     "wide ±. Use them as a guide; the league committee makes the decisions (divisions, "
     "handicaps, prizes).", False),
    ("Publishing names and ratings (on a notice board or online) must follow your country's "
     "data-protection rules: tell members, and leave out anyone who asks.", False),
    ("Each update keeps a copy of the previous version of this file in a 'backups' folder "
     "beside it.", False),
)

_BOLD = Font(bold=True)
_INSTRUCTIONS_WIDTH = 72  # characters: fits a portrait A4 or Letter page
_HEADER_FILL = PatternFill("solid", fgColor="DDE7F0")


def build_template() -> Workbook:
    """The blank league workbook, made from the schema (same content every time)."""
    wb = Workbook()
    ws = wb.active
    ws.title = schema.INSTRUCTIONS_SHEET
    ws.column_dimensions["A"].width = _INSTRUCTIONS_WIDTH
    for number, (text, heading) in enumerate(INSTRUCTIONS, start=1):
        cell = ws.cell(number, 1, text or None)
        cell.alignment = Alignment(wrap_text=True, vertical="top")
        if heading:
            cell.font = Font(bold=True, size=14 if number == 1 else 11)
        else:  # spreadsheet programs do not grow a row for wrapped text they did not lay out
            ws.row_dimensions[number].height = 15 * max(1, math.ceil(len(text) / (_INSTRUCTIONS_WIDTH * 0.95)))
    ws.sheet_properties.pageSetUpPr.fitToPage = True
    ws.page_setup.fitToWidth, ws.page_setup.fitToHeight = 1, 0
    for spec in schema.INPUT_SHEETS:
        _input_sheet(wb, spec)
    _results_checks(wb[schema.RESULTS.name])
    _divisions_checks(wb[schema.DIVISIONS.name])
    _settings_rows(wb[schema.SETTINGS.name])
    return wb


def _input_sheet(wb: Workbook, spec: schema.SheetSpec) -> None:
    ws = wb.create_sheet(spec.name)
    for index, column in enumerate(spec.columns, start=1):
        cell = ws.cell(1, index, column.header)
        cell.font, cell.fill = _BOLD, _HEADER_FILL
        ws.column_dimensions[cell.column_letter].width = column.width
    ws.freeze_panes = "A2"


def _number(spec: schema.SheetSpec, key: str) -> int:
    return spec.columns.index(spec.column(key)) + 1


def _letter(spec: schema.SheetSpec, key: str) -> str:
    return get_column_letter(_number(spec, key))


def _results_checks(ws) -> None:
    last = VALIDATED_ROWS + 1
    games = DataValidation(
        type="whole", operator="greaterThanOrEqual", formula1="0", allow_blank=True, errorStyle="stop",
        showErrorMessage=True, errorTitle="Games won",
        error="Type the games (racks or frames) won: a whole number, 0 or more.")
    for key in ("games_a", "games_b"):
        games.add(f"{_letter(schema.RESULTS, key)}2:{_letter(schema.RESULTS, key)}{last}")
    # A warning, not a stop: text dates like 2026-03-14 are allowed too.
    date = DataValidation(
        type="date", operator="greaterThan", formula1="DATE(1990,1,1)", allow_blank=True,
        showErrorMessage=True, errorStyle="warning", errorTitle="Date",
        error="Type the date the match was played, for example 2026-03-14.")
    column = _letter(schema.RESULTS, "date")
    date.add(f"{column}2:{column}{last}")
    ws.add_data_validation(games)
    ws.add_data_validation(date)
    for row in range(2, 201):  # show typed dates as dates on the first rows
        ws.cell(row, _number(schema.RESULTS, "date")).number_format = "yyyy-mm-dd"


def _divisions_checks(ws) -> None:
    """A warning (Scale may differ from 400) when a starting level is beyond what the reader accepts at Scale 400."""
    bound = schema.LEVEL_SCALES * Settings().scale
    level = DataValidation(
        type="decimal", operator="between", formula1=f"{-bound:.0f}", formula2=f"{bound:.0f}", allow_blank=True,
        showErrorMessage=True, errorStyle="warning", errorTitle="Starting level",
        error=f"Type the division's level in points above (+) or below (-) the Centre, for example 150 or -150 "
              f"(from -{bound:.0f} to {bound:.0f} at Scale 400), not a rating like 1650.")
    column = _letter(schema.DIVISIONS, "starting")
    level.add(f"{column}2:{column}{VALIDATED_ROWS + 1}")
    ws.add_data_validation(level)


def _settings_rows(ws) -> None:
    for number, spec in enumerate(schema.SETTINGS_TABLE, start=2):
        default = spec.default
        if isinstance(default, float) and default.is_integer():
            default = int(default)
        ws.cell(number, _number(schema.SETTINGS, "setting"), spec.label)
        ws.cell(number, _number(schema.SETTINGS, "default"), default if default != "" else None)
        explanation = ws.cell(number, _number(schema.SETTINGS, "explanation"),
                              f"{spec.explanation} Allowed: {spec.allowed}.")
        explanation.alignment = Alignment(wrap_text=True, vertical="top")


def new_workbook(path: str | Path) -> Path:
    """Copy the blank league workbook to ``path`` (never over an existing file)."""
    path = Path(path)
    if path.suffix.lower() != ".xlsx":
        raise FileRefused(f"{path.name}: a new league workbook must be an .xlsx file.")
    if path.exists():
        raise FileRefused(f"{path} already exists; choose another name (nothing was changed).")
    if not path.parent.is_dir():
        raise FileRefused(f"The folder {path.parent} does not exist.")
    try:
        with path.open("xb") as target, PACKAGED_TEMPLATE.open("rb") as source:
            shutil.copyfileobj(source, target)
    except FileExistsError:
        raise FileRefused(f"{path} already exists; choose another name (nothing was changed).") from None
    except OSError as exc:
        raise FileRefused(f"{path} could not be written ({exc.strerror or exc}).") from None
    return path
