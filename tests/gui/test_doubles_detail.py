"""The Ratings tab's player panel says how many of a player's weighted games were doubles (real Tk under Xvfb,
the demo league, which has doubles frames on team nights): the count is the Ratings sheet's Doubles games
cell, and on a netbook's and a laptop's screen every player's panel fits, with "Why it changed" in sight."""
from __future__ import annotations

import re

from secretary.workbook import write
from tests.gui.conftest import LAPTOP_SCREENS, main_window
from tests.gui.helpers import clipped, settle, sheet_rows

DETAIL = re.compile(r"; (?:new this update; )?(\d+) weighted games \((\d+) doubles\), last played ")


def test_every_players_panel_gives_the_sheets_doubles_games_and_fits(display, demo_league, tk_errors):
    path = demo_league / "league.xlsx"
    sheet = {r["Player"]: r for r in sheet_rows(path, "Ratings", write.DOUBLES_GAMES) if isinstance(r["Rank"], int)}
    partnered = {r[k] for r in sheet_rows(path, "Results", "Partner A") if r.get("Partner A")
                 for k in ("Player A", "Partner A", "Player B", "Partner B")}
    # The sheet's count, against the Results sheet itself: a player is in a doubles row or has no doubles games.
    assert partnered and {n for n, r in sheet.items() if r[write.DOUBLES_GAMES] > 0} == partnered & set(sheet)
    for number, screen in enumerate(LAPTOP_SCREENS, start=1):
        with main_window(tk_errors, f"{display}.{number}") as app:
            app.open_workbook(path)
            settle(app, 300)
            app.notebook.select(app.ratings.frame)
            panel, problems = app.ratings, []
            assert set(panel.ratings) == set(sheet)
            for name, row in sheet.items():
                panel.chosen(name)
                settle(app)
                found = DETAIL.search(panel.detail.cget("text"))
                assert found, panel.detail.cget("text")
                assert (int(found[1]), int(found[2])) == (round(row["Weighted games"]), round(row[write.DOUBLES_GAMES]))
                problems += [f"{screen} {name}: {c}" for c in clipped(app.root)]
                if panel.change_canvas.winfo_height() < 4 * panel.line:
                    problems.append(f"{screen} {name}: why it changed {panel.change_canvas.winfo_height()} px")
            assert not problems, "\n".join(problems)


def test_a_singles_league_says_nothing_of_doubles(display, tmp_path, tk_errors):
    from secretary.cli import main
    from tests.workbook.league_books import write_book

    path = write_book(tmp_path / "league.xlsx")
    assert main(["update", str(path)]) == 0  # the window shows the last update
    with main_window(tk_errors, f"{display}.1") as app:
        app.open_workbook(path)
        settle(app, 300)
        assert app.ratings.ratings
        for name in app.ratings.ratings:
            app.ratings.chosen(name)
            settle(app)
            text = app.ratings.detail.cget("text")
            assert "weighted games, last played" in text and "doubles" not in text, text
