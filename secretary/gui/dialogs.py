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
