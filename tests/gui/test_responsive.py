"""The window keeps answering while a large league is checked and updated on the worker thread."""
from __future__ import annotations

import time

import pytest

from tests.bench.make_league import make_league_workbook
from tests.gui.helpers import ARTIFACTS, settle

LIMIT = 0.100  # seconds: the longest the event loop may go without running a timer callback
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


@pytest.mark.slow
def test_event_loop_stays_responsive_during_a_100k_row_update(app, tmp_path):
    path = tmp_path / "big.xlsx"
    make_league_workbook(path, 100_000, 2000)
    ticker = Ticker(app.root)
    ticker.start()
    start = time.perf_counter()
    app.open_workbook(path)
    settle(app, 900)
    checked = time.perf_counter()
    assert app.session.checked and not app.session.errors, app.status.cget("text")
    app.update()
    settle(app, 1800)
    done = time.perf_counter()
    ticker.stop()
    assert app.session.updated, app.status.cget("text")
    assert len(app.ratings.table.shown_values()) == 2000
    worst = max(ticker.gaps)
    slow = sorted(ticker.gaps)[-5:]
    report = (f"100k rows, 2000 players: check {checked - start:.1f} s, update {done - checked:.1f} s; "
              f"{len(ticker.gaps)} ticks of {TICK_MS} ms, largest gaps {', '.join(f'{1000 * g:.0f}' for g in slow)} ms")
    ARTIFACTS.mkdir(exist_ok=True)
    (ARTIFACTS / "gui-responsiveness.txt").write_text(report + "\n", encoding="utf-8")
    print(report)
    assert worst <= LIMIT, report
