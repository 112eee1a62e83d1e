"""The main window: the weekly routine as four steps, the tabs that show the results, a status line.

A thin controller over the pipeline: long work runs on the worker thread, and
``_poll`` (every ``POLL_MS``) hands its messages to the widgets in small batches.
"""
from __future__ import annotations

import sys
import gc
import tkinter as tk
from pathlib import Path
from tkinter import ttk

from secretary import __version__
from secretary.errors import SecretaryError
from secretary.gui import recent, views, welcome
from secretary.gui.dialogs import Dialogs
from secretary.gui.look import set_dpi_awareness, style_window
from secretary.gui.settings_dialog import SettingsDialog
from secretary.gui.tabs.changes import ChangesTab
from secretary.gui.tabs.fixtures import FixturesTab
from secretary.gui.tabs.problems import ProblemsTab
from secretary.gui.tabs.ratings import RatingsTab
from secretary.gui.tabs.watch import WatchTab
from secretary.gui.widgets import Scheduler, button
from secretary.gui.worker import Worker
from secretary.userdirs import user_folder

POLL_MS = 50
TITLE = "League secretary"
STEP_TIPS = (
    "Read the workbook again and list every problem in its results. Nothing is changed.",
    "Work out every player's rating from all the results and write the ratings, the reasons and the "
    "notice board back into the workbook (the previous version is kept). Ctrl+U or F5.",
    "See each player's change split into its four parts, biggest changes first.",
    "Open the printable notice board (a PDF) in your PDF viewer, ready to print. Ctrl+P.",
)
ROUTINE = """\
Each week:
1. Type the new results into the Results sheet of your workbook and save it.
2. Open the workbook here (or choose Check again): every problem is listed with the cell to fix.
3. Update the ratings: they are written back into the workbook, and the previous version is kept.
4. Review what changed, then print the notice board for the club.

Ratings are estimates: the league committee makes the decisions."""


class App:
    """The main window and what it does."""

    def __init__(self, root: tk.Tk, dialogs=None):
        # Everything alive at start-up stays alive: keep it out of the garbage collector's full passes,
        # whose pauses otherwise grow with it and can hold up the event loop for a tenth of a second.
        gc.freeze()
        self.root = root
        self.dialogs = dialogs or Dialogs(root)
        self.scheduler = Scheduler(root)
        self.worker = Worker()
        self.path: Path | None = None
        self.checked = None  # jobs.Checked: the last check's findings
        self.updated = None  # jobs.Updated: the last update's results
        self.session = views.Session()
        self.closed = False
        style_window(root)
        root.title(TITLE)
        root.geometry("1024x720")
        root.minsize(800, 560)
        self._menus()
        self._steps()
        self._status_line()  # packed before the tabs so that a small window never squeezes it out
        self._tabs()
        self._keys()
        root.protocol("WM_DELETE_WINDOW", self.close)
        self.refresh_steps()
        self.say("Open a league workbook (Ctrl+O), or try the demo league from the File menu.")
        self.scheduler.later(POLL_MS, self._poll)
        self.worker.child.ensure()  # start the background process now, so that the first job starts at once

    # ------------------------------------------------------------ building

    def _menus(self) -> None:
        bar = tk.Menu(self.root)
        files = tk.Menu(bar, tearoff=False)
        files.add_command(label="Open\u2026", accelerator="Ctrl+O", command=self.choose_workbook)
        self.recent_menu = tk.Menu(files, tearoff=False)
        files.add_cascade(label="Open recent", menu=self.recent_menu)
        files.add_command(label="New league workbook\u2026", command=self.new_workbook)
        files.add_command(label="Open the demo league", command=lambda: self.open_demo(False))
        files.add_command(label="Open the demo league in a folder of my choice\u2026",
                          command=lambda: self.open_demo(True))
        files.add_separator()
        files.add_command(label="Restore an earlier version\u2026", command=self.restore_previous)
        files.add_separator()
        files.add_command(label="Quit", accelerator="Ctrl+Q", command=self.close)
        bar.add_cascade(label="File", menu=files)
        league = tk.Menu(bar, tearoff=False)
        league.add_command(label="Check the results", command=self.check)
        league.add_command(label="Update the ratings", accelerator="Ctrl+U", command=self.update)
        league.add_command(label="Print the notice board", accelerator="Ctrl+P", command=self.print_notice)
        league.add_separator()
        league.add_command(label="Settings\u2026", command=self.open_settings)
        bar.add_cascade(label="League", menu=league)
        helps = tk.Menu(bar, tearoff=False)
        helps.add_command(label="The weekly routine", command=lambda: self.dialogs.info("The weekly routine", ROUTINE))
        helps.add_command(label="Where are my files? (workbook, backups, log file)",
                          command=lambda: welcome.show_where(self))
        helps.add_command(label="About", command=lambda: self.dialogs.info(
            "About", f"secretary {__version__}\nWeekly player ratings for a cue-sports league."))
        bar.add_cascade(label="Help", menu=helps)
        self.root.configure(menu=bar)
        self._fill_recent()

    def _fill_recent(self) -> None:
        self.recent_menu.delete(0, "end")
        paths = recent.recent()
        for path in paths:
            self.recent_menu.add_command(label=str(path), command=lambda p=path: self.open_workbook(p))
        if not paths:
            self.recent_menu.add_command(label="(none yet)", state="disabled")

    def _steps(self) -> None:
        strip = ttk.Frame(self.root, padding=(10, 8))
        strip.pack(fill="x")
        self.open_button = button(strip, "Open\u2026", self.choose_workbook,
                                  "Choose the league's Excel workbook (Ctrl+O).")
        self.open_button.grid(row=0, column=0, sticky="ew", padx=(0, 12))
        self.workbook_label = ttk.Label(strip, text="No workbook open", style="Muted.TLabel")
        self.workbook_label.grid(row=1, column=0, sticky="w")
        self.step_buttons, self.step_labels = [], []
        actions = (self.check, self.update, self.review, self.print_notice)
        for i, (name, action, tip) in enumerate(zip(views.STEPS, actions, STEP_TIPS)):
            if i:
                ttk.Label(strip, text="\u2192", font="SecretaryBold").grid(row=0, column=2 * i, padx=2)
            b = button(strip, f"{i + 1}  {name}", action, tip, style="Step.TButton")
            b.grid(row=0, column=2 * i + 1, sticky="ew")
            label = ttk.Label(strip, text="", style="waiting.TLabel")
            label.grid(row=1, column=2 * i + 1, sticky="w", padx=4)
            self.step_buttons.append(b)
            self.step_labels.append(label)
        for i in range(4):
            strip.columnconfigure(2 * i + 1, weight=1)
        ttk.Separator(self.root).pack(fill="x")

    def _tabs(self) -> None:
        self.notebook = ttk.Notebook(self.root)
        self.notebook.pack(fill="both", expand=True, padx=8, pady=(6, 0))
        later = self.scheduler
        self.problems = ProblemsTab(self.notebook, later, self.check)
        self.ratings = RatingsTab(self.notebook, later)
        self.changes = ChangesTab(self.notebook, later)
        self.watch = WatchTab(self.notebook, later)
        self.fixtures = FixturesTab(self.notebook, later)
        for tab, text in ((self.problems, "Problems"), (self.ratings, "Ratings"), (self.changes, "What changed"),
                          (self.watch, "Watch list"), (self.fixtures, "Fixtures")):
            self.notebook.add(tab.frame, text=text)
        self.notebook.bind("<<NotebookTabChanged>>", self._tab_changed, add="+")

    def _status_line(self) -> None:
        line = ttk.Frame(self.root, padding=(8, 4))
        line.pack(fill="x", side="bottom")
        self.status = ttk.Label(line, text="", anchor="w")
        self.status.pack(side="left", fill="x", expand=True)
        self.cancel_button = button(line, "Cancel", self.cancel,
                                    "Stop the work now; the workbook is left exactly as it was.")
        self.cancel_button.pack(side="right")
        self.progress = ttk.Progressbar(line, length=200, maximum=100, mode="determinate")
        self.progress.pack(side="right", padx=8)
        self.cancel_button.state(["disabled"])

    def _keys(self) -> None:
        for keys, action in ((("<Control-o>", "<Control-O>"), self.choose_workbook),
                             (("<Control-u>", "<Control-U>", "<F5>"), self.update),
                             (("<Control-p>", "<Control-P>"), self.print_notice),
                             (("<Control-q>", "<Control-Q>"), self.close),
                             (("<Escape>",), self.cancel)):
            for key in keys:
                self.root.bind(key, lambda e, a=action: a())

    # ------------------------------------------------------------ state shown

    @property
    def idle(self) -> bool:
        """No background work running and every table filled (tests wait for this)."""
        tables = [self.problems.table, self.ratings.table, self.fixtures.table, *self.watch.tables]
        return not self.worker.busy and not self.worker.pending and not any(t.filling for t in tables)

    def say(self, text: str) -> None:
        self.status.configure(text=text)

    def refresh_steps(self) -> None:
        """Show each step's state; the next step is the highlighted default button."""
        busy = self.worker.busy
        states = views.step_states(self.session)
        enabled = views.steps_enabled(self.session)
        upcoming = views.next_step(self.session)
        for i, (b, label) in enumerate(zip(self.step_buttons, self.step_labels)):
            b.state(["!disabled"] if enabled[i] and not busy else ["disabled"])
            b.configure(style="Next.TButton" if i == upcoming else "Step.TButton",
                        default="active" if i == upcoming else "normal")
            style = {views.DONE: "done", views.ATTENTION: "attention"}.get(states[i], "waiting")
            text = views.STATE_WORDS[states[i]] + ("  \u2190 next" if i == upcoming else "")
            if i == 1 and states[i] == views.DONE and self.session.update_note:
                text += f"  ({self.session.update_note})"
            label.configure(text=text, style=f"{style}.TLabel")
        first = self.path is None
        self.open_button.configure(style="Next.TButton" if first else "TButton")
        self.open_button.state(["disabled"] if busy else ["!disabled"])
        if upcoming is not None and not busy:
            self.step_buttons[upcoming].focus_set()

    def _tab_changed(self, event=None) -> None:
        if self.session.updated and self.notebook.select() == str(self.changes.frame):
            self.session = self.session.but(reviewed=True)
            self.refresh_steps()

    def _clear(self) -> None:
        self.checked = self.updated = None
        self.problems.show(())
        self.ratings.clear()
        self.changes.show(None)
        self.watch.clear()
        self.fixtures.clear()

    # ------------------------------------------------------------ background work

    def _start(self, name: str, job, text: str) -> bool:
        if self.worker.busy:
            self.say(f"Please wait: still busy ({self.worker.job}). Cancel it first to start something else.")
            return False
        self.worker.start(name, job)
        self.progress.configure(value=0)
        self.cancel_button.state(["!disabled"])
        self.say(text)
        self.refresh_steps()
        return True

    def _poll(self) -> None:
        if self.closed:
            return
        for message in self.worker.poll():
            if message.kind == "progress":
                stage, fraction = message.value
                self.progress.configure(value=100 * fraction)
                self.say(f"{stage}\u2026")
            elif message.kind == "done":
                self._finished(message.job, message.value)
            else:
                self._failed(message.job, message.value)
        if not self.worker.busy:
            self.cancel_button.state(["disabled"])
        self.scheduler.later(POLL_MS, self._poll)

    def _finished(self, job: str, value) -> None:
        self.worker.join(5)  # its result is here, so its thread is ending: a follow-up job may start at once
        self.progress.configure(value=0)
        self.cancel_button.state(["disabled"])
        if job == "check":
            self._checked(value)
        elif job == "update":
            self._updated(value)
        elif job == "last":
            self._shown_last(value)
        elif job in ("new", "demo"):
            self.open_workbook(value)
        elif job == "restore":
            self.say(f"Restored the previous version (from {value.name}); checking it again.")
            self.session = views.Session(opened=True)
            self._clear()
            self.check()
        elif job == "settings":
            self.check()
        self.refresh_steps()

    def _failed(self, job: str, failure) -> None:
        self.progress.configure(value=0)
        self.cancel_button.state(["disabled"])
        self.say(failure.message)
        if job == "last" and failure.kind == "refused":  # results or settings changed since the last update
            self.session = self.session.but(updated=False, reviewed=False, printed=False, update_note="")
            when = views.stamp_day(self.checked.updated_at if self.checked is not None else None)
            self.say(f"{self.path.name}: new results are waiting for an update. The results or settings changed "
                     f"since the last update ({when}), so choose 2 Update the ratings to include them.")
        elif failure.kind == "problems":
            self.problems.show(failure.problems, self.checked.layouts if self.checked is not None else None)
            errors = sum(1 for p in failure.problems if p.is_error)
            self.session = self.session.but(checked=True, errors=errors, update_failed=job == "update")
            self.notebook.select(self.problems.frame)
        elif failure.kind != "cancelled":
            if job == "update":
                self.session = self.session.but(update_failed=True)
            self.dialogs.error("The work stopped", failure.message)
        self.refresh_steps()

    # ------------------------------------------------------------ the steps

    def check(self) -> None:
        """Step 1: read the workbook and list its problems."""
        if self.path is None:
            return self.choose_workbook()
        self._start("check", self.worker.child.call("check", self.path), f"Checking {self.path.name}\u2026")

    def _checked(self, checked) -> None:
        self.checked = checked
        self.problems.show(checked.problems, checked.layouts)
        from secretary import pipeline  # imported on first use: the window draws without loading the engine

        notice = pipeline.notice_pdf_path(self.path).exists()
        self.session = self.session.but(checked=True, errors=len(checked.errors), update_failed=False,
                                        notice_exists=notice)
        self.say(f"{self.path.name}: {checked.result_rows} result rows. " + views.problems_summary(checked.problems))
        if checked.problems:
            self.notebook.select(self.problems.frame)
        if checked.updated_at and not checked.errors:  # updated before: show that update if it is still current
            self._start("last", self.worker.child.call("last", self.path), "Reading the last update\u2026")

    def update(self) -> None:
        """Step 2: the weekly update, on the worker thread."""
        if self.path is None or not views.steps_enabled(self.session)[1]:
            self.say("Check the results first: the update needs a workbook without errors.")
            return
        self._start("update", self.worker.child.call("update", self.path), "Updating the ratings\u2026")

    def _updated(self, updated) -> None:
        self.updated, self.checked = updated, updated.checked
        self.problems.show(updated.checked.problems, updated.checked.layouts)
        self.ratings.show(updated)
        self.changes.show(updated)
        self.watch.show(updated.watch)
        self.fixtures.show(updated.forecasts)
        self.session = self.session.but(checked=True, errors=0, updated=True, update_failed=False, reviewed=False,
                                        printed=False, notice_exists=updated.notice_pdf is not None, update_note="")
        self.notebook.select(self.ratings.frame)
        notes = " ".join(updated.notes)
        self.say(f"Ratings updated for {len(updated.ratings)} players. {updated.reason} {notes}".strip())

    def _shown_last(self, updated) -> None:
        """The last update, still current, shown as if it had just run: step 2 is done already."""
        self._updated(updated)
        when = views.stamp_day(updated.checked.updated_at)
        self.session = self.session.but(update_note=f"last update {when}")
        warnings = len(updated.checked.problems)
        self.say(f"{self.path.name}: showing the ratings of the last update ({when}) for {len(updated.ratings)} "
                 "players; nothing was written." + (f" {warnings} warning(s) under Problems." if warnings else ""))

    def review(self) -> None:
        """Step 3: look at what changed."""
        self.notebook.select(self.changes.frame)
        self._tab_changed()

    def print_notice(self) -> None:
        """Step 4: open the PDF notice board in the system's viewer."""
        if self.path is None:
            return
        from secretary import pipeline

        pdf = self.updated.notice_pdf if self.updated is not None else pipeline.notice_pdf_path(self.path)
        if pdf is None or not Path(pdf).exists():
            self.dialogs.info("Notice board", "There is no notice board yet: update the ratings first.")
            return
        try:
            self.dialogs.open_externally(Path(pdf))
        except SecretaryError as err:
            self.dialogs.error("Notice board", str(err))
            return
        self.session = self.session.but(printed=True)
        self.say(f"The notice board is open in your PDF viewer: {Path(pdf).name}")
        self.refresh_steps()

    def cancel(self) -> None:
        if self.worker.busy:
            self.worker.cancel.set()
            self.say("Cancelling\u2026 the workbook will be left as it was.")

    # ------------------------------------------------------------ files

    def open_workbook(self, path) -> None:
        """Open a workbook and check it straight away."""
        if self.worker.busy:
            self.say("Please wait for the current work to finish, or cancel it.")
            return
        self.path = Path(path)
        recent.remember(self.path)
        self._fill_recent()
        self.root.title(f"{self.path.name} - {TITLE}")
        self.workbook_label.configure(text=shorten(self.path.name, 18))
        self.session = views.Session(opened=True)
        self._clear()
        self.check()

    def choose_workbook(self) -> None:
        folder = self.path.parent if self.path else None
        path = self.dialogs.ask_open_workbook(folder)
        if path is not None:
            self.open_workbook(path)

    def new_workbook(self) -> None:
        path = self.dialogs.ask_new_workbook(self.path.parent if self.path else None)
        if path is not None:
            self._start("new", self.worker.child.call("new", path), "Making a blank workbook\u2026")

    def open_demo(self, choose: bool) -> None:
        """Copy the invented demo league into the user folder (or a chosen one) and open it."""
        folder = welcome.demo_folder()
        if choose:
            folder = self.dialogs.ask_folder("Where should the demo league go?", user_folder())
            if folder is None:
                return
        self._start("demo", self.worker.child.call("demo", folder), "Copying the demo league\u2026")

    def restore_previous(self) -> None:
        if self.path is None:
            self.dialogs.info("Restore", "Open a workbook first.")
            return
        from secretary.workbook.save import backup_versions  # loaded when needed: the window starts fast

        versions = [v for v in backup_versions(self.path) if not v.current]
        if not versions:
            self.dialogs.info("Restore", f"No earlier version of {self.path.name} that differs from it is kept.")
            return
        choice = self.dialogs.choose("Restore an earlier version", (
            f"Which version of {self.path.name} should come back from its backups folder?\n"
            "The version it replaces is kept as a backup too, so this can be undone."),
            [f"{v.kept_at:%d %b %Y, %H:%M:%S}  ({v.size / 1024:,.0f} KB)" for v in versions])
        if choice is None:
            return
        self._start("restore", self.worker.child.call("restore", self.path, versions[choice].number),
                    "Restoring\u2026")

    def open_settings(self) -> SettingsDialog | None:
        if self.checked is None:
            self.dialogs.info("Settings", "Open a workbook (and let its check finish) first.")
            return None
        return SettingsDialog(self.root, self.checked.settings, lambda values: self._start(
            "settings", self.worker.child.call("settings", self.path, values), "Saving the settings\u2026"))

    def close(self) -> None:
        """Close the window; running work is cancelled and every pending callback dropped."""
        if self.closed:
            return
        if self.worker.busy and not self.dialogs.ask_yes_no(
                "Close", "Work is still running. Stop it and close? The workbook will be left as it was."):
            return
        self.worker.cancel.set()
        self.closed = True
        self.scheduler.cancel_all()
        for ident in self.root.tk.splitlist(self.root.tk.call("after", "info")):
            self.root.after_cancel(ident)  # the tooltips' own timers too: none may fire after the window is gone
        self.root.destroy()
        self.worker.child.close(timeout=3)  # a long job is stopped rather than waited for


def shorten(text: str, most: int) -> str:
    return text if len(text) <= most else text[:most - 1] + "\u2026"


def run(workbook: str | Path | None = None) -> int:
    """Open the window (and the workbook, if given); returns the exit code when it closes."""
    set_dpi_awareness()
    try:
        root = tk.Tk()
    except tk.TclError as exc:
        print(f"The window cannot open here ({exc}). Use the commands instead: secretary --help", file=sys.stderr)
        return 2
    app = App(root)
    if workbook is not None:
        app.open_workbook(Path(workbook))
    else:
        welcome.offer(app)  # first run: the demo league, a new workbook, and where the files live
    root.mainloop()
    return 0
