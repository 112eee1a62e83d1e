"""Small drawings on a canvas: a player's rating history, and the four parts of a change."""
from __future__ import annotations

import tkinter as tk
from tkinter import font as tkfont

from secretary.gui import views
from secretary.model.notice import PART_COLOURS

LINE, MUTED = "#1f5fa8", "#6b6b6b"


def draw_history(canvas: tk.Canvas, history, width: int, height: int) -> None:
    """A line of the player's published ratings over the update dates."""
    canvas.delete("all")
    small = tkfont.nametofont("TkSmallCaptionFont")
    if not history:
        canvas.create_text(width / 2, height / 2, text="No rating history yet.", fill=MUTED, font=small)
        return
    left = small.measure("0000") + 8
    below = small.metrics("linespace") + 4
    pts, low, high = views.line_points(history, width - left - 4, height - below)
    canvas.create_line(left, 4, left, height - below, fill=MUTED)
    canvas.create_line(left, height - below, width - 4, height - below, fill=MUTED)
    for value, y in ((high, 8), (low, height - below - 8)):
        canvas.create_text(left - 4, y, text=f"{value:.0f}", anchor="e", fill=MUTED, font=small)
    xy = [(left + x, y) for x, y in pts]
    if len(xy) > 1:
        canvas.create_line(*[c for p in xy for c in p], fill=LINE, width=2)
    for x, y in xy:
        canvas.create_oval(x - 3, y - 3, x + 3, y + 3, fill=LINE, outline=LINE)
    first, last = history[0][0], history[-1][0]
    canvas.create_text(left, height - 2, text=views.day(first), anchor="sw", fill=MUTED, font=small)
    if last != first:
        canvas.create_text(width - 4, height - 2, text=views.day(last), anchor="se", fill=MUTED, font=small)


def chart_left(width: float) -> tuple[float, float]:
    """Where a change chart's bars start (from the card's left edge) and how wide they are."""
    normal = tkfont.nametofont("TkDefaultFont")
    label_w = max(normal.measure(p) for p in views.PARTS) + 8
    value_w = normal.measure("-0000") + 8
    return label_w + value_w, max(60.0, width - label_w - value_w)


def draw_axis(canvas: tk.Canvas, x: float, y: float, width: float, scale: float) -> float:
    """The points axis shared by every chart below it (ticks at round values); returns the y below it."""
    small = tkfont.nametofont("TkSmallCaptionFont")
    left, chart_w = chart_left(width)
    zero = x + left + chart_w / 2
    canvas.create_text(x, y, text="Points", anchor="nw", font=small, fill=MUTED)
    below = y + small.metrics("linespace") + 2
    canvas.create_line(x + left, below, x + left + chart_w, below, fill=MUTED)
    for value in views.axis_ticks(scale):
        tx = zero + value * (chart_w / 2) / scale
        canvas.create_line(tx, below - 3, tx, below + 3, fill=MUTED)
        canvas.create_text(tx, y, text=views.signed(value), anchor="n", font=small, fill=MUTED)
    return below + 6


def draw_change(canvas: tk.Canvas, x: float, y: float, width: float, change, scale: float | None = None) -> float:
    """One player's change: headline, the four parts as bars (in the printed board's part colours, to
    ``scale`` points per half-width when given), the sentence naming the player; returns the y below it."""
    normal = tkfont.nametofont("TkDefaultFont")
    bold = tkfont.nametofont("SecretaryBold")
    line = normal.metrics("linespace")
    headline = canvas.create_text(x, y, text=views.change_headline(change), anchor="nw", font=bold, width=width)
    y = canvas.bbox(headline)[3] + 4
    if not change.is_new:
        left, chart_w = chart_left(width)
        zero, bars = views.bar_geometry(change.shown[3:7], chart_w, scale)
        left += x
        top = y
        for bar, colour in zip(bars, PART_COLOURS):
            canvas.create_rectangle(x, y + 4, x + line - 8, y + line - 4, fill=colour, outline="")
            canvas.create_text(x + line - 4, y + line / 2, text=bar.label, anchor="w", font=normal)
            canvas.create_text(left - 8, y + line / 2, text=views.signed(bar.value), anchor="e",
                               font=normal, fill="#222222" if bar.value else MUTED)
            if bar.x1 - bar.x0 >= 1:
                canvas.create_rectangle(left + bar.x0, y + 3, left + bar.x1, y + line - 3, fill=colour, outline="")
            y += line
        canvas.create_line(left + zero, top, left + zero, y, fill=MUTED)
        y += 2
    text = views.named_sentence(change)
    item = canvas.create_text(x, y, text=text, anchor="nw", width=width, font=normal, fill="#333333")
    return canvas.bbox(item)[3] + 4
