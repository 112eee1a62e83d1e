"""A list longer than TABLE_ROWS rows prints as several Tables: every row once, in order, across pages,
with the header on every page, as one Table of them all prints it (the reference, built here directly)."""
from __future__ import annotations

import re

from reportlab.platypus import SimpleDocTemplate

from secretary.report import layout
from tests.report.poppler import needs_poppler, pdf_info, pdf_text

HEADERS = ("Rank", "Player", "Rating", "Why it changed")
WIDTHS = (40, 150, 80, 230)


def _rows(n):
    return [(str(i + 1), f"Player {i + 1:04d}", f"{1500 + i % 97} ± 40",
             "Own results +3; opponents re-rated -1" + "; and more" * (i % 4)) for i in range(n)]


def _print(path, flowable):
    SimpleDocTemplate(str(path)).build([flowable])
    return pdf_text(path)


@needs_poppler
def test_a_long_list_prints_every_row_once_in_order(tmp_path, monkeypatch):
    rows = _rows(3 * layout.TABLE_ROWS + 17)
    chunked = _print(tmp_path / "chunked.pdf", layout.table(HEADERS, rows, WIDTHS, right=(0, 2)))
    monkeypatch.setattr(layout, "TABLE_ROWS", 10 ** 9)
    whole = _print(tmp_path / "whole.pdf", layout.table(HEADERS, rows, WIDTHS, right=(0, 2)))
    players = re.findall(r"Player (\d{4})", chunked)
    assert players == [f"{i + 1:04d}" for i in range(len(rows))]
    assert re.findall(r"Player \d{4}", whole) == re.findall(r"Player \d{4}", chunked)
    pages = int(pdf_info(tmp_path / "chunked.pdf")["Pages"])
    # The header heads every page, and shows again once more wherever one Table of TABLE_ROWS rows ends.
    assert chunked.count("Why it changed") in range(pages, pages + 3 + 1)
    assert whole.count("Why it changed") == int(pdf_info(tmp_path / "whole.pdf")["Pages"])
    assert abs(pages - int(pdf_info(tmp_path / "whole.pdf")["Pages"])) <= 3


def test_a_short_list_is_one_table():
    assert isinstance(layout.table(HEADERS, _rows(layout.TABLE_ROWS), WIDTHS), layout.Table)


@needs_poppler
def test_plain_text_cells_print_exactly_as_paragraphs(tmp_path, monkeypatch):
    # Short one-line cells are drawn by the table itself; the reference is the same table with every cell a
    # Paragraph, rendered by poppler: the pages must be the same, pixel for pixel.
    import subprocess

    from PIL import Image, ImageChops

    rows = [(str(i + 1), name, f"{1500 + 7 * i} ± {40 + i}", "Own results; a longer "
             "sentence that wraps onto a second line of its cell, as the notice board's do") for i, name in
            enumerate(["Ada Finch", "Zoë Ōtake", "Bram  Oak", "Émile Ærø", "Dai", "A very long name indeed, longer "
                       "than its column"])]
    plain = layout.table(HEADERS, rows, WIDTHS, right=(0, 2))
    assert sum(isinstance(v, str) for row in plain._cellvalues[1:] for v in row) >= 14  # most cells are plain
    pages = {}
    for label in ("plain", "paragraphs"):
        if label == "paragraphs":
            monkeypatch.setattr(layout, "_one_line", lambda *args: False)  # every cell a Paragraph
        path = tmp_path / f"{label}.pdf"
        SimpleDocTemplate(str(path)).build([layout.table(HEADERS, rows, WIDTHS, right=(0, 2))])
        subprocess.run(["pdftoppm", "-r", "150", "-png", "-singlefile", str(path), str(tmp_path / label)], check=True)
        pages[label] = Image.open(tmp_path / f"{label}.png").convert("RGB")
    assert ImageChops.difference(pages["plain"], pages["paragraphs"]).getbbox() is None


@needs_poppler
def test_cells_wrapped_once_print_exactly_as_wrapped_each_time(tmp_path, monkeypatch):
    # A cell's paragraph breaks its lines once per width (`layout.CellParagraph`); the reference breaks
    # them at every wrap, as a Paragraph does: every word in the same place on every page (poppler's boxes).
    import subprocess

    rows = _rows(2 * layout.TABLE_ROWS + 30)
    rows = [(*row[:3], row[3] + " that wraps onto a second line of its cell" * (k % 3)) for k, row in enumerate(rows)]
    calls = {"breaks": 0}
    plain_break = layout.Paragraph.breakLines

    def counted(self, *args, **kwargs):
        calls["breaks"] += 1
        return plain_break(self, *args, **kwargs)

    monkeypatch.setattr(layout.Paragraph, "breakLines", counted)
    boxes = {}
    for label in ("once", "each time"):
        if label == "each time":
            monkeypatch.setattr(layout.CellParagraph, "wrap", layout.Paragraph.wrap)
        calls["breaks"] = 0
        path = tmp_path / f"{label}.pdf"
        table = layout.table(HEADERS, rows, WIDTHS, right=(0, 2))
        SimpleDocTemplate(str(path), invariant=1).build([table])
        boxes[label] = subprocess.run(["pdftotext", "-bbox", str(path), "-"], check=True, capture_output=True,
                                      text=True).stdout
        calls[label] = calls["breaks"]
    assert boxes["once"] == boxes["each time"] and boxes["once"].count("<word") > 10 * len(rows)
    assert calls["once"] < calls["each time"], calls
