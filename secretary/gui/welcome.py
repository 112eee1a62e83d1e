"""The first-run welcome: try the demo league or start a new workbook, and where the files live.

Shown when the window opens with no workbook and none has been opened before
(the recent list is empty); Help > Where are my files? says the same places.
"""
from __future__ import annotations

import tkinter as tk
from tkinter import ttk

from secretary import userdirs
from secretary.gui import recent
from secretary.gui.widgets import button
from secretary.userdirs import log_file

TITLE = "Welcome to League secretary"
INTRO = ("This program works out your league's player ratings from the results you keep in an Excel workbook, "
         "and writes them back into the same workbook with a notice board to print.\n\n"
         "To see what it does first, try the invented demo league. When you are ready, make a new league "
         "workbook for your own results, or open the one you already keep.")


def demo_folder():
    """Where File > Open the demo league puts it (a folder the secretary can find, not the hidden user folder)."""
    return userdirs.demo_folder()


def where_text() -> str:
    """Where the secretary's workbook, its backups, the demo copy and the log file live."""
    return ("Your league workbook stays wherever you save it (your Documents folder is a good place); "
            "the program never moves it.\n\n"
            "Each update first keeps the previous version of the workbook in a folder called \"backups\" "
            "beside it (File > Restore previous version brings it back). The printed notice board "
            "(a PDF) is written beside the workbook too.\n\n"
            f"The demo league is copied to:\n{demo_folder()}\n\n"
            f"Unexpected errors are written with their details to the log file:\n{log_file()}")


def first_run() -> bool:
    """No workbook has been opened with this program yet."""
    return not recent.recent()


def show_where(app) -> None:
    """Help > Where are my files?"""
    app.dialogs.info("Where your files are", where_text())


class Welcome:
    """A small window over the main one, offering the first steps."""

    def __init__(self, app):
        self.app = app
        self.window = top = tk.Toplevel(app.root)
        top.title(TITLE)
        top.transient(app.root)
        frame = ttk.Frame(top, padding=16)
        frame.pack(fill="both", expand=True)
        ttk.Label(frame, text=TITLE, font="SecretaryBig").pack(anchor="w")
        ttk.Label(frame, text=INTRO, wraplength=520, justify="left").pack(anchor="w", pady=(8, 12))
        buttons = ttk.Frame(frame)
        buttons.pack(fill="x")
        self.buttons = {}
        for key, text, tip, action in (
                ("demo", "Try the demo league", "Copy the invented demo league and open it here.",
                 lambda: app.open_demo(False)),
                ("new", "New league workbook\u2026", "Make a blank league workbook from the template.",
                 app.new_workbook),
                ("open", "Open my workbook\u2026", "Open the league workbook you already keep (Ctrl+O).",
                 app.choose_workbook)):
            b = button(buttons, text, lambda a=action: self.choose(a), tip,
                       style="Next.TButton" if key == "demo" else "TButton")
            b.pack(side="left", padx=(0, 8))
            self.buttons[key] = b
        ttk.Label(frame, text=where_text(), wraplength=520, justify="left", style="Muted.TLabel").pack(
            anchor="w", pady=(14, 8))
        self.buttons["close"] = button(frame, "Close", self.close, "Close this window; the File menu has the same choices.")
        self.buttons["close"].pack(anchor="e")
        top.protocol("WM_DELETE_WINDOW", self.close)
        top.bind("<Escape>", lambda e: self.close())
        self.buttons["demo"].focus_set()

    def choose(self, action) -> None:
        self.close()
        action()

    def close(self) -> None:
        if self.window.winfo_exists():
            self.window.destroy()


def offer(app) -> Welcome | None:
    """The welcome window, on a first run only."""
    return Welcome(app) if first_run() else None
