"""Window responsiveness: the largest gap in the Tk event loop while a 100k-row league is checked and updated.

Run by hand (not part of the test command; needs Tk and, without a display, Xvfb's xvfb-run):

    python tests/bench/bench_window.py [--rows 100000] [--conditions idle busy]

A timer asks the event loop for a callback every 10 ms; each gap between two
callbacks is recorded while the real window opens the workbook (check) and
runs the update in its background process.  The reference is the timer's own
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
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parents[1]))

import busy  # noqa: E402
from make_league import make_league_workbook  # noqa: E402

TICK_MS = 10


class Ticker:
    """An after() callback every TICK_MS that records how long each turn of the event loop really took."""

    def __init__(self, root):
        self.root, self.gaps, self.last, self.ident = root, [], time.perf_counter(), None

    def start(self) -> None:
        self.last = time.perf_counter()
        self.ident = self.root.after(TICK_MS, self.tick)

    def tick(self) -> None:
        now = time.perf_counter()
        self.gaps.append(now - self.last)
        self.last = now
        self.ident = self.root.after(TICK_MS, self.tick)

    def stop(self) -> None:
        self.root.after_cancel(self.ident)


def one_run(path: Path, players: int) -> str:
    import tkinter as tk

    from secretary.gui.app import App
    from tests.gui.helpers import RecordingDialogs, settle

    root = tk.Tk()
    app = App(root, dialogs=RecordingDialogs())
    app.errors = []
    root.update()
    ticker = Ticker(root)
    ticker.start()
    start = time.perf_counter()
    app.open_workbook(path)
    settle(app, 1800)
    checked = time.perf_counter()
    if not app.session.checked or app.session.errors:
        raise RuntimeError(app.status.cget("text"))
    app.update()
    settle(app, 3600)
    done = time.perf_counter()
    ticker.stop()
    if not app.session.updated or len(app.ratings.table.shown_values()) != players:
        raise RuntimeError(app.status.cget("text"))
    app.worker.cancel.set()
    app.worker.join(300)
    app.close()
    worst = sorted(ticker.gaps)[-3:]
    return (f"check {checked - start:6.1f}s  update {done - checked:6.1f}s | {len(ticker.gaps):>6} ticks of "
            f"{TICK_MS} ms, largest gaps {', '.join(f'{1000 * g:.0f}' for g in reversed(worst))} ms")


def main():
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--rows", type=int, default=100_000)
    parser.add_argument("--players", type=int, default=2_000)
    busy.add_argument(parser)
    args = parser.parse_args()
    if not os.environ.get("DISPLAY"):
        if shutil.which("xvfb-run") is None:
            sys.exit("no display and no xvfb-run: install xvfb")
        sys.exit(subprocess.call(["xvfb-run", "-a", sys.executable, *sys.argv]))
    with tempfile.TemporaryDirectory() as tmp:
        os.environ["SECRETARY_HOME"] = str(Path(tmp) / "user-folder")  # recent files, log: not the real ones
        source = Path(tmp) / "source.xlsx"
        make_league_workbook(source, args.rows, args.players, seed=1)
        print(f"{args.rows:,} rows, {args.players:,} players")
        for condition in busy.conditions(args.conditions):
            path = Path(tmp) / "big.xlsx"
            shutil.copyfile(source, path)
            print(f"{condition:>14} | {one_run(path, args.players)}", flush=True)


if __name__ == "__main__":
    main()
