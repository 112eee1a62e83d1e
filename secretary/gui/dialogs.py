"""The one seam for message boxes, file choosers and the system's PDF viewer (tests replace it)."""
from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path
from tkinter import filedialog, messagebox

WORKBOOKS = [("Excel workbooks", "*.xlsx *.xlsm"), ("All files", "*")]


class Dialogs:
    """Real dialogs, each a small blocking question or message owned by the main window."""

    def __init__(self, root):
        self.root = root

    def info(self, title: str, message: str) -> None:
        messagebox.showinfo(title, message, parent=self.root)

    def error(self, title: str, message: str) -> None:
        messagebox.showerror(title, message, parent=self.root)

    def ask_yes_no(self, title: str, message: str) -> bool:
        return bool(messagebox.askyesno(title, message, parent=self.root))

    def choose(self, title: str, message: str, options: list[str]) -> int | None:
        """The index of the option picked in a small list (the first is selected), or None if cancelled."""
        return choose_from_list(self.root, title, message, options)

    def ask_open_workbook(self, folder: Path | None = None) -> Path | None:
        name = filedialog.askopenfilename(parent=self.root, title="Open a league workbook",
                                          filetypes=WORKBOOKS, initialdir=folder or None)
        return Path(name) if name else None

    def ask_new_workbook(self, folder: Path | None = None) -> Path | None:
        name = filedialog.asksaveasfilename(parent=self.root, title="Make a new league workbook",
                                            filetypes=WORKBOOKS[:1], defaultextension=".xlsx",
                                            initialdir=folder or None, initialfile="league.xlsx")
        return Path(name) if name else None

    def ask_folder(self, title: str, folder: Path | None = None) -> Path | None:
        name = filedialog.askdirectory(parent=self.root, title=title, initialdir=folder or None,
                                       mustexist=False)
        return Path(name) if name else None

    def open_externally(self, path: Path) -> bool:
        """Show a file (a PDF) or a folder with the computer's own program; False when none opened."""
        return open_with_system(path)


OPENER_WAIT = 3.0  # seconds: an opener that finds no program says so (non-zero exit) well within this


def open_with_system(path: Path) -> bool:
    """Open with the system's program; False when no program opened it (there is none, or it failed)."""
    try:
        if sys.platform == "win32":
            os.startfile(str(path))  # type: ignore[attr-defined]
            return True
        opener = "open" if sys.platform == "darwin" else "xdg-open"
        if shutil.which(opener) is None:
            return False
        proc = subprocess.Popen([opener, str(path)], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    except OSError:
        return False
    try:
        return proc.wait(OPENER_WAIT) == 0
    except subprocess.TimeoutExpired:
        return True  # still starting the viewer: it found one


def choose_from_list(root, title: str, message: str, options: list[str]) -> int | None:
    """A modal list to pick one line from; OK (or a double click) picks, Cancel or closing gives None."""
    import tkinter as tk
    from tkinter import ttk

    top = tk.Toplevel(root)
    top.title(title)
    top.transient(root)
    picked: list[int] = []
    ttk.Label(top, text=message, wraplength=420, justify="left").pack(padx=12, pady=(12, 6), anchor="w")
    box = tk.Listbox(top, height=min(len(options), 10), width=40, exportselection=False)
    for line in options:
        box.insert("end", line)
    box.selection_set(0)
    box.pack(padx=12, fill="both", expand=True)

    def done(ok: bool) -> None:
        if ok and box.curselection():
            picked.append(int(box.curselection()[0]))
        top.destroy()

    buttons = ttk.Frame(top)
    buttons.pack(padx=12, pady=12, anchor="e")
    ttk.Button(buttons, text="Restore", command=lambda: done(True)).pack(side="left", padx=4)
    ttk.Button(buttons, text="Cancel", command=lambda: done(False)).pack(side="left")
    box.bind("<Double-Button-1>", lambda _e: done(True))
    top.protocol("WM_DELETE_WINDOW", lambda: done(False))
    top.grab_set()
    root.wait_window(top)
    return picked[0] if picked else None
