"""The one seam for message boxes, file choosers and the system's PDF viewer (tests replace it)."""
from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path
from tkinter import filedialog, messagebox

from secretary.errors import FileRefused

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

    def open_externally(self, path: Path) -> None:
        """Show a file (the PDF notice board) in the computer's own viewer."""
        open_with_system(path)


def open_with_system(path: Path) -> None:
    try:
        if sys.platform == "win32":
            os.startfile(str(path))  # type: ignore[attr-defined]
        else:
            opener = "open" if sys.platform == "darwin" else "xdg-open"
            subprocess.Popen([opener, str(path)], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    except OSError as exc:
        raise FileRefused(f"The notice board could not be opened ({exc.strerror or exc}). "
                          f"Open it yourself: {path}") from None


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
