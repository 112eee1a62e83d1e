"""The Problems tab: every problem found in the workbook, errors told apart from warnings, the chosen one in full."""
from __future__ import annotations

from tkinter import ttk

from secretary.gui import views
from secretary.gui.widgets import Table, button

CHOOSE = "Choose a problem in the table to see it in full and which cell to fix."


class ProblemsTab:
    def __init__(self, parent, scheduler, check_again):
        self.frame = ttk.Frame(parent, padding=8)
        top = ttk.Frame(self.frame)
        top.pack(fill="x")
        self.check_button = button(top, "Check again", check_again,
                                   "Read the workbook again after you have fixed something in it and saved it.")
        self.check_button.pack(side="right")
        self.summary = ttk.Label(top, text="Open a league workbook to check its results.", justify="left")
        self.summary.pack(side="left", fill="x", expand=True)
        # The chosen problem in full under the table: the table's cells cut long texts short.
        detail = ttk.Frame(self.frame)
        detail.pack(fill="x", side="bottom", pady=(6, 0))
        self.fix = ttk.Label(detail, text="", style="Fix.TLabel", justify="left")
        self.fix.pack(fill="x")
        self.detail = ttk.Label(detail, text="", justify="left")
        self.detail.pack(fill="x", pady=(2, 0))
        self.table = Table(self.frame, views.PROBLEM_COLUMNS, scheduler,
                           "Choose a problem to see it in full below, with the cell to fix.", height=8,
                           on_select=self.chosen)
        self.table.frame.pack(fill="both", expand=True, pady=(6, 0))
        self.frame.bind("<Configure>", lambda e: self._wrap(e.width))
        self.problems: tuple = ()
        self.layouts = {}

    def _wrap(self, width: int) -> None:
        for label in (self.summary, self.fix, self.detail):
            label.configure(wraplength=max(200, width - 30))
        self.summary.configure(wraplength=max(200, width - 30 - self.check_button.winfo_reqwidth()))

    def clear(self, text: str = "Open a league workbook to check its results.") -> None:
        """No list of problems to show (nothing checked yet, a check running, or a file that cannot be read)."""
        self.problems, self.layouts = (), {}
        self.summary.configure(text=text)
        self.fix.configure(text="")
        self.detail.configure(text="")
        self.table.show([])

    def show(self, problems, layouts=None) -> None:
        self.problems = tuple(problems)
        self.layouts = layouts or {}
        self.summary.configure(text=views.problems_summary(self.problems))
        self.fix.configure(text=CHOOSE if self.problems else "")
        self.detail.configure(text="")
        problems = self.problems  # rows made batch by batch as they go in (a big check holds no turn up)
        self.table.show(views.problem_order(problems), make=lambda i: views.problem_row(i, problems[i]))

    def chosen(self, iid: str) -> None:
        problem = self.problems[int(iid)]
        self.fix.configure(text=views.fix_line(problem, self.layouts))
        self.detail.configure(text=views.problem_detail(problem))
