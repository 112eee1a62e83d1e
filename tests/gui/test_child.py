"""The background process that runs the window's long jobs: real process, real workbooks, no display."""
from __future__ import annotations

import time

import pytest

from secretary.gui.jobs import Checked, Updated
from secretary.gui.worker import Worker
from tests.gui.helpers import finished
from tests.workbook.league_books import good_results, write_book


@pytest.fixture
def worker():
    w = Worker()
    yield w
    w.cancel.set()
    w.join(120)
    w.child.close()


def test_check_and_update_come_back_as_small_records(worker, demo_copy):
    worker.start("check", worker.child.call("check", demo_copy))
    checked = finished(worker, 120)[-1].value
    assert isinstance(checked, Checked)
    assert checked.result_rows > 1000 and not checked.errors
    pid = worker.child.proc.pid
    worker.start("update", worker.child.call("update", demo_copy))
    messages = finished(worker, 120)
    updated = messages[-1].value
    assert isinstance(updated, Updated), messages[-1]
    assert worker.child.proc.pid == pid  # one process serves every job
    assert len(updated.ratings) == 63 and updated.first_update and updated.written == demo_copy
    assert set(updated.history) == {p.name for p in updated.ratings}
    assert updated.notice_pdf.exists()


def test_problems_and_refusals_arrive_in_plain_words(worker, tmp_path):
    rows = good_results()
    rows[1][4] = "five"
    bad = write_book(tmp_path / "bad.xlsx", rows)
    worker.start("update", worker.child.call("update", bad))
    failure = finished(worker, 120)[-1].value
    assert failure.kind == "problems"
    assert [(p.sheet, p.row, p.column) for p in failure.problems if p.is_error] == [("Results", 3, "Games A")]
    worker.start("check", worker.child.call("check", tmp_path / "missing.xlsx"))
    failure = finished(worker, 120)[-1].value
    assert failure.kind == "refused" and "missing.xlsx" in failure.message


def test_cancel_reaches_the_process_and_nothing_is_written(worker, demo_copy):
    before = demo_copy.read_bytes()
    worker.listener = lambda stage, fraction: worker.cancel.set()
    worker.start("update", worker.child.call("update", demo_copy))
    failure = finished(worker, 120)[-1].value
    assert (failure.kind, failure.message) == ("cancelled", "The update was cancelled; the workbook was not changed.")
    assert demo_copy.read_bytes() == before


def test_a_process_that_dies_is_reported_and_replaced(worker, demo_copy, user_home):
    proc = worker.child.ensure()
    worker.start("update", worker.child.call("update", demo_copy))
    worker.listener = None
    time.sleep(0.3)
    proc.kill()  # our own child process, by its handle
    failure = finished(worker, 120)[-1].value
    assert failure.kind == "bug" and str(user_home / "secretary.log") in failure.message
    worker.start("check", worker.child.call("check", demo_copy))
    assert isinstance(finished(worker, 120)[-1].value, Checked)
    assert worker.child.proc.pid != proc.pid


def test_closing_during_a_job_stops_it_without_a_bug_report(worker, demo_copy, user_home):
    worker.start("update", worker.child.call("update", demo_copy))
    time.sleep(0.3)
    worker.cancel.set()
    worker.child.close(timeout=0.1)  # as the window does when it closes mid-update
    failure = finished(worker, 120)[-1].value
    assert failure.kind == "cancelled"
    assert not (user_home / "secretary.log").exists()


def test_the_background_process_and_the_command_line_never_load_tkinter():
    import subprocess
    import sys

    code = "import sys, secretary.gui.child, secretary.cli; print('tkinter' in sys.modules)"
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert done.stdout.strip() == "False", done.stderr
