"""What changed in the Results sheet since the previous update.

The previous update stored, for every result it rated, the pair
``(identity, fingerprint)`` (see ``records.identity`` / ``records.fingerprint``).
Comparing those with today's rows sorts every row into one of four kinds:

- **unchanged**: a row whose identity and fingerprint were both stored;
- **edited**: same identity (date and the two players) but another fingerprint
  (a score, division or void mark was changed);
- **new**: an identity not stored before (or more rows with it than before);
- **removed**: a stored identity with no row left for it.

Identity collisions (two matches on the same day between the same two
players) are matched as multisets: within one identity, rows whose
fingerprint was stored are unchanged first (each stored fingerprint is used
once), then the remaining rows and remaining stored fingerprints are paired
up, in sheet order, as edits; any rows left over are new, any stored
fingerprints left over are removed.  So two identical matches on one evening
count as two, and deleting one of them is one removal.

Void rows are never rated: a void row that was not stored is ignored (it is
not "new"), and a row edited into a void one counts as an edit that drops out
of ``previous_data``.
"""
from __future__ import annotations

from collections import Counter, defaultdict
from dataclasses import dataclass
from typing import Iterable, Sequence

from secretary.model.records import Result, row_digests


@dataclass(frozen=True)
class DataChanges:
    """Rows sorted by how they differ from the previous update.

    Attributes
    ----------
    new : rated rows not included last time
    edited : rows included last time in another form, as they stand now (may be void now)
    unchanged : rows included last time exactly as they are now
    removed : identities of rows included last time that are gone now
    ignored : void rows that were never rated
    """

    new: tuple[Result, ...]
    edited: tuple[Result, ...]
    unchanged: tuple[Result, ...]
    removed: tuple[str, ...]
    ignored: tuple[Result, ...] = ()

    @property
    def new_rows(self) -> int:
        """Number of new rated rows."""
        return len(self.new)

    @property
    def edited_rows(self) -> int:
        """Number of edited rows."""
        return len(self.edited)

    @property
    def removed_rows(self) -> int:
        """Number of removed rows."""
        return len(self.removed)

    @property
    def unchanged_rows(self) -> int:
        """Number of unchanged rows."""
        return len(self.unchanged)

    @property
    def corrected(self) -> bool:
        """True when an old row was edited or removed."""
        return bool(self.edited or self.removed)

    @property
    def previous_data(self) -> tuple[Result, ...]:
        """``D0``: last update's rows as they stand now (unchanged, and edited ones in their new form, not void)."""
        return tuple(r for r in (*self.unchanged, *self.edited) if not r.void)

    @property
    def current_data(self) -> tuple[Result, ...]:
        """``D1``: every rated row now (each kind in sheet order)."""
        return tuple(r for r in (*self.unchanged, *self.edited, *self.new) if not r.void)


def compare_rows(results: Iterable[Result], previous_rows: Sequence[tuple[str, str]]) -> DataChanges:
    """Sort today's results against the ``(identity, fingerprint)`` pairs stored last time.

    Parameters
    ----------
    results : today's Results rows (void ones included), in sheet order
    previous_rows : ``PublishedState.rows`` of the previous update
    """
    results = list(results)
    identities, fingerprints = row_digests(results)
    stored: dict[str, list[str]] = defaultdict(list)
    for ident, fp in previous_rows:
        stored[ident].append(fp)
    times = Counter(identities)
    kinds = bytearray(len(results))  # each row's kind, in sheet order
    groups: dict[str, list[int]] = {}  # the rows of an identity written more than once, in sheet order
    for k, ident in enumerate(identities):
        if times[ident] == 1:
            _sort_group(stored.get(ident), (k,), results, fingerprints, kinds)
        else:
            groups.setdefault(ident, []).append(k)
    for ident, rows in groups.items():
        _sort_group(stored.get(ident), rows, results, fingerprints, kinds)
    removed = [ident for ident, fps in stored.items() for _ in fps]

    def of_kind(kind: int) -> tuple[Result, ...]:
        return tuple(res for res, k in zip(results, kinds) if k == kind)

    return DataChanges(of_kind(_NEW), of_kind(_EDITED), of_kind(_UNCHANGED), tuple(removed), of_kind(_IGNORED))


_NEW, _EDITED, _UNCHANGED, _IGNORED = range(4)


def _sort_group(left: list[str] | None, rows: Sequence[int], results: Sequence[Result],
                fingerprints: Sequence[str], kinds: bytearray) -> None:
    """The kinds of one identity's rows (``rows``, in sheet order) against its stored fingerprints ``left``
    (used up in place): rows whose fingerprint was stored are unchanged first, each stored one used once;
    the others pair with what is left, in order, as edits; then void rows are ignored, the rest new."""
    rest = []
    for k in rows:
        if left and fingerprints[k] in left:
            left.remove(fingerprints[k])
            kinds[k] = _UNCHANGED
        else:
            rest.append(k)
    for k in rest:
        if left:
            left.pop(0)
            kinds[k] = _EDITED
        else:
            kinds[k] = _IGNORED if results[k].void else _NEW


def all_new(results: Iterable[Result]) -> DataChanges:
    """Every rated row counted as new (the first update, or when the previous record is missing)."""
    rows = list(results)
    return DataChanges(tuple(r for r in rows if not r.void), (), (), (), tuple(r for r in rows if r.void))
