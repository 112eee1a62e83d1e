"""Building blocks for the window: a scheduler that can cancel everything, and a sortable table."""
from __future__ import annotations

import itertools
import tkinter as tk
from tkinter import font as tkfont
from tkinter import ttk
from typing import Callable, Sequence

from secretary.gui import views
from secretary.gui.tooltips import heading_tips

BATCH_ROWS = 200  # rows inserted per event-loop turn: a big table fills without freezing the window
CLEAR_ROWS = 2000  # rows taken out per turn when a table is emptied (about 3 microseconds each)
TAG_COLOURS = {
    "error": {"foreground": "#8b0000", "background": "#fde2e1"},
    "warning": {"foreground": "#5c4300", "background": "#fff4cc"},
    "new": {"foreground": "#0b5d1e"},
    "flagged": {"background": "#fff4cc"},
    "uncertain": {"foreground": "#5f5f5f"},
    "past": {"foreground": "#8a8a8a", "background": "#f0f0f0"},
}


class Scheduler:
    """``after()`` callbacks that are remembered, so that closing the window can cancel every one."""

    def __init__(self, root: tk.Misc):
        self.root = root
        self.ids: set[str] = set()

    def later(self, ms: int, fn: Callable[[], None]) -> str:
        def run() -> None:
            self.ids.discard(ident)
            fn()

        ident = self.root.after(ms, run)
        self.ids.add(ident)
        return ident

    def cancel(self, ident: str | None) -> None:
        if ident is not None and ident in self.ids:
            self.ids.discard(ident)
            self.root.after_cancel(ident)

    def cancel_all(self) -> None:
        for ident in list(self.ids):
            self.cancel(ident)


def button(parent, text: str, command, tip: str, **options) -> ttk.Button:
    """A button with its tooltip (every button has one)."""
    from secretary.gui.tooltips import tip as give_tip

    return give_tip(ttk.Button(parent, text=text, command=command, **options), tip)


class Table:
    """A table with scrollbars, sortable headings (click), a tooltip per heading, filled in batches."""

    def __init__(self, parent, columns: Sequence[views.Column], scheduler: Scheduler, body_tip: str,
                 height: int = 10, on_select: Callable[[str], None] | None = None):
        self.columns, self.scheduler = tuple(columns), scheduler
        self.frame = ttk.Frame(parent)
        self.tree = ttk.Treeview(self.frame, columns=[c.key for c in columns], show="headings",
                                 height=height, selectmode="browse")
        digit = tkfont.nametofont("TkDefaultFont").measure("0")
        heading_font = tkfont.nametofont("SecretaryBold")
        self.arrow_width = heading_font.measure(" \u25b2")
        for i, c in enumerate(self.columns):
            self.tree.heading(c.key, text=c.heading, anchor="w", command=lambda i=i: self.sort_by(i))
            width = max(c.width * digit, heading_font.measure(c.heading)) + 14  # sort_by widens for its arrow
            self.tree.column(c.key, width=width, minwidth=3 * digit,
                             stretch=c.stretch, anchor="e" if c.numeric else "w")
        for tag, colours in TAG_COLOURS.items():
            self.tree.tag_configure(tag, **colours)
        down = ttk.Scrollbar(self.frame, orient="vertical", command=self.tree.yview)
        across = ttk.Scrollbar(self.frame, orient="horizontal", command=self.tree.xview)
        self.tree.configure(yscrollcommand=down.set, xscrollcommand=across.set)
        self.tree.grid(row=0, column=0, sticky="nsew")
        down.grid(row=0, column=1, sticky="ns")
        across.grid(row=1, column=0, sticky="ew")
        self.frame.rowconfigure(0, weight=1)
        self.frame.columnconfigure(0, weight=1)
        heading_tips(self.tree, {c.key: c.tip + " Click to sort." for c in self.columns}, body_tip)
        if on_select is not None:
            self.tree.bind("<<TreeviewSelect>>", lambda e: self._selected(on_select), add="+")
        self._items: list = []  # what show() was given: rows, or items that ``_make`` turns into rows
        self._make: Callable | None = None
        self._made: list[views.Row] = []  # the rows made so far, in the items' order
        self._inserted: list[str] = []  # the iids in the tree, top to bottom
        self._keep: str | None = None  # the row to choose again once it is back in the table
        self.order: tuple[int, bool] | None = None
        self.sorting = False  # the new order is being worked out (no new row is in yet)
        self._steps = None  # the refill under way (a generator, a step per turn of the event loop)
        self._pending: str | None = None

    def _selected(self, on_select) -> None:
        chosen = self.tree.selection()
        if chosen:
            on_select(chosen[0])

    @property
    def filling(self) -> bool:
        return self._steps is not None

    def show(self, rows: Sequence, make: Callable[[object], views.Row] | None = None) -> None:
        """Show these rows (in the chosen sort order, if any).

        With ``make``, ``rows`` are items and ``make(item)`` is each one's row, made a batch at a time as the
        rows go in (or a chunk at a time as they are sorted): a table of 100,000 problems costs no turn of
        the event loop more than one batch.
        """
        self._items, self._make, self._made, self._keep = list(rows), make, [], None
        self._refill()

    def select(self, iid: str) -> None:
        """Choose this row: now if it is in the table, else as soon as it goes in."""
        self._keep = iid  # if it is taken out for a refill, _put_in chooses it again when it is back
        if self.tree.exists(iid) and iid not in self.tree.selection():
            self.tree.selection_set(iid)

    def _rows_of(self, start: int, end: int) -> list[views.Row]:
        """The rows of items ``start`` to ``end`` (made now, if they are not made yet)."""
        if self._make is None:
            return self._items[start:end]
        self._made.extend(map(self._make, self._items[len(self._made):end]))
        return self._made[start:end]

    def sort_by(self, index: int) -> None:
        """Sort by a column; a second click on the same heading reverses the order."""
        descending = self.order is not None and self.order[0] == index and not self.order[1]
        if self.order is None or self.order[0] != index:  # room for the arrow, taken back from the last one
            if self.order is not None:
                old = self.columns[self.order[0]].key
                self.tree.column(old, width=self.tree.column(old, "width") - self.arrow_width)
            key = self.columns[index].key
            self.tree.column(key, width=self.tree.column(key, "width") + self.arrow_width)
        self.order = (index, descending)
        for i, c in enumerate(self.columns):
            arrow = (" \u25bc" if descending else " \u25b2") if i == index else ""
            self.tree.heading(c.key, text=c.heading + arrow)
        chosen = self.tree.selection()
        if chosen:
            self._keep = chosen[0]  # chosen again once it is back in, in its new place
        self._refill()

    def _refill(self) -> None:
        """Empty the table and fill it again: the first step now, the rest a step per turn of the event loop."""
        self.scheduler.cancel(self._pending)
        self._pending, self._steps, self.sorting = None, self._filling(), False
        self._step()

    def _step(self) -> None:
        self._pending = None
        try:
            next(self._steps)
        except StopIteration:
            self._steps = None
        else:
            self._pending = self.scheduler.later(1, self._step)

    def _filling(self):
        """The refill as a generator that yields between steps of a few milliseconds each: the old rows taken
        out from the bottom (the top stays in sight until the new rows come), the rows sorted a chunk at a time
        (``views.sort_steps``), then put in a batch at a time from the top."""
        while self._inserted:
            self.tree.delete(*self._inserted[-CLEAR_ROWS:])
            del self._inserted[-CLEAR_ROWS:]
            if self._inserted:
                yield
        count = len(self._items)
        if self.order is None:
            batches = (self._rows_of(s, s + BATCH_ROWS) for s in range(0, count, BATCH_ROWS))
            rows = itertools.chain.from_iterable(batches)
        else:
            self.sorting = True
            rows = yield from views.sort_steps(self._rows_of, count, *self.order)
            self.sorting = False
        for start in range(0, count, BATCH_ROWS):
            if start:
                yield
            self._put_in(list(itertools.islice(rows, BATCH_ROWS)))

    def _put_in(self, batch: list[views.Row]) -> None:
        for row in batch:
            self.tree.insert("", "end", iid=row.iid, values=row.shown, tags=row.tags)
        self._inserted += [row.iid for row in batch]
        if self._keep is not None and not self.tree.selection() and any(row.iid == self._keep for row in batch):
            self.tree.selection_set(self._keep)

    def shown_values(self) -> list[tuple[str, ...]]:
        """The texts of every row now in the table, top to bottom."""
        return [tuple(str(v) for v in self.tree.item(i, "values")) for i in self.tree.get_children()]
