"""An update runs Python's cycle collector less often, and gives the process its own settings back."""
import gc
import shutil
from pathlib import Path

import openpyxl
import pytest

from secretary.errors import WorkbookProblems
from secretary.pipeline import run_update

DEMO = Path(__file__).resolve().parents[1] / "secretary" / "data" / "demo-league.xlsx"


@pytest.fixture
def thresholds():
    before = gc.get_threshold()
    gc.set_threshold(700, 10, 10)  # Python's defaults, whatever the test run set
    yield
    gc.set_threshold(*before)


def test_the_collector_settings_come_back_after_an_update(tmp_path, thresholds):
    seen = []
    book = tmp_path / "league.xlsx"
    shutil.copyfile(DEMO, book)
    outcome = run_update(book, progress=lambda stage, fraction: seen.append(gc.get_threshold()))
    assert outcome.written == book and outcome.ratings
    assert gc.get_threshold() == (700, 10, 10)
    assert seen and all(t[0] >= 50_000 for t in seen)  # raised while it ran


def test_and_after_an_update_that_refuses(tmp_path, thresholds):
    book = tmp_path / "league.xlsx"
    shutil.copyfile(DEMO, book)
    wb = openpyxl.load_workbook(book)
    wb["Results"]["E2"] = "five"  # not a number of games
    wb.save(book)
    with pytest.raises(WorkbookProblems):
        run_update(book)
    assert gc.get_threshold() == (700, 10, 10)
