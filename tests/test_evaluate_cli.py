"""`secretary evaluate` and `secretary tune` on a tiered league: cross-division scores, Division spread tuned."""
from secretary.cli import main
from secretary.model.evaluate import evaluate
from secretary.pipeline import evaluate_workbook, save_settings
from secretary.workbook.read import read_workbook
from tests.model.test_evaluate_levels import tiered_league
from tests.realdata import write_results_workbook


def test_evaluate_prints_the_cross_division_scores_of_the_walk(tmp_path, capsys):
    results = tiered_league(seed=7, weeks=12)
    path = write_results_workbook(results, tmp_path / "tiers.xlsx")
    assert main(["evaluate", str(path)]) == 0
    out = capsys.readouterr().out
    book = read_workbook(path)
    ev = evaluate(book.results, book.settings)  # the walk of the workbook's own rows, computed here
    assert evaluate_workbook(path).predictive_cross.log_loss == ev.predictive_cross.log_loss
    assert f"Cross-division games (the two players' home divisions differ): {ev.cross.count:,.0f} of the games." in out
    assert f"{ev.predictive_cross.log_loss:>9.4f} {ev.predictive_cross.brier:>7.4f}" in out
    assert f"{ev.cross.log_loss:>9.4f} {ev.cross.brier:>7.4f}" in out
    assert 0 < ev.cross.count < ev.games


def test_tune_chooses_and_writes_the_division_spread(tmp_path, capsys):
    results = tiered_league(seed=8, per_division=12, weeks=14)
    path = write_results_workbook(results, tmp_path / "tiers.xlsx")
    save_settings(path, {"division_spread": 0})  # one pool to start from
    assert read_workbook(path).settings.division_spread == 0
    assert main(["tune", str(path), "--apply"]) == 0
    out = capsys.readouterr().out
    settings = read_workbook(path).settings
    assert "division spread" in out and "Written to the Settings sheet" in out
    assert f"division spread {settings.division_spread:g} points" in out.splitlines()[1]
    # Planted levels +-1.2 log-odds (about 210 points): one pool is the wrong model and is left.
    assert settings.division_spread > 0
