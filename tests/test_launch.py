"""The desktop app's one executable (secretary.launch), run from the source as a real process."""
from __future__ import annotations

import os
import subprocess
import sys

from secretary import __version__
from secretary.gui import worker
from secretary.launch import opens_in_window
from tests.gui.helpers import DEMO, REPO


def launch(*args, **kwargs) -> subprocess.CompletedProcess:
    env = dict(os.environ, PYTHONPATH=str(REPO))
    env.pop("DISPLAY", None)
    return subprocess.run([sys.executable, "-m", "secretary.launch", *args], cwd=REPO, env=env,
                          capture_output=True, timeout=300, **kwargs)


def test_a_workbook_alone_opens_the_window_and_anything_else_is_the_command_line():
    assert opens_in_window(["/home/sam/League 2026.xlsx"]) and opens_in_window(["C:\\Leagues\\club.XLSM"])
    assert not opens_in_window([]) and not opens_in_window(["demo"]) and not opens_in_window(["--version"])
    assert not opens_in_window(["check", "league.xlsx"]) and not opens_in_window(["notes.csv"])


def test_arguments_are_the_command_line():
    done = launch("--version", text=True)
    assert (done.returncode, done.stdout.strip()) == (0, f"secretary {__version__}")
    done = launch("check", str(DEMO), text=True)
    assert done.returncode == 0 and "1 warning (the update can go ahead)" in done.stdout, done
    done = launch("no-such-command", text=True)
    assert done.returncode == 2 and "invalid choice" in done.stderr and "Traceback" not in done.stderr


def test_a_workbook_without_a_display_says_the_window_cannot_open(tmp_path):
    book = tmp_path / "league.xlsx"
    book.write_bytes(DEMO.read_bytes())
    done = launch(str(book), text=True)
    assert done.returncode == 2 and "The window cannot open here" in done.stderr


def test_the_hidden_argument_makes_the_executable_the_background_process(tmp_path):
    """What a frozen app starts instead of ``python -m secretary.gui.child``: the same protocol, answered."""
    book = tmp_path / "league.xlsx"
    book.write_bytes(DEMO.read_bytes())
    env = dict(os.environ, PYTHONPATH=str(REPO))
    proc = subprocess.Popen([sys.executable, "-m", "secretary.launch", worker.CHILD_ARGUMENT], cwd=REPO, env=env,
                            stdin=subprocess.PIPE, stdout=subprocess.PIPE)
    try:
        worker.send(proc.stdin, ("job", "check", (book,)))
        messages = []
        while not messages or messages[-1][0] == "progress":
            messages.append(worker.receive(proc.stdout))
        assert messages[-1][0] == "done", messages[-1]
        checked = messages[-1][1]
        assert checked.result_rows > 1000 and not checked.errors
    finally:
        proc.stdin.close()
        assert proc.wait(60) == 0  # the end of its input ends it


def test_a_frozen_app_starts_itself_as_the_background_process(monkeypatch):
    assert worker.child_command() == [sys.executable, "-m", "secretary.gui.child"]
    monkeypatch.setattr(sys, "frozen", True, raising=False)  # what PyInstaller's bootloader sets
    assert worker.child_command() == [sys.executable, worker.CHILD_ARGUMENT]


def test_programs_a_frozen_app_starts_get_the_system_libraries(monkeypatch):
    from secretary.launch import restore_system_libraries

    monkeypatch.setenv("LD_LIBRARY_PATH", "/opt/app/_internal")
    restore_system_libraries()  # from the source: nothing to undo
    assert os.environ["LD_LIBRARY_PATH"] == "/opt/app/_internal"
    monkeypatch.setattr(sys, "frozen", True, raising=False)
    restore_system_libraries()  # the bundle's start-up had no library path of the user's to keep
    assert "LD_LIBRARY_PATH" not in os.environ
    monkeypatch.setenv("LD_LIBRARY_PATH", "/opt/app/_internal:/usr/local/lib")
    monkeypatch.setenv("LD_LIBRARY_PATH_ORIG", "/usr/local/lib")
    restore_system_libraries()
    assert os.environ["LD_LIBRARY_PATH"] == "/usr/local/lib" and "LD_LIBRARY_PATH_ORIG" not in os.environ


def test_python_dash_m_secretary_is_the_secretary_command():
    env = dict(os.environ, PYTHONPATH=str(REPO))
    done = subprocess.run([sys.executable, "-m", "secretary", "check", str(DEMO)], cwd=REPO, env=env,
                          capture_output=True, text=True, timeout=300)
    assert done.returncode == 0 and "1 warning (the update can go ahead)" in done.stdout, done
    done = subprocess.run([sys.executable, "-m", "secretary", "--version"], cwd=REPO, env=env,
                          capture_output=True, text=True, timeout=300)
    assert (done.returncode, done.stdout.strip()) == (0, f"secretary {__version__}")
