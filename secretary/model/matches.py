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
    """

    names: tuple[str, ...]
    idx_a: np.ndarray
    idx_b: np.ndarray
    games_a: np.ndarray
    games_b: np.ndarray
    day: np.ndarray
    division: np.ndarray
    division_names: tuple[str, ...]

    def __len__(self) -> int:
        return len(self.idx_a)


def factorise(values: Sequence, known: Iterable = ()) -> tuple[tuple, np.ndarray]:
    """(distinct values, the known ones first, then in order of first appearance; index of each value)."""
    distinct = tuple(dict.fromkeys(itertools.chain(known, values)))
    codes = {value: k for k, value in enumerate(distinct)}
    return distinct, np.fromiter(map(codes.__getitem__, values), np.int64, len(values))


def from_results(results: Iterable[Result], players: Sequence[Player] = ()) -> Matches:
    """The rated (non-void) results as columns."""
    rated = [res for res in results if not res.void]
    sides = [name for res in rated for name in (res.player_a, res.player_b)]
    names, both = factorise(sides, [p.name for p in players])
    divisions, division = factorise([res.division for res in rated])
    m = len(rated)
    return Matches(
        names=names,
        idx_a=both[0::2].copy(),
        idx_b=both[1::2].copy(),
        games_a=np.fromiter((res.games_a for res in rated), float, m),
        games_b=np.fromiter((res.games_b for res in rated), float, m),
        day=np.fromiter((res.date.toordinal() for res in rated), np.int64, m),
        division=division,
        division_names=divisions,
    )


def home_divisions(matches: Matches, players: Sequence[Player] = ()) -> list[str]:
    """Each player's group: the Players sheet's division, else the division of their most recent result.

    A player who changed division is counted in the one they play in now.
    "Most recent" is the latest date, and on one date the result further
    down the sheet; results with no division count only for a player who
    has no other ("" then).
    """
    n, m = len(matches.names), len(matches)
    who = np.column_stack([matches.idx_a, matches.idx_b]).ravel()
    named = np.array([bool(d) for d in matches.division_names], dtype=bool)
    match = np.repeat(np.arange(m, dtype=np.int64), 2)
    # One key orders every appearance: a named division first, then the date, then the sheet order.
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
    np.maximum.at(last, matches.idx_a, matches.day)
    np.maximum.at(last, matches.idx_b, matches.day)
    return tuple(dt.date.fromordinal(d) if d > 0 else None for d in last.tolist())
