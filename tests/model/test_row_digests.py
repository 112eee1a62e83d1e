"""The batch row digests and the change sort against their row-by-row definitions, on real result sets.

`records.row_digests` (every row's digests in one pass, dates and folded names worked out once) must give
exactly `records.identity` / `records.fingerprint`; `changes.compare_rows` (rows of an identity written once
sorted directly) must give what the straightforward multiset sort below gives, on real rows edited,
removed, added, repeated and voided at random.
"""
import datetime as dt
import hashlib
import random
from collections import defaultdict
from dataclasses import replace
from pathlib import Path

import pytest

from secretary.model.changes import compare_rows
from secretary.model.records import Result, fingerprint, identity, row_digests
from secretary.workbook.read import read_workbook
from tests import realdata

DEMO = Path(__file__).resolve().parents[2] / "secretary" / "data" / "demo-league.xlsx"
D = dt.date(2025, 3, 4)
TRICKY = [  # capitals that fold to other letters, names equal once folded, blank and folded divisions, void
    Result(D, "STRASSE Ülla", "straße ülla", 5, 3, "Nord"),
    Result(D, "İlker", "ilker", 0, 5, ""),
    Result(D, "Bea", "Ann", 5, 5, "ΣΊΣΥΦΟΣ", void=True),
    Result(D, "Ann", "Bea", 5, 5, "σίσυφος"),
    Result(D, "Ann", "Bea", 5, 4, "One", partner_a="Cy", partner_b="Dee"),
    Result(D, "Ann", "Bea", 5, 4, "One", partner_a="Cy"),  # one partner only: singles
]


def _fresh(rows):
    """Copies without digests kept, so each way works them out itself."""
    return [replace(r) for r in rows]


def _blake(*parts) -> str:
    return hashlib.blake2b("\x1f".join(map(str, parts)).encode("utf-8"), digest_size=8).hexdigest()


def _sets():
    yield "demo", read_workbook(DEMO).results
    yield "tricky", tuple(TRICKY)
    for name, load in (("badminton", realdata.badminton), ("tennis doubles", realdata.tennis_doubles)):
        try:
            yield name, load()
        except (OSError, pytest.skip.Exception):
            continue


@pytest.mark.parametrize("name,rows", list(_sets()), ids=lambda v: v if isinstance(v, str) else "")
def test_batch_digests_are_the_row_by_row_digests(name, rows):
    one_by_one = [(identity(r), fingerprint(r)) for r in _fresh(rows)]
    batch = _fresh(rows)
    identities, fingerprints = row_digests(batch)
    assert list(zip(identities, fingerprints)) == one_by_one
    assert [(identity(r), fingerprint(r)) for r in batch] == one_by_one  # kept on the records as computed
    assert row_digests(batch) == (identities, fingerprints)  # asked again: the kept ones


def test_digests_follow_their_definition():
    r = TRICKY[0]
    assert identity(replace(r)) == _blake(D.isoformat(), *sorted(("strasse ülla", "strasse ülla")))
    assert row_digests([replace(r)])[1] == [_blake(D.isoformat(), "strasse ülla", "strasse ülla", 5, 3, "nord", False)]
    r = TRICKY[3]
    assert row_digests([replace(r)])[0] == [_blake(D.isoformat(), "ann", "bea")]


def _reference_sort(results, previous_rows):
    """The multiset sort as changes.py's docstring states it, row by row, one identity group at a time."""
    stored = defaultdict(list)
    for ident, fp in previous_rows:
        stored[ident].append(fp)
    now, position = defaultdict(list), {}
    for k, res in enumerate(results):
        now[identity(res)].append(res)
        position[id(res)] = k
    new, edited, unchanged, ignored = [], [], [], []
    for ident, rows in now.items():
        left, rest = list(stored.get(ident, ())), []
        for res in rows:
            if fingerprint(res) in left:
                left.remove(fingerprint(res))
                unchanged.append(res)
            else:
                rest.append(res)
        for res in rest:
            if left:
                left.pop(0)
                edited.append(res)
            else:
                (ignored if res.void else new).append(res)
        stored[ident] = left
    removed = tuple(ident for ident, fps in stored.items() for _ in fps)
    order = lambda rows: tuple(sorted(rows, key=lambda res: position[id(res)]))  # noqa: E731
    return order(new), order(edited), order(unchanged), removed, order(ignored)


def _week_later(rows, rng):
    """The rows a week later: some edited, removed, repeated (same match twice), voided, a few added."""
    out = []
    for r in rows:
        roll = rng.random()
        if roll < 0.05:
            continue
        if roll < 0.1:
            r = replace(r, games_a=r.games_b, games_b=r.games_a)
        elif roll < 0.12:
            r = replace(r, void=not r.void)
        elif roll < 0.15:
            out.append(replace(r))
        out.append(r if rng.random() < 0.5 else replace(r))
    out.extend(replace(r, date=r.date + dt.timedelta(days=7)) for r in rng.sample(list(rows), len(rows) // 20))
    rng.shuffle(out)
    return out


@pytest.mark.parametrize("name,rows", list(_sets()), ids=lambda v: v if isinstance(v, str) else "")
def test_change_sort_is_the_multiset_sort(name, rows):
    rng = random.Random(7)
    rows = list(rows)
    before = rows + [replace(r) for r in rng.sample(rows, len(rows) // 10)]  # identities stored twice too
    stored = tuple((identity(r), fingerprint(r)) for r in before if not r.void)
    for _ in range(3):
        now = _week_later(before, rng)
        ch = compare_rows(now, stored)
        assert (ch.new, ch.edited, ch.unchanged, ch.removed, ch.ignored) == _reference_sort(now, stored)
        assert ch.new_rows + ch.edited_rows + ch.unchanged_rows + len(ch.ignored) == len(now)


def _activity_row_by_row(previous, new, index):
    """Games per player, latest date before and first date now, one seat at a time (`Result.players`)."""
    import numpy as np

    played, last_before, first_new = np.zeros(len(index)), {}, {}
    for rows, book, pick in ((previous, last_before, max), (new, first_new, min)):
        for res in rows:
            for name in res.players:
                played[index[name]] += res.games_a + res.games_b
                book[name] = pick(book.get(name, res.date), res.date)
    return played, last_before, first_new


@pytest.mark.parametrize("name,rows", list(_sets()), ids=lambda v: v if isinstance(v, str) else "")
def test_the_breakdowns_activity_is_its_row_by_row_sum(name, rows):
    from secretary.model.breakdown import _activity

    rows = [r for r in rows if not r.void]
    index = {n: k for k, n in enumerate(sorted({n for r in rows for n in r.players}))}
    rng = random.Random(3)
    for previous, new in ((rows[: len(rows) * 4 // 5], rows[len(rows) * 4 // 5:]), (rows, ()), ((), rows),
                          (rng.sample(rows, len(rows) // 2), rng.sample(rows, len(rows) // 7))):
        played, last_before, first_new = _activity(previous, new, index)
        want = _activity_row_by_row(previous, new, index)
        assert played.tolist() == want[0].tolist()
        assert last_before == want[1] and first_new == want[2]


def test_the_inputs_digest_is_the_digest_of_each_part_in_turn():
    """`pipeline.inputs_digest` against its definition: every part (then every row's fingerprint), each followed
    by the separator \\x1f, fed to BLAKE2b one at a time."""
    from secretary import __version__
    from secretary.pipeline import inputs_digest

    book = read_workbook(DEMO)
    want = hashlib.blake2b(digest_size=16)
    for part in (__version__, repr(book.settings), repr(book.players), repr(book.fixtures), repr(book.divisions),
                 *(fingerprint(r) for r in _fresh(book.results))):
        want.update(part.encode("utf-8", "surrogatepass") + b"\x1f")
    assert inputs_digest(book) == want.hexdigest()
    assert inputs_digest(replace(book, results=())) != want.hexdigest()
