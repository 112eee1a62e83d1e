"""One background thread for long work, talking to the window only through a queue.

UI-free: the window polls ``poll()`` with ``after()``; the job never touches a
widget.  Progress is batched: only the latest (stage, fraction) is kept, so a
chatty job cannot flood the window.
"""
from __future__ import annotations

import queue
import threading
from dataclasses import dataclass
from typing import Any, Callable

from secretary.errors import Cancelled, SecretaryError, WorkbookProblems
from secretary.userdirs import log_exception

Job = Callable[[Callable[[str, float], None], threading.Event], Any]


@dataclass(frozen=True)
class Failure:
    """Why a job stopped: a plain message for the secretary, and the problems when the workbook has errors."""

    message: str
    kind: str  # "problems", "cancelled", "refused" (a SecretaryError) or "bug"
    problems: tuple = ()


@dataclass(frozen=True)
class Message:
    """What the worker tells the window: progress, a finished job's result, or its failure."""

    kind: str  # "progress", "done" or "failed"
    job: str
    value: Any


def failure_of(exc: BaseException, context: str) -> Failure:
    """Turn an exception from a job into plain words; a bug goes to the log file with its traceback."""
    if isinstance(exc, WorkbookProblems):
        return Failure(str(exc), "problems", exc.problems)
    if isinstance(exc, Cancelled):
        return Failure(str(exc), "cancelled")
    if isinstance(exc, SecretaryError):
        return Failure(str(exc), "refused")
    log = log_exception(context)
    return Failure(f"Something went wrong; the details are in the log file at {log}", "bug")


class Worker:
    """Runs one job at a time on a background thread."""

    def __init__(self):
        self._queue: queue.Queue[Message] = queue.Queue()
        self._lock = threading.Lock()
        self._latest: tuple[str, str, float] | None = None
        self._thread: threading.Thread | None = None
        self.cancel = threading.Event()
        self.job = ""
        self.listener: Callable[[str, float], None] | None = None  # called on the worker thread (tests, logs)

    @property
    def busy(self) -> bool:
        return self._thread is not None and self._thread.is_alive()

    def start(self, name: str, job: Job) -> None:
        """Run ``job(progress, cancel)`` in the background; its result arrives as a "done" message."""
        if self.busy:
            raise RuntimeError(f"the worker is still busy with {self.job}")
        self.cancel = threading.Event()
        self.job = name
        self._thread = threading.Thread(target=self._run, args=(name, job, self.cancel),
                                        name=f"secretary-{name}", daemon=True)
        self._thread.start()

    def _run(self, name: str, job: Job, cancel: threading.Event) -> None:
        def progress(stage: str, fraction: float) -> None:
            with self._lock:
                self._latest = (name, stage, float(fraction))
            if self.listener is not None:
                self.listener(stage, fraction)

        try:
            result = job(progress, cancel)
        except BaseException as exc:  # every failure must reach the window, never vanish with the thread
            self._queue.put(Message("failed", name, failure_of(exc, f"window: {name}")))
        else:
            self._queue.put(Message("done", name, result))

    @property
    def pending(self) -> bool:
        """Messages are waiting for the window."""
        return not self._queue.empty()

    def poll(self, limit: int = 20) -> list[Message]:
        """What happened since the last poll: the latest progress first, then at most ``limit`` messages."""
        with self._lock:
            latest, self._latest = self._latest, None
        out = [Message("progress", latest[0], latest[1:])] if latest else []
        while len(out) < limit + 1:
            try:
                out.append(self._queue.get_nowait())
            except queue.Empty:
                break
        return out

    def join(self, timeout: float | None = None) -> None:
        if self._thread is not None:
            self._thread.join(timeout)
