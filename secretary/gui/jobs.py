"""The window's long jobs, and the small records they hand back.

UI-free: these run in the background process (see ``child``), so each record
holds only what the window shows; the league's result rows stay behind, and a
100,000-row league crosses back in a few milliseconds.
"""
from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Mapping

from secretary import pipeline
from secretary.gui import views
from secretary.userdirs import DEMO_FOLDER
from secretary.model.breakdown import PlayerChange
from secretary.model.division_table import DivisionLevel
from secretary.model.fixtures import FixtureForecast
from secretary.model.linkage import WatchList
from secretary.model.records import PlayerRating, Problem, Settings


@dataclass(frozen=True)
class Checked:
    """What a check found: every problem, where the input sheets' columns are, and the settings."""

    problems: tuple[Problem, ...]
    layouts: Mapping[str, Any]
    settings: Settings
    result_rows: int
    updated_at: str | None = None  # when the last update ran ("2026-04-16 10:30:00"); None if never

    @property
    def errors(self) -> tuple[Problem, ...]:
        return tuple(p for p in self.problems if p.is_error)


@dataclass(frozen=True)
class Updated:
    """What an update did, as the window shows it."""

    checked: Checked
    ratings: tuple[PlayerRating, ...]
    changes: tuple[PlayerChange, ...]
    first_update: bool
    note: str  # one sentence about the whole update ("" when nothing special)
    new_rows: int
    edited_rows: int
    removed_rows: int
    watch: WatchList
    forecasts: tuple[FixtureForecast, ...]
    divisions: tuple[str, ...]
    notes: tuple[str, ...]  # the pre-fit diagnosis in league words
    reason: str  # plain words about the save
    written: Path | None
    notice_pdf: Path | None
    history: Mapping[str, list[tuple[dt.date, float]]]
    handicap_pdf: Path | None = None
    latest_result: dt.date | None = None  # the newest result's date: fixtures before it are past
    levels: tuple[DivisionLevel, ...] = ()  # the divisions table (division level, ±, games against other divisions)
    rows: tuple = ()  # the Ratings table's rows (views.rating_rows), made here: 20,000 take the window 0.1 s



def _checked(book) -> Checked:
    return Checked(book.problems, dict(book.layouts), book.settings, len(book.results),
                   book.state.updated_at if book.state is not None else None)


def check(path, progress, cancel) -> Checked:
    """Step 1: read the workbook and find every problem."""
    progress("Reading the workbook", 0.0)
    return _checked(pipeline.check_workbook(path))


def update(path, progress, cancel) -> Updated:
    """Step 2: the weekly update, then the rating history for the charts."""
    outcome = pipeline.run_update(path, progress=progress, cancel=cancel)
    return _updated(outcome, outcome.written)


def last_update(path, progress, cancel) -> Updated:
    """What the last update published, when it is still current; nothing is written."""
    progress("Reading the last update", 0.0)
    return _updated(pipeline.last_update(path), path)


def _updated(outcome: pipeline.UpdateOutcome, workbook: Path | None) -> Updated:
    bd, changes = outcome.breakdown, outcome.breakdown.changes
    return Updated(
        checked=_checked(outcome.book), ratings=outcome.ratings, changes=bd.players, first_update=bd.first_update,
        note=bd.note, new_rows=len(changes.new), edited_rows=len(changes.edited), removed_rows=len(changes.removed),
        watch=outcome.watch, forecasts=outcome.forecasts, divisions=tuple(outcome.fit.group_names),
        notes=outcome.notes, reason=outcome.reason, written=outcome.written, notice_pdf=outcome.notice_pdf,
        history=pipeline.rating_history(workbook) if workbook else {}, handicap_pdf=outcome.handicap_pdf,
        latest_result=max((p.last_played for p in outcome.ratings if p.last_played), default=None),
        levels=outcome.levels, rows=tuple(views.rating_rows(outcome.ratings, outcome.book.settings.few_games)))


def save_settings(path, values, progress, cancel) -> Path:
    progress("Saving the settings", 0.0)
    return pipeline.save_settings(path, values)


def restore(path, pick, progress, cancel) -> Path:
    return pipeline.restore(path, pick=pick)


def new_league(path, progress, cancel) -> Path:
    return pipeline.new_league(path)


def make_demo(folder, progress, cancel) -> Path:
    """The command line's demo (``secretary demo``) in a new folder inside ``folder``; returns its workbook."""
    folder = Path(folder)
    target, n = folder / DEMO_FOLDER, 1
    while (target / "league.xlsx").exists():  # never over an earlier demo
        n += 1
        target = folder / f"{DEMO_FOLDER} ({n})"
    pipeline.run_demo(target, progress=progress)
    return target / "league.xlsx"


JOBS = {"check": check, "update": update, "last": last_update, "settings": save_settings, "restore": restore,
        "new": new_league, "demo": make_demo}
