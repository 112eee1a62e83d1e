"""The whole weekly routine on a 1024x600 netbook (real Tk under Xvfb), driven through the window's own
buttons, tabs and menu: open the workbook, check, update, What changed, Watch list, Fixtures, print the
notice board and the handicap card. At every step the window is on the screen and no label, button, tab
or divisions-table column is cut short (``helpers.clipped``, ``tabs_fit``, ``table_clipped``)."""
from __future__ import annotations

import shutil
import subprocess

import pytest

from secretary.gui import views
from tests.gui.conftest import LAPTOP_SCREENS, main_window
from tests.gui.helpers import (DEMO, TASKBAR, clipped, on_screen, screenshot, settle,
                               table_clipped, tabs_fit)

NETBOOK = (1024, 600)
SCREEN = LAPTOP_SCREENS.index(NETBOOK) + 1  # its screen number on the session's display


@pytest.fixture
def week_to_rate(tmp_path):
    """The demo league as a secretary finds it on a club night: rated once, the new week's results added."""
    from secretary.pipeline import DATA, append_results_csv, run_update

    path = tmp_path / "league" / "league.xlsx"
    path.parent.mkdir()
    shutil.copyfile(DEMO, path)
    run_update(path)
    append_results_csv(path, DATA / "demo-new-week.csv")
    return path


@pytest.fixture
def netbook(display, tk_errors):
    with main_window(tk_errors, f"{display}.{SCREEN}") as app:
        yield app


def menu_item(app, menu: str, label: str) -> None:
    """Choose ``menu`` ▸ ``label`` from the window's menu bar."""
    bar = app.root.nametowidget(app.root.cget("menu"))
    cascade = bar.nametowidget(bar.entrycget(menu, "menu"))
    cascade.invoke(cascade.index(label))


def pdf_pages(path) -> int:
    info = subprocess.run(["pdfinfo", str(path)], capture_output=True, text=True, check=True).stdout
    return int(next(line.split()[-1] for line in info.splitlines() if line.startswith("Pages:")))


def test_the_whole_routine_on_a_netbook_without_a_clipped_word(netbook, week_to_rate):
    from secretary.pipeline import handicap_pdf_path, notice_pdf_path

    app, seen = netbook, {}

    def look(step: str, *tables) -> None:
        """The window at this step: on the screen, nothing cut short; a screenshot kept."""
        settle(app, 300)
        problems = [f"{step}: {c}" for c in clipped(app.root)]
        problems += [f"{step}, {name}: {c}" for name, t in tables for c in table_clipped(t)]
        if not tabs_fit(app.notebook):
            problems.append(f"{step}: a tab is off the tab row")
        if not (on_screen(app.status, NETBOOK) and on_screen(app.cancel_button, NETBOOK)):
            problems.append(f"{step}: the status line or Cancel is off the screen")
        seen[step] = screenshot(app.root, f"routine-1024x600-{step}")
        assert app.root.winfo_width() <= NETBOOK[0] and not problems, "\n".join(problems)

    app.dialogs.answers["ask_open_workbook"] = week_to_rate
    app.open_button.invoke()  # File ▸ Open…: opening checks the workbook at once
    look("open")
    assert app.path == week_to_rate and app.session.checked
    app.step_buttons[0].invoke()  # 1 Check the results, again by hand
    look("check")
    assert app.problems.summary.cget("text") == views.problems_summary(app.checked.problems)
    assert views.steps_enabled(app.session)[1]
    app.step_buttons[1].invoke()  # 2 Update the ratings
    settle(app, 300)
    assert app.session.updated, app.status.cget("text")
    assert app.notebook.select() == str(app.ratings.frame)  # the update shows the Ratings view...
    assert len(app.ratings.levels.shown_values()) == len(app.updated.levels) == 4  # ...with its divisions table
    look("ratings", ("divisions table", app.ratings.levels))
    app.step_buttons[2].invoke()  # 3 What changed
    assert app.notebook.select() == str(app.changes.frame)
    assert app.updated.changes and app.changes.shown  # the new week moved someone
    look("what-changed")
    app.notebook.select(app.watch.frame)
    for table in app.watch.tables:  # Divisions, Held back, Suggested linking matches
        app.watch.inner.select(table.frame)
        look(f"watch-{app.watch.inner.index(table.frame)}")
        assert tabs_fit(app.watch.inner)
    app.notebook.select(app.fixtures.frame)
    look("fixtures")
    assert len(app.fixtures.table.shown_values()) == len(app.updated.forecasts) > 0
    app.dialogs.answers.update(open_externally=False, ask_yes_no=False)  # a netbook without a PDF viewer
    app.step_buttons[3].invoke()  # 4 Print the notice board
    look("print-notice")
    assert "No PDF viewer" in app.status.cget("text") and notice_pdf_path(week_to_rate).name in app.status.cget("text")
    menu_item(app, "League", "Print the handicap card")
    look("print-card")
    assert handicap_pdf_path(week_to_rate).name in app.status.cget("text")
    printed = [c[1] for c in app.dialogs.named("open_externally")]
    assert printed == [notice_pdf_path(week_to_rate), handicap_pdf_path(week_to_rate)]
    assert all(pdf_pages(p) >= 1 for p in printed)
    assert app.session.printed and views.step_states(app.session)[3] == views.DONE
    assert on_screen(app.root, (NETBOOK[0], NETBOOK[1] + TASKBAR))  # the whole window, title bar aside
