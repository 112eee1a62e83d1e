"""Reading the PDFs back with poppler's command-line tools (pdftotext, pdfinfo, pdftoppm)."""
from __future__ import annotations

import re
import shutil
import subprocess
from pathlib import Path

import pytest

TOOLS = ("pdftotext", "pdfinfo", "pdftoppm")
MISSING = [t for t in TOOLS if shutil.which(t) is None]
needs_poppler = pytest.mark.skipif(bool(MISSING), reason=f"poppler-utils not installed (missing: {', '.join(MISSING)})")
ARTIFACTS = Path(__file__).resolve().parents[2] / "test-artifacts"  # gitignored, for a person to look at

# Paper sizes in PostScript points. Source: ISO 216 (A4 = 210 x 297 mm, 1 pt = 1/72 in) and
# ANSI/ASME Y14.1 (Letter = 8.5 x 11 in); pdfinfo prints them rounded.
A4_POINTS = (595.276, 841.89)
LETTER_POINTS = (612.0, 792.0)


def squeeze(text: str) -> str:
    """Text with all whitespace and soft hyphens removed, so line breaks do not matter."""
    return re.sub(r"\s+", "", text.replace("\u00ad", ""))


def pdf_text(path: Path) -> str:
    """The PDF's text in drawing order (table cells stay whole)."""
    return subprocess.run(["pdftotext", "-raw", "-enc", "UTF-8", str(path), "-"], check=True,
                          capture_output=True, text=True, encoding="utf-8").stdout


def pdf_info(path: Path) -> dict[str, str]:
    out = subprocess.run(["pdfinfo", str(path)], check=True, capture_output=True, text=True).stdout
    return {k.strip(): v.strip() for k, v in (line.split(":", 1) for line in out.splitlines() if ":" in line)}


def page_points(path: Path) -> tuple[float, float]:
    """The first page's width and height, points."""
    size = re.match(r"([\d.]+) x ([\d.]+) pts", pdf_info(path)["Page size"])
    return float(size.group(1)), float(size.group(2))


def render_page(path: Path, name: str, page: int = 1, folder: Path = ARTIFACTS) -> Path:
    """Render one page at 60 dpi to <folder>/<name>.png (test-artifacts unless told) and return its path."""
    folder.mkdir(exist_ok=True)
    stem = folder / name
    subprocess.run(["pdftoppm", "-r", "60", "-png", "-f", str(page), "-l", str(page), "-singlefile",
                    str(path), str(stem)], check=True, capture_output=True)
    return stem.with_suffix(".png")
