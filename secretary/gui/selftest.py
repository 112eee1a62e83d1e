"""The window's self-test: ``secretary --self-test OUT WORKBOOK [--print]`` (hidden; see secretary.launch).

Opens the real window on the workbook, lets it check the workbook and show its
last update (or runs the update when there is none), with ``--print`` opens the
notice board in the PDF viewer (step 4), then writes what the window shows to
OUT as JSON and closes.  The bundle's test reads that file, and
the start-time measurement uses its ``drawn_at`` (wall clock when the window
was first drawn).  No dialog is ever shown: each one is written down instead.
"""
from __future__ import annotations

import json
import sys
import time
import tkinter as tk
from pathlib import Path

from secretary.gui.dialogs import open_with_system

TIMEOUT = 600.0  # seconds: a generous ceiling on a busy machine, so that a broken bundle still ends
POLL_MS = 50


class QuietDialogs:
    """Stands in for the window's dialogs: shows nothing, writes every call down, answers no.

    Only the PDF goes to the computer's own viewer, as in the real window.
    """

    def __init__(self):
        self.calls: list[list[str]] = []

    def open_externally(self, path) -> None:
        self.calls.append(["open_externally", str(path)])
        open_with_system(path)

    def __getattr__(self, name: str):
        def record(*args):
            self.calls.append([name, *(str(a) for a in args)])
            return None
        return record


def shown(app, dialogs: QuietDialogs, times: dict) -> dict:
    """What the window shows now, in plain texts."""
    return {
        "title": app.root.title(),
        "status": app.status.cget("text"),
        "steps": [label.cget("text") for label in app.step_labels],
        "tab": app.notebook.tab(app.notebook.select(), "text"),
        "headings": [c.heading for c in app.ratings.table.columns],
        "ratings": [list(row) for row in app.ratings.table.shown_values()],
        "dialogs": dialogs.calls,
        "printed": app.session.printed,
        **times,
    }


def main(argv: list[str]) -> int:
    if len(argv) not in (2, 3) or argv[2:] not in ([], ["--print"]):
        print("usage: --self-test OUT.json WORKBOOK [--print]", file=sys.stderr)
        return 2
    from secretary.gui.app import App

    out, workbook, printing = Path(argv[0]), Path(argv[1]), argv[2:] == ["--print"]
    root = tk.Tk()
    dialogs = QuietDialogs()
    app = App(root, dialogs=dialogs)
    times: dict[str, float] = {"started_at": time.time()}
    deadline = time.monotonic() + TIMEOUT

    def drawn(event=None) -> None:
        if "drawn_at" not in times:
            root.after_idle(lambda: times.setdefault("drawn_at", time.time()))

    def step() -> None:
        busy = not app.idle
        if not busy and app.session.checked and not app.ratings.rows and app.session.errors == 0 \
                and not app.session.update_failed and not app.session.updated:
            app.update()  # never updated before: the ratings appear once the update has run
            busy = True
        if not busy and app.session.checked and "drawn_at" in times or time.monotonic() > deadline:
            times["shown_at"] = time.time()
            if printing:
                app.print_notice()  # step 4: the notice board goes to the computer's PDF viewer
            out.write_text(json.dumps(shown(app, dialogs, times), indent=1), encoding="utf-8")
            app.close()
            return
        root.after(POLL_MS, step)

    root.bind("<Expose>", drawn, add="+")
    app.open_workbook(workbook)
    root.after(POLL_MS, step)
    root.mainloop()
    return 0 if app.ratings.rows else 1
