"""The Ratings tab: the league table, searchable and sortable, with one player's history and change."""
from __future__ import annotations

import re
import tkinter as tk
from tkinter import font as tkfont
from tkinter import ttk

from secretary.gui import charts, views
from secretary.gui.tooltips import tip
from secretary.gui.widgets import Table
from secretary.model.sentences import plural

# Sizes in lines and average characters of the default font, so that they follow the screen's text size.
HISTORY_LINES, CHANGE_LINES, SIDE_CHARACTERS = 9, 11, 40
WRAP_MARGIN = 6  # pixels: room for a label's own border and padding on top of its wrap length
SIDE_LEAST = 32  # characters the player panel keeps at least, when the divisions table wants its width
CHANGE_SIGHT = 5  # lines of "Why it changed" kept in sight before the history chart takes a third
DETAIL_TIP = ("Weighted games: every rated game counted with its age weight (age-weighted games). In a league with "
              "doubles, how many of them were doubles frames: a doubles game counts for each of its four players.")
LEVEL_LINES = 5  # rows of the divisions table at most (it scrolls)
LEAGUE_WEIGHT = 4  # the league table's share of the height against the divisions table's 1, when resized
LEVELS_SHARE = 0.55  # the divisions table's share of the height at most, when first shown (4 rows at 1024x600)
SASH = 4  # pixels between the league table and the divisions table, until measured


class RatingsTab:
    def __init__(self, parent, scheduler):
        self.frame = ttk.Frame(parent, padding=8)
        self.scheduler = scheduler
        self.rows: list[views.Row] = []
        self.ratings = {}
        self.doubles = False
        self.history = {}
        self.changes = {}
        self.player: str | None = None
        self._search_bar()
        font = tkfont.nametofont("TkDefaultFont")
        self.line, self.side_width = font.metrics("linespace"), SIDE_CHARACTERS * font.measure("n")
        self.history_height = HISTORY_LINES * self.line
        self.panes = ttk.PanedWindow(self.frame, orient="horizontal")
        self.panes.pack(fill="both", expand=True)
        self._league_tables(scheduler)
        self.side = ttk.Frame(self.panes, padding=(10, 0, 0, 0))
        self.panes.add(self.side, weight=1)
        self.side_kept = False
        self.panes.bind("<Configure>", self._place_sash, add="+")
        self._player_panel(self.side)

    def _search_bar(self) -> None:
        """Find a player, the division filter and how many players are shown."""
        bar = ttk.Frame(self.frame)
        bar.pack(fill="x", pady=(0, 6))
        ttk.Label(bar, text="Find a player:").pack(side="left")
        self.search = tk.StringVar()
        entry = tip(ttk.Entry(bar, textvariable=self.search, width=24),
                    "Type part of a name: the table shows only the players it finds.")
        entry.pack(side="left", padx=(4, 12))
        ttk.Label(bar, text="Division:").pack(side="left")
        self.division = tk.StringVar(value=views.ALL_DIVISIONS)
        self.divisions = tip(ttk.Combobox(bar, textvariable=self.division, state="readonly", width=18,
                                          values=[views.ALL_DIVISIONS]),
                             "Show one division's players, or all of them.")
        self.divisions.pack(side="left", padx=4)
        self.count = ttk.Label(bar, text="", style="Muted.TLabel")
        self.count.pack(side="right")
        self.search.trace_add("write", lambda *a: self.refilter())
        self.division.trace_add("write", lambda *a: self.refilter())

    def _league_tables(self, scheduler) -> None:
        """The league table, and under it the divisions table once there are levels (``show_levels``): the
        player panel keeps the whole height; the two tables share theirs by weight, with a sash to drag."""
        self.stack = ttk.PanedWindow(self.panes, orient="vertical")
        self.stack.bind("<Map>", lambda e: self._place_levels(), add="+")
        self.levels_frame = ttk.Frame(self.stack, padding=(0, 6, 0, 0))
        tip(ttk.Label(self.levels_frame, text="Division levels", font="SecretaryBold"),
            "Each division's level (a random effect fitted with the players): how strong it is as a whole.").pack(
            anchor="w")
        self.levels = Table(self.levels_frame, views.LEVEL_COLUMNS, scheduler,
                            "How strong each division is as a whole, and the games between divisions that set it.",
                            height=LEVEL_LINES)
        self.levels.frame.pack(fill="both", expand=True)
        self.table = Table(self.stack, views.RATING_COLUMNS, scheduler,
                           "Choose a player to see their rating history and why their rating changed.",
                           height=18, on_select=self.chosen)
        self.stack.add(self.table.frame, weight=LEAGUE_WEIGHT)
        self.panes.add(self.stack, weight=3)

    def _player_panel(self, side: ttk.Frame) -> None:
        """The chosen player: name, one line of figures, the history chart and why the rating changed."""
        self.name = ttk.Label(side, text="Update the ratings to see them here.", font="SecretaryBig",
                              wraplength=300, justify="left")
        self.name.pack(anchor="w")
        self.detail = tip(ttk.Label(side, text="", justify="left", wraplength=300), DETAIL_TIP)
        self.detail.pack(anchor="w", pady=(2, 6))
        ttk.Label(side, text="Rating history", font="SecretaryBold").pack(anchor="w")
        self.history_canvas = tk.Canvas(side, height=self.history_height, width=300, background="white",
                                        highlightthickness=0)
        self.history_canvas.pack(fill="x", pady=(2, 8))
        ttk.Label(side, text="Why it changed", font="SecretaryBold").pack(anchor="w")
        self.holder = holder = ttk.Frame(side)
        holder.pack(fill="both", expand=True, pady=(2, 0))
        # On a short screen the change does not fit under the history: it scrolls rather than being cut off.
        self.change_canvas = tk.Canvas(holder, height=CHANGE_LINES * self.line, width=300, background="white",
                                       highlightthickness=0)
        self.change_scroll = ttk.Scrollbar(holder, orient="vertical", command=self.change_canvas.yview)
        self.change_canvas.configure(yscrollcommand=self.change_scroll.set)
        self.change_scroll.pack(side="right", fill="y")
        self.change_canvas.pack(side="left", fill="both", expand=True)
        self.change_canvas.bind("<Configure>", lambda e: self._redraw())
        for key, step in (("<Button-4>", -2), ("<Button-5>", 2)):
            self.change_canvas.bind(key, lambda e, s=step: self.change_canvas.yview_scroll(s, "units"))
        self.change_canvas.bind("<MouseWheel>", lambda e: self.change_canvas.yview_scroll(
            -1 if e.delta > 0 else 1, "units"))
        side.bind("<Configure>", lambda e: self._fit_history() and self._redraw(), add="+")

    def _fit_history(self) -> bool:
        """The history chart takes at most a third of the panel's height (4 to 9 lines), and never the last
        CHANGE_SIGHT lines of "Why it changed" (a long detail wraps on a short screen); True if it changed."""
        panel, canvases = self.side.winfo_height(), (self.history_canvas, self.holder)
        rest = sum(sum(map(int, re.findall(r"\d+", str(w.pack_info()["pady"]))))  # "2" or (2, 6): above and below
                   + (0 if w in canvases else w.winfo_reqheight()) for w in self.side.pack_slaves())
        room = panel - rest - CHANGE_SIGHT * self.line
        height = int(max(4 * self.line, min(HISTORY_LINES * self.line, panel / 3, room)))
        if height == self.history_height:
            return False
        self.history_height = height
        self.history_canvas.configure(height=height)
        return True

    def _place_sash(self, event) -> None:
        """Once, when first shown: the player panel gets about a third of the width."""
        if event.width > 100:
            self._side_sash(event.width)
            self.panes.unbind("<Configure>")

    def _side_sash(self, width: int) -> None:
        """The player panel about a third of the width, but narrower (never under SIDE_LEAST characters) where
        the divisions table needs the room for every column it shows (a netbook)."""
        least = self.side_width * SIDE_LEAST // SIDE_CHARACTERS
        wanted = min(self._levels_width(), width - least)
        self.panes.sashpos(0, max(width - self.side_width, width * 2 // 3 - 40, wanted))

    def _levels_width(self) -> int:
        """The width the divisions table needs for every column it shows (0 when it is not shown)."""
        if str(self.levels_frame) not in map(str, self.stack.panes()):
            return 0
        tree, shown = self.levels.tree, self.levels.tree["displaycolumns"]
        keys = tree["columns"] if tuple(shown) in (("#all",), ()) else shown
        scrollbar = self.levels.frame.grid_slaves(0, 1)[0]
        return sum(int(tree.column(k, "width")) for k in keys) + scrollbar.winfo_reqwidth() + 4

    def show(self, updated) -> None:
        self.ratings = {p.name: p for p in updated.ratings}
        self.doubles = any(p.doubles_games > 0 for p in updated.ratings)  # as the Ratings sheet decides
        self.changes = {c.name: c for c in updated.changes}
        self.history = updated.history
        self.rows = list(updated.rows) or views.rating_rows(updated.ratings, updated.checked.settings.few_games)
        self.show_levels(updated.levels)
        self.divisions.configure(values=views.divisions_of(self.rows))
        if self.division.get() not in self.divisions.cget("values"):
            self.division.set(views.ALL_DIVISIONS)
        self.refilter()
        self.player = None
        if self.rows:
            self.chosen(self.rows[0].iid)

    def show_levels(self, levels) -> None:
        """The divisions table, only for a league of two or more divisions."""
        rows = views.level_rows(levels)
        self.levels.show(rows)
        shown = str(self.levels_frame) in map(str, self.stack.panes())
        if rows:  # a column empty in every row (often Note) is left out, so the rest fit a netbook's width
            self.levels.tree.configure(height=min(len(rows), LEVEL_LINES),
                                       displaycolumns=views.filled_columns(views.LEVEL_COLUMNS, rows))
            if not shown:
                self.stack.add(self.levels_frame, weight=1)
            # Through the window's scheduler, never the widget's own after(): closing cancels every timer
            # from the root, and a timer registered on a child would then break the child's destroy.
            self.scheduler.later(0, self._place_levels)
        elif shown:
            self.stack.forget(self.levels_frame)

    def _place_levels(self) -> None:
        """The divisions table as tall as its rows need, but never more than LEVELS_SHARE of the height."""
        height = self.stack.winfo_height()
        if height > 1 and len(self.stack.panes()) > 1:
            self.levels_frame.update_idletasks()  # its height for the rows it has now
            sash = self.levels_frame.winfo_y() - self.stack.sashpos(0) if self.levels_frame.winfo_ismapped() else 0
            wanted = self.levels_frame.winfo_reqheight() + max(sash, SASH)
            self.stack.sashpos(0, int(max(height - wanted, height * (1 - LEVELS_SHARE))))
            if not self.side_kept:  # the table's own width moved the player panel's sash: put it back, once
                self._side_sash(self.panes.winfo_width())
                self.side_kept = True

    def clear(self) -> None:
        self.show_levels(())
        self.rows, self.ratings, self.changes, self.history, self.player = [], {}, {}, {}, None
        self.refilter()
        self._blank("Update the ratings to see them here.")

    def refilter(self) -> None:
        """Show the players the search and division choose; the player panel follows (first one found)."""
        shown = views.filter_rows(self.rows, self.search.get(), self.division.get())
        self.count.configure(text=f"{len(shown)} of {plural(len(self.rows), 'player')}" if self.rows else "")
        self.table.show(shown)
        if self.player is not None and self.player not in {r.iid for r in shown}:
            if shown:
                self.chosen(shown[0].iid)
            else:
                self._blank("No player matches: change the search or the division.")
        elif self.player is not None:
            self.table.select(self.player)  # still shown: still chosen

    def _blank(self, text: str) -> None:
        self.player = None
        self.name.configure(text=text)
        self.detail.configure(text="")
        self.history_canvas.delete("all")
        self.change_canvas.delete("all")

    def chosen(self, name: str) -> None:
        self.player = name
        self.table.select(name)
        self._redraw()

    def _redraw(self) -> None:
        p = self.ratings.get(self.player)
        if p is None:
            return
        width = max(200, self.history_canvas.winfo_width())
        wrap = max(200, min(width, self.side.winfo_width()) - WRAP_MARGIN)  # the labels never ask for more
        self.name.configure(text=p.name, wraplength=wrap)
        self.detail.configure(wraplength=wrap, text=views.player_detail(p, self.doubles))
        self._fit_history()  # after the detail: it may have wrapped to more lines
        charts.draw_history(self.history_canvas, self.history.get(p.name, []), width, self.history_height)
        self.change_canvas.delete("all")
        change = self.changes.get(p.name)
        if change is not None:
            charts.draw_change(self.change_canvas, 4, 4, max(200, self.change_canvas.winfo_width()) - 8, change,
                               views.common_scale(self.changes.values()))
        box = self.change_canvas.bbox("all")
        self.change_canvas.configure(scrollregion=(0, 0, box[2], box[3] + 4) if box else (0, 0, 0, 0))
