"""The window's Fixtures tab (real Tk under Xvfb) on a workbook written by openpyxl and updated by the real
command line: a player with no results and no division gets the same chance, fair race and note as the
Fixtures sheet (the mixture over the divisions, tests/test_newcomers_cli.py)."""
from __future__ import annotations

import subprocess
import sys

from tests.gui.conftest import main_window
from tests.gui.helpers import screenshot, settle, sheet_rows
from tests.test_newcomers_cli import league_book


def test_the_fixtures_tab_tells_the_secretary_to_add_the_division(display, tmp_path, tk_errors):
    path = league_book(tmp_path / "league.xlsx")
    done = subprocess.run([sys.executable, "-m", "secretary.cli", "update", str(path)], capture_output=True,
                          text=True)
    assert done.returncode == 0, done.stderr
    sheet = [r for r in sheet_rows(path, "Fixtures", "Player A") if r.get("Player A")]
    with main_window(tk_errors, f"{display}.0") as app:
        app.open_workbook(path)
        settle(app, 300)
        app.notebook.select(app.fixtures.frame)
        settle(app)
        shown = app.fixtures.table.shown_values()
        screenshot(app.root, "fixtures-newcomers")
    assert len(shown) == len(sheet) == 4
    for cells, row in zip(shown, sheet):
        assert cells[4] == f"{100 * row['Chance A']:.0f}%"
        assert cells[5] == f"{row['Fair race A']}-{row['Fair race B']}"
        assert cells[7] == row["Forecast note"]
    assert "Pia Wren has no results and no division on the Players sheet" in shown[0][7]
    assert shown[0][7].endswith("add their division there for a better one")
