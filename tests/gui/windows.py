"""The top-level windows an X server shows, read with xwininfo (x11-utils): for programs started as processes."""
from __future__ import annotations

import os
import re
import shutil
import subprocess
import time

import pytest


def window_titles(display: str) -> list[str]:
    """The names of every window on the display, as the window manager would see them."""
    if shutil.which("xwininfo") is None:
        pytest.skip("xwininfo is not installed (apt-get install x11-utils)")
    out = subprocess.run(["xwininfo", "-root", "-tree"], env=dict(os.environ, DISPLAY=display),
                         capture_output=True, text=True, timeout=30).stdout
    return re.findall(r'^\s+0x[0-9a-f]+ "(.*?)":', out, flags=re.M)


def wait_for_window(display: str, title: str, proc: subprocess.Popen, timeout: float = 120.0) -> list[str]:
    """Wait until a window named ``title`` shows (fails if the process ends first); returns all titles."""
    deadline = time.monotonic() + timeout
    while True:
        titles = window_titles(display)
        if title in titles:
            return titles
        if proc.poll() is not None:
            raise AssertionError(f"the program ended (exit code {proc.returncode}) before showing {title!r}: "
                                 f"{proc.communicate()}")
        if time.monotonic() > deadline:
            raise AssertionError(f"no window {title!r} within {timeout} s; windows: {titles}")
        time.sleep(0.2)


def stop(proc: subprocess.Popen) -> None:
    """End a window's process (its background process ends with its input)."""
    proc.terminate()
    try:
        proc.wait(20)
    except subprocess.TimeoutExpired:
        proc.kill()
        proc.wait()
