"""The divisions table: each division's level, its ±, and the games that set it, in plain words.

One table for the Ratings sheet, the window's Ratings view and the notice
board, so that all three say the same.  A division's level is ``L_d`` of the
fit (``LeagueFit.level``), in points above the centre; its ± (``LEVEL_SD``, "± of
the level") is the Laplace posterior SD of ``L_d`` against the levels' average
(``LeagueFit.level_sd``), never called by the watch list's name for its own ±.  With Division spread 0 the
levels are fixed at their starting levels and have no ±.
"""
from __future__ import annotations

from dataclasses import dataclass

from secretary.model.records import Settings

NO_DIVISION = "(no division)"
# Two different ± of a division, named apart everywhere: this table's (the level against the average of all
# the divisions) and the watch list's (``watch_sentences.GAP_SD``: the division against the other divisions).
LEVEL_SD = "± of the level"
LEVEL_SD_MEANING = ("How uncertain the division level is, in points, measured against the average of all the "
                    "divisions. Not the Watch list's ± of the gap, which compares the division with the "
                    "other divisions only and so reads wider.")
FIXED = "fixed at its starting level (Division spread is 0)"
UNLINKED = "no games against other divisions yet: still at its starting level"
STARTED = "started at {:+.0f} (Divisions sheet)"
INFERRED = "division from latest result"  # a player's Note where the Players sheet gives no division
HOME_RULE = ("A player's division is the one the Players sheet gives, else the division of their most recent "
             "result (marked in Note).")


@dataclass(frozen=True)
class DivisionLevel:
    """One division's line of the divisions table.

    Attributes
    ----------
    division : the division's name ("" for players without one)
    level : the division level, points above (+) or below (-) the centre
    sd : its ± (one posterior SD), points; None when the levels are fixed (Division spread 0)
    starting_level : the Divisions sheet's starting level, points (0 when not given)
    players : players with a rated game counted in it (those on the Ratings sheet)
    cross_games : age-weighted games against other divisions
    note : plain words about how the level was set ("" when nothing to say)
    """

    division: str
    level: float
    sd: float | None
    starting_level: float
    players: int
    cross_games: float
    note: str = ""

    @property
    def label(self) -> str:
        return self.division or NO_DIVISION


def level_sentence(settings: Settings) -> str:
    """What "division level" means, in one plain sentence."""
    return (f"A division level is how strong a division is as a whole: points above (+) or below (-) the "
            f"league's starting rating of {settings.centre:.0f}, set by the games between divisions; the "
            f"± after it (the {LEVEL_SD}) is how uncertain it is.")


def level_table(fit, watch) -> tuple[DivisionLevel, ...]:
    """The divisions table of a fit (``LeagueFit``) and its watch list, strongest first; () for one division.

    The games against other divisions are the watch list's (``DivisionLink.cross_games``).
    """
    import numpy as np  # here: the window imports this module for its records, without the maths libraries

    from secretary.model.scale import points_per_logodds

    if len(fit.group_names) < 2:
        return ()
    ppl = points_per_logodds(fit.settings.scale)
    cross = {d.division: d.cross_games for d in watch.divisions}
    sizes = np.bincount(fit.group[fit.rated], minlength=len(fit.group_names))
    free = fit.levels is not None
    rows = []
    for g, name in enumerate(fit.group_names):
        start = float(fit.starting_level[g] * ppl)
        games = float(cross.get(name, 0.0))
        notes = [FIXED] if not free else [UNLINKED] if games == 0 else []
        if start and (free and games > 0):
            notes.append(STARTED.format(start))
        rows.append(DivisionLevel(
            division=name, level=float(fit.level[g] * ppl),
            sd=float(np.sqrt(max(float(fit.level_var[g]), 0.0)) * ppl) if free else None,
            starting_level=start, players=int(sizes[g]), cross_games=games, note="; ".join(notes)))
    rows.sort(key=lambda d: (not d.division, -d.level, d.division.casefold()))
    return tuple(rows)
