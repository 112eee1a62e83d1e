"""Tooltips in plain words: one for every button and setting, one per table column heading."""
from __future__ import annotations

import tkinter as tk
from typing import Mapping

from tktooltip import ToolTip

DELAY = 0.4  # seconds: long enough not to flicker while the mouse passes over

def tip(widget: tk.Misc, text: str) -> tk.Misc:
    """Give ``widget`` a tooltip; returns the widget so that it can wrap a constructor."""
    ToolTip(widget, msg=text, delay=DELAY, follow=True)
    widget.secretary_tip = text  # kept on the widget so that tests can find every tooltip
    return widget


def heading_tips(tree, columns: Mapping[str, str], body: str) -> None:
    """A tooltip on a table that names the hovered column heading, or says ``body`` over the rows."""
    where = {"text": body}

    def motion(event) -> None:
        if tree.identify_region(event.x, event.y) == "heading":
            column = tree.identify_column(event.x)  # "#1" is the first shown column
            shown = tree["displaycolumns"]
            keys = list(tree["columns"]) if shown in ("#all", ("#all",)) else list(shown)
            index = int(column[1:]) - 1 if column[1:].isdigit() else -1
            where["text"] = columns.get(keys[index], body) if 0 <= index < len(keys) else body
        else:
            where["text"] = body

    tree.bind("<Motion>", motion, add="+")
    tree.secretary_tooltip = ToolTip(tree, msg=lambda: where["text"], delay=DELAY, follow=True)
    tree.secretary_tip = dict(columns)


def tip_of(widget: tk.Misc):
    """The tooltip text given to a widget (a dict per column for a table), or None."""
    return getattr(widget, "secretary_tip", None)
