"""The byte scans of large sheet parts against the straightforward scans they replace, on real and crafted XML.

`cells._hints` (whole-array tests) must say what ``b"<f" in text or b":f" in text`` and
``b'"e"' in text or b"'e'" in text`` say; `oversized._first_long_run` (a block test, then the list of every
"<" only where a block has none) must find the same first over-long run, and name the same cell, as the
list of every "<" in every chunk did.
"""
import random
import zipfile
from pathlib import Path

import numpy as np
import pytest

from secretary.workbook import cells, oversized

DEMO = Path(__file__).resolve().parents[2] / "secretary" / "data" / "demo-league.xlsx"


def _plain_hints(text: bytes) -> tuple[bool, bool]:
    return (b"<f" in text or b":f" in text), (b'"e"' in text or b"'e'" in text)


def _demo_parts():
    with zipfile.ZipFile(DEMO) as z:
        return [z.read(n) for n in z.namelist() if n.endswith(".xml")]


def test_hints_say_what_the_plain_searches_say():
    rng = random.Random(5)
    texts = _demo_parts() + [b"", b"f", b"<f", b":f", b'"e"', b"'e'", b"e", b'"e', b"<", b"x:f>", b"<<ff", b'"e\'']
    pieces = [b"<", b"f", b":", b"e", b'"', b"'", b"c r=", b"<v>1</v>", b" ", b"\xc3\xa9"]
    texts += [b"".join(rng.choice(pieces) for _ in range(rng.randrange(1, 40))) for _ in range(3000)]
    for text in texts:
        assert cells._hints(text) == _plain_hints(text), text


def _plain_first_long_run(path, part):
    """The scan as it was: every "<" of every chunk listed, the gaps between them measured."""
    run, tail = 0, b""
    with zipfile.ZipFile(path) as archive, archive.open(part) as stream:
        while chunk := stream.read(oversized._CHUNK):
            starts = np.flatnonzero(np.frombuffer(chunk, np.uint8) == oversized._LT)
            if len(starts) == 0:
                run += len(chunk)
                if run > oversized.LONGEST_RUN:
                    return oversized._cell(tail)
                continue
            gaps = np.diff(starts) - 1
            if run + int(starts[0]) > oversized.LONGEST_RUN:
                return oversized._cell(tail)
            if len(gaps) and int(gaps.max()) > oversized.LONGEST_RUN:
                k = int(np.argmax(gaps > oversized.LONGEST_RUN))
                return oversized._cell(tail + chunk[:int(starts[k])])
            last = int(starts[-1])
            tail = (tail + chunk[:last])[-4096:] if last < 4096 else chunk[last - 4096:last]
            run = len(chunk) - last - 1
    return None


def _sheet(rng, rows: int, long_at: set, length: int) -> bytes:
    out = [b'<worksheet><sheetData>']
    for r in range(1, rows + 1):
        text = b"A" * length if r in long_at else b"Name %d" % rng.randrange(10**6)
        out.append(b'<row r="%d"><c r="C%d" t="inlineStr"><is><t>%s</t></is></c></row>' % (r, r, text))
    out.append(b"</sheetData></worksheet>")
    return b"".join(out)


@pytest.mark.parametrize("chunk", [oversized._CHUNK, 300_001, 1 << 20])
def test_the_long_run_scan_finds_what_the_plain_scan_finds(tmp_path, chunk, monkeypatch):
    monkeypatch.setattr(oversized, "_CHUNK", chunk)
    rng = random.Random(chunk)
    longest = oversized.LONGEST_RUN
    cases = [(set(), 0)]  # (rows with a long text, its length): none, just short enough, just too long, ...
    for length in (longest - 30, longest - 2, longest - 1, longest + 1, longest * 2, longest * 3 + 17):
        cases.append(({rng.randrange(1, 3000)}, length))
        cases.append(({1, 2999}, length))
    for k, (long_at, length) in enumerate(cases):
        path = tmp_path / f"case{k}.xlsx"
        with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
            z.writestr("xl/worksheets/sheet1.xml", _sheet(rng, 3000, long_at, length))
        found = oversized._first_long_run(path, "xl/worksheets/sheet1.xml")
        assert found == _plain_first_long_run(path, "xl/worksheets/sheet1.xml"), (long_at, length)
        assert (found is not None) == (length + 2 > longest), (long_at, length)  # the run: "t>" and the text


def test_the_same_result_twice_is_warned_as_its_definition_says(tmp_path):
    """Rows equal in date, sides (either order, capitals folded, partners either way round), games,
    division and void mark are warned as "the same result as row N" (N the first); nothing else is."""
    import datetime as dt

    from secretary.workbook.read import read_workbook
    from tests.workbook.league_books import RESULTS_HEADERS, write_book

    D = dt.date(2026, 3, 14)
    rng = random.Random(11)
    names = ["Ada Finch", "ada finch", "Bram Oak", "Cleo Marsh", "Dev Pike", "Eli Stone"]
    rows = []
    while len(rows) < 300:
        a, b, pa, pb = rng.sample(names[1:], 4) if rng.random() < 0.3 else (*rng.sample(names, 2), "", "")
        if {a.casefold(), b.casefold()} == {"ada finch"}:
            continue
        ga, gb = rng.choice([(5, 3), (3, 5), (5, 4), (4, 5)])
        rows.append([D + dt.timedelta(days=rng.randrange(2)), rng.choice(["Premier", "premier", "One"]), a, b, ga, gb,
                     pa, pb, "", "void" if rng.random() < 0.1 else ""])
    headers = RESULTS_HEADERS[:6] + ("Partner A", "Partner B") + RESULTS_HEADERS[6:]
    book = read_workbook(write_book(tmp_path / "twice.xlsx", rows, results_headers=headers))

    def key(row):
        date, division, a, b, ga, gb, pa, pb, _, note = row
        side_a = tuple(sorted(n.casefold() for n in (a, pa) if n))
        side_b = tuple(sorted(n.casefold() for n in (b, pb) if n))
        return date, frozenset([(side_a, ga), (side_b, gb)]), (side_a, ga) == (side_b, gb), division.casefold(), note

    first, want = {}, set()
    for number, row in enumerate(rows, start=2):
        if key(row) in first:
            want.add((number, f"the same result as row {first[key(row)]}"))
        first.setdefault(key(row), number)
    got = {(p.row, p.problem) for p in book.problems if "the same result as row" in p.problem}
    assert want and got == want
