"""One background thread for long work, talking to the window only through a queue.

UI-free: the window polls ``poll()`` with ``after()``; the job never touches a
widget.  Progress is batched: only the latest (stage, fraction) is kept, so a
chatty job cannot flood the window.
"""
from __future__ import annotations

import dataclasses
import os
import pickle
import queue
import struct
import subprocess
import sys
import threading
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable

from secretary.errors import Cancelled, SecretaryError, WorkbookProblems
from secretary.userdirs import log_exception

HEADER = struct.Struct("!I")
CANCEL_POLL = 0.05  # seconds between looks at the cancel flag while the background process works
CHILD_ARGUMENT = "--background-worker"  # the desktop app's executable acts as the background process
PIECE = 250  # items per message when a result's long tuple crosses from the background process

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


class JobFailed(Exception):
    """A job in the background process failed; carries its failure, already in plain words."""

    def __init__(self, failure: Failure):
        super().__init__(failure.message)
        self.failure = failure


def failure_of(exc: BaseException, context: str) -> Failure:
    """Turn an exception from a job into plain words; a bug goes to the log file with its traceback."""
    if isinstance(exc, JobFailed):
        return exc.failure
    if isinstance(exc, WorkbookProblems):
        return Failure(str(exc), "problems", exc.problems)
    if isinstance(exc, Cancelled):
        return Failure(str(exc), "cancelled")
    if isinstance(exc, SecretaryError):
        return Failure(str(exc), "refused")
    log = log_exception(context)
    return Failure(f"Something went wrong; the details are in the log file at {log}", "bug")


class Worker:
    """Runs one job at a time on a background thread (which may hand it on to the background process)."""

    def __init__(self):
        self.child = Child()
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


def send(stream, message) -> None:
    """Write one message: its pickled length, then the pickle."""
    data = pickle.dumps(message, protocol=pickle.HIGHEST_PROTOCOL)
    stream.write(HEADER.pack(len(data)) + data)
    stream.flush()


def receive(stream):
    """Read one message; None at the end of the stream."""
    head = stream.read(HEADER.size)
    if len(head) < HEADER.size:
        return None
    size = HEADER.unpack(head)[0]
    data = stream.read(size)
    return pickle.loads(data) if len(data) == size else None


def send_result(stream, result, kind: str = "done") -> None:
    """A finished job's result (or ``Failure``, kind "failed"): its long tuples first, ``PIECE`` items a
    message, then the rest.

    Unpickling holds the window process's one interpreter lock (it never lets
    the window's thread in), about 5 microseconds an item; in pieces the
    window's thread runs between them however big the league.
    """
    long = {} if not dataclasses.is_dataclass(result) or isinstance(result, type) else {
        f.name: getattr(result, f.name) for f in dataclasses.fields(result)
        if isinstance(getattr(result, f.name), tuple) and len(getattr(result, f.name)) > PIECE}
    for name, items in long.items():
        for start in range(0, len(items), PIECE):
            send(stream, ("piece", name, items[start:start + PIECE]))
    send(stream, (kind, dataclasses.replace(result, **{name: () for name in long}) if long else result))


def joined(result, pieces: dict[str, list]):
    """The result with the tuples that came ahead in pieces put back."""
    return dataclasses.replace(result, **{name: tuple(items) for name, items in pieces.items()}) if pieces else result


def child_command() -> list[str]:
    """How to start the background process: ``python -m``, or the desktop app's own executable."""
    if getattr(sys, "frozen", False):  # a bundled app has no ``python -m``: see secretary.launch
        return [sys.executable, CHILD_ARGUMENT]
    return [sys.executable, "-m", "secretary.gui.child"]


class Child:
    """The background process (``secretary.gui.child``): started ahead of need, reused for every job."""

    def __init__(self):
        self.proc: subprocess.Popen | None = None

    def ensure(self) -> subprocess.Popen:
        """The running process, started now if there is none."""
        if self.proc is None or self.proc.poll() is not None:
            package_root = str(Path(__file__).resolve().parents[2])
            env = dict(os.environ, PYTHONPATH=os.pathsep.join(
                p for p in (package_root, os.environ.get("PYTHONPATH", "")) if p))
            flags = getattr(subprocess, "CREATE_NO_WINDOW", 0)  # no console window on Windows
            self.proc = subprocess.Popen(child_command(), stdin=subprocess.PIPE,
                                         stdout=subprocess.PIPE, env=env, creationflags=flags)
        return self.proc

    def call(self, name: str, *args) -> Job:
        """A job for ``Worker.start`` that runs ``jobs.JOBS[name](*args, ...)`` in the background process."""
        def job(progress, cancel):
            proc = self.ensure()
            send(proc.stdin, ("job", name, args))
            finished = threading.Event()

            def forward_cancel() -> None:
                while not finished.is_set():
                    if cancel.wait(CANCEL_POLL):
                        try:
                            send(proc.stdin, ("cancel",))
                        except (OSError, ValueError):
                            pass  # the process has ended (or is being ended) anyway
                        return

            forwarder = threading.Thread(target=forward_cancel, name="secretary-cancel", daemon=True)
            forwarder.start()
            pieces: dict[str, list] = {}
            try:
                while True:
                    message = receive(proc.stdout)
                    if message is None:
                        if cancel.is_set():  # ended on purpose: the window is closing
                            raise Cancelled("The work was stopped; the workbook was left as it was.")
                        raise RuntimeError(f"the background process stopped (exit code {proc.wait()})")
                    if message[0] == "progress":
                        progress(message[1], message[2])
                    elif message[0] == "piece":
                        pieces.setdefault(message[1], []).extend(message[2])
                    elif message[0] == "done":
                        return joined(message[1], pieces)
                    else:
                        raise JobFailed(joined(message[1], pieces))
            finally:
                finished.set()
                forwarder.join()
        return job

    def close(self, timeout: float = 10.0) -> None:
        """End the process: it finishes (or cancels) its job, then stops at the end of its input."""
        proc, self.proc = self.proc, None
        if proc is None:
            return
        try:
            proc.stdin.close()
            proc.wait(timeout)
        except (OSError, subprocess.TimeoutExpired):
            proc.kill()
            proc.wait()
