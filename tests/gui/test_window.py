"""The real window under Xvfb, driven by direct handler calls, invoke() and virtual events."""
from __future__ import annotations

import os
import re
import subprocess
import sys
import time
import tkinter as tk
from tkinter import ttk

import openpyxl

from secretary.gui import views
from secretary.gui.tooltips import tip_of
from secretary.pipeline import notice_pdf_path
from tests.gui.helpers import REPO, screenshot, settle, wait_until
from tests.workbook.league_books import good_results, write_book


def opened(app, path):
    app.open_workbook(path)
    settle(app)
    return app


def updated(app):
    app.step_buttons[1].invoke()
    settle(app, 300)
    assert app.session.updated, app.status.cget("text")
    return app


def sheet_rows(path, sheet):
    wb = openpyxl.load_workbook(path, read_only=True, data_only=True)
    try:
        return [r for r in wb[sheet].iter_rows(min_row=2, values_only=True) if any(v is not None for v in r)]
    finally:
        wb.close()


def test_demo_league_update_fills_every_tab(app, demo_copy):
    opened(app, demo_copy)
    assert views.step_states(app.session)[0] == views.DONE
    assert app.step_buttons[1].cget("style") == "Next.TButton"  # the update is the obvious next action
    screenshot(app.root, "gui-problems")
    updated(app)

    # Ratings table == Ratings sheet written by the same update (rank, player, shown rating).
    # The players (a rank in column A); the divisions table under them has none.
    sheet = [(r[0], r[1], round(r[3])) for r in sheet_rows(demo_copy, "Ratings") if isinstance(r[0], int)]
    tree = [(int(v[0]), v[1], int(v[2])) for v in app.ratings.table.shown_values()]
    assert tree == sheet and len(tree) == 63
    # The divisions table == the one under the players on the sheet (division, level, ±).
    levels = [(r[2], round(r[3]), round(r[4])) for r in sheet_rows(demo_copy, "Ratings")
              if r[0] is None and isinstance(r[3], float)]
    assert [(v[0], int(v[1]), int(v[2])) for v in app.ratings.levels.shown_values()] == levels
    assert len(levels) == 4 and app.ratings.levels_frame.winfo_ismapped()
    # Fixtures and watch-list divisions: one table row per sheet row.
    assert len(app.fixtures.table.shown_values()) == len(sheet_rows(demo_copy, "Fixtures"))
    assert {v[0] for v in app.watch.tables[0].shown_values()} == set(app.updated.divisions)
    assert views.step_states(app.session)[:2] == (views.DONE, views.DONE)
    assert app.step_buttons[2].cget("style") == "Next.TButton"
    screenshot(app.root, "gui-ratings")

    # Sorting by a header click: numeric order, lowest rating first.
    app.ratings.table.tree.heading("rating", "command")  # the header is clickable
    app.ratings.table.sort_by(2)
    settle(app)
    ratings = [int(v[2]) for v in app.ratings.table.shown_values()]
    assert ratings == sorted(ratings)
    # Search narrows the table; the chosen player gets a history chart.
    first = app.updated.ratings[0].name
    app.ratings.search.set(first.split()[-1])
    settle(app)
    assert first in [v[1] for v in app.ratings.table.shown_values()]
    assert len(app.ratings.table.shown_values()) < 63
    app.ratings.table.tree.selection_set(first)
    app.root.update()
    assert app.ratings.player == first and app.ratings.history_canvas.find_all()

    app.step_buttons[2].invoke()
    app.root.update()
    assert app.notebook.select() == str(app.changes.frame)
    wait_until(app.root, lambda: app.changes.shown, 10, app.errors)
    assert app.session.reviewed
    screenshot(app.root, "gui-what-changed")
    app.notebook.select(app.watch.frame)
    screenshot(app.root, "gui-watch-list")
    app.notebook.select(app.fixtures.frame)
    screenshot(app.root, "gui-fixtures")

    app.step_buttons[3].invoke()
    assert app.dialogs.named("open_externally") == [("open_externally", notice_pdf_path(demo_copy))]
    assert notice_pdf_path(demo_copy).exists()
    assert views.step_states(app.session) == (views.DONE,) * 4


def test_what_changed_after_the_new_week(app, demo_copy):
    from secretary.pipeline import DATA, append_results_csv

    updated(opened(app, demo_copy))
    app.review()
    settle(app)
    assert "first ratings" in app.changes.summary.cget("text")
    append_results_csv(demo_copy, DATA / "demo-new-week.csv")
    app.step_buttons[0].invoke()
    settle(app)
    updated(app)
    app.review()
    wait_until(app.root, lambda: app.changes.shown, 10, app.errors)
    movers = app.changes.shown
    assert [abs(c.shown[2]) for c in movers if not c.is_new] == \
        sorted((abs(c.shown[2]) for c in movers if not c.is_new), reverse=True)
    assert app.changes.canvas.find_all()
    app.changes.only_idle.set(True)
    app.changes.redraw()
    assert app.changes.shown and all(not c.played for c in app.changes.shown)
    app.changes.only_idle.set(False)
    app.changes.redraw()
    screenshot(app.root, "gui-what-changed-new-week")
    # Every card is drawn to the league's one scale; the window's sentences name the player.
    assert app.changes.scale == max(abs(v) for c in app.updated.changes if not c.is_new for v in c.shown[3:7])
    texts = [app.changes.canvas.itemcget(i, "text") for i in app.changes.canvas.find_all()
             if app.changes.canvas.type(i) == "text"]
    assert not [t for t in texts if re.search(r"\b([Yy]ou|[Yy]our)\b", t)]
    # The bars are in the printed board's part colours, under one axis of points.
    from secretary.model.notice import PART_COLOURS

    canvas = app.changes.canvas
    fills = {canvas.itemcget(i, "fill").casefold() for i in canvas.find_all() if canvas.type(i) == "rectangle"}
    assert fills == {c.casefold() for c in PART_COLOURS}
    assert texts.count("Points") == 1  # the one axis at the top, shared by every card
    # A new filter starts at the top, so the biggest mover it keeps is in sight.
    app.changes.canvas.yview_moveto(0.6)
    app.changes.only_idle.set(True)
    wait_until(app.root, lambda: app.changes._pending is None, 10, app.errors)
    assert app.changes.canvas.yview()[0] == 0.0
    # Ratings: a division filter that hides the player shown moves the panel to a player it shows.
    shown = app.ratings.player
    other = next(p.division for p in app.updated.ratings if p.division != app.ratings.ratings[shown].division)
    app.ratings.division.set(other)
    settle(app)
    assert app.ratings.ratings[app.ratings.player].division == other


def test_status_and_steps_tell_the_truth_while_checking_and_after_a_missing_file(app, demo_copy, tmp_path):
    app.open_workbook(demo_copy)
    assert "No problems" not in app.problems.summary.cget("text")  # the check is still running
    assert app.step_labels[0].cget("text").startswith("Checking")
    settle(app)
    assert app.problems.summary.cget("text") == views.problems_summary(app.checked.problems)
    app.open_workbook(tmp_path / "not there.xlsx")
    settle(app)
    assert "No problems" not in app.problems.summary.cget("text")
    assert views.step_states(app.session)[0] != views.DONE and not views.steps_enabled(app.session)[1]


def test_print_menu_offers_the_board_and_the_handicap_card_and_says_where_they_are(app, demo_copy):
    from secretary.pipeline import handicap_pdf_path, notice_pdf_path

    updated(opened(app, demo_copy))
    app.print_card()
    assert app.dialogs.named("open_externally")[-1][1] == handicap_pdf_path(demo_copy)
    app.dialogs.answers.update(open_externally=False, ask_yes_no=True)  # no PDF viewer on this computer
    app.print_notice()
    assert str(demo_copy.parent) in app.status.cget("text") and "No PDF viewer" in app.status.cget("text")
    opened_paths = [c[1] for c in app.dialogs.named("open_externally")]
    assert opened_paths[-2:] == [notice_pdf_path(demo_copy), demo_copy.parent]  # then "open the folder"
    # Fixtures dated before the latest results are marked past.
    latest = app.updated.latest_result
    past = [v for v in app.fixtures.table.shown_values() if views.PAST in v[-1]]
    assert len(past) == sum(1 for f in app.updated.forecasts if f.fixture.date and f.fixture.date < latest)
    marks = [views.PAST in v[-1] for v in app.fixtures.table.shown_values()]
    assert marks == sorted(marks)  # coming fixtures first, any past ones after them (as on the card)


def test_cancel_leaves_the_workbook_byte_for_byte_untouched(app, demo_copy):
    opened(app, demo_copy)
    before = demo_copy.read_bytes()
    app.worker.listener = lambda stage, fraction: app.worker.cancel.set()  # cancel at the first report
    app.update()
    settle(app)
    assert app.status.cget("text") == "The update was cancelled; the workbook was not changed."
    assert not app.session.updated and not app.dialogs.named("error")
    assert demo_copy.read_bytes() == before
    assert sorted(p.name for p in demo_copy.parent.iterdir()) == ["league.xlsx", "user-folder"]


def test_bad_workbook_shows_its_problems(app, tmp_path):
    rows = good_results()
    rows[1][4] = "five"  # Games A, sheet row 3
    path = write_book(tmp_path / "bad.xlsx", rows)
    opened(app, path)
    table = app.problems.table.shown_values()
    assert table[0][:4] == ("Error", "Results", "3", "Games A") and table[0][4] == "five"
    assert app.notebook.select() == str(app.problems.frame)
    assert views.step_states(app.session)[0] == views.ATTENTION
    assert app.step_buttons[1].instate(["disabled"])
    app.problems.table.tree.selection_set(app.problems.table.tree.get_children()[0])
    app.root.update()
    assert app.problems.fix.cget("text").startswith("Fix cell Results!E3: ")
    screenshot(app.root, "gui-problems-bad-workbook")

    write_book(path, good_results())  # the secretary fixes the cell and saves
    app.problems.check_button.invoke()
    settle(app)
    assert app.problems.table.shown_values() == []
    assert views.next_step(app.session) == 1 and app.step_buttons[1].instate(["!disabled"])


def _widgets(widget):
    yield widget
    for child in widget.winfo_children():
        yield from _widgets(child)


def test_every_button_heading_and_setting_has_a_tooltip(app, demo_copy):
    opened(app, demo_copy)
    dialog = app.open_settings()
    app.root.update()
    everything = list(_widgets(app.root))
    buttons = [w for w in everything if isinstance(w, (ttk.Button, tk.Button, ttk.Checkbutton))]
    assert len(buttons) >= 9
    assert [str(b) for b in buttons if not tip_of(b)] == []
    trees = [w for w in everything if isinstance(w, ttk.Treeview)]
    assert len(trees) == 7  # the Ratings tab has the divisions table too
    for tree in trees:
        tips = tip_of(tree)
        assert all(tips.get(c) for c in tree["columns"]), str(tree)
    # The tooltip follows the heading under the pointer.
    tree = app.ratings.table.tree
    app.notebook.select(app.ratings.frame)
    app.root.update()
    x = tree.column("rank", "width") + tree.column("player", "width") + 20  # inside the third heading
    tree.event_generate("<Motion>", x=x, y=5)
    assert tree.secretary_tooltip.msg() == tips_for(tree, "rating")
    assert all(app.root.bind(key) for key in ("<Control-o>", "<Control-u>", "<F5>", "<Control-p>"))
    settings_fields = [w for w in _widgets(dialog.top) if isinstance(w, (ttk.Entry, ttk.Combobox))]
    assert len(settings_fields) == len(dialog.texts) and all(tip_of(w) for w in settings_fields)
    dialog.top.destroy()


def tips_for(tree, column):
    return tip_of(tree)[column]


def test_settings_dialog_checks_values_and_saves_them(app, demo_copy):
    opened(app, demo_copy)
    dialog = app.open_settings()
    app.root.update()
    assert dialog.texts["league_name"].get() == "Harbourside & District Pool League"
    dialog.texts["centre"].set("lots")
    assert dialog.messages["centre"].cget("text") == "Centre must be a number from 0 to 10000"
    assert dialog.save_button.instate(["disabled"])
    dialog.texts["centre"].set("1600")
    dialog.texts["half_life_days"].set("200")
    assert dialog.messages["centre"].cget("text") == ""
    assert dialog.save_button.instate(["!disabled"])
    screenshot(dialog.top, "gui-settings")
    dialog.save_button.invoke()
    settle(app)
    assert app.checked.settings.centre == 1600.0 and app.checked.settings.half_life_days == 200.0
    values = dict((r[0], r[1]) for r in sheet_rows(demo_copy, "Settings"))
    assert values["Centre"] == 1600 and values["Half-life (days)"] == 200
    assert values["League name"] == "Harbourside & District Pool League"


def test_new_league_workbook_from_the_file_menu(app, tmp_path):
    target = tmp_path / "Spring league.xlsx"
    app.dialogs.answers["ask_new_workbook"] = target
    app.new_workbook()
    settle(app)
    assert app.path == target and target.exists() and app.session.checked
    assert "Spring league.xlsx" in app.root.title()


def test_restore_and_demo_from_the_file_menu(app, user_home):
    app.open_demo(False)
    settle(app, 300)
    demo = user_home / "League secretary demo" / "league.xlsx"  # the command line's demo, in a findable folder
    assert app.path == demo and app.session.checked
    assert app.session.updated and app.updated.new_rows > 0 and app.changes.updated.changes  # What changed is filled
    assert str(demo.parent) in app.status.cget("text")  # the window says where it is
    from secretary.pipeline import run_demo

    first, second = run_demo(user_home.parent / "command-line demo")  # `secretary demo`: the same two updates
    assert {p.name: round(p.rating, 6) for p in app.updated.ratings} == \
        {p.name: round(p.rating, 6) for p in second.ratings}
    app.dialogs.answers["ask_yes_no"] = True
    app.dialogs.answers["choose"] = 0  # the newest version that differs from the workbook now
    app.restore_previous()
    settle(app)
    assert not app.session.updated and app.session.checked  # back to before the second update: a week to rate
    assert views.step_states(app.session)[1] != views.DONE
    from secretary.gui.recent import recent

    assert recent()[0] == demo.resolve()


def test_a_refused_file_is_shown_as_a_plain_message(app, tmp_path):
    path = tmp_path / "gone.xlsx"
    write_book(path, good_results())
    opened(app, path)
    path.unlink()  # the file disappears between the check and the update
    app.update()
    settle(app)
    errors = app.dialogs.named("error")
    assert len(errors) == 1 and "gone.xlsx" in errors[0][2] and "log file" not in errors[0][2]
    assert views.step_states(app.session)[1] == views.ATTENTION


def test_secretary_open_starts_the_window_with_the_workbook(display, demo_copy, user_home):
    env = dict(os.environ, DISPLAY=display, SECRETARY_HOME=str(user_home))
    proc = subprocess.Popen([sys.executable, "-m", "secretary.cli", "open", str(demo_copy)], cwd=REPO, env=env,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    try:
        remembered = user_home / "recent-workbooks.json"
        deadline = time.monotonic() + 60
        while not remembered.exists() and proc.poll() is None and time.monotonic() < deadline:
            time.sleep(0.1)
        assert proc.poll() is None, proc.communicate()
        assert str(demo_copy.resolve()) in remembered.read_text(encoding="utf-8")
    finally:
        proc.terminate()
        proc.wait(10)


def test_without_a_display_the_window_says_so(tmp_path):
    env = {k: v for k, v in os.environ.items() if k != "DISPLAY"}
    done = subprocess.run([sys.executable, "-m", "secretary.cli"], cwd=REPO, env=env, capture_output=True,
                          text=True, timeout=60)
    assert done.returncode == 2
    assert "The window cannot open here" in done.stderr and "Traceback" not in done.stderr
