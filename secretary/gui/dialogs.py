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
