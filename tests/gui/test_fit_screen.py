"""The window on small and ordinary laptop screens (real Tk under Xvfb): it fits, and nothing is clipped.

A widget is clipped when the room it got (``winfo_width``) is less than the room its text asks for
(``winfo_reqwidth``); labels that wrap ask only for their wrap length, so they pass.
"""
from __future__ import annotations

import pytest

from secretary.gui import views
from secretary.workbook import schema
from tests.gui.conftest import LAPTOP_SCREENS, main_window
from tests.gui.helpers import TASKBAR, clipped, on_screen, screenshot, settle, table_clipped, tabs_fit

TITLE_BAR = 32


SCREENS = LAPTOP_SCREENS


def screen_window(tk_errors, display, screen):
    """The main window on this screen of the session's display (screens 1 and 2 are ``SCREENS``)."""
    return main_window(tk_errors, f"{display}.{SCREENS.index(screen) + 1}")


@pytest.mark.parametrize("screen", SCREENS)
def test_the_window_fits_the_screen_and_nothing_is_clipped(screen, display, demo_league, tk_errors):
    with screen_window(tk_errors, display, screen) as app:
        root = app.root
        assert root.winfo_width() <= screen[0]
        assert root.winfo_rooty() + root.winfo_height() <= screen[1] - TASKBAR - TITLE_BAR + 32
        app.open_workbook(demo_league / "league.xlsx")
        settle(app, 300)
        assert app.session.updated and app.updated.changes  # the last update, shown
        size = f"{screen[0]}x{screen[1]}"
        problems = []
        for tab, name in ((app.problems, "problems"), (app.ratings, "ratings"), (app.changes, "what-changed"),
                          (app.watch, "watch"), (app.fixtures, "fixtures")):
            app.notebook.select(tab.frame)
            settle(app)
            problems += [f"{name}: {c}" for c in clipped(root)]
            if tab is app.ratings:  # the divisions table in full: every column and row in sight
                problems += [f"ratings, divisions table: {c}" for c in table_clipped(app.ratings.levels)]
            if tab is app.ratings:  # the chosen player's change: several lines in sight, the rest a scroll away
                canvas = app.ratings.change_canvas
                drawn = canvas.bbox("all")
                region = [float(v) for v in str(canvas.cget("scrollregion")).split()] or [0.0] * 4
                if not drawn or region[3] < drawn[3] or canvas.winfo_height() < 4 * app.ratings.line:
                    problems.append(f"ratings: why it changed drawn to {drawn}, scrolls to {region}, "
                                    f"{canvas.winfo_height()} pixels shown")
            if tab is app.watch and not tabs_fit(app.watch.inner):  # Divisions, Held back, Suggested matches
                problems.append("watch: a table's tab is off the tab row")
            screenshot(root, f"gui-{size}-{name}")
        assert not problems, "\n".join(problems)
        assert tabs_fit(app.notebook)
        # The status line and Cancel are on the screen, above the taskbar.
        bottom = app.cancel_button.winfo_rooty() + app.cancel_button.winfo_height()
        assert bottom <= screen[1] - TASKBAR
        if screen[0] >= 1366:  # the Ratings table needs no sideways scrolling on an ordinary laptop
            tree = app.ratings.table.tree
            assert sum(tree.column(c, "width") for c in tree["columns"]) <= tree.winfo_width() + 2
        assert all(b.cget("text")[3:] in (*views.STEPS, *sum(views.SHORT_STEPS, ())) for b in app.step_buttons)


LONG_FOLDER = "/home/a-secretary/Documents/League secretary demo/Harbourside and District Pool League/2026 spring"


@pytest.mark.parametrize("screen", SCREENS)
def test_long_messages_wrap_and_the_settings_dialog_fits(screen, display, demo_league, tk_errors):
    """The texts a secretary must read in full: a problem's detail, a long status line, every Settings message."""
    with screen_window(tk_errors, display, screen) as app:
        root = app.root
        app.open_workbook(demo_league / "league.xlsx")
        settle(app, 300)
        app.notebook.select(app.problems.frame)
        tree = app.problems.table.tree
        tree.selection_set(tree.get_children()[0])  # the demo's one warning, shown in full under the table
        settle(app)
        assert app.problems.detail.cget("text") and app.problems.fix.cget("text")
        app.say(f"No PDF viewer opened. The notice board is saved as league - notice board.pdf in {LONG_FOLDER}. "
                f"The handicap card is beside it, and the backups are in {LONG_FOLDER}/backups.")
        assert clipped(root) == [] and on_screen(app.status, screen) and on_screen(app.cancel_button, screen)
        dialog = app.open_settings()
        for spec, text in zip(schema.SETTINGS_TABLE, dialog.texts.values()):
            if spec.kind != "choice":  # a wrong value in every box: every message shows at once
                text.set("x" * 120 if spec.kind == "text" else "lots")
        root.update()
        shown = [m.cget("text") for m in dialog.messages.values() if m.cget("text")]
        assert len(shown) == sum(1 for s in schema.SETTINGS_TABLE if s.kind != "choice")
        assert dialog.summary.cget("text").startswith("To fix before saving:")
        assert clipped(dialog.top) == []
        # Nor cut off by the scrolled area that holds the settings (it is sized when the dialog opens).
        view = dialog.canvas.winfo_rootx() + dialog.canvas.winfo_width()
        assert [m.cget("text") for m in dialog.messages.values() if m.winfo_rootx() + m.winfo_width() > view] == []
        assert on_screen(dialog.top, screen) and on_screen(dialog.save_button, screen)
        screenshot(dialog.top, f"gui-{screen[0]}x{screen[1]}-settings-messages")
        dialog.top.destroy()


@pytest.mark.parametrize("screen", SCREENS)
def test_a_fixture_s_long_forecast_note_is_read_in_full_under_the_table(screen, display, demo_league, tk_errors):
    """The Forecast note column cuts a long note short; choosing the fixture shows it whole, wrapped, on the screen."""
    from tkinter import font as tkfont

    with screen_window(tk_errors, display, screen) as app:
        app.open_workbook(demo_league / "league.xlsx")
        settle(app, 300)
        app.notebook.select(app.fixtures.frame)
        tab, tree = app.fixtures, app.fixtures.table.tree
        settle(app)
        assert tab.detail.cget("text") == views.FIXTURE_CHOOSE
        longest = max(tree.get_children(), key=lambda i: len(tree.set(i, "note")))
        note = tree.set(longest, "note")
        cell = int(tree.column("note", "width"))
        assert tkfont.nametofont("TkDefaultFont").measure(note) > cell  # the demo's long note is cut in its cell
        tree.selection_set(longest)
        settle(app)
        text = tab.detail.cget("text")
        assert f"Forecast note: {note}." in text and tree.set(longest, "a") in text
        assert clipped(app.root) == [] and on_screen(tab.detail, screen)
        bottom = tab.detail.winfo_rooty() + tab.detail.winfo_height()
        assert bottom <= tab.frame.winfo_rooty() + tab.frame.winfo_height()  # not hidden under the tab's edge
        screenshot(app.root, f"gui-{screen[0]}x{screen[1]}-fixture-note")


def test_no_fixture_s_chance_reads_as_certain_when_it_is_not(display, demo_league, tk_errors):
    """The demo's Yvette Marwood has a 0.09% chance: a cell reading "0%" would say she cannot win."""
    import openpyxl

    wb = openpyxl.load_workbook(demo_league / "league.xlsx", read_only=True)
    try:
        sheet = [r for r in wb["Fixtures"].iter_rows(min_row=2, values_only=True) if r[1]]
    finally:
        wb.close()
    with screen_window(tk_errors, display, SCREENS[0]) as app:
        app.open_workbook(demo_league / "league.xlsx")
        settle(app, 300)
        shown = {(r[1], r[2]): r[4] for r in app.fixtures.table.shown_values()}
    expected = {(a, b): "<1%" if p < 0.005 else ">99%" if p >= 0.995 else f"{100 * p:.0f}%"
                for _, a, b, _, _, p, *_ in sheet}
    assert shown == expected and "<1%" in shown.values()
    assert not {"0%", "100%"} & set(shown.values())
