"""The Watch list tab: what to do so that every division's level is pinned down."""
from __future__ import annotations

from tkinter import ttk

from secretary.gui import views
from secretary.gui.widgets import Table


class WatchTab:
    def __init__(self, parent, scheduler):
        self.frame = ttk.Frame(parent, padding=8)
        ttk.Label(self.frame, text="What to do", style="Fix.TLabel").pack(anchor="w")
        self.todo = ttk.Label(self.frame, text="Update the ratings to see the watch list.", justify="left")
        self.todo.pack(fill="x", pady=(2, 8))
        self.frame.bind("<Configure>", lambda e: self.todo.configure(wraplength=max(300, e.width - 20)))
        self.tables = []
        for title, columns, tip, height in (
                ("Divisions", views.DIVISION_COLUMNS,
                 "How well each division's level is tied to the rest by games between divisions.", 4),
                ("Held back", views.HELD_COLUMNS,
                 "Players whose results run ahead of their rating: the starting assumption (the prior) "
                 "is holding them back. Strongest cases first.", 3),
                ("Suggested linking matches", views.SUGGESTION_COLUMNS,
                 "Matches across divisions that would pin the weakest-tied levels down best.", 6)):
            ttk.Label(self.frame, text=title, font="SecretaryBold").pack(anchor="w", pady=(4, 0))
            table = Table(self.frame, columns, scheduler, tip, height=height)
            table.frame.pack(fill="both", expand=not self.tables)  # the first table takes any spare room
            self.tables.append(table)

    def clear(self) -> None:
        self.todo.configure(text="Update the ratings to see the watch list.")
        for table in self.tables:
            table.show([])

    def show(self, watch) -> None:
        self.todo.configure(text="\n".join("\u2022 " + line for line in views.watch_lines(watch)))
        for table, rows in zip(self.tables, (views.division_rows(watch), views.held_rows(watch),
                                             views.suggestion_rows(watch))):
            table.show(rows)
