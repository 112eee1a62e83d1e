"""Window responsiveness: the largest gap in the Tk event loop while a 100k-row league is checked and updated.

Run by hand (not part of the test command; needs Tk and, without a display, Xvfb's xvfb-run):

    python tests/bench/bench_window.py [--rows 100000] [--conditions idle busy]
    python tests/bench/bench_window.py --sort [--rows 100000]   # heading clicks on a 100k-row Problems table

A timer asks the event loop for a callback every 10 ms; each gap between two
callbacks is recorded while the real window opens the workbook (check) and
runs the update in its background process.  With ``--sort`` every result is
entered twice, so that the check lists one warning per result (the same
result as row ...), and the ticker runs while the Problems table is sorted by
heading clicks (Found, Found again to reverse, Row), each until the table is
full again; there is no update.  The reference is the timer's own
10 ms: a gap near it means the window never stopped answering.  (Moved here
from the test suite, where a time limit would fail on a busy machine.)
"""
from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import tempfile
import threading
import time
import traceback
from collections import Counter
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parents[1]))

import busy  # noqa: E402
from make_league import make_league_workbook  # noqa: E402

TICK_MS = 10
SETTLE_S = 1.0  # the ticker keeps going this long after the tables are full (What changed draws after a pause)


class Ticker:
    """An after() callback every TICK_MS that records how long each turn of the event loop really took."""

    def __init__(self, root):
        self.root, self.gaps, self.last, self.ident = root, [], time.perf_counter(), None
        self.cpu: list[tuple[float, float]] = []  # per gap: (window thread's, whole process's processor time)
        self.last_cpu = (time.thread_time(), time.process_time())

    def start(self) -> None:
        self.last = time.perf_counter()
        self.last_cpu = (time.thread_time(), time.process_time())
        self.ident = self.root.after(TICK_MS, self.tick)

    def tick(self) -> None:
        now, cpu = time.perf_counter(), (time.thread_time(), time.process_time())
        self.gaps.append(now - self.last)
        self.cpu.append((cpu[0] - self.last_cpu[0], cpu[1] - self.last_cpu[1]))
        self.last, self.last_cpu = now, cpu
        self.ident = self.root.after(TICK_MS, self.tick)

    def busiest(self) -> str:
        """The largest processor time spent by this process in one gap: what the load on the machine cannot explain."""
        thread = max((c[0] for c in self.cpu), default=0.0)
        process = max((c[1] for c in self.cpu), default=0.0)
        return f"most processor time in one gap: window thread {1000 * thread:.0f} ms, window process {1000 * process:.0f} ms"

    def stop(self) -> None:
        self.root.after_cancel(self.ident)


class Watchdog(threading.Thread):
    """While the event loop is late by more than ``late_ms``, samples what the window's thread is running.

    Every 5 ms it looks at the ticker; during a long gap it takes the window thread's stack (every thread's
    innermost project frame), so that ``--why`` can say which code held the event loop up.
    """

    def __init__(self, ticker: Ticker, late_ms: float = 40.0):
        super().__init__(daemon=True)
        self.ticker, self.late, self.main = ticker, late_ms / 1000, threading.main_thread().ident
        self.samples: Counter = Counter()
        self.stopped = threading.Event()

    def run(self) -> None:
        while not self.stopped.wait(0.005):
            if time.perf_counter() - self.ticker.last > self.late:
                frames = sys._current_frames()
                for ident, frame in frames.items():
                    if ident == threading.get_ident():
                        continue
                    who = "window" if ident == self.main else "other"
                    self.samples[(who, where(frame))] += 1

    def report(self, most: int = 12) -> str:
        lines = [f"    {n * 5:>6} ms  {who:>6}  {at}" for (who, at), n in self.samples.most_common(most)]
        return "  sampled while the event loop was late (ms ~ 5 x samples):\n" + "\n".join(lines)


class Callbacks:
    """Times every Tcl-to-Python callback of the window (tkinter.CallWrapper): the longest ones, by name."""

    def __init__(self):
        import tkinter

        self.longest: list[tuple[float, float, str]] = []  # (window thread's processor time, wall, name)
        self.original = tkinter.CallWrapper.__call__
        original, record = self.original, self.longest

        def timed(wrapper, *args):
            wall, cpu = time.perf_counter(), time.thread_time()
            try:
                return original(wrapper, *args)
            finally:
                record.append((time.thread_time() - cpu, time.perf_counter() - wall, callback_name(wrapper.func)))

        tkinter.CallWrapper.__call__ = timed

    def close(self) -> None:
        import tkinter

        tkinter.CallWrapper.__call__ = self.original

    def report(self, most: int = 8) -> str:
        lines = [f"    {1000 * cpu:6.1f} ms processor, {1000 * wall:6.1f} ms wall  {name}"
                 for cpu, wall, name in sorted(self.longest, reverse=True)[:most]]
        return "  longest callbacks of the window (processor time of its thread):\n" + "\n".join(lines)


def callback_name(fn, depth: int = 0) -> str:
    """The innermost named function a callback wraps (after() and the Scheduler wrap it in closures)."""
    for cell in getattr(fn, "__closure__", None) or ():
        inner = cell.cell_contents
        if callable(inner) and depth < 4 and getattr(inner, "__qualname__", "") != "CallWrapper":
            return callback_name(inner, depth + 1)
    return getattr(fn, "__qualname__", repr(fn))


def where(frame) -> str:
    """The innermost frames of a stack, from the project first (else the innermost of all)."""
    stack = traceback.extract_stack(frame)
    ours = [f for f in stack if "secretary" in f.filename and "bench" not in f.filename]
    tail = (ours or stack)[-2:]
    inner = stack[-1]
    text = " < ".join(f"{Path(f.filename).name}:{f.lineno} {f.name}" for f in reversed(tail))
    return text if inner in tail else f"{Path(inner.filename).name}:{inner.lineno} {inner.name} < {text}"


def run_until(root, predicate, timeout: float) -> None:
    """Run the real event loop (``mainloop``, as the window does) until ``predicate()`` holds."""
    deadline, failed = time.monotonic() + timeout, []

    def look() -> None:
        if predicate() or time.monotonic() > deadline:
            root.quit()
        else:
            root.after(20, look)

    def report(kind, value, trace) -> None:
        failed.append(value)
        root.quit()

    root.report_callback_exception = report
    root.after(20, look)
    root.mainloop()
    if failed:
        raise RuntimeError(f"a callback of the window failed: {failed[0]!r}")
    if not predicate():
        raise RuntimeError(f"timed out after {timeout} s")


SORT_CLICKS = ("found", "found", "row")  # by text, the reverse, by number


def gaps(ticker: Ticker) -> str:
    worst = sorted(ticker.gaps)[-3:]
    return (f"{len(ticker.gaps):>6} ticks of {TICK_MS} ms, largest gaps "
            f"{', '.join(f'{1000 * g:.0f}' for g in reversed(worst))} ms; {ticker.busiest()}")


def new_window():
    import tkinter as tk

    from secretary.gui.app import App
    from tests.gui.helpers import RecordingDialogs

    root = tk.Tk()
    app = App(root, dialogs=RecordingDialogs())
    app.errors = []
    root.update()
    return root, app


def sort_run(path: Path) -> str:
    """Check the workbook, then click the Problems table's headings one after another, each time until the
    table is full again; the largest event-loop gaps during the clicks."""
    root, app = new_window()
    app.open_workbook(path)
    run_until(root, lambda: app.idle, 1800)
    table, ticker, took = app.problems.table, Ticker(root), []
    ticker.start()
    for key in SORT_CLICKS:
        start, clicked = time.perf_counter(), []
        root.after(0, lambda key=key: clicked.append(table.tree.tk.call(table.tree.heading(key, "command"))))
        run_until(root, lambda: clicked and not table.filling, 900)
        took.append(time.perf_counter() - start)
    ticker.stop()
    rows = len(table.shown_values())
    app.worker.cancel.set()
    app.worker.join(300)
    app.close()
    return f"{rows:,} rows sorted in {', '.join(f'{t:.1f}' for t in took)} s | {gaps(ticker)}"


def one_run(path: Path, players: int, why: float | None = None) -> str:
    root, app = new_window()
    ticker = Ticker(root)
    ticker.start()
    watchdog = Watchdog(ticker, why or 40.0)
    callbacks = Callbacks() if why else None
    if why:
        watchdog.start()
    start = time.perf_counter()
    app.open_workbook(path)
    run_until(root, lambda: app.idle, 1800)
    checked = time.perf_counter()
    if not app.session.checked or app.session.errors:
        raise RuntimeError(app.status.cget("text"))
    app.update()
    run_until(root, lambda: app.idle, 3600)
    done = time.perf_counter()
    run_until(root, lambda: time.perf_counter() > done + SETTLE_S, 60)  # what is drawn after the tables too
    ticker.stop()
    watchdog.stopped.set()
    if callbacks is not None:
        callbacks.close()
    if not app.session.updated or len(app.ratings.table.shown_values()) != len(app.updated.ratings):
        raise RuntimeError(app.status.cget("text"))
    app.worker.cancel.set()
    app.worker.join(300)
    app.close()
    line = f"check {checked - start:6.1f}s  update {done - checked:6.1f}s | {gaps(ticker)}"
    return line + ("\n" + watchdog.report() + "\n" + callbacks.report() if why else "")


def main():
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--rows", type=int, default=100_000)
    parser.add_argument("--players", type=int, default=2_000)
    parser.add_argument("--why", type=float, metavar="MS", nargs="?", const=40.0,
                        help="also say which code ran while the event loop was more than MS (40) ms late")
    parser.add_argument("--sort", action="store_true",
                        help="every result twice, checked but not updated: time heading clicks on the Problems table")
    busy.add_argument(parser)
    args = parser.parse_args()
    if not os.environ.get("DISPLAY"):
        if shutil.which("xvfb-run") is None:
            sys.exit("no display and no xvfb-run: install xvfb")
        sys.exit(subprocess.call(["xvfb-run", "-a", sys.executable, *sys.argv]))
    with tempfile.TemporaryDirectory() as tmp:
        os.environ["SECRETARY_HOME"] = str(Path(tmp) / "user-folder")  # recent files, log: not the real ones
        source = Path(tmp) / "source.xlsx"
        make_league_workbook(source, args.rows, args.players, seed=1, copies=2 if args.sort else 1)
        print(f"{args.rows:,} results{' (each twice)' if args.sort else ''}, {args.players:,} players")
        for condition in busy.conditions(args.conditions):
            path = Path(tmp) / "big.xlsx"
            shutil.copyfile(source, path)
            line = sort_run(path) if args.sort else one_run(path, args.players, args.why)
            print(f"{condition:>14} | {line}", flush=True)


if __name__ == "__main__":
    main()
