"""The command line end to end on real workbook files: exit codes, messages, files left intact."""
from __future__ import annotations

import hashlib
import shutil
import os
import subprocess
import sys
from pathlib import Path

import openpyxl
import pytest

from secretary.cli import main
from tests.workbook.bad_corpus import BAD_WORKBOOKS

DATA = Path(__file__).resolve().parents[1] / "secretary" / "data"


def digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest() if path.is_file() else "folder"


def folder_state(folder: Path) -> dict[str, str]:
    return {str(p.relative_to(folder)): digest(p) for p in sorted(folder.rglob("*"))}


@pytest.fixture
def demo_copy(tmp_path) -> Path:
    path = tmp_path / "league.xlsx"
    shutil.copyfile(DATA / "demo-league.xlsx", path)
    return path


def ratings_sheet(path: Path) -> dict[str, float]:
    wb = openpyxl.load_workbook(path, read_only=True)
    rows = list(wb["Ratings"].iter_rows(values_only=True))
    header = rows[0]
    name, rating = header.index("Player"), header.index("Rating")
    return {r[name]: r[rating] for r in rows[1:] if r[name]}


STOPPERS = [c for c in BAD_WORKBOOKS if c.severity != "warning"]
WARNINGS = [c for c in BAD_WORKBOOKS if c.severity == "warning"]


@pytest.mark.parametrize("case", STOPPERS, ids=[c.case_id for c in STOPPERS])
def test_bad_workbook_exits_1_names_the_cell_and_leaves_the_file_alone(case, tmp_path, capsys):
    path = case.build(tmp_path / "league.xlsx")
    before = folder_state(tmp_path)
    code = main(["update", str(path)])
    out = capsys.readouterr()
    text = out.out + out.err
    assert code == 1, text
    assert "Traceback" not in text
    if case.where is not None:
        sheet, row, column = case.where
        assert sheet in text
        if row is not None:
            assert f"row {row}" in text
        if column is not None:
            assert column in text
    assert folder_state(tmp_path) == before  # byte for byte, and no backup or temp file left


@pytest.mark.parametrize("case", WARNINGS, ids=[c.case_id for c in WARNINGS])
def test_a_warning_does_not_stop_the_update_and_is_reported(case, tmp_path, capsys):
    path = case.build(tmp_path / "league.xlsx")
    assert main(["update", str(path)]) == 0
    out = capsys.readouterr().out
    sheet, row, column = case.where
    assert "warning" in out and f"{sheet}, row {row}" in out
    assert "Problems" in openpyxl.load_workbook(path, read_only=True).sheetnames


def test_update_writes_outputs_and_a_second_update_without_new_results_changes_no_rating(demo_copy, capsys):
    assert main(["update", str(demo_copy)]) == 0
    first = ratings_sheet(demo_copy)
    out = capsys.readouterr().out
    assert "First ratings" in out and "Ratings written to" in out
    assert (demo_copy.parent / "backups").is_dir()
    assert main(["update", str(demo_copy)]) == 0
    second = ratings_sheet(demo_copy)
    assert first.keys() == second.keys()
    assert all(abs(first[n] - second[n]) < 1e-9 for n in first)
    assert "Nothing new since the last update" in capsys.readouterr().out  # and so nothing written


def test_dry_run_writes_nothing(demo_copy, capsys):
    before = folder_state(demo_copy.parent)
    assert main(["update", str(demo_copy), "--dry-run"]) == 0
    assert "Dry run" in capsys.readouterr().out
    assert folder_state(demo_copy.parent) == before


def test_out_writes_a_separate_file(demo_copy, tmp_path):
    before = digest(demo_copy)
    target = tmp_path / "copy.xlsx"
    assert main(["update", str(demo_copy), "--out", str(target)]) == 0
    assert digest(demo_copy) == before
    assert "Ratings" in openpyxl.load_workbook(target, read_only=True).sheetnames


def test_check_lists_problems_without_writing(demo_copy, capsys):
    before = digest(demo_copy)
    assert main(["check", str(demo_copy)]) == 0  # the demo has warnings only
    assert "warning" in capsys.readouterr().out
    assert digest(demo_copy) == before


def test_new_makes_a_blank_workbook_and_refuses_to_overwrite(tmp_path, capsys):
    path = tmp_path / "blank.xlsx"
    assert main(["new", str(path)]) == 0
    assert "Results" in openpyxl.load_workbook(path).sheetnames
    before = digest(path)
    assert main(["new", str(path)]) == 1
    assert digest(path) == before


def test_restore_brings_back_the_previous_version(demo_copy):
    original = digest(demo_copy)
    assert main(["update", str(demo_copy)]) == 0
    assert digest(demo_copy) != original
    assert main(["restore", str(demo_copy)]) == 0
    assert digest(demo_copy) == original


def test_usage_errors_exit_2(capsys):
    assert main(["update"]) == 2
    assert main(["no-such-command"]) == 2


def test_help_names_every_command_and_the_exit_codes(capsys):
    assert main(["--help"]) == 0
    text = capsys.readouterr().out
    for word in ("update", "check", "new", "restore", "demo", "exit codes"):
        assert word in text


def test_demo_runs_two_updates_and_explains_the_new_week(tmp_path):
    folder = tmp_path / "demo"
    done = subprocess.run([sys.executable, "-m", "secretary.cli", "demo", str(folder)],
                          capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stdout + done.stderr
    new_rows = len((DATA / "demo-new-week.csv").read_text(encoding="utf-8").strip().splitlines()) - 1
    assert f"Since the last update: {new_rows} new" in done.stdout
    assert "Biggest changes" in done.stdout
    assert (folder / "league.xlsx").is_file()
    assert (folder / "league - notice board.pdf").is_file()
    wb = openpyxl.load_workbook(folder / "league.xlsx", read_only=True)
    for sheet in ("Ratings", "Why it changed", "Watch list", "Rating history", "Notice board", "Update log"):
        assert sheet in wb.sheetnames


def test_an_unexpected_error_is_logged_not_shown(monkeypatch, tmp_path, capsys):
    monkeypatch.setenv("SECRETARY_HOME", str(tmp_path / "home"))
    import secretary.pipeline as pipeline

    def boom(*args, **kwargs):
        raise RuntimeError("injected")

    monkeypatch.setattr(pipeline, "run_update", boom)
    assert main(["update", "whatever.xlsx"]) == 3
    err = capsys.readouterr().err
    assert "Something went wrong" in err and "Traceback" not in err
    log = tmp_path / "home" / "secretary.log"
    assert "RuntimeError: injected" in log.read_text()


def test_fixtures_marks_the_fixtures_dated_before_the_latest_results(demo_copy):
    """`secretary fixtures` on the real command line: a fixture dated before the newest result is past,
    with the same words as the handicap card, the Fixtures sheet and the window."""
    import datetime as dt

    from secretary.model.notice import PAST_NOTE

    wb = openpyxl.load_workbook(demo_copy)
    results = list(wb["Results"].iter_rows(min_row=2, values_only=True))
    latest = max(r[0] for r in results if isinstance(r[0], dt.datetime))
    fixtures = wb["Fixtures"]
    moved = []
    for row in (2, 3):  # two fixtures moved to the week before the newest result
        fixtures.cell(row, 1).value = latest - dt.timedelta(days=7)
        moved.append(f"{fixtures.cell(row, 2).value} v {fixtures.cell(row, 3).value}:")
    coming = sum(1 for r in fixtures.iter_rows(min_row=4, values_only=True) if r[1])
    wb.save(demo_copy)
    command = [sys.executable, "-m", "secretary.cli"]
    assert subprocess.run(command + ["update", str(demo_copy)], capture_output=True).returncode == 0
    done = subprocess.run(command + ["fixtures", str(demo_copy)], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    lines = [ln.strip() for ln in done.stdout.splitlines() if " v " in ln and "fair race" in ln]
    assert len(lines) == coming + 2
    past = [ln for ln in lines if f"({PAST_NOTE}" in ln]
    assert sorted(ln.split(":")[0] + ":" for ln in past) == sorted(moved)
    assert f"marked past below: 2 of the {coming + 2} fixtures" in done.stdout
    assert f"{latest.day} {latest:%B %Y}" in done.stdout


def test_fixtures_are_listed_by_date_then_in_sheet_order(demo_copy):
    """`secretary fixtures` on the real command line lists the fixtures by date, the same date in sheet order,
    whatever order the secretary wrote them in (the order is worked out here from the sheet itself)."""
    import datetime as dt

    wb = openpyxl.load_workbook(demo_copy)
    fixtures = wb["Fixtures"]
    first = min(r[0] for r in fixtures.iter_rows(min_row=2, values_only=True) if isinstance(r[0], dt.datetime))
    for row, weeks in ((2, 3), (3, 1), (4, 2), (5, 1), (6, 0)):  # out of order, with a tie (rows 3 and 5)
        fixtures.cell(row, 1).value = first + dt.timedelta(weeks=weeks)
    rows = [(r[0], k, f"{r[1]} v {r[2]}:") for k, r in enumerate(fixtures.iter_rows(min_row=2, values_only=True))
            if r[1]]
    wb.save(demo_copy)
    wanted = [label for _, _, label in sorted(rows)]
    assert wanted != [label for _, _, label in rows]  # the sheet is not in date order
    command = [sys.executable, "-m", "secretary.cli"]
    assert subprocess.run(command + ["update", str(demo_copy)], capture_output=True).returncode == 0
    done = subprocess.run(command + ["fixtures", str(demo_copy)], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    listed = [ln.strip() for ln in done.stdout.splitlines() if " v " in ln and "fair race" in ln]
    assert [ln[:len(w)] for ln, w in zip(listed, wanted)] == wanted and len(listed) == len(wanted)


def test_output_closed_early_ends_quietly_not_as_a_bug(demo_copy):
    """`secretary fixtures ... | head -0`: the reader closes the pipe before reading. The command ends as
    Unix tools do (128 + SIGPIPE, nothing on stderr), never with "Something went wrong inside secretary"
    or Python's "Exception ignored ... BrokenPipeError" at exit."""
    command = [sys.executable, "-m", "secretary.cli"]
    assert subprocess.run(command + ["update", str(demo_copy)], capture_output=True).returncode == 0
    read, write = os.pipe()
    child = subprocess.Popen(command + ["fixtures", str(demo_copy)], stdout=write, stderr=subprocess.PIPE)
    os.close(write)
    os.close(read)  # the reader goes away at once
    stderr = child.communicate(timeout=300)[1].decode()
    assert child.returncode == 141, (child.returncode, stderr)
    assert "Something went wrong" not in stderr and "Traceback" not in stderr, stderr
