"""Rated matches as columns: player indices, games, day numbers and divisions, one entry per match.

Both ways in reach the fit through ``Matches``: the workbook's ``Result``
records (``from_results``) and the scripting API's checked columns.  Every
later step (ages, the players' home divisions, last played) is a pass of
numpy over these columns, never a loop over matches.
"""
from __future__ import annotations

import datetime as dt
import itertools
from dataclasses import dataclass
from typing import Iterable, Sequence

import numpy as np

from secretary.model.records import Player, Result


@dataclass(frozen=True)
class Matches:
    """Rated matches by column.

    Attributes
    ----------
    names : every player, players given beforehand first, then in order of first appearance
    idx_a, idx_b : int64 arrays, the two players of each match (indices into ``names``)
    games_a, games_b : float arrays, games each side won
    day : int64 array, the match date as a proleptic Gregorian ordinal (``date.toordinal()``)
    division : int64 array, the division each match was played in (index into ``division_names``)
    division_names : the divisions' names ("" = none given)
    partner_a, partner_b : int64 arrays, each side's second player in a doubles match, -1 in singles
        (None: no doubles at all)
    """

    names: tuple[str, ...]
    idx_a: np.ndarray
    idx_b: np.ndarray
    games_a: np.ndarray
    games_b: np.ndarray
    day: np.ndarray
    division: np.ndarray
    division_names: tuple[str, ...]
    partner_a: np.ndarray | None = None
    partner_b: np.ndarray | None = None

    def __len__(self) -> int:
        return len(self.idx_a)

    @property
    def doubles(self) -> np.ndarray:
        """Which matches are doubles (bool per match)."""
        return np.zeros(len(self), dtype=bool) if self.partner_a is None else self.partner_a >= 0

    def seats(self) -> tuple[np.ndarray, np.ndarray]:
        """Every (player, match) seat: player index and match index, side A's players first."""
        rows = np.arange(len(self))
        who, where = [self.idx_a, self.idx_b], [rows, rows]
        if self.partner_a is not None:
            dbl = self.doubles
            who += [self.partner_a[dbl], self.partner_b[dbl]]
            where += [rows[dbl], rows[dbl]]
        return np.concatenate(who), np.concatenate(where)


def factorise(values: Sequence, known: Iterable = ()) -> tuple[tuple, np.ndarray]:
    """(distinct values, the known ones first, then in order of first appearance; index of each value)."""
    distinct = tuple(dict.fromkeys(itertools.chain(known, values)))
    codes = {value: k for k, value in enumerate(distinct)}
    return distinct, np.fromiter(map(codes.__getitem__, values), np.int64, len(values))


def from_results(results: Iterable[Result], players: Sequence[Player] = ()) -> Matches:
    """The rated (non-void) results as columns."""
    rated = [res for res in results if not res.void]
    if any(res.is_doubles for res in rated):
        return _from_results_with_doubles(rated, players)
    sides = [name for res in rated for name in (res.player_a, res.player_b)]
    names, both = factorise(sides, [p.name for p in players])
    return _matches(rated, names, both[0::2].copy(), both[1::2].copy())


def _from_results_with_doubles(rated: Sequence[Result], players: Sequence[Player]) -> Matches:
    """``from_results`` when some results are doubles: four names a row, "" for a singles match's partners."""
    seats = [name for res in rated for name in (res.player_a, res.player_b, res.partner_a, res.partner_b)]
    names, codes = factorise(seats, [p.name for p in players])
    if "" in names:  # the blank partner of singles rows: drop it from the names, code it -1
        blank = names.index("")
        names = names[:blank] + names[blank + 1:]
        codes = np.where(codes == blank, -1, codes - (codes > blank))
    doubles = np.fromiter((res.is_doubles for res in rated), bool, len(rated))
    return _matches(rated, names, codes[0::4].copy(), codes[1::4].copy(),
                    np.where(doubles, codes[2::4], -1), np.where(doubles, codes[3::4], -1))


def _matches(rated: Sequence[Result], names, idx_a, idx_b, partner_a=None, partner_b=None) -> Matches:
    """The columns of ``rated`` given its players' indices."""
    divisions, division = factorise([res.division for res in rated])
    m = len(rated)
    return Matches(
        names=names,
        idx_a=idx_a,
        idx_b=idx_b,
        games_a=np.fromiter((res.games_a for res in rated), float, m),
        games_b=np.fromiter((res.games_b for res in rated), float, m),
        day=np.fromiter((res.date.toordinal() for res in rated), np.int64, m),
        division=division,
        division_names=divisions,
        partner_a=partner_a,
        partner_b=partner_b,
    )


def home_divisions(matches: Matches, players: Sequence[Player] = ()) -> list[str]:
    """Each player's group: the Players sheet's division, else the division of their most recent result.

    A player who changed division is counted in the one they play in now.
    "Most recent" is the latest date, and on one date the result further
    down the sheet; results with no division count only for a player who
    has no other ("" then).
    """
    n, m = len(matches.names), len(matches)
    who, match = matches.seats()  # every seat, doubles partners too
    named = np.array([bool(d) for d in matches.division_names], dtype=bool)
    # One key orders every seat: a named division first, then the date, then the sheet order.
    has_name = named[matches.division[match]] if m else np.zeros(0, dtype=bool)
    day = matches.day[match] - (matches.day.min() if m else 0)
    key = (has_name.astype(np.int64) * (int(day.max()) + 1 if m else 1) + day) * max(m, 1) + match
    latest = np.full(n, -1, dtype=np.int64)
    np.maximum.at(latest, who, key)
    home = ["" if k < 0 else matches.division_names[matches.division[k % max(m, 1)]] for k in latest.tolist()]
    given = {p.name: p.division for p in players if p.division}
    if given:
        home = [given.get(name, h) for name, h in zip(matches.names, home)]
    return home


def last_played(matches: Matches) -> tuple[dt.date | None, ...]:
    """Each player's newest match date (None for a player without rated matches)."""
    n = len(matches.names)
    last = np.full(n, -1, dtype=np.int64)
    who, row = matches.seats()
    np.maximum.at(last, who, matches.day[row])
    return tuple(dt.date.fromordinal(d) if d > 0 else None for d in last.tolist())
