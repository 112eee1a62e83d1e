"""Race chances against published values, and the fair race against a brute-force search."""
from math import comb

import numpy as np
import pytest
from scipy.stats import nbinom

from secretary.model.races import fair_race, fair_race_for_chance, race_chance
from secretary.model.scale import game_chance


def chance_by_counting(p: float, a: int, b: int) -> float:
    """A gets ``a`` games before B gets ``b``: A wins the last game, B has won k < b before it."""
    return sum(comb(a - 1 + k, k) * p**a * (1 - p) ** k for k in range(b))


def test_best_of_seven_series():
    # Source: S. Ross, A First Course in Probability, problem 4.72: p = 0.6, first to 4 -> 0.7102 (computed 0.710208).
    assert race_chance(0.6, 4, 4) == pytest.approx(0.710208, abs=5e-7)


def test_best_of_three():
    # Source: S. Ross, A First Course in Probability, problem 4.72: p = 0.6, first to 2 -> 0.648.
    assert race_chance(0.6, 2, 2) == pytest.approx(0.648, abs=1e-12)


def test_two_thirds_first_to_four():
    # Source: MIT 6.042 (Fall 2000) problem set 11: p = 2/3, first to 4 -> 0.8267.
    assert race_chance(2 / 3, 4, 4) == pytest.approx(0.8267, abs=5e-5)


@pytest.mark.parametrize("a, b, expected", [(3, 5, 0.903744), (5, 3, 0.419904)])
def test_unequal_races(a, b, expected):
    # Source: docs/checks.md section 4, computed with scipy.stats.nbinom.cdf(b - 1, a, p) for p = 0.6.
    assert race_chance(0.6, a, b) == pytest.approx(expected, abs=5e-7)
    assert race_chance(0.6, a, b) == pytest.approx(nbinom.cdf(b - 1, a, 0.6), abs=1e-12)


def test_race_chance_matches_counting_over_a_grid():
    for p in (0.05, 0.3, 0.5, 0.77, 0.99):
        for a in range(1, 10):
            for b in range(1, 10):
                assert race_chance(p, a, b) == pytest.approx(chance_by_counting(p, a, b), abs=1e-12)


def test_race_chance_vectorises_and_rejects_bad_input():
    out = race_chance(np.array([0.6, 2 / 3]), 4, 4)
    assert out == pytest.approx([0.710208, 0.8267], abs=5e-5)
    with pytest.raises(ValueError):
        race_chance(1.2, 4, 4)
    with pytest.raises(ValueError):
        race_chance(0.5, 0, 4)


@pytest.mark.parametrize("longest", [1, 3, 5, 9, 11])
def test_fair_race_is_the_closest_to_even_by_brute_force(longest):
    rng = np.random.default_rng(longest)
    for p in np.concatenate([rng.uniform(0.02, 0.98, 60), [0.5, 0.6, 1 / 3]]):
        a, b = fair_race_for_chance(float(p), longest)
        assert 1 <= a <= longest and 1 <= b <= longest
        gaps = {(x, y): abs(chance_by_counting(p, x, y) - 0.5)
                for x in range(1, longest + 1) for y in range(1, longest + 1)}
        best = min(gaps.values())
        assert gaps[(a, b)] == pytest.approx(best, abs=1e-12)
        # Ties go to the longest race.
        tied = [xy for xy, g in gaps.items() if g <= best + 1e-12]
        assert a + b == max(x + y for x, y in tied)


def test_even_players_get_the_longest_level_race():
    assert fair_race_for_chance(0.5, 9) == (9, 9)


def test_stronger_player_gives_games_away():
    a, b = fair_race(1700.0, 1500.0, longest=9)
    assert a > b
    p = game_chance(1700.0, 1500.0)
    assert abs(race_chance(p, a, b) - 0.5) < abs(race_chance(p, 9, 9) - 0.5)


def _enumerated_chance(p: float, a: int, b: int) -> float:
    """P(first to a before the other reaches b), by summing the game sequences (negative binomial counts)."""
    return sum(comb(a - 1 + k, k) * p**a * (1 - p) ** k for k in range(b))


@pytest.mark.parametrize("p", [0.5, 0.503, 0.507, 0.51, 0.515, 0.52, 0.56, 0.6, 0.7, 0.85, 0.44])
@pytest.mark.parametrize("usual", [3, 5, 7])
def test_a_fair_race_near_the_usual_race_is_kept_when_it_is_fair_enough(p, usual):
    from secretary.model.races import FAIR_ENOUGH

    a, b = fair_race_for_chance(p, 9, 2, usual)
    grid = {(x, y): abs(_enumerated_chance(p, x, y) - 0.5) for x in range(2, 10) for y in range(2, 10)}
    fairest = min(grid.values())
    fair = [race for race, gap in grid.items() if gap <= fairest + FAIR_ENOUGH + 1e-12]
    assert (a, b) in fair  # never more than one percentage point less fair than the fairest race
    distance = {race: abs(race[0] - usual) + abs(race[1] - usual) for race in fair}
    assert distance[(a, b)] == min(distance.values())  # and the nearest such race to the usual one


def test_near_even_players_are_not_sent_to_the_shortest_race():
    # 51 % per game: the shortest race 2-2 is the fairest (51.5 %), a race to 5 gives 52.5 %.
    assert fair_race_for_chance(0.51, 9, 2) == (2, 2)
    assert fair_race_for_chance(0.51, 9, 2, usual=5) == (5, 5)
    assert fair_race_for_chance(0.5, 9, 2, usual=5) == (5, 5)
    assert fair_race_for_chance(0.6, 9, 2, usual=5) != (5, 5)  # a real gap still gets a handicap
