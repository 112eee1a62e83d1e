"""Layout shared by the printed reports: fonts, text styles, title, boxes, tables, page footer."""
from __future__ import annotations

import os
import secrets
from functools import lru_cache
from pathlib import Path
from typing import Sequence
from xml.sax.saxutils import escape

from reportlab.lib import colors
from reportlab.lib.pagesizes import A4, LETTER
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont
from reportlab.platypus import Flowable, KeepTogether, Paragraph, SimpleDocTemplate, Spacer, Table, TableStyle

from secretary.model.records import Settings
from secretary.report import scripts

# Fonts with accents and most European letters (Linux, Windows, macOS); the first one found is used.
_WINDOWS_FONTS = Path(os.environ.get("WINDIR", "C:/Windows")) / "Fonts"
_MAC_FONTS = Path("/System/Library/Fonts/Supplemental")
_BUNDLED_FONTS = Path(__file__).resolve().parents[1] / "data" / "fonts"  # only in the desktop app (scripts/build-app)
FONT_FILES = (
    ("DejaVuSans", _BUNDLED_FONTS / "DejaVuSans.ttf", _BUNDLED_FONTS / "DejaVuSans-Bold.ttf"),
    ("DejaVuSans", Path("/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf"),
     Path("/usr/share/fonts/truetype/dejavu/DejaVuSans-Bold.ttf")),
    ("Arial", _WINDOWS_FONTS / "arial.ttf", _WINDOWS_FONTS / "arialbd.ttf"),
    ("Arial", _MAC_FONTS / "Arial.ttf", _MAC_FONTS / "Arial Bold.ttf"),
)
FALLBACK = ("Helvetica", "Helvetica-Bold")  # built into every PDF reader, Western European letters only
MARGIN = 16 * mm
INK = colors.HexColor("#222222")
MUTED = colors.HexColor("#555555")
RULE = colors.HexColor("#9AA5B1")
BOX = colors.HexColor("#EEF3F8")
HEADER_FILL = colors.HexColor("#DCE6F0")
STRIPE = colors.HexColor("#F6F8FA")


@lru_cache(maxsize=1)
def fonts() -> tuple[str, str]:
    """(regular, bold) font names: DejaVu Sans when installed, else Helvetica."""
    for name, regular, bold in FONT_FILES:
        if regular.is_file() and bold.is_file():
            try:
                pdfmetrics.registerFont(TTFont(name, str(regular)))
                pdfmetrics.registerFont(TTFont(name + "-Bold", str(bold)))
            except Exception:  # a damaged font file: fall back rather than fail the report
                continue
            return name, name + "-Bold"
    return FALLBACK


def printable(text: str, font: str | None = None) -> str:
    """The text for one font: letters it lacks become the letter without its accent, else '?'
    (see ``scripts``: letters of scripts that need shaping count as lacking)."""
    font = font or fonts()[0]
    return "".join(ch if scripts.font_for(ch, font) == font else (scripts.plain_base(ch, font) or "?") for ch in text)


def markup(text: str, font: str) -> str:
    """The text as paragraph markup: letters the font lacks in a font of this machine that has them
    (``<font name=...>``), else without their accent, else '?'; never read as markup itself."""
    runs: list[tuple[str, list[str]]] = []
    for ch in text:
        use = scripts.font_for(ch, font)
        if use is None:
            ch, use = scripts.plain_base(ch, font) or "?", font
        if runs and runs[-1][0] == use:
            runs[-1][1].append(ch)
        else:
            runs.append((use, [ch]))
    return "".join(escape("".join(chars)) if use == font else f'<font name="{use}">{escape("".join(chars))}</font>'
                   for use, chars in runs)


def drawable(text: str, font: str) -> tuple[str, str]:
    """Text and font for a one-font string on a drawing: the first other font the text needs, when it
    needs one, with any letter that font lacks as '?'."""
    other = next((f for f in (scripts.font_for(ch, font) for ch in text) if f not in (None, font)), None)
    if other is None:
        return printable(text, font), font
    return "".join(ch if scripts.has_glyph(other, ch) and not scripts.needs_shaping(ch) else "?" for ch in text), other


def page_size(settings: Settings) -> tuple[float, float]:
    """The paper the settings ask for (A4 unless Letter)."""
    return LETTER if settings.paper == "Letter" else A4


@lru_cache(maxsize=1)
def styles() -> dict[str, ParagraphStyle]:
    """The text styles: title, subtitle, heading, body, small, cell, cell-right."""
    regular, bold = fonts()
    # Body text 12 points (read at arm's length); the wall page's styles are larger, for a metre away.
    body = ParagraphStyle("body", fontName=regular, fontSize=12, leading=15, textColor=INK, spaceAfter=3)
    return {
        "walltitle": ParagraphStyle("walltitle", parent=body, fontName=bold, fontSize=26, leading=31, spaceAfter=2),
        "wallsub": ParagraphStyle("wallsub", parent=body, fontSize=15, leading=19, textColor=MUTED, spaceAfter=8),
        "wallhead": ParagraphStyle("wallhead", parent=body, fontName=bold, fontSize=19, leading=23,
                                   spaceBefore=8, spaceAfter=2),
        "wall": ParagraphStyle("wall", parent=body, fontSize=16, leading=20, spaceAfter=1),
        "wallnote": ParagraphStyle("wallnote", parent=body, fontSize=14, leading=17.5, spaceAfter=3),
        "title": ParagraphStyle("title", parent=body, fontName=bold, fontSize=18, leading=22, spaceAfter=2),
        "subtitle": ParagraphStyle("subtitle", parent=body, fontSize=13, leading=16, textColor=MUTED, spaceAfter=8),
        "heading": ParagraphStyle("heading", parent=body, fontName=bold, fontSize=15, leading=19,
                                  spaceBefore=10, spaceAfter=5),
        "boxhead": ParagraphStyle("boxhead", parent=body, fontName=bold, fontSize=13, leading=16),
        "body": body,
        "small": ParagraphStyle("small", parent=body, fontSize=10.5, leading=13, textColor=MUTED),
        "cell": ParagraphStyle("cell", parent=body, spaceAfter=0),
        "cellbold": ParagraphStyle("cellbold", parent=body, fontName=bold, spaceAfter=0),
        "right": ParagraphStyle("right", parent=body, spaceAfter=0, alignment=2),
        "boldright": ParagraphStyle("boldright", parent=body, fontName=bold, spaceAfter=0, alignment=2),
    }


def para(text: str, style: str = "body") -> Paragraph:
    """A paragraph of plain text (never read as markup)."""
    st = styles()[style]
    return Paragraph(markup(text, st.fontName), st)


def rich(parts: Sequence[tuple[str, bool]], style: str = "body") -> Paragraph:
    """A paragraph of plain-text pieces, each bold or not."""
    st = styles()[style]
    bold = fonts()[1]
    pieces = []
    for text, strong in parts:
        shown = markup(text, bold if strong else st.fontName)
        pieces.append(f'<font name="{bold}">{shown}</font>' if strong else shown)
    return Paragraph("".join(pieces), st)


def title_block(title: str, subtitle: str) -> list:
    """The report's title and the line under it."""
    return [para(title, "title"), para(subtitle, "subtitle")]


def boxed(heading: str, lines: Sequence[str], width: float) -> Table:
    """A shaded box with a bold heading and a few plain lines."""
    cells = [[para(heading, "boxhead")], *([para(line, "cell")] for line in lines)]
    box = Table(cells, colWidths=[width])
    box.setStyle(TableStyle([
        ("BACKGROUND", (0, 0), (-1, -1), BOX),
        ("BOX", (0, 0), (-1, -1), 0.6, RULE),
        ("LEFTPADDING", (0, 0), (-1, -1), 8), ("RIGHTPADDING", (0, 0), (-1, -1), 8),
        ("TOPPADDING", (0, 0), (-1, -1), 2), ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
        ("TOPPADDING", (0, 0), (-1, 0), 6), ("BOTTOMPADDING", (0, -1), (-1, -1), 7),
    ]))
    return box


def table(headers: Sequence[str], rows: Sequence[Sequence[object]], widths: Sequence[float],
          right: Sequence[int] = ()) -> Flowable:
    """A striped table with a shaded header row repeated on each page; ``right`` columns align right."""
    def cell(value, col, header=False):
        if not isinstance(value, str):
            return value  # a flowable made by the caller
        style = {(True, True): "boldright", (True, False): "cellbold",
                 (False, True): "right", (False, False): "cell"}[(header, col in right)]
        if not header and _one_line(value, styles()[style], widths[col]):
            return value  # drawn by the table in the cell style (see _striped): a Paragraph costs far more
        st = styles()[style]
        return CellParagraph(markup(value, st.fontName), st)

    head = [cell(h, c, True) for c, h in enumerate(headers)]
    body = [[cell(v, c) for c, v in enumerate(row)] for row in rows]
    if len(body) <= TABLE_ROWS:
        return _striped(head, body, widths, 0, last=True, right=right)
    starts = range(0, len(body), TABLE_ROWS)
    return _Tables([_striped(head, body[k:k + TABLE_ROWS], widths, k, last=k + TABLE_ROWS >= len(body),
                             right=right) for k in starts])


class CellParagraph(Paragraph):
    """A table cell's paragraph, its lines broken once per width: a table wraps every cell again each time
    it splits at a page's end (four times a cell of a long list on average), and a Paragraph's lines
    depend only on its text, its style and the width."""

    _wrapped_at = None

    def wrap(self, availWidth, availHeight):
        if availWidth == self._wrapped_at:
            self.width = availWidth
            return self.width, self.height
        size = super().wrap(availWidth, availHeight)
        self._wrapped_at = availWidth if size[1] != 0x7FFFFFFF else None
        return size


_PLAIN: dict[str, set[str]] = {}  # per font: the letters known to need no other font and no shaping


def _one_line(text: str, style: ParagraphStyle, width: float) -> bool:
    """The text prints as a Paragraph of ``style`` would, on one line of a cell ``width`` wide, from its
    one font: then the table can draw it as plain text."""
    font = style.fontName
    known = _PLAIN.setdefault(font, set())
    letters = set(text)
    if not letters <= known:
        if not all(scripts.font_for(ch, font) == font and ch not in "\n\t" for ch in letters - known):
            return False
        known |= letters
    return (text == " ".join(text.split()) and bool(text)
            and pdfmetrics.stringWidth(text, font, style.fontSize) <= width - 2 * _CELL_PADDING)


_CELL_PADDING = 6  # points: a Table cell's left and right padding (reportlab's default)


# reportlab splits a Table at a page's end by building a new Table of every row left, so one table of
# n rows costs time in n squared (4 divisions of 6,000 players: minutes).  A longer list is printed as
# Tables of this many rows, one after the other (the header row shows again where one ends).
TABLE_ROWS = 400


def _striped(head: list, body: list, widths: Sequence[float], first: int, last: bool,
             right: Sequence[int] = ()) -> Table:
    """The Table of rows ``first``, ``first + 1``, ... of a striped table (``last``: its final rows);
    its plain-text cells are drawn in the "cell" style, right-aligned in the ``right`` columns."""
    t = Table([head, *body], colWidths=list(widths), repeatRows=1)
    cell = styles()["cell"]
    commands = [
        ("BACKGROUND", (0, 0), (-1, 0), HEADER_FILL),
        ("LINEBELOW", (0, 0), (-1, 0), 0.6, RULE),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("TOPPADDING", (0, 0), (-1, -1), 2.5), ("BOTTOMPADDING", (0, 0), (-1, -1), 2.5),
        ("FONT", (0, 1), (-1, -1), cell.fontName, cell.fontSize, cell.leading),
        ("TEXTCOLOR", (0, 1), (-1, -1), cell.textColor),
        *(("ALIGN", (c, 1), (c, -1), "RIGHT") for c in right),
    ]
    if last:
        commands.append(("LINEBELOW", (0, -1), (-1, -1), 0.6, RULE))
    commands += [("BACKGROUND", (0, r), (-1, r), STRIPE) for r in range(1, len(body) + 1) if (first + r) % 2 == 0]
    t.setStyle(TableStyle(commands))
    return t


class _Tables(Flowable):
    """Tables printed one after the other: longer than a page, so a frame splits it into them at once."""

    def __init__(self, tables: list[Table]):
        super().__init__()
        self.tables = tables

    def wrap(self, avail_width, avail_height):
        width, height = self.tables[0].wrap(avail_width, avail_height)
        return width, height * len(self.tables)

    def split(self, avail_width, avail_height):
        first = self.tables[0].split(avail_width, avail_height)  # what fits here comes first
        return [*first, *self.tables[1:]] if first else []


def closing(lines: Sequence[str]) -> KeepTogether:
    """The closing lines every report ends with, kept on one page."""
    return KeepTogether([Spacer(1, 8), *(para(line, "small") for line in lines)])


def frame_width(settings: Settings) -> float:
    """The width between the margins, points."""
    return page_size(settings)[0] - 2 * MARGIN


def frame_height(settings: Settings) -> float:
    """The height between the top and bottom margins, points (what ``build`` gives a page's story)."""
    return page_size(settings)[1] - 2 * MARGIN - 4 * mm - 12  # as in build; 12: the frame's own padding


def build(path: str | Path, story: list, settings: Settings, title: str, footer: str) -> Path:
    """Write the PDF with a footer line and page numbers on every page; returns the path."""
    path = Path(path)
    regular = fonts()[0]
    footer = printable(footer, regular)

    def on_page(canvas, doc):
        canvas.saveState()
        canvas.setFillColor(MUTED)
        label = f"Page {doc.page}"
        room = doc.pagesize[0] - 2 * MARGIN - canvas.stringWidth(label, regular, 7.5) - 6 * mm
        size, text = 7.5, footer
        while size > 5.5 and canvas.stringWidth(text, regular, size) > room:
            size -= 0.25  # a smaller footer, so it never runs into the page number
        while canvas.stringWidth(text, regular, size) > room and len(text) > 3:
            text = text[:-4] + "..."
        canvas.setFont(regular, size)
        canvas.drawString(MARGIN, 9 * mm, text)
        canvas.setFont(regular, 7.5)
        canvas.drawRightString(doc.pagesize[0] - MARGIN, 9 * mm, label)
        canvas.restoreState()

    # Written beside the target and swapped in whole: a failure midway never leaves half a PDF.
    temp = path.with_name(f".~secretary-{secrets.token_hex(6)}.pdf")
    doc = SimpleDocTemplate(
        str(temp), pagesize=page_size(settings), leftMargin=MARGIN, rightMargin=MARGIN,
        topMargin=MARGIN, bottomMargin=MARGIN + 4 * mm, title=printable(title, regular), author="secretary",
    )
    try:
        doc.build(story, onFirstPage=on_page, onLaterPages=on_page)
        os.replace(temp, path)
    finally:
        if temp.exists():
            temp.unlink()
    return path
