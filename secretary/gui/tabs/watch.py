"""The Watch list tab: what to do so that every division's level is pinned down; the details one table at a time."""
from __future__ import annotations

from tkinter import ttk

from secretary.gui import views
from secretary.gui.widgets import Table

# (title, columns, tooltip): one inner tab each, so that a small screen shows a whole table at a time.
PARTS = (
    ("Divisions", views.DIVISION_COLUMNS,
     "How well each division's level is tied to the rest by games between divisions."),
    ("Held back", views.HELD_COLUMNS,
     "Players whose results run ahead of their rating: the starting assumption (the prior) is holding them "
     "back. Strongest cases first."),
    ("Suggested linking matches", views.SUGGESTION_COLUMNS,
     "Matches across divisions that would pin the weakest-tied levels down best."),
)


class WatchTab:
    def __init__(self, parent, scheduler):
        self.frame = ttk.Frame(parent, padding=8)
        ttk.Label(self.frame, text="What to do", style="Fix.TLabel").pack(anchor="w")
        self.todo = ttk.Label(self.frame, text="Update the ratings to see the watch list.", justify="left")
        self.todo.pack(fill="x", pady=(2, 8))
        self.frame.bind("<Configure>", lambda e: self.todo.configure(wraplength=max(300, e.width - 20)))
        self.inner = ttk.Notebook(self.frame)
        self.inner.pack(fill="both", expand=True)
        self.tables = []
        for title, columns, tip in PARTS:
            table = Table(self.inner, columns, scheduler, tip, height=5)
            self.inner.add(table.frame, text=title)
            self.tables.append(table)

    def clear(self) -> None:
        self.todo.configure(text="Update the ratings to see the watch list.")
        for table, (title, _, _) in zip(self.tables, PARTS):
            table.show([])
            self.inner.tab(table.frame, text=title)

    def show(self, watch) -> None:
        self.todo.configure(text="\n".join("\u2022 " + line for line in views.watch_lines(watch)))
        for table, rows, (title, _, _) in zip(self.tables, (views.division_rows(watch), views.held_rows(watch),
                                                            views.suggestion_rows(watch)), PARTS):
            table.show(rows)
            self.inner.tab(table.frame, text=f"{title} ({len(rows)})")
