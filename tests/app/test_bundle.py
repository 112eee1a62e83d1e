"""The desktop app, built by scripts/build-app from this working tree and run as a secretary would run it.

Built once (about two minutes), unpacked from its .tar.gz, and run with a bare
environment: PATH=/usr/bin:/bin, no PYTHONPATH, no virtual environment, a fresh
home folder.  The bundled results are checked against the same work done by
the source code in this process.
"""
from __future__ import annotations

import json
import shlex
import shutil
import subprocess
import sys
import tarfile
import time
from pathlib import Path

import openpyxl
import pytest

from secretary import pipeline
from secretary.gui import welcome
from tests.gui.helpers import REPO
from tests.gui.windows import stop, wait_for_window

pytestmark = [pytest.mark.slow,
              pytest.mark.skipif(not sys.platform.startswith("linux"), reason="the bundle test runs on Linux")]
LEAGUE = "Harbourside & District Pool League"


@pytest.fixture(scope="module")
def app(tmp_path_factory) -> Path:
    """The unpacked app folder (its executable is ``secretary`` inside)."""
    pytest.importorskip("PyInstaller", reason='building the app needs PyInstaller: pip install ".[app]"')
    base = tmp_path_factory.mktemp("bundle")
    subprocess.run([sys.executable, str(REPO / "scripts" / "build-app"), "--out", str(base / "dist"),
                    "--work", str(base / "work")], check=True, timeout=3600)
    (archive,) = (base / "dist").glob("secretary-*-linux-*.tar.gz")
    with tarfile.open(archive) as tar:
        tar.extractall(base / "unpacked", filter="tar")
    return base / "unpacked" / "secretary"


def bare_env(home: Path, display: str | None = None) -> dict[str, str]:
    """What a double-click gives: no Python on the path but the system's, nothing of this project's."""
    env = {"PATH": "/usr/bin:/bin", "HOME": str(home), "LANG": "C.UTF-8"}
    return env | ({"DISPLAY": display} if display else {})


def run_app(app: Path, home: Path, *args, **kwargs) -> subprocess.CompletedProcess:
    return subprocess.run([str(app / "secretary"), *args], env=bare_env(home), cwd=home, capture_output=True,
                          text=True, timeout=600, **kwargs)


def ratings_sheet(path: Path) -> list[tuple]:
    """(player, division, rating, ±) of the Ratings sheet's ranked table, top to bottom."""
    wb = openpyxl.load_workbook(path, read_only=True, data_only=True)
    try:
        rows = []
        for row in wb["Ratings"].iter_rows(min_row=2, values_only=True):
            if not isinstance(row[0], int):
                break
            rows.append((row[1], row[2], row[3], row[4]))
        return rows
    finally:
        wb.close()


def pdf_text(path: Path) -> str:
    return subprocess.run(["pdftotext", "-layout", str(path), "-"], capture_output=True, text=True, check=True).stdout


@pytest.fixture(scope="module")
def demo(app, tmp_path_factory) -> Path:
    """The bundled ``secretary demo``'s folder, run in a fresh home."""
    home = tmp_path_factory.mktemp("home")
    done = run_app(app, home, "demo", str(home / "demo"))
    assert done.returncode == 0, done
    assert f"{LEAGUE}: ratings as of" in done.stdout and "Traceback" not in done.stderr
    return home / "demo"


def test_the_archive_holds_the_app_its_launcher_fonts_and_data(app):
    assert (app / "secretary").stat().st_mode & 0o111 and (app / "install.sh").stat().st_mode & 0o111
    inside = app / "_internal" / "secretary" / "data"
    for name in ("demo-league.xlsx", "demo-new-week.csv", "league-template.xlsx"):
        assert (inside / name).read_bytes() == (REPO / "secretary" / "data" / name).read_bytes()
    fonts = inside / "fonts"
    assert {p.name for p in fonts.iterdir()} == {"DejaVuSans.ttf", "DejaVuSans-Bold.ttf", "LICENSE-DejaVu.txt"}
    assert "Bitstream Vera" in (fonts / "LICENSE-DejaVu.txt").read_text(encoding="utf-8")  # DejaVu's licence
    assert (app / "_internal" / "_tcl_data" / "init.tcl").is_file() and (app / "_internal" / "_tk_data").is_dir()
    from PIL import Image

    with Image.open(app / "secretary.png") as icon:
        assert icon.size == (256, 256) and icon.mode == "RGBA"


def test_bundled_demo_gives_the_same_ratings_and_pdfs_as_the_source(demo, tmp_path):
    pipeline.run_demo(tmp_path / "source")
    bundled, source = ratings_sheet(demo / "league.xlsx"), ratings_sheet(tmp_path / "source" / "league.xlsx")
    assert len(bundled) == 63 and [r[:2] for r in bundled] == [r[:2] for r in source]
    assert max(abs(b[2] - s[2]) + abs(b[3] - s[3]) for b, s in zip(bundled, source)) < 1e-6
    assert (demo / "backups").is_dir() and list((demo / "backups").glob("league-*.xlsx"))
    notice = pdf_text(demo / "league - notice board.pdf")
    assert LEAGUE in notice and bundled[0][0] in notice
    assert "v" in pdf_text(demo / "league - handicap card.pdf")
    fonts = subprocess.run(["pdffonts", str(demo / "league - notice board.pdf")], capture_output=True, text=True,
                           check=True).stdout
    assert "DejaVuSans" in fonts and "DejaVuSans-Bold" in fonts  # the bundled font, embedded


OPENER = """#!/bin/sh
# stands in for the desktop's opener (xdg-open): writes down what it was given, and the library path it got
printf '%s\\n%s\\n' "$1" "${LD_LIBRARY_PATH-unset}" > "$OPENED.part" && mv "$OPENED.part" "$OPENED"
"""


def test_bundled_window_shows_the_ratings_and_prints(app, demo, display, tmp_path):
    out, opened, bin_folder = tmp_path / "shown.json", tmp_path / "opened.txt", tmp_path / "bin"
    bin_folder.mkdir()
    (bin_folder / "xdg-open").write_text(OPENER, encoding="utf-8")
    (bin_folder / "xdg-open").chmod(0o755)
    env = bare_env(tmp_path, display) | {"PATH": f"{bin_folder}:/usr/bin:/bin", "OPENED": str(opened)}
    done = subprocess.run([str(app / "secretary"), "--self-test", str(out), str(demo / "league.xlsx"), "--print"],
                          env=env, capture_output=True, text=True, timeout=900)
    assert done.returncode == 0, done
    shown = json.loads(out.read_text(encoding="utf-8"))
    deadline = time.monotonic() + 60
    while not opened.exists() and time.monotonic() < deadline:
        time.sleep(0.1)
    pdf, library_path = opened.read_text(encoding="utf-8").splitlines()
    assert pdf == str(demo / "league - notice board.pdf") and shown["printed"]
    assert library_path == "unset"  # the viewer gets the system's libraries, not the app's copies
    sheet = ratings_sheet(demo / "league.xlsx")
    columns = [shown["headings"].index(h) for h in ("Player", "Rating", "Division")]
    assert [tuple(row[i] for i in columns) for row in shown["ratings"]] == [(p, f"{r:.0f}", d) for p, d, r, _ in sheet]
    assert shown["tab"] == "Ratings" and shown["dialogs"] == [["open_externally", pdf]]
    assert shown["status"] == f"The notice board is open in your PDF viewer: league - notice board.pdf, in {demo}"
    assert shown["title"] == "league.xlsx - League secretary" and shown["drawn_at"] <= shown["shown_at"]


def test_first_start_of_the_bundle_shows_the_welcome(app, display, tmp_path):
    proc = subprocess.Popen([str(app / "secretary")], env=bare_env(tmp_path, display), cwd=tmp_path)
    try:
        wait_for_window(display, welcome.TITLE, proc)
    finally:
        stop(proc)


def test_installed_launcher_opens_a_workbook_in_the_window(app, demo, display, tmp_path):
    done = subprocess.run([str(app / "install.sh")], env=bare_env(tmp_path), capture_output=True, text=True,
                          timeout=60)
    assert done.returncode == 0, done
    launcher = tmp_path / ".local" / "share" / "applications" / "secretary-league.desktop"
    entries = dict(line.split("=", 1) for line in launcher.read_text(encoding="utf-8").splitlines() if "=" in line)
    assert "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet" in entries["MimeType"].split(";")
    assert entries["Icon"] == str(app / "secretary.png") and entries["Terminal"] == "false"
    if shutil.which("desktop-file-validate"):
        check = subprocess.run(["desktop-file-validate", str(launcher)], capture_output=True, text=True)
        assert check.returncode == 0 and not check.stdout.strip(), check.stdout
    command = shlex.split(entries["Exec"])  # as a file manager runs it, %f being the chosen file
    assert command == [str(app / "secretary"), "%f"]
    book = tmp_path / "My league 2026.xlsx"
    shutil.copyfile(demo / "league.xlsx", book)
    proc = subprocess.Popen([str(book) if a == "%f" else a for a in command], env=bare_env(tmp_path, display),
                            cwd=tmp_path)
    try:
        titles = wait_for_window(display, f"{book.name} - League secretary", proc)
        assert welcome.TITLE not in titles
    finally:
        stop(proc)
