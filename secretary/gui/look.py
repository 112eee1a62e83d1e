"""How the window looks: sharp text on high-DPI screens, sizes from named fonts, a clear default button."""
from __future__ import annotations

import sys
import tkinter as tk
from tkinter import font as tkfont
from tkinter import ttk

ACCENT = "#1f5fa8"


def set_dpi_awareness() -> None:
    """On Windows, ask for real pixels before the root window exists (otherwise text is blurred)."""
    if sys.platform != "win32":
        return
    try:
        import ctypes

        ctypes.windll.shcore.SetProcessDpiAwareness(1)
    except (AttributeError, OSError):
        pass  # older Windows: blurred but working


def style_window(root: tk.Tk) -> None:
    """Named fonts, the theme, the highlighted next-step button and table rows as tall as the font."""
    default = tkfont.nametofont("TkDefaultFont")
    size = default.actual("size")
    family = default.actual("family")
    fonts = []
    for name, grow, weight in (("SecretaryBold", 0, "bold"), ("SecretaryBig", 2, "bold"),
                               ("SecretarySmall", -1, "normal")):
        exists = name in tkfont.names(root)
        fonts.append(tkfont.Font(root=root, name=name, exists=exists))
        fonts[-1].configure(family=family, size=_bigger(size, grow), weight=weight)
    root.secretary_fonts = fonts  # a named font lives only as long as its Python object
    style = ttk.Style(root)
    if sys.platform.startswith("linux") and "clam" in style.theme_names():
        style.theme_use("clam")
    line = default.metrics("linespace")
    style.configure("Treeview", rowheight=line + max(4, line // 3))
    style.configure("Treeview.Heading", font="SecretaryBold")
    style.configure("Next.TButton", font="SecretaryBold", foreground="white", background=ACCENT)
    style.map("Next.TButton", background=[("disabled", "#9bb3d1"), ("active", "#174a85")],
              foreground=[("disabled", "#eeeeee")])
    style.configure("Step.TButton", font="SecretaryBold")
    style.configure("Fix.TLabel", font="SecretaryBig", foreground="#8b0000")
    style.configure("Muted.TLabel", foreground="#555555")
    style.configure("Bad.TLabel", foreground="#b00020")
    for state, colour in (("done", "#0b5d1e"), ("attention", "#b00020"), ("waiting", "#666666")):
        style.configure(f"{state}.TLabel", foreground=colour)


def _bigger(size: int, step: int) -> int:
    # Tk gives negative sizes in pixels, positive in points: grow away from zero either way.
    return size + step if size >= 0 else size - step
