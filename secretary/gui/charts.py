"""Small drawings on a canvas: a player's rating history, and the four parts of a change."""
from __future__ import annotations

import tkinter as tk
from tkinter import font as tkfont

from secretary.gui import views

UP, DOWN, LINE, MUTED = "#2e7d32", "#c62828", "#1f5fa8", "#6b6b6b"


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


def draw_change(canvas: tk.Canvas, x: float, y: float, width: float, change) -> float:
    """One player's change: headline, the four parts as bars, the sentence; returns the y below it."""
    normal = tkfont.nametofont("TkDefaultFont")
    bold = tkfont.nametofont("SecretaryBold")
    line = normal.metrics("linespace")
    headline = canvas.create_text(x, y, text=views.change_headline(change), anchor="nw", font=bold, width=width)
    y = canvas.bbox(headline)[3] + 4
    if not change.is_new:
        label_w = max(normal.measure(p) for p in views.PARTS) + 8
        value_w = normal.measure("-0000") + 8
        chart_w = max(60.0, width - label_w - value_w)
        zero, bars = views.bar_geometry(change.shown[3:7], chart_w)
        left = x + label_w + value_w
        top = y
        for bar in bars:
            canvas.create_text(x, y + line / 2, text=bar.label, anchor="w", font=normal)
            colour = UP if bar.value >= 0 else DOWN
            canvas.create_text(left - 8, y + line / 2, text=views.signed(bar.value), anchor="e",
                               font=normal, fill=colour if bar.value else MUTED)
            if bar.x1 - bar.x0 >= 1:
                canvas.create_rectangle(left + bar.x0, y + 3, left + bar.x1, y + line - 3, fill=colour, outline="")
            y += line
        canvas.create_line(left + zero, top, left + zero, y, fill=MUTED)
        y += 2
    item = canvas.create_text(x, y, text=change.sentence, anchor="nw", width=width, font=normal, fill="#333333")
    return canvas.bbox(item)[3] + 4
