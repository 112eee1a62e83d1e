"""Doubles rows on the Results and Fixtures sheets: the four name cells of a row checked together.

A row with both Partner A and Partner B is doubles; one partner alone, a name
written twice on one side, or a player on both sides is an error naming the
cell.  Pure Python (no openpyxl): the reader calls it with the row's spellings.
"""
from __future__ import annotations

from typing import Callable, Mapping

SEATS = ("player_a", "partner_a", "player_b", "partner_b")
PARTNERS = ("partner_a", "partner_b")
_SIDE = {"player_a": "A", "partner_a": "A", "player_b": "B", "partner_b": "B"}


def seat_faults(spellings: Mapping[str, str], headers: Mapping[str, str],
                key_of: Callable[[str], str] = str) -> list[tuple[str, str, str, str]]:
    """``(column key, value found, problem, fix)`` for every fault among a row's names.

    ``spellings`` : column key -> the name as written ("" when blank or absent)
    ``headers`` : column key -> the header as the secretary wrote it (for the messages)
    ``key_of`` : how two spellings are compared (the reader's ``name_key``)
    """
    faults = []
    partner_a, partner_b = (spellings.get(key, "") for key in PARTNERS)
    if bool(partner_a) != bool(partner_b):
        blank, given = ("partner_b", "partner_a") if partner_a else ("partner_a", "partner_b")
        faults.append((blank, "", f"{headers[given]} is '{spellings[given]}' but {headers[blank]} is blank: "
                       "a doubles result needs two players on each side",
                       f"Write side {_SIDE[blank]}'s second player, or clear {headers[given]} if it was a singles match."))
    seen: dict[str, str] = {}
    for key in SEATS:
        spelling = spellings.get(key, "")
        if not spelling:
            continue
        first = seen.setdefault(key_of(spelling), key)
        if first == key:
            continue
        if _SIDE[first] == _SIDE[key]:
            faults.append((key, spelling, f"'{spelling}' is written twice on side {_SIDE[key]} "
                           f"({headers[first]} and {headers[key]})", "Write the partner's own name."))
        elif (first, key) == ("player_a", "player_b"):
            faults.append((key, spelling, "a player cannot play against themself", "Check the two names."))
        else:
            faults.append((key, spelling, f"'{spelling}' is on both sides ({headers[first]} and {headers[key]}): "
                           "a player cannot play against themself", "Check the four names."))
    return faults
