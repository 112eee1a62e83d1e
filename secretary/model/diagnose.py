"""Checks on the who-played-whom graph before fitting, reported in league words.

Without a prior, ratings exist only when every pool of players is "strongly
connected" (everyone has both beaten and lost to someone reachable; Zermelo
1929, Ford 1957).  With the prior they always exist, but an unbeaten player
or a pool that plays nobody else is held by the starting assumption: the
secretary should know.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from secretary.model.pairs import Pairs


@dataclass(frozen=True)
class Diagnosis:
    """What the graph says before the fit.

    Attributes
    ----------
    no_games : indices of players with no rated games
    unbeaten : indices of players who won every rated game (and played at least one)
    winless : indices of players who lost every rated game
    pool : pool number of each player (connected groups of who-played-whom)
    pool_sizes : players per pool, largest first (pool 0 is the largest)
    """

    no_games: np.ndarray
    unbeaten: np.ndarray
    winless: np.ndarray
    pool: np.ndarray
    pool_sizes: np.ndarray

    @property
    def n_pools(self) -> int:
        """Pools with at least two players (players with no games are not a pool)."""
        return int(np.sum(self.pool_sizes >= 2))


def pools(pairs: Pairs) -> np.ndarray:
    """Pool label per player (0 = the largest pool), from who played whom."""
    n = pairs.n_players
    if n == 0:
        return np.zeros(0, dtype=np.int64)
    played = pairs.total > 0
    i, j = pairs.i[played], pairs.j[played]
    if pairs.doubles is not None:  # a doubles game links all four players
        di, dj = pairs.doubles.linked()
        keep = np.tile(pairs.doubles.total > 0, 6)
        i, j = np.concatenate([i, di[keep]]), np.concatenate([j, dj[keep]])
    graph = sp.coo_matrix((np.ones(len(i)), (i, j)), shape=(n, n))
    _, labels = connected_components(graph, directed=False)
    sizes = np.bincount(labels)
    rank = np.empty_like(sizes)
    rank[np.argsort(-sizes, kind="stable")] = np.arange(len(sizes))
    return rank[labels].astype(np.int64)


def diagnose(pairs: Pairs) -> Diagnosis:
    """Players with no games, unbeaten and winless players, and the pools of the league."""
    games = pairs.games_per_player()
    wins = pairs.wins_per_player()
    label = pools(pairs)
    played = games > 0
    return Diagnosis(
        no_games=np.flatnonzero(~played),
        unbeaten=np.flatnonzero(played & (wins >= games)),
        winless=np.flatnonzero(played & (wins <= 0)),
        pool=label,
        pool_sizes=np.sort(np.bincount(label))[::-1] if len(label) else np.zeros(0, dtype=np.int64),
    )


def describe(diagnosis: Diagnosis, names) -> list[str]:
    """The diagnosis as short sentences a secretary understands."""
    lines = []
    def listing(idx):
        shown = ", ".join(names[k] for k in idx[:8])
        return shown + (f" and {len(idx) - 8} more" if len(idx) > 8 else "")
    if len(diagnosis.no_games):
        lines.append(f"No rated games yet (listed on the Players sheet; not on the Ratings sheet until they play): "
                     f"{listing(diagnosis.no_games)}.")
    if len(diagnosis.unbeaten):
        lines.append(
            f"Unbeaten so far: {listing(diagnosis.unbeaten)}. Their rating rests partly on the starting "
            "assumption until they lose a game or meet stronger players."
        )
    if len(diagnosis.winless):
        lines.append(f"No games won yet: {listing(diagnosis.winless)}.")
    if diagnosis.n_pools > 1:
        sizes = diagnosis.pool_sizes[diagnosis.pool_sizes >= 2]
        lines.append(
            f"The league splits into {len(sizes)} separate pools of players who never met anyone "
            f"in another pool (sizes {', '.join(str(int(s)) for s in sizes)}). Ratings can be compared "
            "only within a pool; a few matches between pools would join them."
        )
    return lines
