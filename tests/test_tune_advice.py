"""After a season of results the update suggests tuning once, only when it would pay off; the check is remembered."""
import shutil
from pathlib import Path

from secretary.cli import main
from secretary.pipeline import run_update, save_settings
from secretary.workbook.read import read_workbook

DATA = Path(__file__).resolve().parents[1] / "secretary" / "data"


def test_poor_settings_get_one_suggestion_and_the_check_is_not_run_again(tmp_path, capsys):
    path = tmp_path / "league.xlsx"
    shutil.copyfile(DATA / "demo-league.xlsx", path)
    save_settings(path, {"skill_spread": 40})  # far too tight for the demo (its games say about 150)
    assert main(["update", str(path)]) == 0
    out = capsys.readouterr().out
    check = read_workbook(path).state.tune_check
    assert check is not None and check.gain > 0.002 and check.settings.skill_spread == 40
    assert "Note: A season of results has come in" in out and 'secretary tune "league.xlsx" --apply' in out
    # The next update (no new season) does not check again, and still says so while the settings stand.
    again = run_update(path)
    assert read_workbook(path).state.tune_check == check
    assert any("tuning would make the predictions better" in n for n in again.notes)
    # Once the settings are changed the suggestion is gone (until a season after the check).
    save_settings(path, {"skill_spread": check.skill_spread, "half_life_days": check.half_life_days})
    assert not any("tuning" in n for n in run_update(path).notes)


def test_the_shipped_defaults_on_the_demo_get_no_suggestion(tmp_path):
    path = tmp_path / "league.xlsx"
    shutil.copyfile(DATA / "demo-league.xlsx", path)
    outcome = run_update(path)
    check = read_workbook(path).state.tune_check
    assert check is not None and check.gain < 0.002  # checked (two seasons of results), nothing to gain
    assert not any("tuning" in n for n in outcome.notes)
