"""Small, quick loaders for the real result sets in the shared data folder beside the repository (test material only).

Badminton: world-tour men's singles 2018-2021 (mirror of a public dataset by
SanderP99, CC0); tennis: professional men's singles 2019 and doubles 2018-2019
(JeffSackmann/tennis_atp, CC BY-NC-SA 4.0).  Nothing derived from them is shipped; docs/real-data.md records what the
tests rely on.
"""
from __future__ import annotations

import csv
import datetime as dt
import re
from functools import lru_cache
from pathlib import Path

import pytest

from secretary.model.records import Result

DATA = Path(__file__).resolve().parents[1] / ".." / "shared" / "data"
BADMINTON = DATA / "badminton" / "ms.csv"
TENNIS = DATA / "tennis"
TENNIS_FILES = ("atp_matches_2019.csv", "atp_matches_qual_chall_2019.csv", "atp_matches_futures_2019.csv")
# Tiers as divisions, as the data's README lists them (qualifying rows carry their event's level).
TENNIS_TIERS = {"G": "Top", "M": "Top", "A": "Top", "F": "Top", "D": "Top", "C": "Second", "S": "Third"}


def need(path: Path) -> Path:
    """Skip the calling test when a shared data file is absent."""
    if not path.exists():
        pytest.skip(f"real data not found at {path} (the shared data folder sits beside the repository)")
    return path


def _tier(tournament_type: str) -> str:
    """'HSBC BWF World Tour Super 300' -> 'Super 300'; 'HSBC BWF World Tour Finals' -> 'Finals'."""
    return re.sub(r"^(HSBC )?BWF (World )?Tour ", "", tournament_type).strip()


@lru_cache(maxsize=2)
def badminton(fold_case: bool = False) -> tuple[Result, ...]:
    """Men's singles: games won = games each side took; division = the event's tier.

    With ``fold_case`` two spellings that differ only in capitals count as one
    player (the first spelling met is kept).
    """
    spelling: dict[str, str] = {}

    def name(text: str) -> str:
        text = " ".join(text.split())
        return spelling.setdefault(text.casefold(), text) if fold_case else text

    out = []
    with open(need(BADMINTON), newline="", encoding="utf-8") as fh:
        for row in csv.DictReader(fh):
            won = [0, 0]
            for key in ("game_1_score", "game_2_score", "game_3_score"):
                if not row[key]:
                    continue
                x, y = (int(v) for v in row[key].split("-"))
                # Retired matches end with an unfinished game: only games someone reached 21 in count.
                if max(x, y) >= 21 and x != y:
                    won[x < y] += 1
            if sum(won) == 0:
                continue
            day, month, year = (int(v) for v in row["date"].split("-"))
            out.append(Result(dt.date(year, month, day), name(row["team_one_players"]),
                              name(row["team_two_players"]), won[0], won[1], _tier(row["tournament_type"])))
    return tuple(out)


_SET = re.compile(r"^(\d+)-(\d+)(\(\d+\))?$")


def sets_won(score: str) -> tuple[int, int] | None:
    """Sets won by winner and loser from a score like '7-6(4) 3-6 6-2'; None for unfinished matches."""
    if any(mark in score for mark in ("RET", "W/O", "Def", "DEF", "ABD", "unfinished")):
        return None
    won = [0, 0]
    for token in score.split():
        m = _SET.match(token)
        if not m:
            return None
        x, y = int(m.group(1)), int(m.group(2))
        if x == y:
            return None
        won[x < y] += 1
    return (won[0], won[1]) if won[0] > won[1] else None


@lru_cache(maxsize=2)
def tennis(by_file: bool = False) -> tuple[Result, ...]:
    """Men's singles 2019, three tiers as divisions; games won = sets won.

    The tier is the event's level (qualifying rows of top-tier events count as top tier), or with ``by_file``
    the file a row comes from (qualifying rows then count in the second tier, where those players play).
    """
    out = []
    for file, tier in zip(TENNIS_FILES, ("Top", "Second", "Third")):
        with open(need(TENNIS / file), newline="", encoding="utf-8") as fh:
            for row in csv.DictReader(fh):
                sets = sets_won(row["score"])
                if sets is None:
                    continue
                d = row["tourney_date"]
                out.append(Result(dt.date(int(d[:4]), int(d[4:6]), int(d[6:])), row["winner_name"],
                                  row["loser_name"], sets[0], sets[1],
                                  tier if by_file else TENNIS_TIERS[row["tourney_level"]]))
    return tuple(out)


def write_results_workbook(results, path: Path) -> Path:
    """A league workbook holding only a Results sheet with these results (the tests' and benchmarks' input)."""
    import openpyxl

    wb = openpyxl.Workbook(write_only=True)
    ws = wb.create_sheet("Results")
    ws.append(["Date", "Division", "Player A", "Player B", "Games A", "Games B"])
    for r in results:
        ws.append([r.date, r.division, r.player_a, r.player_b, r.games_a, r.games_b])
    wb.save(path)
    return path


TENNIS_DOUBLES_FILES = ("atp_matches_doubles_2018.csv", "atp_matches_doubles_2019.csv")


@lru_cache(maxsize=1)
def tennis_doubles() -> tuple[Result, ...]:
    """Men's doubles 2018-2019 as doubles results (sets as games; a match tie-break written as its own
    token, "(10-5)", counts as a set); unfinished rows and rows naming a player twice are skipped as bad
    rows, as the data's README says."""
    out = []
    for file in TENNIS_DOUBLES_FILES:
        with open(need(TENNIS / file), newline="", encoding="utf-8") as fh:
            for row in csv.DictReader(fh):
                sets = sets_won(" ".join(t.strip("()[]") if t[:1] in "([" else t for t in row["score"].split()))
                names = [row[k].strip() for k in ("winner1_name", "winner2_name", "loser1_name", "loser2_name")]
                if sets is None or not all(names) or len(set(names)) < 4:
                    continue
                d = row["tourney_date"]
                out.append(Result(dt.date(int(d[:4]), int(d[4:6]), int(d[6:])), names[0], names[2], sets[0],
                                  sets[1], partner_a=names[1], partner_b=names[3]))
    return tuple(out)
