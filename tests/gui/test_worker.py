"""The worker thread on its own: no display needed."""
from __future__ import annotations

import threading
import time

import pytest

from secretary.errors import Cancelled, FileRefused, WorkbookProblems
from secretary.gui.worker import Worker
from secretary.model.records import Problem
from tests.gui.helpers import finished


def test_progress_is_batched_and_the_result_arrives():
    worker = Worker()
    release = threading.Event()

    def job(progress, cancel):
        for i in range(1000):
            progress("Counting", i / 1000)
        release.wait(5)
        return "answer"

    worker.start("count", job)
    time.sleep(0.2)
    first = worker.poll()
    assert [m.kind for m in first] == ["progress"]  # a thousand reports, one message: the latest
    assert first[0].value == ("Counting", 0.999)
    assert worker.busy
    with pytest.raises(RuntimeError):
        worker.start("again", job)
    release.set()
    messages = finished(worker)
    assert messages[-1].kind == "done" and messages[-1].value == "answer" and messages[-1].job == "count"
    assert not worker.busy


@pytest.mark.parametrize("error, kind", [
    (FileRefused("league.xlsx is open in another program; close it first."), "refused"),
    (Cancelled("The update was cancelled; the workbook was not changed."), "cancelled"),
])
def test_user_errors_arrive_as_their_plain_message(error, kind):
    worker = Worker()

    def job(progress, cancel):
        raise error

    worker.start("update", job)
    failure = finished(worker)[-1].value
    assert (failure.kind, failure.message) == (kind, str(error))


def test_workbook_problems_carry_every_problem():
    problems = [Problem("error", "Results", 3, "Games A", "five", "not a whole number", "Type a number.")]
    worker = Worker()

    def job(progress, cancel):
        raise WorkbookProblems(problems)

    worker.start("check", job)
    failure = finished(worker)[-1].value
    assert failure.kind == "problems" and failure.problems == tuple(problems)


def test_a_bug_is_logged_with_its_traceback(user_home):
    worker = Worker()

    def job(progress, cancel):
        raise ZeroDivisionError("a slip inside the tool")

    worker.start("update", job)
    failure = finished(worker)[-1].value
    log = user_home / "secretary.log"
    assert failure.kind == "bug"
    assert failure.message == f"Something went wrong; the details are in the log file at {log}"
    text = log.read_text(encoding="utf-8")
    assert "Traceback" in text and "ZeroDivisionError: a slip inside the tool" in text


def test_the_cancel_flag_reaches_the_job():
    worker = Worker()

    def job(progress, cancel):
        while not cancel.wait(0.01):
            progress("Waiting", 0.5)
        raise Cancelled("stopped")

    worker.start("update", job)
    time.sleep(0.05)
    assert worker.busy
    worker.cancel.set()
    assert finished(worker)[-1].value.kind == "cancelled"
