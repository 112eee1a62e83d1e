"""A tiered league with players who have no results, and their fixtures' strength differences worked out
independently: the mixture over the divisions enumerated seat by seat with a dense inverse of the joint
Hessian (numpy), not with the tool's closed form."""
from __future__ import annotations

import datetime as dt
import itertools

import numpy as np

from secretary.model.fit import hessian
from secretary.model.records import Fixture, Player, Result

FIRST_NIGHT = dt.date(2026, 1, 6)
# Unequal divisions, so that weighting by players matters: 6, 4 and 3 players with results.
DIVISIONS = {
    "Premier": ("Ada Finch", "Bram Oak", "Cleo Marsh", "Dev Pike", "Edie Holt", "Finn Yarrow"),
    "First": ("Gwen Ashby", "Hal Brook", "Ines Cole", "Jude Dunn"),
    "Second": ("Kit Ellis", "Lyra Moss", "Milo Reed"),
}
LISTED = "Nell Quarry"  # on the Players sheet in First, no results
NO_DIVISION = "Otto Vane"  # on the Players sheet without a Division, no results
STRANGER = "Pia Wren"  # in no sheet but Fixtures
STRENGTH = {"Premier": 0.8, "First": 0.0, "Second": -0.8}  # log-odds, for the simulated games


def results(weeks: int = 16, seed: int = 3) -> list[Result]:
    """Races to 5 inside each division every week, and one match between neighbouring divisions."""
    rng = np.random.default_rng(seed)
    out = []
    for week in range(weeks):
        day = FIRST_NIGHT + dt.timedelta(days=7 * week)
        for division, names in DIVISIONS.items():
            a, b = rng.choice(len(names), 2, replace=False)
            out.append(_race(rng, day, division, names[a], names[b], 0.0))
        upper, lower = (("Premier", "First"), ("First", "Second"))[week % 2]
        a, b = rng.choice(DIVISIONS[upper]), rng.choice(DIVISIONS[lower])
        out.append(_race(rng, day, "Cup", str(a), str(b), STRENGTH[upper] - STRENGTH[lower]))
    return out


def _race(rng, day, division, a, b, gap) -> Result:
    won = [0, 0]
    while max(won) < 5:
        won[0 if rng.random() < 1 / (1 + np.exp(-gap)) else 1] += 1
    return Result(day, a, b, won[0], won[1], division)


def players() -> list[Player]:
    """Everyone with results in their division (so no match at the cup decides a home), and the two newcomers."""
    listed = [Player(name, division=d) for d, names in DIVISIONS.items() for name in names]
    return listed + [Player(LISTED, division="First"), Player(NO_DIVISION)]


def shares() -> np.ndarray:
    """Each division's share of the players with results, in the fit's (sorted) order of division names."""
    sizes = {d: len(names) for d, names in DIVISIONS.items()}
    return np.array([sizes[d] for d in sorted(DIVISIONS)], float) / sum(sizes.values())


def fixtures() -> list[Fixture]:
    day = FIRST_NIGHT + dt.timedelta(weeks=20)
    return [Fixture(day, "Ada Finch", STRANGER), Fixture(day, STRANGER, NO_DIVISION),
            Fixture(day, "Kit Ellis", LISTED), Fixture(day, "Ada Finch", "Gwen Ashby", partner_a=STRANGER,
                                                       partner_b="Hal Brook")]


def _placed(fit, name: str) -> bool:
    """In the fit with a result or a Players-sheet division (NO_DIVISION is counted in some division for the
    fit's sake, with no games: the fixtures take them as the mixture)."""
    return name in fit.names and (fit.games[fit.index(name)] > 0 or name in {p.name for p in players() if p.division})


def by_enumeration(fit, fixture: Fixture, w: np.ndarray, placed=_placed) -> tuple[float, float]:
    """Mean and variance of the fixture's strength difference: every choice of division for every player
    who has no results and no division, weighted by ``w``, each a Normal from the dense joint posterior
    (plus the prior's ``s^2`` for each such player's own deviation); the mixture's two moments."""
    n, D = len(fit.names), len(fit.group_names)
    free = fit.levels is not None
    H = hessian(fit.pairs, fit.r, fit.prior_sd, fit.levels if free else None).toarray()
    cov, centre = np.linalg.inv(H), np.concatenate([fit.r, fit.level if free else []])
    seats = [(name, sign / len(side)) for side, sign in ((fixture.side_a, 1.0), (fixture.side_b, -1.0))
             for name in side]
    fixed = np.zeros(n + (D if free else 0))
    for name, a in seats:
        if placed(fit, name):
            fixed[fit.index(name)] += a
    away = [a for name, a in seats if not placed(fit, name)]
    moments = []
    for choice in itertools.product(range(D), repeat=len(away)):
        x, shift = fixed.copy(), 0.0
        for a, d in zip(away, choice):
            if free:
                x[n + d] += a
            else:
                shift += a * fit.level[d]
        p = float(np.prod([w[d] for d in choice]))
        m = float(x @ centre) + shift
        v = float(x @ cov @ x) + sum(a * a for a in away) * fit.prior_sd**2
        moments.append((p, m, v))
    mean = sum(p * m for p, m, _ in moments)
    return mean, sum(p * (v + m * m) for p, m, v in moments) - mean**2
