"""Generated leagues of any size, for benchmarks and performance tests.

``make_games`` gives the engine's arrays directly; ``make_league_workbook``
writes a plain league workbook (Results, Players, Settings) quickly in
openpyxl's write-only mode.  Both are seeded: the same arguments give the same
data.  Every game is won with probability sigmoid(r_a - r_b); a match is a race
to 5, simulated game by game.
"""
from __future__ import annotations

import datetime as dt
from typing import NamedTuple

import numpy as np
from openpyxl import Workbook

RACE = 5
CROSS_SHARE = 0.05  # share of matches against another division
DIVISION_STEP = 0.5  # log-odds between neighbouring divisions' levels
SPREAD = 0.4  # log-odds SD of strengths within a division
WEEKS = 104  # matches are spread over two years of weekly nights
REFERENCE_DATE = dt.date(2026, 4, 16)
CHUNK = 1 << 20  # matches simulated at once: bounds memory at ~50 MB

FIRST = ("Ada", "Bram", "Cleo", "Dai", "Edie", "Finn", "Gwen", "Hal", "Ines", "Jude",
         "Kit", "Lyra", "Milo", "Nell", "Otto", "Pia", "Quin", "Rosa", "Sol", "Tess",
         "Ugo", "Vera", "Wyn", "Xena", "Yann", "Zola", "Abel", "Bea", "Cass", "Dov",
         "Elsa", "Fitz", "Greta", "Huw", "Ivo", "Jem", "Kaja", "Lars", "Mae", "Noor")
STEMS = ("Ash", "Brack", "Cotter", "Dun", "Elm", "Fair", "Gor", "Heb", "Ing", "Kettle",
         "Lum", "Mal", "Nettle", "Oak", "Pen", "Quar", "Ros", "Thorn", "Wether", "Yel")
ENDINGS = ("ley", "more", "ton", "field", "hurst", "wick", "by", "dale", "worth", "combe",
           "stead", "ridge")


class Games(NamedTuple):
    """Generated matches as arrays (one entry per match) and the true strengths."""

    idx_a: np.ndarray  # int32 player index of side A
    idx_b: np.ndarray  # int32 player index of side B
    games_a: np.ndarray  # int32 games won by A
    games_b: np.ndarray  # int32 games won by B
    age_days: np.ndarray  # float64 days before the reference date
    strengths: np.ndarray  # float64 true strength per player, log-odds
    division: np.ndarray  # int32 home division per player


def player_name(i: int) -> str:
    """A unique invented name for player ``i`` (a number is added past 9,600 players)."""
    first = FIRST[i % len(FIRST)]
    rest = i // len(FIRST)
    stem, ending = STEMS[rest % len(STEMS)], ENDINGS[(rest // len(STEMS)) % len(ENDINGS)]
    lap = i // (len(FIRST) * len(STEMS) * len(ENDINGS))
    return f"{first} {stem}{ending}" + (f" {lap + 1}" if lap else "")


def divisions_of(n_players: int, n_divisions: int) -> np.ndarray:
    """Home division of each player: contiguous, near-equal blocks (0 = strongest)."""
    return (np.arange(n_players) * n_divisions // n_players).astype(np.int32)


def simulate_races(rng: np.random.Generator, p: np.ndarray, race: int = RACE):
    """Games each side wins in races to ``race`` with per-game chance ``p`` for A.

    A loop over the at most ``2 race - 1`` game slots, vectorised over matches:
    a game is played only while neither side has reached ``race``.
    """
    a = np.zeros(p.shape, np.int32)
    b = np.zeros(p.shape, np.int32)
    for _ in range(2 * race - 1):
        on = (a < race) & (b < race)
        won = rng.random(p.shape) < p
        a += on & won
        b += on & ~won
    return a, b


def make_games(n_games: int, n_players: int, seed: int = 0, n_divisions: int = 4,
               cross_share: float = CROSS_SHARE) -> Games:
    """``n_games`` seeded races to 5 between ``n_players`` players in divisions.

    Most matches are within a division; ``cross_share`` of them are against a
    player of another division.  Ages are whole weeks over two years.
    """
    if n_players < 2 * n_divisions:
        raise ValueError("need at least two players per division")
    rng = np.random.default_rng(seed)
    division = divisions_of(n_players, n_divisions)
    strengths = -DIVISION_STEP * (division - (n_divisions - 1) / 2) + rng.normal(0, SPREAD, n_players)
    start = np.searchsorted(division, np.arange(n_divisions)).astype(np.int64)
    size = np.diff(np.append(start, n_players))
    parts = []
    for lo in range(0, n_games, CHUNK):
        n = min(CHUNK, n_games - lo)
        ia = rng.integers(0, n_players, n)
        da = division[ia]
        # Same division: a different player of the block.  Cross: any player of another division.
        same = start[da] + (ia - start[da] + rng.integers(1, size[da])) % size[da]
        db = (da + rng.integers(1, n_divisions, n)) % n_divisions if n_divisions > 1 else da
        other = start[db] + rng.integers(0, size[db])
        ib = np.where(rng.random(n) < cross_share, other, same)
        p = 1.0 / (1.0 + np.exp(strengths[ib] - strengths[ia]))
        ga, gb = simulate_races(rng, p)
        age = 7.0 * rng.integers(0, WEEKS, n)
        parts.append((ia.astype(np.int32), ib.astype(np.int32), ga, gb, age))
    if parts:
        cols = [np.concatenate(c) for c in zip(*parts)]
    else:
        cols = [np.zeros(0, np.int32)] * 4 + [np.zeros(0)]
    return Games(*cols, strengths=strengths, division=division)


def make_league_workbook(path, n_rows: int, n_players: int, n_divisions: int = 4, seed: int = 0,
                         copies: int = 1) -> Games:
    """Write a plain league workbook with ``n_rows`` results (each on ``copies`` rows in a row: entered twice,
    the check warns about every second one); return its games in row order."""
    games = make_games(n_rows, n_players, seed, n_divisions)
    order = np.argsort(-games.age_days, kind="stable")  # oldest first, as a secretary types them
    games = games._replace(**{f: getattr(games, f)[order] for f in Games._fields[:5]})
    names = [player_name(i) for i in range(n_players)]
    division_names = [f"Division {d + 1}" for d in range(n_divisions)]
    wb = Workbook(write_only=True)
    results = wb.create_sheet("Results")
    results.append(["Date", "Division", "Player A", "Player B", "Games A", "Games B", "Event", "Note"])
    day = np.timedelta64(1, "D")
    dates = (np.datetime64(REFERENCE_DATE) - games.age_days.astype(np.int64) * day).tolist()
    for k, date in enumerate(dates):
        a, b = int(games.idx_a[k]), int(games.idx_b[k])
        da, db = games.division[a], games.division[b]
        where = division_names[da] if da == db else "Open night"
        row = [date, where, names[a], names[b], int(games.games_a[k]), int(games.games_b[k]),
               "League night" if da == db else "Open night", None]
        for _ in range(copies):
            results.append(row)
    players = wb.create_sheet("Players")
    players.append(["Player", "Division", "Starting rating", "Also known as"])
    for name, d in zip(names, games.division.tolist()):
        players.append([name, division_names[d], None, None])
    settings = wb.create_sheet("Settings")
    settings.append(["Setting", "Value"])
    settings.append(["League name", f"Generated league ({n_rows} results)"])
    wb.save(path)
    return games
