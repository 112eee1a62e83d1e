"""The Fixtures tab: chances and fair races for the matches still to be played."""
from __future__ import annotations

from tkinter import font as tkfont
from tkinter import ttk

from secretary.gui import views
from secretary.model.sentences import plural
from secretary.gui.widgets import Table

SIDES = ("a", "b")  # the Player A and Player B columns: a doubles side ("Ann Ash & Bea Bond") is long
CELL_ROOM = 12  # pixels a cell keeps beside its text (a Treeview cell pads 4 each side)


class FixturesTab:
    def __init__(self, parent, scheduler):
        self.frame = ttk.Frame(parent, padding=8)
        self.summary = ttk.Label(self.frame, text="Update the ratings to see the chances for the fixtures.",
                                 justify="left")
        self.summary.pack(fill="x", pady=(0, 6))
        # The chosen fixture in full under the table, as on the Problems tab: the note's cell cuts a long one short.
        self.detail = ttk.Label(self.frame, text="", justify="left")
        self.detail.pack(fill="x", side="bottom", pady=(6, 0))
        self.frame.bind("<Configure>", lambda e: self._wrap(e.width))
        self.table = Table(self.frame, views.FIXTURE_COLUMNS, scheduler,
                           "Matches from the Fixtures sheet with each side's chances and the fair race: "
                           "choose one to read its forecast note in full below the table.",
                           height=16, on_select=self.chosen)
        self.table.frame.pack(fill="both", expand=True)
        self.forecasts, self.latest = (), None
        tree = self.table.tree
        self.side_widths = {key: (tree.column(key, "width"), tree.column(key, "minwidth")) for key in SIDES}

    def _fit_sides(self, rows) -> None:
        """Each side's column as wide as its widest name (both players of a doubles side), even if the table
        must then scroll sideways: a name cut short could be someone else's."""
        font = tkfont.nametofont("TkDefaultFont")
        for index, key in enumerate(SIDES, start=1):
            width, least = self.side_widths[key]
            need = max((font.measure(r.shown[index]) + CELL_ROOM for r in rows), default=0)
            self.table.tree.column(key, width=max(width, need), minwidth=max(least, need))

    def _wrap(self, width: int) -> None:
        for label in (self.summary, self.detail):
            label.configure(wraplength=max(200, width - 20))

    def clear(self) -> None:
        self.summary.configure(text="Update the ratings to see the chances for the fixtures.")
        self.detail.configure(text="")
        self.forecasts, self.latest = (), None
        self._fit_sides([])
        self.table.show([])

    def chosen(self, iid: str) -> None:
        self.detail.configure(text=views.fixture_detail(self.forecasts[int(iid)], self.latest))

    def show(self, forecasts, latest=None) -> None:
        self.forecasts, self.latest = tuple(forecasts), latest
        self.detail.configure(text=views.FIXTURE_CHOOSE if self.forecasts else "")
        rows = views.fixture_rows(forecasts, latest)
        if not rows:
            text = "The workbook has no fixtures: add matches to a Fixtures sheet to see their chances here."
        else:
            past = sum(1 for r in rows if "past" in r.tags)
            when = f" ({past} past: dated before the latest results, {views.day(latest)})" if past else ""
            text = (f"{plural(len(rows), 'fixture')}{when}. A fair race is the handicap that makes the match "
                    "closest to even; chances allow for how sure each rating is, and are estimates, not promises. "
                    "The handicap card (League menu) prints them.")
        self.summary.configure(text=text)
        self._fit_sides(rows)
        self.table.show(rows)
