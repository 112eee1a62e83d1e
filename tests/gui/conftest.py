"""Fixtures for the window's tests: a real X server (Xvfb), callback errors that fail the test, a dialog recorder."""
from __future__ import annotations

import contextlib
import os
import shutil
import subprocess
import threading
import time
import tkinter as tk
from pathlib import Path

import pytest

from tests.gui.helpers import DEMO, RecordingDialogs


@contextlib.contextmanager
def xvfb(*screens: str):
    """A private X display from Xvfb with screens of these sizes (``WIDTHxHEIGHT``; 1280x1024 if none), set as
    DISPLAY (its first screen); skips where Xvfb cannot start. Screen k is ``DISPLAY`` with ``.k`` added."""
    sizes = [a for k, size in enumerate(screens or ("1280x1024",)) for a in ("-screen", str(k), f"{size}x24")]
    if shutil.which("Xvfb") is None:
        pytest.skip("Xvfb is not installed (apt-get install xvfb): the window cannot be tested here")
    # -displayfd makes Xvfb pick a free display number itself and print it once it is listening.
    read, write = os.pipe()
    proc = subprocess.Popen(["Xvfb", "-displayfd", str(write), *sizes, "-nolisten", "tcp"],
                            pass_fds=(write,), stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    os.close(write)
    number = b""
    deadline = time.monotonic() + 20
    with os.fdopen(read, "rb") as pipe:
        while time.monotonic() < deadline and not number.endswith(b"\n"):
            chunk = pipe.read(1)
            if not chunk:
                break
            number += chunk
    socket = Path(f"/tmp/.X11-unix/X{number.decode().strip()}")
    while number and time.monotonic() < deadline and not socket.exists():
        time.sleep(0.05)
    if not number or proc.poll() is not None or not socket.exists():
        proc.kill()
        pytest.skip("Xvfb could not be started here: the window cannot be tested")
    name = f":{number.decode().strip()}"
    old = os.environ.get("DISPLAY")
    os.environ["DISPLAY"] = name
    try:
        yield name
    finally:
        proc.terminate()
        proc.wait(10)
        if old is None:
            os.environ.pop("DISPLAY", None)
        else:
            os.environ["DISPLAY"] = old


LAPTOP_SCREENS = ((1024, 600), (1366, 768))  # screens 1 and 2 of the session's display


@pytest.fixture(scope="session")
def display():
    """A private X display from Xvfb for the whole session: screen 0 roomy, then a netbook's and a laptop's.

    One server for everything: Tk keeps its connection to a display open after its window is gone, so a
    server stopped before the end of the session would take the test process down with it.
    """
    with xvfb("1280x1024", *(f"{w}x{h}" for w, h in LAPTOP_SCREENS)) as name:
        yield name


@pytest.fixture(autouse=True)
def tk_errors(monkeypatch):
    """Any exception raised inside a Tk callback fails the test (Tk would only print it)."""
    caught: list[BaseException] = []

    def report(self, kind, value, tb):
        caught.append(value)

    monkeypatch.setattr(tk.Tk, "report_callback_exception", report)
    yield caught
    if caught:
        pytest.fail(f"a Tk callback raised: {caught[0]!r}")


@pytest.fixture(autouse=True)
def user_home(tmp_path, monkeypatch):
    """The tool's user folder (recent workbooks, log) inside the test's own folder."""
    home = tmp_path / "user-folder"
    monkeypatch.setenv("SECRETARY_HOME", str(home))
    return home


@contextlib.contextmanager
def main_window(tk_errors, screen_name: str | None = None):
    """The real main window (on ``screen_name``, or DISPLAY's first screen) with recorded dialogs; closed,
    with its worker finished, afterwards."""
    from secretary.gui.app import App

    root = tk.Tk(screenName=screen_name)
    window = App(root, dialogs=RecordingDialogs())
    window.errors = tk_errors
    try:
        root.update()
        yield window
    finally:  # a failing test closes its window too
        window.worker.cancel.set()
        window.worker.join(300)
        if not window.closed:
            window.close()
    assert not [t for t in threading.enumerate() if t.name.startswith("secretary-")], "a worker thread was left"


@pytest.fixture
def app(display, tk_errors):
    """The real main window with recorded dialogs."""
    with main_window(tk_errors) as window:
        yield window


@pytest.fixture(scope="session")
def demo_made(tmp_path_factory) -> Path:
    """The command line's demo (first ratings, then the new week: two updates), made once for the session."""
    from secretary.pipeline import run_demo

    folder = tmp_path_factory.mktemp("demo") / "demo"
    run_demo(folder)
    return folder


@pytest.fixture
def demo_league(demo_made, tmp_path) -> Path:
    """This test's own copy of the updated demo league's folder (the workbook is ``league.xlsx`` in it)."""
    folder = tmp_path / "league"
    shutil.copytree(demo_made, folder)
    return folder


@pytest.fixture
def demo_copy(tmp_path) -> Path:
    path = tmp_path / "league.xlsx"
    shutil.copyfile(DEMO, path)
    return path
