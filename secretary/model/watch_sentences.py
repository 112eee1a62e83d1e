"""The watch list in plain words: one line per division, player, separate pool and linking match.

The numbers come from ``secretary.model.linkage``; everything a secretary
reads about them is worded here, so that the sheet, the window, the command
line and the notice board say the same thing.
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Sequence

from secretary.model.sentences import plural

if TYPE_CHECKING:  # pragma: no cover - typing only
    from secretary.model.linkage import WatchList

NO_DIVISION = "(no division)"
SHOWN_NAMES = 12  # names listed before "and N more"
POOL_NAMES = 4  # names in a separate pool's line
SUMMARY_PLAYERS = 5  # held-back players named in the short summary before "and N more"
MEAN_RATING = "Average rating"
MEAN_RATING_MEANING = ("The mean rating of the division's players, in points. With division levels it is not "
                       "the Centre plus the division level (Ratings sheet): each rating is that plus the "
                       "player's own part, and the own parts need not average to zero.")
# A division against the rest of the league, and how sure that is (not the divisions table's ± of the level).
GAP = "Gap to the rest"
GAP_SD = "± of the gap"
GAP_MEANING = ("How far the division stands above (+) or below (-) the rest of the league, in points (its "
               "division level minus the other divisions' average level; with Division spread 0, its players' "
               "average rating minus the league's).")
GAP_SD_MEANING = ("How uncertain the gap to the rest is, in points (what linking matches narrow). Not the "
                  "± of the level on the Ratings sheet, which measures the level against the average of "
                  "all the divisions, itself included, and so reads smaller.")
POOL_GAP_SD = "± of their gap to the rest"  # a separate pool's average rating against the league's
NOTHING_TO_DO = "Nothing to act on: every division is tied in well enough and no rating is held back."


def division_label(division: str) -> str:
    """A division's name as shown; players without one are counted under ``NO_DIVISION``."""
    return division or NO_DIVISION


def listing(names: Sequence[str], shown: int = SHOWN_NAMES) -> str:
    """``"A, B, C and 4 more"``."""
    names = list(names)
    text = ", ".join(names[:shown])
    return text + (f" and {len(names) - shown} more" if len(names) > shown else "")


def division_todo(division: str, cross_games: float, suggested: bool) -> str:
    """What to do about a weakly linked division (``suggested``: some linking match involves it)."""
    label = division_label(division)
    see = " (see suggestions)" if suggested else ""
    if cross_games <= 0:
        return (f"{label} has played no one from another division, so its level rests on the starting "
                f"assumption: arrange a few matches between {label} and the other divisions{see}.")
    return f"Arrange a few matches between {label} and the other divisions{see}."


def held_todo(division: str, division_flagged: bool) -> str:
    """What to do about a held-back player."""
    if division_flagged:
        return (f"Their true level cannot show until they play outside {division_label(division)}; "
                "treat their handicap with care.")
    return "Their results run ahead of their rating; it should catch up as they play more."


def pool_todo(names: Sequence[str]) -> str:
    """What to do about a separate pool: the players, by name, and how to join them to the rest."""
    who = listing(names, POOL_NAMES)
    return (f"{who} ({len(names)} players) have played nobody outside their group: check whether a name "
            "is another spelling of a player already listed (add it under 'Also known as'), or arrange a "
            "match between one of them and a player from the rest.")


def match_todo(player_a: str, player_b: str, race: int, target: str, sd_before: float, sd_after: float) -> str:
    """One suggested linking match and what it would do to the level it ties in."""
    return (f"Arrange {player_a} v {player_b}, race to {race}: the gap between {division_label(target)} and "
            f"the rest of the league would then be known to ±{sd_after:.0f} points instead of "
            f"±{sd_before:.0f}.")


def more_held(count: int) -> str:
    """The line under a capped list of held-back players."""
    return f"and {count} more held back (weaker cases, not listed)"


def watch_lines(watch: "WatchList", players: int = SUMMARY_PLAYERS) -> list[str]:
    """The watch list's to-do lines, most important first: pools, divisions, players, suggestions."""
    lines = [p.what_to_do for p in watch.pools]
    lines += [f"{division_label(d.division)}: {d.what_to_do}" for d in watch.flagged_divisions]
    held = watch.flagged_players
    lines += [f"{h.name}: {h.what_to_do}" for h in held[:players]]
    if len(held) > players:
        lines.append(f"... and {plural(len(held) - players, 'more player')} held back in those divisions "
                     "(see the Watch list sheet).")
    if watch.suggestions:
        count = len(watch.suggestions)
        lines.append(f"{plural(count, 'linking match')} {'is' if count == 1 else 'are'} suggested on the "
                     "Watch list sheet.")
    return lines
