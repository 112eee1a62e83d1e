"""The What changed tab: every player's change split into its four parts, biggest movers first."""
from __future__ import annotations

import tkinter as tk
from tkinter import ttk

from secretary.gui import charts, views
from secretary.gui.tooltips import tip

MAX_CARDS = 60  # drawn at once; the search finds anyone further down
GAP = 14


class ChangesTab:
    def __init__(self, parent, scheduler):
        self.scheduler = scheduler
        self.frame = ttk.Frame(parent, padding=8)
        bar = ttk.Frame(self.frame)
        bar.pack(fill="x")
        ttk.Label(bar, text="Find a player:").pack(side="left")
        self.search = tk.StringVar()
        tip(ttk.Entry(bar, textvariable=self.search, width=24),
            "Type part of a name to see only that player's change.").pack(side="left", padx=(4, 12))
        self.only_idle = tk.BooleanVar(value=False)
        tip(ttk.Checkbutton(bar, text="Only players who did not play", variable=self.only_idle),
            "Show only players whose rating moved without a new game of their own: "
            "their opponents or their division moved, or old results were corrected.").pack(side="left")
        self.summary = ttk.Label(self.frame, text=views.changes_summary(None), justify="left")
        self.summary.pack(fill="x", pady=6)
        self.legend = ttk.Label(self.frame, text="   ".join(views.PART_TIPS[:2]) + "\n"
                                + "   ".join(views.PART_TIPS[2:]), style="Muted.TLabel", justify="left")
        self.legend.pack(fill="x", pady=(0, 6))
        holder = ttk.Frame(self.frame)
        holder.pack(fill="both", expand=True)
        self.canvas = tk.Canvas(holder, background="white", highlightthickness=0)
        scroll = ttk.Scrollbar(holder, orient="vertical", command=self.canvas.yview)
        self.canvas.configure(yscrollcommand=scroll.set)
        self.canvas.pack(side="left", fill="both", expand=True)
        scroll.pack(side="right", fill="y")
        self.canvas.bind("<Configure>", lambda e: self.redraw_soon())
        for widget in (self.canvas, scroll):
            widget.bind("<MouseWheel>", self._wheel, add="+")
            widget.bind("<Button-4>", lambda e: self.canvas.yview_scroll(-3, "units"), add="+")
            widget.bind("<Button-5>", lambda e: self.canvas.yview_scroll(3, "units"), add="+")
        self.search.trace_add("write", lambda *a: self.redraw_soon(to_top=True))
        self.only_idle.trace_add("write", lambda *a: self.redraw_soon(to_top=True))
        self.frame.bind("<Configure>", lambda e: self._wrap(e.width))
        self.updated = None
        self.shown: list = []
        self._pending: str | None = None
        self._to_top = False

    def _wrap(self, width: int) -> None:
        for label in (self.summary, self.legend):
            label.configure(wraplength=max(300, width - 20))

    def _wheel(self, event) -> None:
        self.canvas.yview_scroll(-1 if event.delta > 0 else 1, "units")

    def show(self, updated) -> None:
        """Show an update's changes (None: nothing updated yet)."""
        self.updated = updated
        self.summary.configure(text=views.changes_summary(updated))
        self.redraw_soon(to_top=True)

    def redraw_soon(self, to_top: bool = False) -> None:
        """Redraw once the typing or resizing has paused a moment; a new filter starts at the top."""
        self.scheduler.cancel(self._pending)
        self._to_top = self._to_top or to_top
        self._pending = self.scheduler.later(60, self.redraw)

    def redraw(self) -> None:
        self._pending = None
        self.canvas.delete("all")
        if self.updated is None:
            return
        chosen = views.movers(self.updated.changes, self.only_idle.get(), self.search.get())
        self.shown = chosen[:MAX_CARDS]
        width = max(320, self.canvas.winfo_width()) - 24
        card_w = min(width, 720)
        y = 8
        if not chosen:
            self.canvas.create_text(12, y, anchor="nw", text="No player matches.", font="TkDefaultFont")
        # One scale for every player (the whole league's largest part), so that bars compare across cards.
        self.scale = views.common_scale(self.updated.changes)
        if any(not c.is_new for c in self.shown):
            y = charts.draw_axis(self.canvas, 12, y, card_w, self.scale)
        for change in self.shown:
            y = charts.draw_change(self.canvas, 12, y, card_w, change, self.scale) + GAP
            self.canvas.create_line(12, y - GAP / 2, 12 + card_w, y - GAP / 2, fill="#dddddd")
        if len(chosen) > MAX_CARDS:
            self.canvas.create_text(12, y, anchor="nw", font="TkDefaultFont", fill="#555555",
                                    text=f"Showing the {MAX_CARDS} biggest of {len(chosen)} changes: "
                                         "type a name above to find anyone else.")
            y += 30
        self.canvas.configure(scrollregion=(0, 0, width, y))
        if self._to_top:
            self.canvas.yview_moveto(0)
            self._to_top = False
