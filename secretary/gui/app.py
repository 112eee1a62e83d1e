"""The main window: the weekly routine as four steps, the tabs that show the results, a status line.

A thin controller over the pipeline: long work runs on the worker thread, and
``_poll`` (every ``POLL_MS``) hands its messages to the widgets in small batches.
A finished update fills one tab per turn of the event loop (``_in_turns``), and
each table fills in batches (``widgets.Table``), so that the window answers
between them.
"""
from __future__ import annotations

import sys
import gc
import tkinter as tk
from pathlib import Path
from tkinter import font as tkfont
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
from secretary.model.sentences import plural
from secretary.userdirs import documents_folder

POLL_MS = 50
TITLE = "League secretary"
STEP_TIPS = (
    "Read the workbook again and list every problem in its results. Nothing is changed.",
    "Work out every player's rating from all the results and write the ratings, the reasons and the "
    "notice board back into the workbook (the previous version is kept). Ctrl+U or F5.",
    "See each player's change split into its four parts, biggest changes first.",
    "Open the printable notice board (a PDF) in your PDF viewer, ready to print. Ctrl+P. "
    "The handicap card for the coming fixtures is in the League menu.",
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
        self.where = ""  # where a new workbook was put: said once, after its check
        self._turns: list = []  # the tabs still to fill after an update, one per turn of the event loop
        self._turn: str | None = None
        style_window(root)
        root.title(TITLE)
        self._place()
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

    def _place(self) -> None:
        """As big as suits the screen (or as last time), on the screen, its bottom edge above a taskbar."""
        screen = (self.root.winfo_screenwidth(), self.root.winfo_screenheight())
        width, height = views.window_size(screen, recent.saved_size())
        x, y = max(0, (screen[0] - width) // 2), max(0, (screen[1] - 80 - height) // 2)
        self.root.geometry(f"{width}x{height}+{x}+{y}")
        self.root.minsize(*views.smallest_size(screen))

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
        league.add_command(label="Print the handicap card", command=self.print_card)
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
        self.step_buttons, self.step_labels, self.arrows = [], [], []
        self.strip = strip
        actions = (self.check, self.update, self.review, self.print_notice)
        for i, (name, action, tip) in enumerate(zip(views.STEPS, actions, STEP_TIPS)):
            if i:
                self.arrows.append(ttk.Label(strip, text="\u2192", font="SecretaryBold"))
                self.arrows[-1].grid(row=0, column=2 * i, padx=2)
            b = button(strip, f"{i + 1}  {name}", action, tip, style="Step.TButton")
            b.grid(row=0, column=2 * i + 1, sticky="ew")
            label = ttk.Label(strip, text="", style="waiting.TLabel", justify="left")
            label.grid(row=1, column=2 * i + 1, sticky="w", padx=4)
            self.step_buttons.append(b)
            self.step_labels.append(label)
        for i in range(4):
            strip.columnconfigure(2 * i + 1, weight=1, uniform="step")
        strip.bind("<Configure>", lambda e: self._fit_steps(e.width), add="+")
        ttk.Separator(self.root).pack(fill="x")

    def _fit_steps(self, width: int) -> None:
        """The longest step names that fit the strip's width; the state lines under them wrap."""
        font = tkfont.nametofont("SecretaryBold")
        b = self.step_buttons[0]
        overhead = b.winfo_reqwidth() - font.measure(b.cget("text"))
        fixed = 20 + self.open_button.winfo_reqwidth() + 12 + sum(a.winfo_reqwidth() + 4 for a in self.arrows)
        column = (width - fixed) / 4

        def fits(names) -> bool:
            return all(font.measure(f"{i + 1}  {n}") + overhead <= column for i, n in enumerate(names))

        for i, name in enumerate(views.step_names(fits)):
            if self.step_buttons[i].cget("text") != f"{i + 1}  {name}":
                self.step_buttons[i].configure(text=f"{i + 1}  {name}")
        for label in self.step_labels:
            label.configure(wraplength=max(80, int(column) - 8))

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
        self.status = ttk.Label(line, text="", anchor="w", justify="left")
        self.status.pack(side="left", fill="x", expand=True)
        self.cancel_button = button(line, "Cancel", self.cancel,
                                    "Stop the work now; the workbook is left exactly as it was.")
        self.cancel_button.pack(side="right")
        self.progress = ttk.Progressbar(line, length=200, maximum=100, mode="determinate")
        self.progress.pack(side="right", padx=8)
        self.cancel_button.state(["disabled"])
        # Long messages wrap onto a second line rather than run off the window's edge.
        line.bind("<Configure>", lambda e: self.status.configure(wraplength=max(200, e.width - 40 - (
            self.progress.winfo_reqwidth() + self.cancel_button.winfo_reqwidth()))), add="+")

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
        return (not self.worker.busy and not self.worker.pending and not self._turns
                and not any(t.filling for t in tables))

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
            running = views.RUNNING_WORDS.get(self.worker.job) if busy else None
            if running is not None and running[0] == i:
                text, style = running[1], "waiting"
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
        self._in_turns()  # a tab still to fill from the last update is not filled now
        self.checked = self.updated = None
        self.problems.clear()
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
            if job == "demo":
                self.where = (f" The demo league is {value.name} in {value.parent} (updated twice, so What changed "
                              "shows the second week).")
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
            self.session = self.session.but(updated=False, reviewed=False, printed=False, update_note="",
                                            waiting_results=True)
            when = views.stamp_day(self.checked.updated_at if self.checked is not None else None)
            self.say(f"{self.path.name}: new results are waiting for an update. The results or settings changed "
                     f"since the last update ({when}), so choose 2 Update the ratings to include them.")
        elif failure.kind == "problems":
            self.problems.show(failure.problems, self.checked.layouts if self.checked is not None else None)
            errors = sum(1 for p in failure.problems if p.is_error)
            self.session = self.session.but(checked=True, errors=errors, update_failed=job == "update")
            self.notebook.select(self.problems.frame)
        elif failure.kind != "cancelled":
            if job == "check":  # the workbook could not be read at all: no list of problems to show
                self.session = self.session.but(checked=False)
                self.problems.clear(failure.message)
            if job == "update":
                self.session = self.session.but(update_failed=True)
            self.dialogs.error("The work stopped", failure.message)
        self.refresh_steps()

    # ------------------------------------------------------------ the steps

    def check(self) -> None:
        """Step 1: read the workbook and list its problems."""
        if self.path is None:
            return self.choose_workbook()
        if self._start("check", self.worker.child.call("check", self.path), f"Checking {self.path.name}\u2026"):
            self.problems.clear(f"Checking {self.path.name}\u2026")

    def _checked(self, checked) -> None:
        self.checked = checked
        self.problems.show(checked.problems, checked.layouts)
        from secretary import pipeline  # imported on first use: the window draws without loading the engine

        notice = pipeline.notice_pdf_path(self.path).exists()
        self.session = self.session.but(checked=True, errors=len(checked.errors), update_failed=False,
                                        notice_exists=notice)
        self.say(f"{self.path.name}: {plural(checked.result_rows, 'result row')}. "
                 + views.problems_summary(checked.problems) + self.where)
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
        # The tab in sight first; each tab in its own turn of the event loop, so that a big league never holds
        # the window up for all of them at once.
        self._in_turns(lambda: self.ratings.show(updated),
                       lambda: self.problems.show(updated.checked.problems, updated.checked.layouts),
                       lambda: self.changes.show(updated),
                       lambda: self.watch.show(updated.watch),
                       lambda: self.fixtures.show(updated.forecasts, updated.latest_result))
        self.session = self.session.but(checked=True, errors=0, updated=True, update_failed=False, reviewed=False,
                                        printed=False, notice_exists=updated.notice_pdf is not None, update_note="",
                                        waiting_results=False)
        self.notebook.select(self.ratings.frame)
        notes = " ".join(updated.notes)
        self.say(f"Ratings updated for {plural(len(updated.ratings), 'player')}. {updated.reason} {notes}".strip())

    def _in_turns(self, *steps) -> None:
        """Run the first step now and each next one in a later turn of the event loop; none drops the rest."""
        self.scheduler.cancel(self._turn)
        self._turn, self._turns = None, list(steps)
        self._next_turn()

    def _next_turn(self) -> None:
        self._turn = None
        if self._turns:
            step = self._turns.pop(0)
            if self._turns:
                self._turn = self.scheduler.later(1, self._next_turn)
            step()

    def _shown_last(self, updated) -> None:
        """The last update, still current, shown as if it had just run: step 2 is done already."""
        self._updated(updated)
        when = views.stamp_day(updated.checked.updated_at)
        self.session = self.session.but(update_note=f"last update {when}")
        warnings = len(updated.checked.problems)
        self.say(f"{self.path.name}: showing the ratings of the last update ({when}) for "
                 f"{plural(len(updated.ratings), 'player')}; nothing was written."
                 + (f" {plural(warnings, 'warning')} under Problems." if warnings else "") + self.where)
        self.where = ""

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
        if self._show_pdf("notice board", pdf, "There is no notice board yet: update the ratings first."):
            self.session = self.session.but(printed=True)
            self.refresh_steps()

    def print_card(self) -> None:
        """The handicap card for the coming fixtures, in the system's viewer."""
        if self.path is None:
            self.dialogs.info("Handicap card", "Open a workbook and update its ratings first.")
            return
        from secretary import pipeline

        pdf = self.updated.handicap_pdf if self.updated is not None else pipeline.handicap_pdf_path(self.path)
        self._show_pdf("handicap card", pdf, "There is no handicap card yet: it is made by the update when the "
                       "workbook has fixtures to come (a Fixtures sheet).")

    def _show_pdf(self, what: str, pdf, missing: str) -> bool:
        """Open a PDF; when no viewer opens, say where it is and offer its folder. True when it is shown."""
        title = what[0].upper() + what[1:]
        if pdf is None or not Path(pdf).exists():
            self.dialogs.info(title, missing)
            return False
        pdf = Path(pdf)
        try:
            opened = self.dialogs.open_externally(pdf)
        except SecretaryError:
            opened = False
        if opened is not False:
            self.say(f"The {what} is open in your PDF viewer: {pdf.name}, in {pdf.parent}")
            return True
        self.say(f"No PDF viewer opened. The {what} is saved as {pdf.name} in {pdf.parent}")
        if self.dialogs.ask_yes_no(title, f"No PDF viewer opened on this computer. The {what} is saved here:\n\n"
                                   f"{pdf}\n\nOpen the folder that holds it?"):
            try:
                self.dialogs.open_externally(pdf.parent)
            except SecretaryError as err:
                self.dialogs.error(title, str(err))
        return True

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
        """The command line's demo (first ratings, then a new week) in the documents folder (or a chosen one)."""
        folder = documents_folder()
        if choose:
            folder = self.dialogs.ask_folder("Where should the demo league go?", folder)
            if folder is None:
                return
        self._start("demo", self.worker.child.call("demo", folder),
                    f"Making the demo league in {folder} (two updates)\u2026")

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
        recent.remember_size(self.root.winfo_width(), self.root.winfo_height())
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
