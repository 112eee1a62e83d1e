"""From results to ratings: the whole league fitted at once.

``fit_league`` turns records (results, players, settings) into index arrays,
weights every game by its age from the reference date (the newest result,
never the clock), fits the MAP and its Laplace uncertainty, and returns a
``LeagueFit`` in log-odds with conversions to points.

Division levels: every player belongs to one home division (``home_divisions``)
and, with a Division spread above 0 and at least two divisions, each division
gets its own level ``L_d`` (``fit.Levels``), fitted jointly with the players.
"""
from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Iterable, Mapping, Sequence

import numpy as np
import scipy.sparse as sp

from secretary.model.diagnose import Diagnosis, diagnose
from secretary.model.fit import Levels, fit_map, hessian
from secretary.model.matches import Matches, from_results, home_divisions, last_played
from secretary.model.pairs import Pairs, age_weights, aggregate
from secretary.model.records import HOME_RULES, Player, Result, Settings
from secretary.model.scale import points_per_logodds, to_points, to_strength
from secretary.model.uncertainty import contrast_variance, strength_variance


@dataclass(frozen=True)
class LeagueFit:
    """Everyone's rating from one joint fit.

    Strengths ``r`` and variances ``var`` are in natural log-odds; ``ratings``
    and ``sds`` convert them to points with the league's centre and scale.
    With free division levels ``var`` and ``level_var`` are against the levels'
    average, the scale's anchor (``common_mode``).
    """

    names: tuple[str, ...]
    settings: Settings
    reference_date: dt.date | None
    r: np.ndarray
    var: np.ndarray
    prior_mean: np.ndarray  # each strength's prior mean given its division's level: mu_i + L_d(i)
    pairs: Pairs
    group: np.ndarray  # group (division) number of each player
    group_names: tuple[str, ...]
    last_played: tuple[dt.date | None, ...]
    diagnosis: Diagnosis
    iterations: int
    level: np.ndarray = None  # each division's level, log-odds above the centre (0s in one pool)
    level_var: np.ndarray = None  # its posterior variance against the levels' average (0 where fixed)
    levels: Levels | None = None  # the free levels' prior, None when the levels are fixed (one pool)
    starting_level: np.ndarray = None  # each division's starting level m_d, log-odds above the centre
    home_rule: tuple[str, ...] = ()  # how each player's home division was found (HOME_RULES)

    @property
    def prior_sd(self) -> float:
        """The prior SD in log-odds."""
        return self.settings.skill_spread / points_per_logodds(self.settings.scale)

    @property
    def ratings(self) -> np.ndarray:
        """Ratings in points."""
        return to_points(self.r, self.settings.centre, self.settings.scale)

    @property
    def sds(self) -> np.ndarray:
        """± (one SD) in points."""
        return np.sqrt(self.var) * points_per_logodds(self.settings.scale)

    @property
    def games(self) -> np.ndarray:
        """Age-weighted games played per player."""
        return self.pairs.games_per_player()

    @property
    def wins(self) -> np.ndarray:
        """Age-weighted games won per player."""
        return self.pairs.wins_per_player()

    @property
    def doubles_games(self) -> np.ndarray:
        """Age-weighted doubles games played per player (included in ``games``)."""
        return self.pairs.doubles_games_per_player()

    def side_strength(self, side) -> float:
        """A side's strength in log-odds: one player's, or the mean of two players' (doubles)."""
        names = (side,) if isinstance(side, str) else tuple(side)
        return float(np.mean([self.r[self.index(name)] for name in names]))

    def index(self, name: str) -> int:
        """Position of ``name`` in ``names``; KeyError if not rated."""
        try:
            return self._lookup[name]
        except AttributeError:
            object.__setattr__(self, "_lookup", {n: k for k, n in enumerate(self.names)})
            return self._lookup[name]

    def rating(self, name: str) -> float:
        """One player's rating in points."""
        return float(self.ratings[self.index(name)])

    def sd(self, name: str) -> float:
        """One player's ± in points."""
        return float(self.sds[self.index(name)])

    def contrast_variance(self, coefficients, level_coefficients=None) -> np.ndarray:
        """Posterior variance of each row of ``coefficients @ r + level_coefficients @ L`` (log-odds squared;
        coefficients (m, n_players), level_coefficients (m, divisions) or None; fixed levels add nothing).

        Exact from the Laplace posterior: ``c^T H^-1 c`` with ``H`` the fit's
        Hessian at the optimum (``uncertainty.contrast_variance``).  With free
        division levels ``H`` is the joint Hessian over ``(r, L)``, in which a
        contrast over the strengths is ``[c, 0]`` (the levels' covariance is
        inside ``H^-1``), and the levels' average, which no game sees, is the anchor:
        a row whose coefficients (the levels' included) sum to ``k`` sheds ``k^2 tau^2 / D``
        (``common_mode``; nothing for a difference).
        """
        H = hessian(self.pairs, self.r, self.prior_sd, self.levels)
        if self.levels is None:
            return contrast_variance(H, coefficients)
        m = np.shape(coefficients)[0]
        on_levels = sp.csr_matrix((m, len(self.levels.mean)) if level_coefficients is None else level_coefficients)
        total = np.asarray(coefficients.sum(axis=1)).ravel() + np.asarray(on_levels.sum(axis=1)).ravel()
        coefficients = sp.hstack([sp.csr_matrix(coefficients), on_levels], "csr")
        return np.maximum(contrast_variance(H, coefficients) - total**2 * common_mode(self.levels), 0.0)

    def starting_levels(self) -> dict[str, float]:
        """Each division's starting level in points above the centre (to refit with the same prior)."""
        ppl = points_per_logodds(self.settings.scale)
        return {g: float(m * ppl) for g, m in zip(self.group_names, self.starting_level)}

    @property
    def rated(self) -> np.ndarray:
        """True for each player with a rated game: the players the Ratings sheet publishes and every
        division's count takes (a Players-sheet row with no results is in the fit, with its prior only)."""
        mask = np.ones(len(self.names), dtype=bool)
        mask[self.diagnosis.no_games] = False
        return mask

    def homes(self) -> dict[str, str]:
        """Each player's home division."""
        return {name: self.group_names[g] for name, g in zip(self.names, self.group)}

    def level_points(self, division: str) -> float:
        """A division's level in points above the centre."""
        return float(self.level[self.group_names.index(division)] * points_per_logodds(self.settings.scale))

    def level_sd(self, division: str) -> float:
        """The ± of a division's level in points (0 when the level is fixed: Division spread 0)."""
        return float(np.sqrt(self.level_var[self.group_names.index(division)]) * points_per_logodds(self.settings.scale))

    def division(self, name: str) -> str:
        """The group (division) a player is counted in."""
        return self.group_names[self.group[self.index(name)]]




def division_levels(group: np.ndarray, group_names: Sequence[str], settings: Settings,
                    starting_levels: Mapping[str, float] | None = None) -> Levels:
    """The levels' prior in log-odds: starting levels (points, blank = 0) and the Division spread."""
    ppl = points_per_logodds(settings.scale)
    mean = np.array([float((starting_levels or {}).get(g, 0.0)) / ppl for g in group_names])
    return Levels(group, mean, max(float(getattr(settings, "division_spread", 0.0)), 0.0) / ppl)


def _placed(matches: Matches, players: Sequence[Player], home: Mapping[str, str] | None) -> list[tuple[str, str]]:
    """Each player's (home division, the rule that placed them: one of ``HOME_RULES``)."""
    given = {p.name for p in players if p.division}
    played = np.zeros(len(matches.names), dtype=bool)
    played[matches.seats()[0]] = True
    placed = [(division, HOME_RULES[0] if name in given else HOME_RULES[1] if was else HOME_RULES[2])
              for name, division, was in zip(matches.names, home_divisions(matches, players), played.tolist())]
    if home:
        placed = [(home.get(name, division), rule) for name, (division, rule) in zip(matches.names, placed)]
    return _unplaced_join_a_division(placed)


def _unplaced_join_a_division(placed: list[tuple[str, str]]) -> list[tuple[str, str]]:
    """A player with no results and no division (a Players-sheet row without one) is counted in the first
    division there is, not in a division named "" of their own, which would add a free level and change the
    levels' average, the anchor of everyone's ±.  With no games their strength moves nobody's (it is their
    prior, whatever the division); fixtures take them as the mixture over the divisions (``model.fixtures``)."""
    named = sorted({d for d, rule in placed if d or rule != HOME_RULES[2]})
    if not named:
        return placed
    return [(named[0], rule) if not d and rule == HOME_RULES[2] else (d, rule) for d, rule in placed]


def _weighted_pairs(matches: Matches, reference_date: dt.date | None, half_life_days: float) -> Pairs:
    """The matches' games per pair, each weighted by its age from ``reference_date`` (never negative)."""
    age = (reference_date.toordinal() - matches.day).astype(float) if len(matches) else np.zeros(0)
    return aggregate(matches.idx_a, matches.idx_b, matches.games_a, matches.games_b, len(matches.names),
                     age_weights(np.maximum(age, 0.0), half_life_days), matches.partner_a, matches.partner_b)


def _prior_means(order: Sequence[str], players: Sequence[Player], settings: Settings) -> np.ndarray:
    """Each player's prior mean in log-odds: their Players-sheet starting rating, else the centre (0)."""
    starting = {p.name: p.starting for p in players if p.starting is not None}
    mu = np.full(len(order), 0.0)
    for k, name in enumerate(order):
        if name in starting:
            mu[k] = to_strength(starting[name], settings.centre, settings.scale)
    return mu


def _numbered(divisions: Sequence[str]) -> tuple[tuple[str, ...], np.ndarray]:
    """The divisions' names in sorted order, and each player's division number among them."""
    names = tuple(sorted(set(divisions)))
    number = {g: k for k, g in enumerate(names)}
    return names, np.fromiter((number[d] for d in divisions), np.int64, len(divisions))


def common_mode(levels: Levels | None) -> float:
    """``tau^2 / D``: the prior variance of the levels' average, which no game can see (log-odds squared).

    ``L ~ N(m, tau^2 I)`` splits into the levels against their average and the
    average itself, independent, and the games only see the first: every
    strength and every level carries the same ``tau^2 / D`` on top of what is
    known against the divisions' average level, the scale's anchor.  The ±
    shown is the one against that anchor (``Var(x - mean(L))``, exactly
    ``Var(x) - tau^2 / D``), as the centre anchors one pool; differences, and
    so every chance, are the same either way.  0 when the levels are fixed.
    """
    return levels.sd**2 / len(levels.mean) if levels is not None else 0.0


def _variances(pairs: Pairs, r, prior_sd: float, group, free: Levels | None, D: int):
    """The strengths' posterior variances and the free levels', against the levels' average (``common_mode``);
    0s for the levels when they are fixed."""
    var = strength_variance(pairs, r, prior_sd, group, free)
    if free is None:
        return var, np.zeros(D)
    anchored = np.maximum(var - common_mode(free), 0.0)
    return anchored[:len(r)], anchored[len(r):]


def fit_league(
    results: Iterable[Result],
    settings: Settings = Settings(),
    *,
    players: Sequence[Player] = (),
    **options,
) -> LeagueFit:
    """Fit every rating jointly from all rated (non-void) results.

    Parameters
    ----------
    results : the matches; void ones are skipped
    settings : centre, scale, skill spread (points) and half-life (days)
    players : optional Players-sheet records (divisions, starting ratings, players yet to play)
    options : ``reference_date``, ``start``, ``with_uncertainty``, ``starting_levels``, ``home``, as for ``fit_matches``
    """
    return fit_matches(from_results(results, players), settings, players=players, **options)


def fit_matches(
    matches: Matches,
    settings: Settings = Settings(),
    *,
    players: Sequence[Player] = (),
    reference_date: dt.date | None = None,
    start: Mapping[str, float] | None = None,
    with_uncertainty: bool = True,
    starting_levels: Mapping[str, float] | None = None,
    home: Mapping[str, str] | None = None,
) -> LeagueFit:
    """Fit every rating jointly from matches already in columns (``Matches``).

    Parameters
    ----------
    matches : the rated matches
    settings, players : as for ``fit_league``
    reference_date : date ages are measured from; default the newest match's date
    start : optional warm start, strengths (log-odds) by name
    with_uncertainty : skip the ± computation when only the optimum is needed
    starting_levels : optional starting level per division, points above the centre (the Divisions sheet)
    home : optional home division per player, overriding the rules (so a second fit shares a first's divisions)

    With two or more divisions each gets a level (``Levels``): free with a
    Division spread above 0, fixed at its starting level with 0 (one pool).
    """
    order, n = matches.names, len(matches.names)
    ref = reference_date or (dt.date.fromordinal(int(matches.day.max())) if len(matches) else None)
    pairs = _weighted_pairs(matches, ref, settings.half_life_days)
    mu, prior_sd = _prior_means(order, players, settings), settings.skill_spread / points_per_logodds(settings.scale)
    placed = _placed(matches, players, home)
    group_names, group = _numbered([division for division, _ in placed])
    levels = division_levels(group, group_names, settings, starting_levels) if len(group_names) > 1 else None

    x0 = None if start is None else np.array([start.get(name, mu[k]) for k, name in enumerate(order)])
    fit = fit_map(pairs, mu, prior_sd, levels=levels, start=x0)
    free = levels if levels is not None and levels.sd > 0 else None
    D = len(group_names)
    level = fit.level if levels is not None else np.zeros(D)
    if with_uncertainty:
        var, level_var = _variances(pairs, fit.r, prior_sd, group, free, D)
    else:
        var, level_var = np.full(n, np.nan), np.full(D, np.nan if free is not None else 0.0)
    return LeagueFit(
        names=order, settings=settings, reference_date=ref, r=fit.r, var=var, prior_mean=mu + level[group],
        pairs=pairs, group=group, group_names=group_names, last_played=last_played(matches),
        diagnosis=diagnose(pairs), iterations=fit.iterations, level=level, level_var=level_var, levels=free,
        starting_level=levels.mean if levels is not None else np.zeros(D),
        home_rule=tuple(rule for _, rule in placed),
    )
