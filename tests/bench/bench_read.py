"""Value-reader benchmark: the input sheets' values by python-calamine (workbook/cells.py) against openpyxl.

Run by hand (not part of the test command):

    python tests/bench/bench_read.py [--sizes 20000 100000] [--repeat 3] [--conditions idle busy]

Both read every value of every sheet of a generated league workbook, from the
file: ``cells.Workbook`` (the byte search for formulas and error values, then
calamine, values converted to openpyxl's types) against openpyxl's read-only
mode with ``data_only=True`` (``iter_rows(values_only=True)``).  Medians of
--repeat runs; the two must give the same rows.
"""
from __future__ import annotations

import argparse
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parents[1]))

import busy  # noqa: E402
import openpyxl  # noqa: E402
from busy import timed  # noqa: E402
from make_league import make_league_workbook  # noqa: E402

from secretary.workbook.cells import Workbook  # noqa: E402


def ours(path: Path) -> dict:
    book = Workbook(path)
    try:
        return {title: book.read_cells(title).rows for title in book.sheetnames}
    finally:
        book.close()


def reference(path: Path) -> dict:
    wb = openpyxl.load_workbook(path, read_only=True, data_only=True)
    try:
        return {ws.title: [tuple(r) for r in ws.iter_rows(values_only=True)] for ws in wb.worksheets}
    finally:
        wb.close()


def trimmed(sheets: dict) -> dict:
    """Rows without trailing blanks, for comparing the two readers."""
    out = {}
    for title, rows in sheets.items():
        cut = [r[: max((i + 1 for i, v in enumerate(r) if v is not None), default=0)] for r in rows]
        while cut and not cut[-1]:
            cut.pop()
        out[title] = cut
    return out


def main():
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--sizes", type=int, nargs="+", default=[20_000, 100_000])
    parser.add_argument("--repeat", type=int, default=3)
    busy.add_argument(parser)
    args = parser.parse_args()
    print(f"{'condition':>14} {'rows':>9} | {'calamine':>9} {'openpyxl read-only':>19} {'ratio':>6}")
    with tempfile.TemporaryDirectory() as tmp:
        paths = {}
        for rows in args.sizes:
            paths[rows] = Path(tmp) / f"league-{rows}.xlsx"
            make_league_workbook(paths[rows], rows, max(60, rows // 40), seed=1)
        for condition in busy.conditions(args.conditions):
            for rows, path in paths.items():
                fast, got = timed(lambda: ours(path), args.repeat)
                slow, want = timed(lambda: reference(path), args.repeat)
                assert trimmed(got) == trimmed(want), "the two readers disagree"
                print(f"{condition:>14} {rows:>9,} | {fast:>8.2f}s {slow:>18.2f}s {fast / slow:>5.2f}x", flush=True)


if __name__ == "__main__":
    main()
