"""One weekly update: read -> check -> fit -> explain -> diagnose -> write.

Knows no UI: the command line and the window call these functions with a
progress callback ``progress(stage, fraction)`` and a cancel flag (anything
with ``is_set()``, e.g. ``threading.Event``).  Nothing is written until every
stage has finished; a cancelled or failed update leaves the workbook as it was.
"""
from __future__ import annotations

import contextlib
import csv
import gc
import hashlib
import datetime as dt
import shutil
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Callable, Protocol, Sequence

from secretary import __version__
from secretary.errors import Cancelled, FileRefused, SecretaryError, WorkbookProblems
from secretary.model.breakdown import Breakdown, explain_changes
from secretary.model.diagnose import describe
from secretary.model.division_table import DivisionLevel, level_table
from secretary.model.evaluate import Evaluation, evaluate
from secretary.model.fixtures import FixtureForecast, forecast_fixtures
from secretary.model.league import LeagueFit, fit_league
from secretary.model.linkage import WatchList, watch_list
from secretary.model.watch_sentences import watch_lines  # noqa: F401  (the command line's summary lines)
from secretary.model.tune import Tuning, check_tuning, tune, tune_advice, tune_due
from secretary.model.records import PlayerRating, PublishedState, Result, UpdateLog, row_digests
from secretary.model.changes import compare_rows
from secretary.report.handicap import write_handicap_pdf
from secretary.report.layout import fonts
from secretary.model.sentences import plural
from secretary.report.scripts import unprintable
from secretary.report.notice import write_notice_pdf
from secretary.workbook import fidelity, graft, save, schema, state, toolsheets
from secretary.workbook.fixtures_sheet import write_fixture_columns
from secretary.workbook.notice_sheet import write_notice
from secretary.workbook.read import LeagueBook, read_workbook
from secretary.workbook.template import new_workbook
from secretary.workbook.printing import set_up_printing
from secretary.workbook.watch_sheet import write_watch
from secretary.workbook.why_sheet import write_why
from secretary.workbook.write import write_history, write_log, write_problems, write_ratings

Progress = Callable[[str, float], None]
DATA = Path(__file__).resolve().parent / "data"


class CancelFlag(Protocol):
    def is_set(self) -> bool: ...


@dataclass(frozen=True)
class UpdateOutcome:
    """What one update did, for the summary on screen."""

    path: Path  # the secretary's workbook
    written: Path | None  # where the outputs went (None for a dry run)
    companion: bool  # outputs went to the companion workbook
    reason: str  # plain words about the save
    backup: Path | None
    notice_pdf: Path | None
    handicap_pdf: Path | None
    book: LeagueBook
    fit: LeagueFit
    ratings: tuple[PlayerRating, ...]
    breakdown: Breakdown
    watch: WatchList
    forecasts: tuple[FixtureForecast, ...]
    log: UpdateLog
    notes: tuple[str, ...]  # the pre-fit diagnosis in league words
    unchanged: bool = False  # nothing new since the last update: nothing written, its account shown
    levels: tuple[DivisionLevel, ...] = ()  # the divisions table (level, ±, games against other divisions)


def _quiet(stage: str, fraction: float) -> None:
    pass


def _step(progress: Progress, cancel: CancelFlag | None, stage: str, fraction: float) -> None:
    if cancel is not None and cancel.is_set():
        raise Cancelled("The update was cancelled; the workbook was not changed.")
    progress(stage, fraction)


def check_workbook(path: str | Path) -> LeagueBook:
    """Read and check the workbook; nothing is written."""
    return read_workbook(path)


def notice_pdf_path(path: str | Path) -> Path:
    """Where the PDF notice board of a workbook goes: beside it."""
    path = Path(path)
    return path.with_name(f"{path.stem} - notice board.pdf")


def handicap_pdf_path(path: str | Path) -> Path:
    """Where the handicap card for the coming fixtures goes: beside the workbook."""
    path = Path(path)
    return path.with_name(f"{path.stem} - handicap card.pdf")


def _published_ratings(fit: LeagueFit, breakdown: Breakdown) -> tuple[PlayerRating, ...]:
    """The players with a rated game now, rated; a player with none (listed on Players only, or whose
    results were all removed) is not published: one state per player, never ranked at a starting rating
    and listed as no longer rated at once."""
    by_name = {c.name: c for c in breakdown.players}
    games, wins, ratings, sds, doubles = fit.games, fit.wins, fit.ratings, fit.sds, fit.doubles_games
    unrated = set(fit.diagnosis.no_games.tolist())
    out = []
    for k, name in enumerate(fit.names):
        if k in unrated:
            continue
        change = by_name.get(name)
        is_new = breakdown.first_update or change is None or change.is_new
        out.append(PlayerRating(
            name=name, division=fit.group_names[fit.group[k]], rating=float(ratings[k]), sd=float(sds[k]),
            games=float(games[k]), wins=float(wins[k]), last_played=fit.last_played[k],
            change=None if is_new else float(change.shown[2]), is_new=is_new,
            division_from=fit.home_rule[k] if fit.home_rule else "", doubles_games=float(doubles[k])))
    return tuple(out)


def _notes(fit: LeagueFit, breakdown: Breakdown) -> tuple[str, ...]:
    """The pre-fit diagnosis in league words; a player whose rated games were all removed is named once,
    as no longer rated (the Why it changed sheet), not also as having no games yet."""
    gone = {name for name, _ in breakdown.removed_players}
    none = fit.diagnosis.no_games
    yet = none[[fit.names[k] not in gone for k in none.tolist()]] if len(none) else none
    return tuple(describe(replace(fit.diagnosis, no_games=yet), fit.names))


def starting_levels(book: LeagueBook) -> dict[str, float]:
    """Each division's starting level from the Divisions sheet, points above the centre (unlisted = 0)."""
    return {d.name: d.starting_level for d in book.divisions}


def _full_target(path: Path, out: Path | None):
    """For a full save: the workbook to write the tool's sheets into, where it goes, and what would be lost."""
    lost = fidelity.unsupported_content(path)
    if out is not None:
        return save.load_for_update(path), Path(out), lost
    if lost:
        companion = save.companion_path(path)
        if companion.exists():
            return save.load_for_update(companion), companion, lost
        from openpyxl import Workbook  # a fresh companion holds only the tool's sheets

        wb = Workbook()
        wb.remove(wb.active)
        return wb, companion, lost
    return save.load_for_update(path), path, lost


def _stored_state(path: Path, book: LeagueBook):
    """What the previous update published: from the workbook, else from its companion."""
    if book.state is not None:
        return book.state
    companion = save.companion_path(path)
    return state.read_state(save.load_for_update(companion)) if companion.exists() else None


def run_update(
    path: str | Path,
    *,
    out: str | Path | None = None,
    dry_run: bool = False,
    progress: Progress | None = None,
    cancel: CancelFlag | None = None,
    now: dt.datetime | None = None,
    force: bool = False,
) -> UpdateOutcome:
    """The weekly update of the workbook at ``path``.

    The tool's sheets are grafted into the workbook's package, leaving every
    part of the secretary's own sheets byte for byte as it was; when that is
    not possible (a Fixtures sheet to fill in, ``out`` given, or a workbook the
    graft refuses) the whole workbook is loaded and saved instead.

    Raises ``WorkbookProblems`` (nothing written) when the checks find errors,
    ``Cancelled`` when the cancel flag is set, ``FileRefused`` when the file
    cannot be read or must not be overwritten.

    An update with nothing new (the same rows, settings and players as the last
    update read, by the same version of the tool) writes nothing, leaves the
    printouts alone and returns the last update's account (``unchanged``);
    ``force`` rebuilds everything anyway.
    """
    path = Path(path) if dry_run or out is not None else save.writable_workbook(path)
    if out is not None and Path(out).suffix.lower() not in (".xlsx", ".xlsm"):
        raise FileRefused(f"--out must name an Excel workbook ending in .xlsx (got {Path(out).name}); "
                          "nothing was written.")
    with _few_collections():
        try:
            return _update(path, out, dry_run, progress or _quiet, cancel, now, graft_it=True, force=force)
        except graft.GraftRefused:
            return _update(path, out, dry_run, progress or _quiet, cancel, now, graft_it=False, force=force)


@contextlib.contextmanager
def _few_collections():
    """Python's cycle collector, less often for the length of an update (restored after).

    An update makes a record per result row and many small tuples, nearly all kept until it ends; at the
    default thresholds the collector went over all of them again and again (15 full passes at 100,000
    rows, a sixth of the update's processor time) and found almost nothing to free."""
    before = gc.get_threshold()
    gc.set_threshold(max(before[0], 50_000), max(before[1], 20), max(before[2], 100))
    try:
        yield
    finally:
        gc.set_threshold(*before)


def _update(path: Path, out, dry_run: bool, progress: Progress, cancel, now, *, graft_it: bool,
            force: bool = False) -> UpdateOutcome:
    _step(progress, cancel, "Reading the workbook", 0.0)
    stamp_read = save.file_stamp(path) if path.is_file() else None
    book = read_workbook(path)
    if book.has_errors:
        raise WorkbookProblems(book.problems)
    published = _stored_state(path, book)
    inputs = inputs_digest(book)  # once: a digest of every row
    if not force and out is None and _nothing_new(book, published, inputs):
        progress("Done", 1.0)
        return _outcome(path, _published_from(book, published), unchanged=True, reason=(
            f"Nothing new since the last update ({published.updated_at}): the same result rows, settings "
            "and players, so nothing was written and the printouts were left as they were. "
            "To rebuild everything anyway, update with --force."))
    graft_it = graft_it and out is None and not book.fixtures
    rated = _rate(path, book, published, progress, cancel)

    _step(progress, cancel, "Writing the sheets", 0.75)
    if graft_it:
        # Only the sheets the writers read back: the others are all replaced.
        wb, target, lost = graft.load_tool_sheets(path, cells=(schema.HISTORY_SHEET, schema.LOG_SHEET)), path, []
    else:
        wb, target, lost = _full_target(path, Path(out) if out else None)
    companion = bool(lost) and out is None
    stamp = (now or dt.datetime.now()).replace(microsecond=0).isoformat(sep=" ")
    log = _update_log(book, rated.fit, rated.breakdown, stamp, lost)
    _write_sheets(wb, book, rated, log, replace(
        rated.state, updated_at=stamp, reference_date=log.reference_date, inputs=inputs),
        fixtures=bool(book.fixtures) and not companion and not graft_it)
    clash = toolsheets.clash_note(toolsheets.of_workbook(wb))
    written = backup = pdf = card = None
    reason = "Dry run: nothing was written."
    if not dry_run:
        _step(progress, cancel, "Saving the workbook safely", 0.9)
        expect = stamp_read if target == path else None
        saved = graft.save_grafted(path, wb, expect=expect) if graft_it else save.save_workbook(wb, target, expect=expect)
        written, backup, reason = saved.path, saved.backup, saved.reason
        wb = save.release(wb)  # the saved sheets' cells: freed before the printouts (hundreds of MB at a million rows)
        if companion:
            reason = (f"{path.name} holds content this tool cannot carry through a save unchanged "
                      f"({'; '.join(lost)}), so it was left untouched and the ratings went to {target.name}.")
        pdf, card, failed = _printouts(written, rated.breakdown, rated.ratings, book.settings, rated.watch,
                                       rated.forecasts, rated.levels)
        reason += failed
    unprinted = unprinted_note(rated.ratings, rated.forecasts) if pdf or card else None
    progress("Done", 1.0)
    return UpdateOutcome(
        path=path, written=written, companion=companion, reason=reason, backup=backup, notice_pdf=pdf,
        handicap_pdf=card, book=book, fit=rated.fit, ratings=rated.ratings, breakdown=rated.breakdown,
        watch=rated.watch, forecasts=rated.forecasts, log=log, levels=rated.levels,
        notes=_notes(rated.fit, rated.breakdown) + tuple(n for n in (rated.advice, clash, unprinted) if n))


@dataclass(frozen=True)
class _Rated:
    """What an update works out before it writes anything."""

    fit: LeagueFit
    breakdown: Breakdown
    watch: WatchList
    levels: tuple[DivisionLevel, ...]
    forecasts: tuple[FixtureForecast, ...]
    ratings: tuple[PlayerRating, ...]
    state: PublishedState  # the record for the next update (its time, reference date and inputs filled in later)
    advice: str | None


def _rate(path: Path, book: LeagueBook, published: PublishedState | None, progress: Progress, cancel) -> _Rated:
    """Fit, breakdown, watch list, forecasts and the tune check: every stage before the writing."""
    settings = book.settings
    _step(progress, cancel, "Rating every player", 0.25)
    fit = fit_league(book.results, settings, players=book.players, starting_levels=starting_levels(book))
    _step(progress, cancel, "Working out why ratings changed", 0.5)
    breakdown = explain_changes(book.results, published, settings, book.players,
                                state_missing=published is None and _was_updated_before(book), current=fit)
    _step(progress, cancel, "Looking for divisions that need linking", 0.65)
    watch = watch_list(fit, book.results)
    ratings = _published_ratings(fit, breakdown)
    check = _tune_check(book, fit, published, progress, cancel)
    record = PublishedState(
        updated_at="", reference_date=fit.reference_date or dt.date.today(),
        ratings={p.name: p.rating for p in ratings}, sds={p.name: p.sd for p in ratings},
        rows=_rated_rows(book.results), settings=settings,
        previous=replace(published, previous=None, tune_check=None) if published else None, tune_check=check,
        starting_levels=starting_levels(book))
    return _Rated(fit, breakdown, watch, level_table(fit, watch), forecast_fixtures(book.fixtures, fit), ratings,
                  record, tune_advice(check, settings, path.name))


def _write_sheets(wb, book: LeagueBook, rated: _Rated, log: UpdateLog, record: PublishedState, *,
                  fixtures: bool) -> None:
    """Every tool sheet into ``wb`` (the Fixtures sheet's forecast columns too when ``fixtures``), then the record."""
    settings = book.settings
    write_ratings(wb, rated.ratings, settings, rated.levels)
    write_why(wb, rated.breakdown, settings)
    write_watch(wb, rated.watch)
    write_notice(wb, rated.breakdown, rated.ratings, settings, rated.levels)
    write_history(wb, log.reference_date, rated.ratings)
    write_log(wb, log)
    write_problems(wb, book.warnings)
    set_up_printing(wb, settings)
    if fixtures:
        write_fixture_columns(wb, rated.forecasts, settings, latest=rated.fit.reference_date)
    state.write_state(wb, record)


def unprinted_note(ratings, forecasts=()) -> str | None:
    """Which names the PDFs could not print in their own script, in plain words (None when all could)."""
    names = [p.name for p in ratings] + [n for fc in forecasts for n in (fc.fixture.player_a, fc.fixture.player_b)]
    missing = unprintable(names, fonts()[0])
    if not missing:
        return None
    shown = ", ".join(missing[:10]) + (f" and {len(missing) - 10} more" if len(missing) > 10 else "")
    return (f"The printouts could not show {plural(len(missing), 'name')} in their own script, so letters there print "
            f"as '?': {shown}. Either no font on this computer has their letters (installing one that does, "
            "such as a Noto font for that script, fixes it) or the script needs text shaping (Arabic, Hebrew, "
            "the Indic scripts, Thai ...), which the PDF maker here does not do. The workbook shows them in full.")


def _printouts(written: Path, breakdown, ratings, settings, watch, forecasts, levels=()):
    """The notice board and handicap card PDFs, after the workbook is saved: a failure here is reported
    truthfully ("saved; the printouts failed because ...") and never undoes the save."""
    pdf = card = None
    try:
        pdf = write_notice_pdf(notice_pdf_path(written), breakdown, ratings, settings, watch, levels)
        if forecasts:
            card = write_handicap_pdf(handicap_pdf_path(written), forecasts, settings, ratings=ratings,
                                      latest=breakdown.reference_date)
    except OSError as exc:  # e.g. a PDF held open by a viewer
        return pdf, card, (f" The workbook was saved; the printouts failed because {exc.strerror or exc}. "
                           "If a PDF is open in a viewer, close it and run `secretary notice` to print the "
                           "notice board again.")
    except Exception:  # a bug in the printouts: logged, and said truthfully
        from secretary.userdirs import log_exception

        log = log_exception("printouts after a saved update")
        return pdf, card, (" The workbook was saved; the printouts failed because of a problem inside the "
                           f"tool (details in {log}). Run `secretary notice` to try printing again.")
    return pdf, card, ""


def _tune_check(book: LeagueBook, fit: LeagueFit, published, progress: Progress, cancel):
    """The stored tune check, run again first when a season of results has come in since (see ``tune_due``)."""
    check = published.tune_check if published is not None else None
    dates = [r.date for r in book.results if not r.void]
    if not tune_due(min(dates, default=None), fit.reference_date, check, players=len(fit.names), results=len(dates)):
        return check
    _step(progress, cancel, "Checking whether tuning the settings would help", 0.7)
    return check_tuning(book.results, book.settings, fit.reference_date, players=book.players,
                        starting_levels=starting_levels(book), cancel=cancel)


def _update_log(book: LeagueBook, fit: LeagueFit, breakdown: Breakdown, stamp: str,
                lost: Sequence[str] = ()) -> UpdateLog:
    """The Update log row of an update stamped ``stamp``."""
    changes = breakdown.changes
    return UpdateLog(
        updated_at=stamp, version=__version__, reference_date=fit.reference_date or dt.date.today(),
        rows_read=len(book.results), rows_rated=sum(1 for r in book.results if not r.void),
        new_rows=len(changes.new), changed_rows=len(changes.edited), removed_rows=len(changes.removed),
        settings=book.settings, warnings=tuple(str(p) for p in book.warnings[:50]) + tuple(lost))


def _was_updated_before(book: LeagueBook) -> bool:
    """The tool's Ratings sheet is there, so a missing record means it was deleted."""
    return schema.RATINGS_SHEET in book.tool_sheets


@dataclass(frozen=True)
class Published:
    """The ratings as the last update published them, rebuilt from the workbook without writing it."""

    book: LeagueBook
    fit: LeagueFit
    ratings: tuple[PlayerRating, ...]
    breakdown: Breakdown


def _published(path: str | Path, what: str) -> Published:
    """The last update's ratings and breakdown; refuses when results or settings changed since."""
    book = read_workbook(path)
    if book.has_errors:
        raise WorkbookProblems(book.problems)
    stored = _stored_state(Path(path), book)
    if stored is None:
        raise SecretaryError(f"{Path(path).name} has not been updated yet: run the update first, then the {what}.")
    changes = compare_rows(book.results, stored.rows)
    if changes.new or changes.edited or changes.removed or stored.settings != book.settings:
        raise SecretaryError(
            f"The results or settings in {Path(path).name} changed since the last update, so the published "
            f"ratings are not current. Run the update first, then the {what}.")
    return _published_from(book, stored)


def _published_from(book: LeagueBook, stored: PublishedState) -> Published:
    book = replace(book, state=stored)
    # The levels that update used, so that the rebuild is what it published even if the sheet was edited since.
    levels = stored.starting_levels if stored.starting_levels is not None else starting_levels(book)
    fit = fit_league(book.results, book.settings, players=book.players, starting_levels=levels)
    breakdown = explain_changes(book.results, book.state.previous, book.settings, book.players, current=fit)
    return Published(book, fit, _published_ratings(fit, breakdown), breakdown)


def inputs_digest(book: LeagueBook) -> str:
    """A digest of everything an update reads from the workbook, and of the tool's version."""
    digest = hashlib.blake2b(digest_size=16)
    for part in (__version__, repr(book.settings), repr(book.players), repr(book.fixtures), repr(book.divisions)):
        digest.update(part.encode("utf-8", "surrogatepass") + b"\x1f")
    fingerprints = row_digests(book.results)[1]
    if fingerprints:  # hexadecimal digests, each followed by the separator: one text, the same bytes
        digest.update(("\x1f".join(fingerprints) + "\x1f").encode("ascii"))
    return digest.hexdigest()


def _rated_rows(results: Sequence[Result]) -> tuple[tuple[str, str], ...]:
    """The (identity, fingerprint) of every rated row, for the next update's comparison."""
    identities, fingerprints = row_digests(results)
    return tuple(pair for pair, res in zip(zip(identities, fingerprints), results) if not res.void)


def _nothing_new(book: LeagueBook, published: PublishedState | None, inputs: str) -> bool:
    """The last update read exactly this (``inputs``: its `inputs_digest`) and its sheets are still there:
    an update would change nothing."""
    return (published is not None and bool(published.inputs) and schema.RATINGS_SHEET in book.tool_sheets
            and published.inputs == inputs)


def last_update(path: str | Path) -> UpdateOutcome:
    """What the last update published, rebuilt without writing anything; refuses when it is not current."""
    return _outcome(Path(path), _published(path, "review"), reason="Showing the last update (nothing was written).")


def _outcome(path: Path, pub: Published, *, reason: str, unchanged: bool = False) -> UpdateOutcome:
    """An outcome that shows the last update's account without writing anything."""
    notice, card = notice_pdf_path(path), handicap_pdf_path(path)
    watch = watch_list(pub.fit, pub.book.results)
    return UpdateOutcome(
        path=path, written=None, companion=False, reason=reason, unchanged=unchanged,
        backup=None, notice_pdf=notice if notice.exists() else None, handicap_pdf=card if card.exists() else None,
        book=pub.book, fit=pub.fit, ratings=pub.ratings, breakdown=pub.breakdown,
        watch=watch, levels=level_table(pub.fit, watch), forecasts=forecast_fixtures(pub.book.fixtures, pub.fit),
        log=_update_log(pub.book, pub.fit, pub.breakdown, pub.book.state.updated_at),
        notes=_notes(pub.fit, pub.breakdown) + tuple(
            a for a in (tune_advice(pub.book.state.tune_check, pub.book.settings, path.name),) if a))


def make_notice(path: str | Path, out: str | Path | None = None, notes: list | None = None) -> Path:
    """The PDF notice board of the last update, again (e.g. after it was lost or to print another copy);
    ``notes`` gets the names it could not print, in words, when there are any."""
    pub = _published(path, "notice board")
    watch = watch_list(pub.fit, pub.book.results)
    written = write_notice_pdf(Path(out) if out else notice_pdf_path(path), pub.breakdown, pub.ratings,
                               pub.book.settings, watch, level_table(pub.fit, watch))
    note = unprinted_note(pub.ratings)
    if notes is not None and note:
        notes.append(note)
    return written


def run_fixtures(path: str | Path, notes: list | None = None
                 ) -> tuple[tuple[FixtureForecast, ...], Path | None, Path | None, dt.date | None]:
    """Fill the Fixtures sheet's forecast columns and print the handicap card, without a full update.

    The last item is the newest result's date: fixtures dated before it are past. ``notes`` gets the
    names the card could not print, in words, when there are any."""
    pub = _published(path, "fixtures")
    forecasts = forecast_fixtures(pub.book.fixtures, pub.fit)
    latest = pub.fit.reference_date
    if not forecasts:
        return forecasts, None, None, latest
    path = Path(path)
    written = None
    if not fidelity.unsupported_content(path):
        wb = save.load_for_update(path)
        write_fixture_columns(wb, forecasts, pub.book.settings, latest=latest)
        written = save.save_workbook(wb, path).path
    card = write_handicap_pdf(handicap_pdf_path(path), forecasts, pub.book.settings, ratings=pub.ratings,
                              latest=latest)
    note = unprinted_note((), forecasts)
    if notes is not None and note:
        notes.append(note)
    return forecasts, written, card, latest


def _checked_book(path: str | Path) -> LeagueBook:
    book = read_workbook(path)
    if book.has_errors:
        raise WorkbookProblems(book.problems)
    return book


def _history_book(path: str | Path, what: str) -> LeagueBook:
    """The checked workbook, refused in plain words when its history is too short to predict from."""
    book = _checked_book(path)
    weeks = {r.date.isocalendar()[:2] for r in book.results if not r.void}
    if len(weeks) < 2:
        raise SecretaryError(
            f"{Path(path).name} has rated results from {len(weeks)} week{'s' if len(weeks) != 1 else ''}: "
            f"{what} predicts each week from the weeks before it, so it needs results from at least two "
            "different weeks.")
    return book


def evaluate_workbook(path: str | Path, *, cancel: CancelFlag | None = None) -> Evaluation:
    """How well the ratings would have predicted the league's own history, week by week."""
    book = _history_book(path, "the check")
    return evaluate(book.results, book.settings, players=book.players, starting_levels=starting_levels(book),
                    cancel=cancel)


def tune_workbook(path: str | Path, *, apply: bool = False, progress: Progress | None = None,
                  cancel: CancelFlag | None = None) -> Tuning:
    """Choose half-life, skill spread and division spread by walk-forward log-loss; write them only when ``apply``."""
    book = _history_book(path, "tuning")
    report = (lambda done, total: progress("Trying settings", done / max(total, 1))) if progress else None
    tuning = tune(book.results, book.settings, players=book.players, starting_levels=starting_levels(book),
                  progress=report, cancel=cancel)
    if apply and tuning.improved:
        save_settings(path, {"half_life_days": tuning.settings.half_life_days,
                             "skill_spread": tuning.settings.skill_spread,
                             "division_spread": tuning.settings.division_spread})
    return tuning


def new_league(path: str | Path) -> Path:
    """A blank league workbook from the template."""
    return new_workbook(path)


def restore(path: str | Path, pick: str | int | None = None) -> Path:
    """Bring back an earlier version of the workbook from its backups (see ``save.restore_previous``)."""
    return save.restore_previous(path, pick=pick)


def backup_versions(path: str | Path) -> list[save.BackupVersion]:
    """The earlier versions kept of the workbook, newest first."""
    return save.backup_versions(path)


def append_results_csv(path: str | Path, csv_path: str | Path) -> int:
    """Add the rows of a CSV (Results columns) to the workbook's Results sheet, saved safely."""
    from secretary.workbook.append import append_results

    with open(csv_path, newline="", encoding="utf-8") as handle:
        rows = list(csv.DictReader(handle))
    return append_results(path, rows)


def run_demo(folder: str | Path = "secretary-demo", progress: Progress | None = None) -> tuple[UpdateOutcome, UpdateOutcome]:
    """Copy the invented demo league to ``folder``, give it first ratings, add the new week and update again."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    workbook = folder / "league.xlsx"
    if workbook.exists():
        raise FileRefused(f"{workbook} already exists; choose another folder or remove it first.")
    shutil.copyfile(DATA / "demo-league.xlsx", workbook)
    shutil.copyfile(DATA / "demo-new-week.csv", folder / "new-week.csv")
    first = run_update(workbook, progress=progress)
    append_results_csv(workbook, folder / "new-week.csv")
    second = run_update(workbook, progress=progress)
    return first, second


def rating_history(path: str | Path) -> dict[str, list[tuple[dt.date, float]]]:
    """Each player's published ratings by update date, from the Rating history sheet (or its companion's)."""
    from secretary.workbook.history import read_rating_history

    path = Path(path)
    history = read_rating_history(path)
    companion = save.companion_path(path)
    if not history and companion.exists():
        history = read_rating_history(companion)
    return history


def save_settings(path: str | Path, values: dict[str, object]) -> Path:
    """Write the Settings sheet (field or label -> value; blank = default) and save the workbook safely."""
    from secretary.workbook.settings_write import write_settings

    return write_settings(path, values)
