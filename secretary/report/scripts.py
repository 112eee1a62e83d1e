"""Letters of every script on the PDFs: the report font first, then any TrueType font on this machine.

A name in Chinese, Japanese or Korean letters (which the report font, DejaVu Sans, lacks) is printed
in a font of this computer that has them, found through fontconfig (``fc-list``) where it is installed
and otherwise among the font files in the usual folders (Linux, Windows, macOS).  Scripts whose
letters change shape with their neighbours or run right to left (Arabic, Hebrew, the Indic scripts,
Thai ...) would print wrongly without text shaping, which the PDF maker here does not do: their
letters count as not printable, like letters no font has.  What cannot be printed becomes "?", and
``unprintable`` names the texts concerned, so that the update can say which names were not printed.
"""
from __future__ import annotations

import os
import shutil
import subprocess
import unicodedata
from functools import lru_cache
from pathlib import Path

from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont

# Scripts that need shaping or right-to-left ordering (Unicode blocks, by code point).
SHAPED_RANGES = (
    (0x0590, 0x08FF),  # Hebrew, Arabic, Syriac, Arabic Supplement, Thaana, NKo, Samaritan, Mandaic ...
    (0x0900, 0x0DFF),  # Devanagari, Bengali, Gurmukhi, Gujarati, Oriya, Tamil, Telugu, Kannada, Malayalam, Sinhala
    (0x0E00, 0x0FFF),  # Thai, Lao, Tibetan
    (0x1000, 0x109F),  # Myanmar
    (0x1780, 0x18AF),  # Khmer, Mongolian
    (0xA8E0, 0xA8FF),  # Devanagari Extended
    (0xFB1D, 0xFDFF),  # Hebrew and Arabic presentation forms
    (0xFE70, 0xFEFF),  # Arabic presentation forms B
    (0x10800, 0x10FFF),  # right-to-left historic scripts
    (0x1E800, 0x1EFFF),  # Adlam and other right-to-left scripts
)
FONT_FOLDERS = (
    Path("/usr/share/fonts"), Path("/usr/local/share/fonts"), Path.home() / ".local" / "share" / "fonts",
    Path.home() / ".fonts", Path(os.environ.get("WINDIR", "C:/Windows")) / "Fonts",
    Path("/System/Library/Fonts"), Path("/Library/Fonts"), Path.home() / "Library" / "Fonts",
)
_TRUETYPE = (".ttf", ".ttc")  # the PDF maker reads TrueType outlines only (not .otf)
_MAX_FILES = 600  # a folder walk looks at no more font files than this


def needs_shaping(ch: str) -> bool:
    code = ord(ch)
    return any(lo <= code <= hi for lo, hi in SHAPED_RANGES)


def has_glyph(font: str, ch: str) -> bool:
    """Whether the registered font draws this character."""
    face = getattr(pdfmetrics.getFont(font), "face", None)
    if hasattr(face, "charToGlyph"):
        return ord(ch) in face.charToGlyph
    try:  # the standard fonts use the Windows Western encoding
        ch.encode("cp1252")
    except UnicodeEncodeError:
        return False
    return True


def font_for(ch: str, font: str) -> str | None:
    """The font to draw `ch` in: `font` when it has it, else a font of this machine that has it; None
    when none has it or its script needs shaping."""
    if needs_shaping(ch):
        return None
    if ch in "\n\t" or has_glyph(font, ch):
        return font
    return _fallback(ch)


@lru_cache(maxsize=4096)
def _fallback(ch: str) -> str | None:
    code = ord(ch)
    for path, index in _candidates(code):
        covered = _coverage(path, index)
        if covered is not None and code in covered:
            return _registered(path, index)
    return None


def _candidates(code: int) -> list[tuple[Path, int]]:
    """Font files (and their index in a collection) to look in: those already read first."""
    read = [key for key in _READ if _READ[key] is not None]
    listed = _fc_list(code)
    if listed is None:
        listed = [(p, 0) for p in _walk_folders()]
    return read + [key for key in listed if key not in _READ]


def _fc_list(code: int) -> list[tuple[Path, int]] | None:
    """The TrueType font files fontconfig says have this character; None without fontconfig."""
    fc = shutil.which("fc-list")
    if fc is None:
        return None
    try:
        out = subprocess.run([fc, "--format", "%{file}|%{index}\n", f":charset={code:x}"], capture_output=True,
                             text=True, timeout=20).stdout
    except (OSError, subprocess.SubprocessError):
        return None
    found = []
    for line in out.splitlines():
        name, _, index = line.rpartition("|")
        if name.lower().endswith(_TRUETYPE):
            found.append((Path(name), int(index) if index.isdigit() else 0))
    return sorted(set(found), key=lambda k: (k[0].suffix.lower() != ".ttf", str(k[0])))


@lru_cache(maxsize=1)
def _walk_folders() -> tuple[Path, ...]:
    files: list[Path] = []
    for folder in FONT_FOLDERS:
        if folder.is_dir():
            for root, _, names in os.walk(folder):
                files += [Path(root) / n for n in sorted(names) if n.lower().endswith(_TRUETYPE)]
                if len(files) >= _MAX_FILES:
                    return tuple(files[:_MAX_FILES])
    return tuple(files)


_READ: dict[tuple[Path, int], frozenset[int] | None] = {}  # font file -> the characters it has
_NAMES: dict[tuple[Path, int], str] = {}


def _coverage(path: Path, index: int) -> frozenset[int] | None:
    key = (path, index)
    if key not in _READ:
        try:
            font = TTFont(f"Fallback{len(_READ)}", str(path), subfontIndex=index)
            _READ[key] = frozenset(font.face.charToGlyph)
            _NAMES[key] = font.fontName
            pdfmetrics.registerFont(font)
        except Exception:  # not TrueType outlines, damaged, or not allowed to be embedded
            _READ[key] = None
    return _READ[key]


def _registered(path: Path, index: int) -> str:
    return _NAMES[(path, index)]


def unprintable(texts, font: str) -> list[str]:
    """The texts with a letter that no font here can print (accents aside), in their first order."""
    out = []
    for text in dict.fromkeys(texts):
        if any(font_for(ch, font) is None and not plain_base(ch, font) for ch in str(text)):
            out.append(text)
    return out


def plain_base(ch: str, font: str) -> str:
    """The letter without its accent when the font has that ('' when not)."""
    base = "".join(c for c in unicodedata.normalize("NFKD", ch) if not unicodedata.combining(c))
    return base if base and not needs_shaping(base[0]) and all(has_glyph(font, c) for c in base) else ""
