"""The first-run welcome and Help's "Where are my files?", in the real window under Xvfb."""
from __future__ import annotations

import os
import subprocess
import sys

from secretary.gui import welcome
from secretary.userdirs import log_file
from tests.gui.helpers import REPO, screenshot, settle
from tests.gui.windows import stop, wait_for_window


def test_the_welcome_offers_the_demo_and_says_where_the_files_live(app, user_home):
    assert welcome.first_run()
    offered = welcome.offer(app)
    app.root.update()
    assert offered.window.winfo_viewable() and offered.window.title() == welcome.TITLE
    texts = [w.cget("text") for w in offered.window.winfo_children()[0].winfo_children() if w.winfo_class() == "TLabel"]
    place = texts[-1]
    assert "backups" in place and str(user_home / "League secretary demo") in place and str(log_file()) in place
    assert [b.cget("text") for b in offered.buttons.values()] == [
        "Try the demo league", "New league workbook\u2026", "Open my workbook\u2026", "Close"]
    screenshot(offered.window, "welcome")
    offered.buttons["demo"].invoke()
    settle(app, 300)
    assert not offered.window.winfo_exists()
    assert app.path == user_home / "League secretary demo" / "league.xlsx" and app.session.checked
    assert not welcome.first_run() and welcome.offer(app) is None  # once a workbook was opened, no more welcome


def test_new_league_workbook_from_the_welcome(app, tmp_path):
    target = tmp_path / "Autumn league.xlsx"
    app.dialogs.answers["ask_new_workbook"] = target
    welcome.Welcome(app).buttons["new"].invoke()
    settle(app)
    assert app.path == target and target.exists() and app.session.checked


def test_help_says_where_the_workbook_backups_and_log_are(app):
    helps = app.root.nametowidget(app.root.nametowidget(app.root["menu"]).entrycget("Help", "menu"))
    labels = [helps.entrycget(i, "label") for i in range(helps.index("end") + 1) if helps.type(i) == "command"]
    entry = labels.index("Where are my files? (workbook, backups, log file)")
    helps.invoke(entry)
    title, text = app.dialogs.named("info")[-1][1:]
    assert title == "Where your files are" and text == welcome.where_text() and str(log_file()) in text


def test_a_first_start_without_a_workbook_shows_the_welcome(display, user_home):
    env = dict(os.environ, DISPLAY=display, SECRETARY_HOME=str(user_home), PYTHONPATH=str(REPO))
    proc = subprocess.Popen([sys.executable, "-m", "secretary.launch"], cwd=REPO, env=env)
    try:
        titles = wait_for_window(display, welcome.TITLE, proc)
        assert "League secretary" in titles
    finally:
        stop(proc)


def test_a_workbook_handed_over_by_the_file_manager_opens_in_the_window(display, demo_copy, user_home):
    env = dict(os.environ, DISPLAY=display, SECRETARY_HOME=str(user_home), PYTHONPATH=str(REPO))
    proc = subprocess.Popen([sys.executable, "-m", "secretary.launch", str(demo_copy)], cwd=REPO, env=env)
    try:
        titles = wait_for_window(display, f"{demo_copy.name} - League secretary", proc)
        assert welcome.TITLE not in titles
    finally:
        stop(proc)
