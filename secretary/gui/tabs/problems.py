"""The Problems tab: every problem found in the workbook, errors told apart from warnings."""
from __future__ import annotations

from tkinter import ttk

from secretary.gui import views
from secretary.gui.widgets import Table, button


class ProblemsTab:
    def __init__(self, parent, scheduler, check_again):
        self.frame = ttk.Frame(parent, padding=8)
        top = ttk.Frame(self.frame)
        top.pack(fill="x")
        self.summary = ttk.Label(top, text="Open a league workbook to check its results.")
        self.summary.pack(side="left")
        self.check_button = button(top, "Check again", check_again,
                                   "Read the workbook again after you have fixed something in it and saved it.")
        self.check_button.pack(side="right")
        self.fix = ttk.Label(self.frame, text="", style="Fix.TLabel", wraplength=900, justify="left")
        self.fix.pack(fill="x", pady=(8, 4))
        self.table = Table(self.frame, views.PROBLEM_COLUMNS, scheduler,
                           "Choose a problem to see which cell to fix.", height=14, on_select=self.chosen)
        self.table.frame.pack(fill="both", expand=True)
        self.frame.bind("<Configure>", lambda e: self.fix.configure(wraplength=max(300, e.width - 20)))
        self.problems: tuple = ()
        self.layouts = {}

    def show(self, problems, layouts=None) -> None:
        self.problems = tuple(problems)
        self.layouts = layouts or {}
        self.summary.configure(text=views.problems_summary(self.problems))
        self.fix.configure(text="Choose a problem in the table to see which cell to fix." if self.problems else "")
        self.table.show(views.problem_rows(self.problems))

    def chosen(self, iid: str) -> None:
        self.fix.configure(text=views.fix_line(self.problems[int(iid)], self.layouts))
