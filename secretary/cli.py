"""The command line: a thin shell over the pipeline.

Exit codes: 0 done; 1 the workbook has problems (or was refused) and nothing
was written; 2 usage error; 3 something went wrong inside the tool (a bug:
the details are in the log file named on screen).
"""
from __future__ import annotations

import argparse
import datetime as dt
import os
import sys
import time
from pathlib import Path

from secretary import __version__
from secretary.errors import SecretaryError, WorkbookProblems
from secretary.model.sentences import plural
from secretary.threads import limit_native_threads

EXIT_DONE, EXIT_PROBLEMS, EXIT_USAGE, EXIT_BUG = 0, 1, 2, 3
EXIT_BROKEN_PIPE = 141  # 128 + SIGPIPE, what a shell reports for a program whose output was closed

DESCRIPTION = """\
Weekly player ratings for a cue-sports league, from its own Excel workbook.

Every player's rating is worked out together from all the league's results,
written back into the workbook with its uncertainty (±), an exact account of
why each rating changed, a printable notice board, a watch list and fair
handicap races.  Ratings are estimates: the league committee makes the
decisions.  Run with no command to open the window.
"""

EPILOG = """\
exit codes: 0 done; 1 the workbook has problems or was refused (nothing was
written); 2 the command was not understood; 3 an unexpected error (details
in the log file named on screen)."""


class ProgressBar:
    """A progress bar on stderr that appears only once the work has taken more than a second."""

    def __init__(self, stream=None, delay: float = 1.0):
        self.stream, self.delay, self.start = stream or sys.stderr, delay, time.monotonic()
        self.shown = False

    def __call__(self, stage: str, fraction: float) -> None:
        if time.monotonic() - self.start < self.delay and fraction < 1.0:
            return
        if fraction >= 1.0 and not self.shown:
            return
        self.shown = True
        width = 24
        filled = int(round(width * min(max(fraction, 0.0), 1.0)))
        line = f"[{'#' * filled}{'.' * (width - filled)}] {fraction:4.0%} {stage}"
        if self.stream.isatty():
            self.stream.write("\r" + line.ljust(72) + ("\n" if fraction >= 1.0 else ""))
        else:  # a log file gets a line per stage and per tenth, not per step
            mark = (stage, int(fraction * 10))
            if mark == getattr(self, "last", None):
                return
            self.last = mark
            self.stream.write(line + "\n")
        self.stream.flush()


def _signed(x: float) -> str:
    return f"{x:+.0f}"


def summary(outcome) -> list[str]:
    """The update in a few lines for the terminal."""
    book, fit, bd = outcome.book, outcome.fit, outcome.breakdown
    name = book.settings.league_name or outcome.path.stem
    games = int(round(sum(r.games_a + r.games_b for r in book.results if not r.void)))
    lines = [f"{name}: ratings as of {outcome.log.reference_date:%d %b %Y}",
             f"  {len(outcome.ratings)} players rated, {outcome.log.rows_rated} results ({games} games)."]
    if bd.first_update:
        lines.append("  First ratings for this workbook: the next update will explain every change.")
        if bd.note:
            lines.append(f"  {bd.note}")
    else:
        c = bd.changes
        since = f"At the last update ({book.state.updated_at})" if outcome.unchanged else "Since the last update"
        lines.append(f"  {since}: {len(c.new)} new, {len(c.edited)} edited, {len(c.removed)} removed result rows.")
        movers = sorted((p for p in bd.players if not p.is_new), key=lambda p: -abs(p.change))[:5]
        if movers:
            lines.append("  Biggest changes: " + "; ".join(
                f"{p.name} {_signed(p.shown[2])} ({p.shown[0]} -> {p.shown[1]})" for p in movers))
    from secretary.pipeline import watch_lines  # loaded already by the update

    watching = watch_lines(outcome.watch)
    if watching:
        lines.append("  Watch list:")
        lines += [f"    - {line}" for line in watching]
    lines += [f"  Note: {note}" for note in outcome.notes]
    if book.warnings:
        lines.append(f"  {plural(len(book.warnings), 'warning')}; see the Problems sheet:")
        lines += [f"    - {w}" for w in book.warnings[:5]]
        if len(book.warnings) > 5:
            lines.append(f"    ... and {len(book.warnings) - 5} more")
    if outcome.written is None:
        lines.append(f"  {outcome.reason}")
    else:
        lines.append(f"  {outcome.reason}")
        lines.append(f"  Ratings written to: {outcome.written}")
        if outcome.backup:
            lines.append(f"  Previous version kept in: {outcome.backup}")
        if outcome.notice_pdf:
            lines.append(f"  Notice board (PDF): {outcome.notice_pdf}")
        if outcome.handicap_pdf:
            lines.append(f"  Handicap card for the coming fixtures (PDF): {outcome.handicap_pdf}")
    return lines


def _print_problems(problems, stream=None) -> None:
    stream = stream or sys.stdout
    errors = [p for p in problems if p.is_error]
    warnings = [p for p in problems if not p.is_error]
    if errors:
        print(f"{plural(len(errors), 'error')} to fix before the ratings can be updated:", file=stream)
        for p in errors:
            print(f"  - {p}", file=stream)
    if warnings:
        print(f"{plural(len(warnings), 'warning')} (the update can go ahead):", file=stream)
        for p in warnings:
            print(f"  - {p}", file=stream)


def cmd_update(args) -> int:
    from secretary.pipeline import run_update

    outcome = run_update(args.workbook, out=args.out, dry_run=args.dry_run, progress=ProgressBar(), force=args.force)
    print("\n".join(summary(outcome)))
    return EXIT_DONE


def cmd_check(args) -> int:
    from secretary.pipeline import check_workbook

    book = check_workbook(args.workbook)
    if not book.problems:
        print(f"{Path(args.workbook).name}: no problems found ({len(book.results)} result rows).")
        return EXIT_DONE
    _print_problems(book.problems)
    return EXIT_PROBLEMS if book.has_errors else EXIT_DONE


def cmd_new(args) -> int:
    from secretary.pipeline import new_league

    path = new_league(args.workbook)
    print(f"A blank league workbook is ready: {path}\nFill in the Results sheet (and Players, Settings if you like), then run: secretary update \"{path}\"")
    return EXIT_DONE


def cmd_restore(args) -> int:
    from secretary.pipeline import backup_versions, restore

    if args.list:
        versions = backup_versions(args.workbook)
        if not versions:
            print(f"No earlier versions of {Path(args.workbook).name} are kept yet.")
            return EXIT_DONE
        print(f"Earlier versions of {Path(args.workbook).name} kept in its backups folder (newest first):")
        for v in versions:
            print(f"  {v.number:>2}  {v.kept_at:%Y-%m-%d %H:%M:%S}  {v.size / 1024:,.0f} KB"
                  + ("  (the same as the workbook now)" if v.current else ""))
        print(f"Bring one back with: secretary restore \"{args.workbook}\" --pick NUMBER (or --pick \"DATE TIME\").")
        return EXIT_DONE
    backup = restore(args.workbook, pick=args.pick)
    print(f"Restored {args.workbook} from {backup.name}. The version it replaced was kept as a backup too; "
          "no earlier version was removed.")
    return EXIT_DONE


def cmd_demo(args) -> int:
    from secretary.pipeline import run_demo

    first, second = run_demo(args.folder, progress=ProgressBar())
    print(f"The demo league is in {Path(args.folder).resolve()}.")
    print("First update (first ratings):")
    print("\n".join(summary(first)[:3]))
    print("\nThen the new week's results (new-week.csv) were added and the ratings updated again:")
    print("\n".join(summary(second)))
    print(f"\nOpen it in the window with:  secretary open \"{Path(args.folder) / 'league.xlsx'}\"")
    return EXIT_DONE


def cmd_notice(args) -> int:
    from secretary.pipeline import make_notice

    notes: list[str] = []
    path = make_notice(args.workbook, args.out, notes)
    print(f"Notice board of the last update written to: {path}")
    for note in notes:
        print(f"  Note: {note}")
    return EXIT_DONE


def in_date_order(forecasts):
    """Fixtures by date, then in sheet order for the same date; undated ones last, in sheet order."""
    return sorted(forecasts, key=lambda fc: (fc.fixture.date is None, fc.fixture.date or dt.date.min, fc.fixture.row))


def cmd_fixtures(args) -> int:
    from secretary.pipeline import run_fixtures

    notes: list[str] = []
    forecasts, written, card, latest = run_fixtures(args.workbook, notes)
    if not forecasts:
        print("The Fixtures sheet lists no coming matches; nothing to forecast.")
        return EXIT_DONE
    from secretary.model.notice import fixture_note, is_past, long_date, percent_chance

    past = sum(1 for fc in forecasts if is_past(fc.fixture.date, latest))
    if past:
        print(f"Dated before the latest results ({long_date(latest)}), so marked past below: "
              f"{past} of the {len(forecasts)} fixtures.")
    for fc in in_date_order(forecasts):
        f = fc.fixture
        note = fixture_note(fc, latest)
        print(f"  {f.label_a} v {f.label_b}: {f.label_a} {percent_chance(fc.race_chance)} to win a race "
              f"{fc.race_a}-{fc.race_b}; fair race {fc.fair_race_a}-{fc.fair_race_b}" + (f" ({note})" if note else ""))
    if written:
        print(f"Forecast columns written to the Fixtures sheet of {written}")
    else:
        print("The workbook holds content this tool cannot save unchanged, so the Fixtures sheet was not written.")
    print(f"Handicap card (PDF): {card}")
    for note in notes:
        print(f"  Note: {note}")
    return EXIT_DONE


def cmd_evaluate(args) -> int:
    from secretary.pipeline import evaluate_workbook

    ev = evaluate_workbook(args.workbook)
    print(f"Walk-forward check of {Path(args.workbook).name}: each week predicted from the weeks before it.")
    print(f"  {ev.games:,.0f} games in {ev.matches:,} matches predicted over {ev.steps} weeks "
          f"({ev.predictive_race.count:,.0f} of the matches were races won outright).")
    print("  Scores (lower is better; a coin toss scores log-loss 0.6931, Brier 0.2500).")
    print("  Predictive chances (what the tool shows) are averaged over each rating's ±; point chances")
    print("  use the ratings alone.")
    print(f"    {'':<24} {'log-loss':>9} {'Brier':>7}")
    for label, sc in (("per game, predictive", ev.predictive), ("per game, point", ev),
                      ("per race, predictive", ev.predictive_race), ("per race, point", ev.race)):
        print(f"    {label:<24} {sc.log_loss:>9.4f} {sc.brier:>7.4f}")
    if ev.cross.count:
        print(f"  Cross-division games (the two players' home divisions differ): {ev.cross.count:,.0f} of the games.")
        for label, sc in (("per game, predictive", ev.predictive_cross), ("per game, point", ev.cross)):
            print(f"    {label:<24} {sc.log_loss:>9.4f} {sc.brier:>7.4f}")
    if ev.doubles is not None:
        print(f"  Doubles alone ({ev.doubles.count:,.0f} games, included above):")
        for label, sc in (("per game, predictive", ev.doubles_predictive), ("per game, point", ev.doubles)):
            print(f"    {label:<24} {sc.log_loss:>9.4f} {sc.brier:>7.4f}")
    if ev.few_games:
        print(f"  Games involving a player with few games: {ev.few_games:,.0f}, point log-loss {ev.few_log_loss:.4f}.")
    for what, unit, bands in (("each game", "games", ev.predictive.calibration),
                              ("each race", "races", ev.predictive_race.calibration)):
        print(f"  Calibration of the predictive chance of {what}: when the favourite's chance was in each band,")
        print("  how often the favourite won:")
        print(f"    {'band':>9} {unit:>8} {'predicted':>10} {'happened':>9}")
        for band in bands:
            if band.games:
                print(f"    {band.low:>4.0%}-{band.high:<4.0%} {band.games:>8,.0f} {band.predicted:>10.1%} "
                      f"{band.observed:>9.1%}")
    return EXIT_DONE


def cmd_tune(args) -> int:
    from secretary.pipeline import tune_workbook

    t = tune_workbook(args.workbook, apply=args.apply, progress=ProgressBar())
    old, new = t.old_settings, t.settings
    for label, st, score in (("Current settings:", old, t.old_score), ("Best found:      ", new, t.new_score)):
        print(f"{label} half-life {st.half_life_days:g} days, skill spread {st.skill_spread:g} points, "
              f"division spread {st.division_spread:g} points: log-loss {score:.4f} per game (predictive chances).")
    if not t.improved:
        print("The current settings are already the best found; nothing to change.")
    elif args.apply:
        print("Written to the Settings sheet; the next update uses them.")
    else:
        print("Nothing was written. Run again with --apply to write these to the Settings sheet.")
    return EXIT_DONE


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="secretary", description=DESCRIPTION, epilog=EPILOG,
                                     formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--version", action="version", version=f"secretary {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")

    p = sub.add_parser("update", help="the weekly update: check, rate, explain, write back safely")
    p.add_argument("workbook", help="the league workbook (.xlsx or .xlsm)")
    p.add_argument("--dry-run", action="store_true", help="do everything except write: shows what the update would do")
    p.add_argument("--out", metavar="FILE", help="write the updated workbook to FILE instead of over the original")
    p.add_argument("--force", action="store_true",
                   help="rebuild the sheets and printouts even when nothing is new since the last update")
    p.set_defaults(run=cmd_update)

    p = sub.add_parser("check", help="only check the workbook for problems; nothing is written")
    p.add_argument("workbook", help="the league workbook")
    p.set_defaults(run=cmd_check)

    p = sub.add_parser("new", help="make a blank league workbook from the template")
    p.add_argument("workbook", help="the file to create (it must not exist yet)")
    p.set_defaults(run=cmd_new)

    p = sub.add_parser("restore", help="bring back an earlier version of the workbook from its backups folder")
    p.add_argument("workbook", help="the league workbook")
    p.add_argument("--list", action="store_true", help="list the earlier versions kept, numbered, newest first")
    p.add_argument("--pick", metavar="N|DATE",
                   help="the version to bring back: its number in --list, or its date and time (e.g. \"2026-03-14 20:15\"); "
                        "default: the newest that differs from the workbook now")
    p.set_defaults(run=cmd_restore)

    p = sub.add_parser("open", help="open the window (with the workbook, if given)")
    p.add_argument("workbook", nargs="?", help="the league workbook to open")
    p.set_defaults(run=cmd_open)

    p = sub.add_parser("notice", help="print the notice board (PDF) of the last update again")
    p.add_argument("workbook", help="the league workbook")
    p.add_argument("--out", metavar="FILE.pdf", help="where to write the PDF (default: beside the workbook)")
    p.set_defaults(run=cmd_notice)

    p = sub.add_parser("fixtures", help="forecast the coming fixtures and suggest fair races, without a full update")
    p.add_argument("workbook", help="the league workbook (its ratings must be current)")
    p.set_defaults(run=cmd_fixtures)

    p = sub.add_parser("evaluate", help="how well the ratings predict the league's own history, week by week")
    p.add_argument("workbook", help="the league workbook")
    p.set_defaults(run=cmd_evaluate)

    p = sub.add_parser("tune", help="choose half-life and skill spread from the league's own history")
    p.add_argument("workbook", help="the league workbook")
    p.add_argument("--apply", action="store_true", help="write the chosen settings to the Settings sheet")
    p.set_defaults(run=cmd_tune)

    p = sub.add_parser("demo", help="copy the invented demo league to FOLDER and update it twice")
    p.add_argument("folder", nargs="?", default="secretary-demo", help="where to put it (default: ./secretary-demo)")
    p.set_defaults(run=cmd_demo)
    return parser


def main(argv=None) -> int:
    limit_native_threads()
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as stop:  # argparse exits 2 on usage errors, 0 on --help
        return int(stop.code or 0)
    if getattr(args, "run", None) is None:
        return open_window(None)
    before = _file_mark(getattr(args, "workbook", None))
    try:
        code = args.run(args)
        sys.stdout.flush()  # here, so that a reader who went away is met below rather than at exit
        return code
    except WorkbookProblems as err:
        print(err)
        _print_problems(err.problems)
        return EXIT_PROBLEMS
    except SecretaryError as err:
        print(err, file=sys.stderr)
        return EXIT_PROBLEMS
    except BrokenPipeError:  # whoever read the output stopped early (`| head`): end quietly, as Unix tools do
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())  # so the exit's own flush cannot fail
        return EXIT_BROKEN_PIPE
    except KeyboardInterrupt:
        changed = before is not None and _file_mark(args.workbook) != before
        print("Stopped; " + ("the workbook had already been saved." if changed else "the workbook was not changed."),
              file=sys.stderr)
        return EXIT_PROBLEMS
    except Exception:  # a bug: never a traceback on screen
        from secretary.userdirs import log_exception

        log = log_exception(f"secretary {' '.join(argv or sys.argv[1:])}")
        changed = before is not None and _file_mark(args.workbook) != before
        said = ("the workbook was saved before the problem, so it holds this run's results"
                if changed else "the workbook was not changed")
        print(f"Something went wrong inside secretary; {said}. "
              f"The details are in the log file at {log}", file=sys.stderr)
        return EXIT_BUG


def _file_mark(path) -> tuple[int, int] | None:
    """Size and modification time of the file at ``path`` (a symbolic link's target), to tell truthfully
    whether a run that failed had already saved it; None when there is no such file."""
    try:
        info = Path(path).stat() if path else None
    except OSError:
        return None
    return (info.st_size, info.st_mtime_ns) if info else None


def open_window(workbook) -> int:
    """Open the desktop window, with the workbook if one is named."""
    try:
        from secretary.gui.app import run
    except ImportError as exc:  # Python built without Tk
        print(f"The window is not available here ({exc}); use the commands below.", file=sys.stderr)
        build_parser().print_help()
        return EXIT_USAGE
    return run(workbook)


def cmd_open(args) -> int:
    return open_window(args.workbook)


if __name__ == "__main__":
    sys.exit(main())
