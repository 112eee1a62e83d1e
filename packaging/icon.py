"""Draws the desktop app's icon (our own design): a score sheet with a rising line of ratings and a ball.

``python packaging/icon.py OUT_FOLDER`` writes secretary.png (256 px), secretary.ico
(Windows) and secretary.icns (macOS).  Pillow only; nothing is copied from elsewhere.
"""
from __future__ import annotations

import sys
from pathlib import Path

from PIL import Image, ImageDraw

SIZE = 1024  # drawn large, then scaled down smoothly
GREEN, SHEET, GRID, LINE, BALL, SHINE = "#1d6b4a", "#fbfaf5", "#c9d3cc", "#1f5fa8", "#d9a21b", "#fff4cc"


def draw() -> Image.Image:
    """The icon at SIZE x SIZE pixels, transparent outside its rounded square."""
    s = SIZE
    image = Image.new("RGBA", (s, s), (0, 0, 0, 0))
    pen = ImageDraw.Draw(image)
    pen.rounded_rectangle((40, 40, s - 40, s - 40), radius=180, fill=GREEN)
    sheet = (200, 150, s - 200, s - 150)
    pen.rounded_rectangle(sheet, radius=40, fill=SHEET)
    left, top, right, bottom = sheet
    for i in range(1, 7):  # the rows of a results sheet
        y = top + i * (bottom - top) // 7
        pen.line((left + 30, y, right - 30, y), fill=GRID, width=10)
    pen.line((left + 170, top + 30, left + 170, bottom - 30), fill=GRID, width=10)
    points = [(left + 90, bottom - 130), (left + 240, bottom - 260), (left + 380, bottom - 220),
              (left + 520, top + 200)]
    pen.line(points, fill=LINE, width=44, joint="curve")
    for x, y in points:
        pen.ellipse((x - 34, y - 34, x + 34, y + 34), fill=LINE)
    cx, cy, r = s - 250, s - 250, 150  # a ball in front of the sheet's corner
    pen.ellipse((cx - r, cy - r, cx + r, cy + r), fill=BALL, outline=GREEN, width=24)
    pen.ellipse((cx - 70, cy - 95, cx - 10, cy - 35), fill=SHINE)
    return image


def write(folder: Path) -> dict[str, Path]:
    """The icon files for every system, in ``folder``."""
    folder.mkdir(parents=True, exist_ok=True)
    big = draw()
    files = {"png": folder / "secretary.png", "ico": folder / "secretary.ico", "icns": folder / "secretary.icns"}
    big.resize((256, 256), Image.LANCZOS).save(files["png"])
    big.save(files["ico"], sizes=[(16, 16), (32, 32), (48, 48), (64, 64), (128, 128), (256, 256)])
    big.resize((512, 512), Image.LANCZOS).save(files["icns"])
    return files


if __name__ == "__main__":
    for path in write(Path(sys.argv[1] if len(sys.argv) > 1 else ".")).values():
        print(path)
