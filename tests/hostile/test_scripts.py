"""Names in every script on the PDFs: printed in their own letters where a font on this machine has
them, and otherwise named in a warning (never "???" without a word)."""
from __future__ import annotations

import shutil
import subprocess
from pathlib import Path

import openpyxl

from secretary.pipeline import handicap_pdf_path, notice_pdf_path
from tests.report.poppler import needs_poppler, pdf_text, squeeze
from tests.workbook.league_books import D, write_book

GREEK, CYRILLIC, CHINESE, JAPANESE = "Ελένη Παππά", "Иван Петров", "王小明", "山田 太郎"
ARABIC, DEVANAGARI = "محمد علي", "अमित शर्मा"  # need shaping (joining forms, right to left; conjuncts)


def _font_file_with(text: str) -> bool:
    """Whether fontconfig knows a TrueType font on this machine with every letter of `text` (asked
    independently of the tool, one character set query for the whole text)."""
    if shutil.which("fc-list") is None:
        return False
    charset = " ".join(f"{ord(ch):x}" for ch in set(text) if not ch.isspace())
    out = subprocess.run(["fc-list", "--format", "%{file}\n", f":charset={charset}"], capture_output=True,
                         text=True).stdout
    return any(line.lower().endswith((".ttf", ".ttc")) for line in out.splitlines())


def _league(tmp_path: Path, names) -> Path:
    rows = [[D, "Premier", a, b, 5, 3, "", ""] for k, a in enumerate(names) for b in names[k + 1:]]
    return write_book(tmp_path / "league.xlsx", rows,
                      fixtures=[[D.replace(day=28), names[0], names[-1], None, None]])


def _warning(out: str) -> str:
    return next((line for line in out.splitlines() if "could not show" in line), "")


@needs_poppler
def test_greek_cyrillic_and_chinese_names_print_in_their_own_letters(tmp_path, run):
    names = [GREEK, CYRILLIC, JAPANESE, "Ada Finch", CHINESE]  # the fixture: first v last
    league = _league(tmp_path, names)
    code, out = run("update", league)
    assert code == 0, out
    board = squeeze(pdf_text(notice_pdf_path(league)))
    card = squeeze(pdf_text(handicap_pdf_path(league)))
    for name in (GREEK, CYRILLIC, "Ada Finch"):  # DejaVu Sans, the report font, has these letters
        assert squeeze(name) in board
    assert squeeze(GREEK) in card
    assert (squeeze(CHINESE) in card) == _font_file_with(CHINESE)
    for name in (CHINESE, JAPANESE):
        if _font_file_with(name):
            assert squeeze(name) in board and name not in _warning(out)
        else:  # no font here has these letters: the warning names them
            assert name in _warning(out)


@needs_poppler
def test_names_in_scripts_that_need_shaping_are_named_in_a_warning_not_garbled(tmp_path, run):
    league = _league(tmp_path, [ARABIC, DEVANAGARI, GREEK, "Ada Finch"])
    code, out = run("update", league)
    assert code == 0, out
    warning = _warning(out)
    assert ARABIC in warning and DEVANAGARI in warning and GREEK not in warning
    assert "The workbook shows them in full" in warning
    board = pdf_text(notice_pdf_path(league))
    assert not set(ARABIC + DEVANAGARI) - {" "} & set(board)  # no letter printed in a wrong shape or order
    assert squeeze(GREEK) in squeeze(board)
    names = {row[1] for row in openpyxl.load_workbook(league)["Ratings"].iter_rows(min_row=2, values_only=True)}
    assert {ARABIC, DEVANAGARI} <= names
    code, out = run("notice", league)  # printing the notice board again says so too
    assert code == 0 and ARABIC in _warning(out) and DEVANAGARI in _warning(out), out
    code, out = run("fixtures", league)  # the handicap card: only the fixture's own players are on it
    assert code == 0 and ARABIC in _warning(out) and DEVANAGARI not in _warning(out), out
    assert "1 name in" in _warning(out)


def test_no_warning_when_every_name_prints(tmp_path, run):
    league = _league(tmp_path, [GREEK, CYRILLIC, "Zoë Ōtake", "Ada Finch"])
    code, out = run("update", league)
    assert code == 0 and not _warning(out), out


@needs_poppler
def test_without_fontconfig_the_usual_font_folders_are_searched(tmp_path):
    """As on Windows and macOS, where there is no fc-list: the font files in the usual folders."""
    import os
    import sys

    if not _font_file_with(CHINESE):
        import pytest

        pytest.skip("no TrueType font with Chinese letters on this machine (fonts-droid-fallback has them)")
    league = _league(tmp_path, [GREEK, CHINESE, "Ada Finch"])
    bare = tmp_path / "bin"
    bare.mkdir()  # a PATH with no fc-list on it
    env = dict(os.environ, PATH=str(bare), PYTHONPATH=str(Path(__file__).resolve().parents[2]))
    done = subprocess.run([sys.executable, "-m", "secretary.cli", "update", str(league)], capture_output=True,
                          text=True, env=env, timeout=600)
    assert done.returncode == 0, done.stdout + done.stderr
    assert squeeze(CHINESE) in squeeze(pdf_text(notice_pdf_path(league)))
    assert "could not show" not in done.stdout
