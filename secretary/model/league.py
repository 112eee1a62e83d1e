"""From results to ratings: the whole league fitted at once.

``fit_league`` turns records (results, players, settings) into index arrays,
weights every game by its age from the reference date (the newest result,
never the clock), fits the MAP and its Laplace uncertainty, and returns a
``LeagueFit`` in log-odds with conversions to points.
"""
from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Iterable, Mapping, Sequence

import numpy as np

from secretary.model.diagnose import Diagnosis, diagnose
from secretary.model.fit import fit_map, hessian
from secretary.model.matches import Matches, from_results, home_divisions, last_played
from secretary.model.pairs import Pairs, age_weights, aggregate
from secretary.model.records import Player, Result, Settings
from secretary.model.scale import points_per_logodds, to_points, to_strength
from secretary.model.uncertainty import contrast_variance, strength_variance


@dataclass(frozen=True)
class LeagueFit:
    """Everyone's rating from one joint fit.

    Strengths ``r`` and variances ``var`` are in natural log-odds; ``ratings``
    and ``sds`` convert them to points with the league's centre and scale.
    """

    names: tuple[str, ...]
    settings: Settings
    reference_date: dt.date | None
    r: np.ndarray
    var: np.ndarray
    prior_mean: np.ndarray
    pairs: Pairs
    group: np.ndarray  # group (division) number of each player
    group_names: tuple[str, ...]
    last_played: tuple[dt.date | None, ...]
    diagnosis: Diagnosis
    iterations: int

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

    def contrast_variance(self, coefficients) -> np.ndarray:
        """Posterior variance of each row of ``coefficients @ r`` (log-odds squared; coefficients (m, n_players)).

        Exact from the Laplace posterior: ``c^T H^-1 c`` with ``H`` the fit's
        Hessian at the optimum (``uncertainty.contrast_variance``).
        """
        return contrast_variance(hessian(self.pairs, self.r, self.prior_sd), coefficients)

    def division(self, name: str) -> str:
        """The group (division) a player is counted in."""
        return self.group_names[self.group[self.index(name)]]


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
    options : ``reference_date``, ``start``, ``with_uncertainty``, as for ``fit_matches``
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
) -> LeagueFit:
    """Fit every rating jointly from matches already in columns (``Matches``).

    Parameters
    ----------
    matches : the rated matches
    settings, players : as for ``fit_league``
    reference_date : date ages are measured from; default the newest match's date
    start : optional warm start, strengths (log-odds) by name
    with_uncertainty : skip the ± computation when only the optimum is needed
    """
    order = matches.names
    n = len(order)
    ref = reference_date or (dt.date.fromordinal(int(matches.day.max())) if len(matches) else None)
    age = (ref.toordinal() - matches.day).astype(float) if len(matches) else np.zeros(0)
    pairs = aggregate(matches.idx_a, matches.idx_b, matches.games_a, matches.games_b, n,
                      age_weights(np.maximum(age, 0.0), settings.half_life_days))

    ppl = points_per_logodds(settings.scale)
    starting = {p.name: p.starting for p in players if p.starting is not None}
    mu = np.full(n, 0.0)
    for k, name in enumerate(order):
        if name in starting:
            mu[k] = to_strength(starting[name], settings.centre, settings.scale)
    prior_sd = settings.skill_spread / ppl

    home = home_divisions(matches, players)
    group_names = tuple(sorted(set(home)))
    group_of = {g: k for k, g in enumerate(group_names)}
    group = np.fromiter((group_of[h] for h in home), np.int64, n)

    x0 = None if start is None else np.array([start.get(name, mu[k]) for k, name in enumerate(order)])
    fit = fit_map(pairs, mu, prior_sd, start=x0)
    var = strength_variance(pairs, fit.r, prior_sd, group) if with_uncertainty else np.full(n, np.nan)
    return LeagueFit(
        names=order,
        settings=settings,
        reference_date=ref,
        r=fit.r,
        var=var,
        prior_mean=mu,
        pairs=pairs,
        group=group,
        group_names=group_names,
        last_played=last_played(matches),
        diagnosis=diagnose(pairs),
        iterations=fit.iterations,
    )
