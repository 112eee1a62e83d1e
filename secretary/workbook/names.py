"""Player names: one spelling per player, "Also known as" merges, and close-spelling hints."""
from __future__ import annotations

import functools
import re
import unicodedata
from collections import Counter
from dataclasses import dataclass
from typing import Iterable, Mapping, Sequence

from secretary.model.records import Player, Problem
from secretary.model.sentences import plural
from secretary.workbook import schema

CLOSE_CUTOFF = 0.85  # as difflib's ratio: "Jon Smith"/"John Smith" 0.95, "Al Li"/"Al Lu" 0.8
MAX_NAME_LENGTH = 100  # characters: a longer "name" is a pasted paragraph, refused by the checks
# Characters that show nothing: zero-width space, word joiner, byte-order mark, soft hyphen, and the
# marks that set the direction of text.  (The zero-width joiners, which shape some scripts, are kept.)
_INVISIBLE = re.compile("[\u200b\u2060\ufeff\u00ad\u200e\u200f\u202a-\u202e\u2066-\u2069]")


def _visible(text: str) -> str:
    """One Unicode form (NFC: "é" typed as one character or as "e" and an accent is the same) and no
    invisible characters, so that two spellings that look the same are the same."""
    return _INVISIBLE.sub("", unicodedata.normalize("NFC", text))


@functools.lru_cache(maxsize=1 << 16)  # a league repeats the same few thousand names
def _clean_text(text: str) -> str:
    return " ".join(_visible(text).split())


@functools.lru_cache(maxsize=1 << 16)
def _key_text(text: str) -> str:
    return " ".join(_visible(text).split()).casefold()


def clean(text: object) -> str:
    """A name as written, without spaces around it and with inner runs of spaces made single."""
    return _clean_text(text if isinstance(text, str) else str(text)) if text is not None else ""


def name_key(text: object) -> str:
    """What two spellings of one name share: capitals and spacing do not matter."""
    return _key_text(text if isinstance(text, str) else str(text)) if text is not None else ""


@dataclass(frozen=True)
class Mention:
    """One place a name is written: its spelling (spaces around removed), row and column."""

    spelling: str
    row: int
    column: str


def merge_aliases(players: Sequence[Player]) -> tuple[dict[str, str], list[Problem]]:
    """Map every Players name and "Also known as" spelling (by key) to the player's name.

    Returns the mapping and the errors found: a player listed twice, an alias that is
    another player's name, an alias given to two players.
    """
    sheet, col_player = schema.PLAYERS.name, schema.PLAYERS.column("player").header
    col_alias = schema.PLAYERS.column("aliases").header
    known: dict[str, str] = {}
    row_of: dict[str, int] = {}
    problems: list[Problem] = []
    for player in players:
        key = name_key(player.name)
        if key in known:
            problems.append(Problem(
                "error", sheet, player.row, col_player, player.name,
                f"this player is listed twice (also row {row_of[key]})",
                "Keep one row per player; put other spellings under 'Also known as'."))
            continue
        known[key], row_of[key] = player.name, player.row
    alias_owner: dict[str, Player] = {}
    for player in players:
        for alias in player.aliases:
            key = name_key(alias)
            if key == name_key(player.name):
                continue
            if key in known and key not in alias_owner:
                problems.append(Problem(
                    "error", sheet, player.row, col_alias, alias,
                    f"'{alias}' is also the name of another player (row {row_of[key]})",
                    "Remove it from 'Also known as', or merge the two rows if they are one player."))
            elif key in alias_owner and alias_owner[key].row != player.row:
                problems.append(Problem(
                    "error", sheet, player.row, col_alias, alias,
                    f"'{alias}' is also listed for {alias_owner[key].name} (row {alias_owner[key].row})",
                    "Give each other spelling to one player only."))
            else:
                alias_owner[key] = player
                known[key] = player.name
    return known, problems


def resolve(mentions: Iterable[Mention], known: Mapping[str, str], sheet: str,
            times: Mapping[str, int] | None = None) -> tuple[dict[str, str], Counter, list[Problem]]:
    """Choose one display spelling per name and warn where capitals or spacing differ.

    ``known`` (key -> name, from the Players sheet) wins; otherwise the most frequent
    spelling (the first seen on a tie).  Returns key -> display, games-per-display counts
    and the warnings.  ``times``: how often each mention's spelling is written, when
    ``mentions`` holds only the first mention of each spelling.
    """
    by_key: dict[str, Counter] = {}
    first: dict[str, Mention] = {}
    for mention in mentions:
        spelling = mention.spelling.strip()  # spaces around a name are invisible: never worth a warning
        by_key.setdefault(name_key(spelling), Counter())[spelling] += 1 if times is None else times[mention.spelling]
        first.setdefault(spelling, mention)
    display: dict[str, str] = {}
    counts: Counter = Counter()
    problems: list[Problem] = []
    for key, spellings in by_key.items():
        kept = known.get(key) or clean(spellings.most_common(1)[0][0])
        display[key] = kept
        counts[kept] += sum(spellings.values())
        if key in known and name_key(kept) != key:
            continue  # an "Also known as" spelling: merged on purpose
        source = "the Players sheet's spelling" if key in known else "the most used spelling"
        for spelling, count in spellings.items():
            if _visible(spelling) != kept:  # one Unicode form of the same letters is the same spelling
                where = first[spelling]
                others = f" and {plural(count - 1, 'more row')}" if count > 1 else ""
                problems.append(Problem(
                    "warning", sheet, where.row, where.column, spelling,
                    f"only capitals or spaces differ from '{kept}' ({source}); "
                    f"read as '{kept}' here{others}",
                    "Nothing to do if it is the same player; correct the spelling to clear this warning."))
    return display, counts, problems


def _variants(key: str) -> set[str]:
    # Two keys one typing slip apart (a letter added, dropped, changed, or two swapped)
    # share a variant with one letter deleted: this finds them without comparing every pair.
    # The variants take length squared in memory, so a key longer than any name has none.
    if len(key) > MAX_NAME_LENGTH:
        return {key}
    return {key} | {key[:i] + key[i + 1:] for i in range(len(key))}


_DIGITS = re.compile(r"\d+")


def _closeness(a: str, b: str) -> float:
    """For two keys sharing a one-deletion variant: what difflib's ratio gives for one slip, in O(1).

    One letter added or dropped leaves len(a) + len(b) - 1 matching characters out of
    len(a) + len(b); one changed or two swapped leave len(a) + len(b) - 2.  Names that
    differ in their numbers ("Team 1", "Team 2") are different on purpose: 0.
    """
    if _DIGITS.findall(a) != _DIGITS.findall(b):
        return 0.0
    total = len(a) + len(b)
    return (total - (1 if len(a) != len(b) else 2)) / total


class CloseIndex:
    """Finds spellings one typing slip apart among many names, without comparing every pair."""

    def __init__(self, names: Iterable[str], cutoff: float = CLOSE_CUTOFF):
        self.cutoff = cutoff
        self._names = {name_key(n): n for n in names}
        self._variants: dict[str, set[str]] = {}
        for key in self._names:
            for variant in _variants(key):
                self._variants.setdefault(variant, set()).add(key)

    def matches(self, name: str, n: int = 3) -> list[str]:
        """Up to n names spelled like ``name`` (itself excluded), closest first."""
        key = name_key(name)
        candidates = {k for v in _variants(key) for k in self._variants.get(v, ()) if k != key}
        scored = sorted((-_closeness(key, k), k) for k in candidates)
        scored = [(ratio, k) for ratio, k in scored if -ratio >= self.cutoff]
        return [self._names[k] for _, k in scored[:n]]

    def pairs(self) -> list[tuple[str, str]]:
        """Every pair of close spellings among the names (each pair once, sorted)."""
        found: set[tuple[str, str]] = set()
        for members in self._variants.values():
            if len(members) < 2:
                continue
            ordered = sorted(members)
            for i, a in enumerate(ordered):
                for b in ordered[i + 1:]:
                    if (a, b) not in found and _closeness(a, b) >= self.cutoff:
                        found.add((a, b))
        return sorted((self._names[a], self._names[b]) for a, b in found)
