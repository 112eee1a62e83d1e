"""The Settings dialog: every setting of the Settings sheet, checked as it is typed."""
from __future__ import annotations

import tkinter as tk
from tkinter import ttk
from typing import Callable

from secretary.gui import views
from secretary.gui.tooltips import tip
from secretary.gui.widgets import button
from secretary.workbook import schema


MESSAGE_WIDTH = 260  # pixels: a field's message wraps rather than run off the dialog's edge


class SettingsDialog:
    """Save stays disabled until every value is allowed; each message stands beside its field."""

    def __init__(self, root: tk.Misc, settings, on_save: Callable[[dict[str, str]], None]):
        self.on_save = on_save
        self.top = tk.Toplevel(root)
        self.top.title("League settings")
        self.top.transient(root)
        body = ttk.Frame(self.top, padding=12)
        body.pack(fill="both", expand=True)
        ttk.Label(body, justify="left", text=(
            "These are the Settings sheet of the workbook. Leave a box empty to use the default. "
            "Saving writes the Settings sheet (a copy of the previous version is kept) and checks "
            "the workbook again; the ratings change at the next update."), wraplength=760).pack(
            anchor="w", pady=(0, 8))
        grid = self._scrolled_grid(body, root)
        self.texts: dict[str, tk.StringVar] = {}
        self.messages: dict[str, ttk.Label] = {}
        self.fields: dict[str, ttk.Widget] = {}
        for i, spec in enumerate(schema.SETTINGS_TABLE):
            self._add_field(grid, 2 * i, spec, getattr(settings, spec.field))
        # Room for the messages from the start: the canvas is sized before any message is shown.
        grid.columnconfigure(2, weight=1, minsize=MESSAGE_WIDTH + 16)  # + its padding
        self._add_buttons(body)
        self.top.bind("<Escape>", lambda e: self.top.destroy())
        self._fit_canvas(grid)
        self.revalidate()

    def _scrolled_grid(self, body: ttk.Frame, root: tk.Misc) -> ttk.Frame:
        """The frame that holds the settings, in a canvas that scrolls them (by its bar and the wheel)."""
        holder = ttk.Frame(body)
        holder.pack(fill="both", expand=True)
        self.canvas = tk.Canvas(holder, highlightthickness=0, background=ttk.Style(root).lookup("TFrame", "background"))
        scroll = ttk.Scrollbar(holder, orient="vertical", command=self.canvas.yview)
        self.canvas.configure(yscrollcommand=scroll.set)
        self.canvas.pack(side="left", fill="both", expand=True)
        scroll.pack(side="right", fill="y")
        grid = ttk.Frame(self.canvas)
        self.canvas.create_window(0, 0, window=grid, anchor="nw")
        for widget in (self.canvas, grid):
            widget.bind("<MouseWheel>", lambda e: self.canvas.yview_scroll(-1 if e.delta > 0 else 1, "units"))
            widget.bind("<Button-4>", lambda e: self.canvas.yview_scroll(-2, "units"))
            widget.bind("<Button-5>", lambda e: self.canvas.yview_scroll(2, "units"))
        return grid

    def _add_field(self, grid: ttk.Frame, row: int, spec, value) -> None:
        """One setting on two grid rows: its name, box and message, then its explanation and default."""
        text = tk.StringVar(value=str(value) if spec.kind == "choice" else views.setting_text(spec, value))
        tip(ttk.Label(grid, text=spec.label, font="SecretaryBold"), views.setting_tip(spec)).grid(
            row=row, column=0, sticky="w", padx=(0, 8))
        if spec.kind == "choice":
            field = ttk.Combobox(grid, textvariable=text, values=spec.choices, state="readonly", width=14)
        else:
            field = ttk.Entry(grid, textvariable=text, width=40 if spec.kind == "text" else 16)
        tip(field, views.setting_tip(spec)).grid(row=row, column=1, sticky="w")
        message = ttk.Label(grid, text="", style="Bad.TLabel", wraplength=MESSAGE_WIDTH, justify="left")
        message.grid(row=row, column=2, sticky="w", padx=(8, 0))
        ttk.Label(grid, text=f"{spec.explanation} Default: {views.default_text(spec)}.",
                  style="Muted.TLabel", font="SecretarySmall", wraplength=620, justify="left").grid(
            row=row + 1, column=1, columnspan=2, sticky="w", pady=(0, 3))
        text.trace_add("write", lambda *a: self.revalidate())
        self.texts[spec.field], self.messages[spec.field], self.fields[spec.field] = text, message, field

    def _add_buttons(self, body: ttk.Frame) -> None:
        """What is still wrong, then Cancel and Save settings."""
        buttons = ttk.Frame(body)
        buttons.pack(fill="x", pady=(8, 0))
        self.summary = ttk.Label(buttons, text="", style="Bad.TLabel", wraplength=2 * MESSAGE_WIDTH, justify="left")
        self.summary.pack(side="left", fill="x", expand=True)
        self.save_button = button(buttons, "Save settings", self.save,
                                  "Write these settings into the workbook's Settings sheet and check it again.",
                                  style="Next.TButton")
        self.save_button.pack(side="right")
        button(buttons, "Cancel", self.top.destroy, "Close without changing anything.").pack(side="right", padx=8)

    def _fit_canvas(self, grid: ttk.Frame) -> None:
        """As tall as the settings need, but never taller than a small screen allows."""
        grid.update_idletasks()
        height = min(grid.winfo_reqheight(), max(240, self.top.winfo_screenheight() - 300))
        self.canvas.configure(width=grid.winfo_reqwidth(), height=height,
                              scrollregion=(0, 0, grid.winfo_reqwidth(), grid.winfo_reqheight()))

    def values(self) -> dict[str, str]:
        return {field: var.get() for field, var in self.texts.items()}

    def revalidate(self) -> dict[str, str]:
        """Show each field's message and allow saving only when all are fine."""
        messages = views.settings_messages(self.values())
        for field, message in messages.items():
            self.messages[field].configure(text=message)
        wrong = [spec.label for spec in schema.SETTINGS_TABLE if messages[spec.field]]
        self.summary.configure(text=f"To fix before saving: {', '.join(wrong)}" if wrong else "")
        self.save_button.state(["!disabled"] if views.can_save(messages) else ["disabled"])
        return messages

    def save(self) -> None:
        if not views.can_save(self.revalidate()):
            return
        values = self.values()
        self.top.destroy()
        self.on_save(values)
