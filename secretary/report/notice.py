"""The printable notice board (PDF): ratings per division, what changed and why, in plain words."""
from __future__ import annotations

from pathlib import Path
from typing import Sequence

from reportlab.graphics.shapes import Drawing, Line, Rect, String
from reportlab.lib import colors
from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.platypus import CondPageBreak, KeepTogether, PageBreak, Spacer

from secretary.model.breakdown import Breakdown
from secretary.model.notice import PART_COLOURS as PART_HEX
from secretary.model.notice import PART_NAMES, Notice, NoticeDivision, NoticeLine, build_notice, long_date
from secretary.model.records import PlayerRating, Settings
from secretary.model.watch_sentences import watch_lines
from secretary.report import layout

PART_COLOURS = tuple(colors.HexColor(c) for c in PART_HEX)
HOW_IT_WORKS = (
    "Everyone's rating is worked out together, from all the results at once: a win counts for more "
    "against a strong player than against a weak one, and how strong each player is comes from "
    "everyone's results.",
    "So a rating can move in a week you did not play: when players you have met are re-rated, or "
    "when your whole division moves up or down against the other divisions.",
    "Each change is split into four parts that add up to it: your own results, opponents re-rated, "
    "group shift (your division as a whole) and corrections (old results edited or removed).",
)
COLUMNS = ("Rank", "Player", "Rating", "Change", "Why it changed")
FIRST_COLUMNS = COLUMNS[:-1] + ("About the rating",)
COLUMN_SHARES = (0.08, 0.22, 0.14, 0.11, 0.45)  # of the page width
NEW = "new"
WATCH_LEAD = "From the watch list (the Watch list sheet in the workbook has the details and the suggested matches):"
ROW_HEIGHT = 15  # points per player in the chart
LABEL_WIDTH = 0.24  # of the chart width, for the names
LEGEND_HEIGHT = 26
MIN_SPAN = 40  # points across the chart at the least, so that small changes look small
WALL_MOVERS = 3  # per division on the wall page, fewer when the page is full
LEVELS_HEADING = "Division levels"
TABLE_START = 90  # points: a table's header and first rows, kept with the heading above them


def rating_text(line: NoticeLine) -> str:
    """``1663 ± 72``."""
    return f"{line.rating:.0f} ± {line.sd:.0f}"


def change_text(line: NoticeLine, first_update: bool = False) -> str:
    """``+18`` / ``-6`` / ``0`` / ``new`` (blank on a first update, when every rating is new)."""
    if line.change is None:
        return "" if first_update else NEW
    return f"{line.change:+d}" if line.change else "0"


def _division_table(block: NoticeDivision, first_update: bool, width: float):
    rows = [(str(line.rank), line.name, rating_text(line), change_text(line, first_update), line.sentence)
            for line in block.lines]
    headers = FIRST_COLUMNS if first_update else COLUMNS
    return layout.table(headers, rows, [width * s for s in COLUMN_SHARES], right=(0, 2, 3))


def parts_chart(lines: Sequence[NoticeLine], width: float) -> Drawing:
    """Horizontal bars, one per player: the four parts stacked out from zero (gains right, losses left)."""
    regular = layout.fonts()[0]
    height = ROW_HEIGHT * len(lines) + LEGEND_HEIGHT + 6
    d = Drawing(width, height)
    label_w = width * LABEL_WIDTH
    total_w = 34  # room for the total at the bar's end
    x0, x1 = label_w + total_w, width - total_w
    gains = max([sum(p for p in line.parts if p > 0) for line in lines] + [1])
    losses = max([-sum(p for p in line.parts if p < 0) for line in lines] + [1])
    if gains + losses < MIN_SPAN:  # a week of tiny changes should not fill the width
        pad = (MIN_SPAN - gains - losses) / 2
        gains, losses = gains + pad, losses + pad
    per_point = (x1 - x0) / (gains + losses)
    zero = x0 + losses * per_point
    top = height - 4
    for k, line in enumerate(lines):
        y = top - (k + 1) * ROW_HEIGHT + 3
        bar_h = ROW_HEIGHT - 5
        label, font = layout.drawable(_short(line.name), regular)
        d.add(String(label_w - 4, y + 2, label, fontName=font, fontSize=8, textAnchor="end", fillColor=layout.INK))
        right = left = zero
        for value, colour in zip(line.parts, PART_COLOURS):
            if value == 0:
                continue
            w = abs(value) * per_point
            x = right if value > 0 else left - w
            d.add(Rect(x, y, w, bar_h, fillColor=colour, strokeColor=colors.white, strokeWidth=0.5))
            if value > 0:
                right += w
            else:
                left -= w
        total = change_text(line)
        if line.change >= 0:
            d.add(String(right + 3, y + 2, total, fontName=regular, fontSize=8, fillColor=layout.INK))
        else:
            d.add(String(left - 3, y + 2, total, fontName=regular, fontSize=8, textAnchor="end", fillColor=layout.INK))
    d.add(Line(zero, top - len(lines) * ROW_HEIGHT, zero, top, strokeColor=layout.MUTED, strokeWidth=0.6))
    _legend(d, regular, width)
    return d


def _short(name: str, most: int = 26) -> str:
    return name if len(name) <= most else name[: most - 1] + "…"


def _legend(d: Drawing, font: str, width: float) -> None:
    """The four parts' colours with their names, in one line under the bars."""
    y, size = 4, 8
    lead = "Points from:"
    d.add(String(0, y + 1, lead, fontName=font, fontSize=size, fillColor=layout.MUTED))
    x = stringWidth(lead, font, size) + 8
    for name, colour in zip(PART_NAMES, PART_COLOURS):
        d.add(Rect(x, y, 9, 9, fillColor=colour, strokeColor=None))
        d.add(String(x + 12, y + 1, name, fontName=font, fontSize=size, fillColor=layout.INK))
        x += 12 + stringWidth(name, font, size) + 14
    d.add(String(width, y + 1, "gains right, losses left", fontName=font, fontSize=size - 0.5,
                 textAnchor="end", fillColor=layout.MUTED))


def _division(block: NoticeDivision, notice: Notice, width: float, first: bool) -> list:
    """Heading, the chart of the biggest changes, then the table (a table longer than a page runs on, header repeated).

    A division's block starts a new page when it does not fit in what is left of
    the current one, so no division is left with a few rows on the next page;
    the first one starts under the title, on page one, whatever its length.
    """
    top = [layout.para(block.division, "heading")]
    biggest = block.biggest_changes()
    if not notice.first_update and biggest:
        top += [
            layout.para(f"The biggest changes in {block.division}, split into their four parts. The number "
                        "at the end of each bar is the whole change, in points.", "small"),
            parts_chart(biggest, width),
            Spacer(1, 6),
        ]
    table = _division_table(block, notice.first_update, width)
    if not first:
        return [KeepTogether([*top, table])]
    # Start on a new page only if the heading, the chart and the table's first rows do not fit here.
    room = sum(flowable.wrap(width, 10_000)[1] for flowable in top) + TABLE_START
    return [CondPageBreak(room), KeepTogether(top), table]


def _mover(line: NoticeLine) -> str:
    """``Yvette Marwood  +94 (now 1267)``: one of a division's biggest movers, for the wall."""
    return f"{line.name}  {change_text(line)}  (now {line.rating:.0f})"


def wall_page(notice: Notice, watch, width: float, height: float) -> list:
    """Page one, for the wall: large type readable at a metre, the biggest movers of each division, the
    divisions' levels and how ratings work; as many movers per division as fit on the one page."""
    for most in (WALL_MOVERS, 2, 1, 0):
        story = [layout.para(notice.title, "walltitle"), layout.para(notice.dates, "wallsub")]
        if not notice.first_update and most:
            story.append(layout.para("Biggest movers this week", "wallhead"))
            for block in notice.divisions:
                movers = block.biggest_changes(most)
                if movers:
                    story.append(layout.para(block.division, "wallnote"))
                    story += [layout.para(f"\u2022 {_mover(line)}", "wall") for line in movers]
        if notice.doubles:  # the week's doubles results ("Doubles this week: ...")
            story.append(layout.para(notice.doubles, "wallnote"))
        if notice.levels:
            story += [layout.para(LEVELS_HEADING, "wallhead"), layout.para(notice.levels_line(), "wall"),
                      layout.para(notice.level_sentence, "wallnote")]
        story += [layout.para("How ratings work", "wallhead"), *(layout.para(t, "wallnote") for t in HOW_IT_WORKS),
                  layout.para("The full list, with every player's change and why, follows on the next pages.",
                              "wallnote")]
        if sum(f.wrap(width, height)[1] + f.getSpaceBefore() + f.getSpaceAfter() for f in story) <= height:
            break
    return [*story, PageBreak()]


def write_notice_pdf(path: str | Path, breakdown: Breakdown, ratings: Sequence[PlayerRating],
                     settings: Settings, watch=None, levels=()) -> Path:
    """Write the notice board as a PDF (A4 or Letter per the settings); returns the path.

    Two parts: one page for the wall (``wall_page``), then the full list, division by division.
    ``levels`` is the divisions table (``division_table.level_table``)."""
    notice = build_notice(breakdown, ratings, settings, levels)
    width = layout.frame_width(settings)
    story = wall_page(notice, watch, width, layout.frame_height(settings))
    story += layout.title_block(f"{notice.title}: the full list", notice.dates)
    story += [layout.para(text) for text in (notice.note, notice.doubles) if text]
    explained = (*HOW_IT_WORKS, *((notice.level_sentence,) if notice.level_sentence else ()), *notice.closing)
    story += [layout.boxed("How ratings work here", explained, width), Spacer(1, 4)]
    for k, block in enumerate(notice.divisions):
        story += _division(block, notice, width, first=k == 0)
    watching = watch_lines(watch) if watch is not None else []
    if notice.removed or watching:
        story.append(layout.para("Also worth knowing", "heading"))
        if notice.removed:
            story.append(layout.para(notice.removed))
        if watching:
            story.append(layout.para(WATCH_LEAD))
            story += [layout.para(f"• {line}") for line in watching]
    footer = (f"{notice.title} · results up to {long_date(breakdown.reference_date)} · "
              "ratings are estimates; the committee decides")
    return layout.build(path, story, settings, notice.title, footer)
