"""The one executable of the desktop app (and ``python -m secretary.launch`` from the source).

No arguments: the window.  One argument naming a workbook (what a file manager
passes when a .xlsx is opened with the app): the window with that workbook.
Anything else: the command line, exactly as ``secretary ...``.

Two hidden first arguments serve the app itself: ``--background-worker`` makes
this executable the window's background process (a frozen app has no
``python -m secretary.gui.child``), and ``--self-test OUT WORKBOOK [--print]`` opens the
window on a workbook, waits until its ratings are shown, writes what the
window shows to OUT (JSON) and closes: the bundle's test and start-time
measurement use it.
"""
from __future__ import annotations

import os
import sys
from pathlib import Path

from secretary.gui.worker import CHILD_ARGUMENT

SELF_TEST_ARGUMENT = "--self-test"
WORKBOOK_SUFFIXES = (".xlsx", ".xlsm")


def opens_in_window(argv: list[str]) -> bool:
    """Is this the file manager handing over a workbook (one path ending .xlsx/.xlsm, not a command)?"""
    return len(argv) == 1 and Path(argv[0]).suffix.lower() in WORKBOOK_SUFFIXES and not argv[0].startswith("-")


def hide_own_console() -> None:
    """On Windows, hide the console window that a double-click made for this process alone."""
    if sys.platform != "win32":
        return
    try:
        import ctypes

        kernel = ctypes.windll.kernel32
        if kernel.GetConsoleProcessList((ctypes.c_uint * 2)(), 2) == 1:  # no shell shares it: ours alone
            ctypes.windll.user32.ShowWindow(kernel.GetConsoleWindow(), 0)
    except (AttributeError, OSError):
        pass  # a console left showing is untidy, never harmful


def restore_system_libraries() -> None:
    """Programs the app starts (the PDF viewer) get the system's own libraries, never the app's copies.

    The bundle's start-up points the library path at the app's folder; an older copy of a library there
    can break a newer system program.  This process has loaded its libraries already; the background
    process is the app's executable again, which sets the path for itself.
    """
    if not getattr(sys, "frozen", False):
        return
    for name in ("LD_LIBRARY_PATH", "DYLD_LIBRARY_PATH"):
        original = os.environ.pop(f"{name}_ORIG", None)
        if original is None:
            os.environ.pop(name, None)
        else:
            os.environ[name] = original


def main(argv: list[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    restore_system_libraries()
    if argv[:1] == [CHILD_ARGUMENT]:
        from secretary.gui.child import main as child_main

        try:
            return child_main()
        except BrokenPipeError:  # the window has gone (closed or killed): nobody is left to answer
            return 0
    if argv[:1] == [SELF_TEST_ARGUMENT]:
        from secretary.gui.selftest import main as self_test

        return self_test(argv[1:])
    from secretary import cli

    if not argv or opens_in_window(argv):
        hide_own_console()
        return cli.open_window(argv[0] if argv else None)
    return cli.main(argv)


if __name__ == "__main__":
    sys.exit(main())
