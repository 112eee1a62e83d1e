"""Writers of the tool's sheets: Ratings, Rating history (with its chart), Update log, Problems."""
from __future__ import annotations

import datetime as dt
from typing import Sequence

from openpyxl.chart import LineChart, Reference
from openpyxl.utils import get_column_letter
from openpyxl.chart.data_source import AxDataSource, StrRef
from openpyxl.worksheet.pagebreak import Break
from openpyxl.workbook.workbook import Workbook

from openpyxl.styles import Alignment, Font

from secretary.model.division_table import HOME_RULE, INFERRED, LEVEL_SD, DivisionLevel, level_sentence
from secretary.model.records import HOME_RULES, PlayerRating, Problem, Settings, UpdateLog
from secretary.workbook.printing import LINE_POINTS, lines_needed
from secretary.workbook.schema import (
    HISTORY_SHEET,
    LOG_SHEET,
    PROBLEMS_SHEET,
    RATINGS_SHEET,
    SETTINGS_TABLE,
)
from secretary.workbook.style import (
    CHANGE_FORMAT,
    DATE_FORMAT,
    GAMES_FORMAT,
    RATING_FORMAT,
    SD_FORMAT,
    TIME_FORMAT,
    header_row,
    put,
    remove_sheet,
    replace_sheet,
    tool_sheet,
    write_table,
)

RATINGS_HEADERS = ("Rank", "Player", "Division", "Rating", "±", "Weighted games", "Change", "Last played", "Note")
LOG_HEADERS = (
    "Time", "Version", "Reference date", "Rows read", "Rows rated",
    "New rows", "Changed rows", "Removed rows", "Settings", "Warnings",
)
PROBLEM_HEADERS = ("Kind", "Sheet", "Row", "Column", "Found", "Problem", "What to do")
CHART_PLAYERS = 10
DOUBLES_GAMES = "Doubles games"  # last, only in a league with doubles: how many of the weighted games were doubles
NEW_NOTE = "new this update"
FEW_GAMES_NOTE = "few games: rating still uncertain"
LEVELS_TITLE = "Division levels"
LEVEL_HEADERS = ("Division", "Division level", LEVEL_SD, "Games against other divisions", "Players", "Note")
# Under Division, Rating, ±, Weighted games, Change and Note: Rank and Player stay blank under the players,
# so that whoever reads the sheet's rows by their Player finds players only.
LEVEL_COLUMNS = (3, 4, 5, 6, 7, 9)


def ranked(ratings: Sequence[PlayerRating]) -> list[tuple[int, PlayerRating]]:
    """Players best first with their rank; players whose shown ratings are equal share a rank."""
    order = sorted(ratings, key=lambda p: (-p.rating, p.name.casefold()))
    out, rank, shown_before = [], 0, None
    for position, player in enumerate(order, start=1):
        shown = round(player.rating)
        if shown != shown_before:
            rank, shown_before = position, shown
        out.append((rank, player))
    return out


def write_ratings(wb: Workbook, ratings: Sequence[PlayerRating], settings: Settings,
                  levels: Sequence[DivisionLevel] = ()) -> None:
    """Rewrite the Ratings sheet, best rating first; the divisions table under it when there are levels.

    A league with doubles gets a last column, Doubles games: how many of the weighted games were doubles.
    """
    doubles = any(p.doubles_games > 0 for p in ratings)
    rows = []
    for rank, p in ranked(ratings):
        new = p.is_new or p.change is None
        notes = [NEW_NOTE] if new else []
        if p.games < settings.few_games:
            notes.append(FEW_GAMES_NOTE)
        if p.division_from == HOME_RULES[1]:
            notes.append(INFERRED)
        rows.append((
            rank, p.name, p.division, p.rating, p.sd, p.games,
            None if new else p.change, p.last_played, "; ".join(notes), *((p.doubles_games,) if doubles else ()),
        ))
    headers = RATINGS_HEADERS + ((DOUBLES_GAMES,) if doubles else ())
    ws = replace_sheet(wb, RATINGS_SHEET)
    count = write_table(
        ws, headers, rows, freeze="C2",
        formats={"Rating": RATING_FORMAT, "±": SD_FORMAT, "Weighted games": GAMES_FORMAT, DOUBLES_GAMES: GAMES_FORMAT,
                 "Change": CHANGE_FORMAT, "Last played": DATE_FORMAT},
    )
    if levels:
        _levels_table(ws, max(count, 1) + 3, levels, settings)


def _levels_table(ws, row: int, levels: Sequence[DivisionLevel], settings: Settings) -> None:
    """The divisions table from ``row`` down: a heading, what a division level is, the home rule, the rows.

    Its columns sit under the players' (``LEVEL_COLUMNS``), its Note under theirs, which printing wraps."""
    last = len(RATINGS_HEADERS)
    put(ws.cell(row, LEVEL_COLUMNS[0]), LEVELS_TITLE)
    ws.cell(row, LEVEL_COLUMNS[0]).font = Font(bold=True, size=13)
    width = sum(ws.column_dimensions[get_column_letter(c)].width or 10 for c in range(LEVEL_COLUMNS[0], last + 1))
    for k, text in enumerate((level_sentence(settings), HOME_RULE), start=row + 1):
        ws.merge_cells(start_row=k, start_column=LEVEL_COLUMNS[0], end_row=k, end_column=last)
        put(ws.cell(k, LEVEL_COLUMNS[0]), text)
        ws.cell(k, LEVEL_COLUMNS[0]).alignment = Alignment(wrap_text=True, vertical="top")
        ws.row_dimensions[k].height = LINE_POINTS * lines_needed(text, width)
    row += 3
    for col, header in zip(LEVEL_COLUMNS, LEVEL_HEADERS):
        put(ws.cell(row, col), header)
        ws.cell(row, col).font = Font(bold=True)
        ws.cell(row, col).alignment = Alignment(wrap_text=True, vertical="top")
    ws.row_dimensions[row].height = LINE_POINTS * 2  # "Games against other divisions" wraps
    formats = (None, CHANGE_FORMAT, SD_FORMAT, GAMES_FORMAT, None, None)
    for d in levels:
        row += 1
        for col, value, number_format in zip(LEVEL_COLUMNS, (d.label, d.level, d.sd, d.cross_games, d.players,
                                                             d.note), formats):
            if value is not None and value != "":
                put(ws.cell(row, col), value, number_format)
    letter = get_column_letter(LEVEL_COLUMNS[0])  # the names of divisions fit
    longest = max(len(d.label) for d in levels) + 3
    ws.column_dimensions[letter].width = max(ws.column_dimensions[letter].width or 0, min(longest, 40))


def write_history(wb: Workbook, date: dt.date, ratings: Sequence[PlayerRating]) -> None:
    """Add (or overwrite) this reference date's column of Rating history and redraw its chart."""
    names, history = _read_history(wb)
    column = {}
    for p in ratings:
        key = p.name.casefold()
        names[key] = p.name  # the newest spelling wins
        column[key] = p.rating
    history[date] = column
    dates = sorted(history)
    now_rated = [p.name.casefold() for _, p in ranked(ratings)]
    others = sorted((k for k in names if k not in column), key=lambda k: names[k].casefold())
    rows = [[names[k], *(history[d].get(k) for d in dates)] for k in now_rated + others]
    headers = ["Player", *(d.isoformat() for d in dates)]
    ws = replace_sheet(wb, HISTORY_SHEET)
    count = write_table(ws, headers, rows, freeze="B2", formats={h: RATING_FORMAT for h in headers[1:]})
    _add_chart(ws, len(headers), min(CHART_PLAYERS, len(now_rated)), count + 3)


def _read_history(wb: Workbook) -> tuple[dict[str, str], dict[dt.date, dict[str, float]]]:
    """The existing history: names by folded key, and per date the ratings by folded key."""
    names: dict[str, str] = {}
    history: dict[dt.date, dict[str, float]] = {}
    ws = tool_sheet(wb, HISTORY_SHEET)
    if ws is None:
        return names, history
    columns = {}
    for col, text in enumerate(header_row(ws)[1:], start=1):
        day = _as_date(text)
        if day is not None:
            columns[col] = day
            history.setdefault(day, {})
    for row in ws.iter_rows(min_row=2, values_only=True):
        if not row or not isinstance(row[0], str) or not row[0].strip():
            continue
        key = row[0].casefold()
        names[key] = row[0]
        for col, day in columns.items():
            value = row[col] if col < len(row) else None
            if isinstance(value, (int, float)) and not isinstance(value, bool):
                history[day][key] = float(value)
    return names, history


def _as_date(text: str) -> dt.date | None:
    try:
        return dt.date.fromisoformat(text[:10])
    except ValueError:
        return None


def _add_chart(ws, n_columns: int, n_players: int, below: int) -> None:
    """A line chart of the top players' ratings over the update dates (straight lines), from row ``below`` down,
    on a printed page of its own (a page break above it; it is shorter than a page)."""
    if n_players == 0:
        return
    chart = LineChart()
    chart.title = f"Top {n_players} ratings over time"
    chart.y_axis.title = "Rating"
    chart.x_axis.title = "Update"
    # openpyxl 3.1 marks axes as deleted unless told otherwise.
    chart.x_axis.delete = False
    chart.y_axis.delete = False
    chart.height, chart.width = 9, 18  # cm
    for row in range(2, 2 + n_players):
        chart.add_data(Reference(ws, min_col=1, max_col=n_columns, min_row=row), from_rows=True,
                       titles_from_data=True)
    dates = AxDataSource(strRef=StrRef(f=str(Reference(ws, min_col=2, max_col=n_columns, min_row=1))))
    for series in chart.series:
        series.cat = dates  # the date headers are text, so a text reference (numRef would show 1, 2, 3)
        series.smooth = False  # a rating moves in steps between updates; a curve would invent values
    ws.add_chart(chart, f"A{below}")
    ws.row_breaks.append(Break(id=below - 2))  # after the table: the empty row above the chart starts its page


def write_log(wb: Workbook, entry: UpdateLog) -> None:
    """Append one row to the Update log (earlier rows are kept)."""
    old_rows = []
    ws = tool_sheet(wb, LOG_SHEET)
    if ws is not None:
        where = {h.casefold(): i for i, h in enumerate(header_row(ws))}
        for row in ws.iter_rows(min_row=2, values_only=True):
            if any(v is not None for v in row):
                old_rows.append([_pick(row, where.get(h.casefold())) for h in LOG_HEADERS])
    new_row = [
        _as_time(entry.updated_at), entry.version, entry.reference_date, entry.rows_read,
        entry.rows_rated, entry.new_rows, entry.changed_rows, entry.removed_rows,
        settings_text(entry.settings), "; ".join(entry.warnings),
    ]
    ws = replace_sheet(wb, LOG_SHEET)
    write_table(ws, LOG_HEADERS, [*old_rows, new_row],
                formats={"Time": TIME_FORMAT, "Reference date": DATE_FORMAT})


def _pick(row: tuple, index: int | None) -> object:
    return row[index] if index is not None and index < len(row) else None


def _as_time(text: str) -> object:
    """An ISO timestamp as an Excel date-time (Excel has no time zones); the text if unreadable."""
    try:
        return dt.datetime.fromisoformat(text).replace(tzinfo=None, microsecond=0)
    except ValueError:
        return text


def settings_text(settings: Settings) -> str:
    """The settings in one short line, e.g. 'Centre 1500; Scale 400; ...'."""
    parts = []
    for spec in SETTINGS_TABLE:
        value = getattr(settings, spec.field)
        if value == "":
            continue
        if isinstance(value, float) and value.is_integer():
            value = int(value)
        parts.append(f"{spec.label} {value}")
    return "; ".join(parts)


def write_problems(wb: Workbook, problems: Sequence[Problem]) -> None:
    """Rewrite the Problems sheet, errors first; remove it when there is nothing to report."""
    if not problems:
        remove_sheet(wb, PROBLEMS_SHEET)
        return
    ordered = sorted(problems, key=lambda p: not p.is_error)
    rows = [
        (p.severity.capitalize(), p.sheet, p.row, p.column, p.found, p.problem, p.fix)
        for p in ordered
    ]
    ws = replace_sheet(wb, PROBLEMS_SHEET)
    write_table(ws, PROBLEM_HEADERS, rows, widths={"Problem": 60, "What to do": 60})
