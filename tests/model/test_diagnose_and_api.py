"""Pre-fit diagnosis in league words, the scripting API, and the purity of the model package."""
import datetime as dt
import subprocess
import sys

import numpy as np
import pytest

import secretary
from secretary.model.diagnose import describe, diagnose
from secretary.model.pairs import aggregate

D = dt.date(2026, 3, 14)


def test_diagnosis_finds_unbeaten_winless_idle_players_and_pools():
    # 0 beats 1 always; 2-3 play each other in a separate pool; 4 never played.
    pairs = aggregate([0, 2, 3], [1, 3, 2], [5, 3, 2], [0, 5, 5], 5)
    d = diagnose(pairs)
    assert list(d.unbeaten) == [0] and list(d.winless) == [1] and list(d.no_games) == [4]
    assert d.n_pools == 2
    text = " ".join(describe(d, ["Ann", "Bob", "Cy", "Dot", "Eve"]))
    assert "Unbeaten so far: Ann" in text and "separate pools" in text and "Eve" in text
    for jargon in ("prior", "Hessian", "MAP", "log-odds"):
        assert jargon not in text


def test_rate_returns_ratings_and_sds_in_points():
    r = secretary.rate([(D, "Ann", "Bob", 5, 3), (D, "Bob", "Cy", 5, 4), (D, "Cy", "Ann", 2, 5)])
    assert r.names == ("Ann", "Bob", "Cy")
    assert r.rating("Ann") > r.rating("Bob") > r.rating("Cy")
    assert np.mean([r.rating(n) for n in r.names]) == pytest.approx(1500, abs=1e-6)
    assert all(50 < r.sd(n) < 200 for n in r.names)
    moved = secretary.rate([(D, "Ann", "Bob", 5, 3)], centre=1000, scale=200, skill_spread=100)
    assert moved.rating("Ann") > 1000 > moved.rating("Bob")
    held = secretary.rate([(D, "Ann", "Bob", 5, 3)], starting={"Ann": 1800})
    assert held.rating("Ann") > 1700


@pytest.mark.parametrize(
    "row, message",
    [
        ((D, "Ann", "Ann", 5, 3), "themself"),
        ((D, "Ann", "Bob", -1, 3), "games_a"),
        ((D, "Ann", "Bob", 2.5, 3), "games_a"),
        ((D, "Ann", "Bob", 0, 0), "both sides"),
        (("2026-01-01", "Ann", "Bob", 5, 3), "datetime.date"),
        ((D, "", "Bob", 5, 3), "player_a"),
        ((D, "Ann", "Bob"), "expected"),
    ],
)
def test_rate_names_the_bad_row(row, message):
    with pytest.raises(ValueError, match=message) as err:
        secretary.rate([(D, "Cy", "Dot", 5, 1), row])
    assert "result 2" in str(err.value)


def test_race_chance_and_fair_race_api():
    # Source: S. Ross, A First Course in Probability, problem 4.72: p = 0.6, first to 4 -> 0.7102.
    assert secretary.race_chance(0.6, 4, 4) == pytest.approx(0.710208, abs=1e-6)
    assert secretary.fair_race(1500, 1500) == (9, 9)
    a, b = secretary.fair_race(1700, 1500, longest=9)
    assert a > b
    p = 1 / (1 + 10 ** (-200 / 400))
    best = min(abs(secretary.race_chance(p, x, y) - 0.5) for x in range(1, 10) for y in range(1, 10))
    assert abs(secretary.race_chance(p, a, b) - 0.5) == pytest.approx(best)


def test_model_package_loads_neither_openpyxl_nor_tkinter():
    # Every module of secretary.model, present and future, is imported.
    code = ("import sys, pkgutil, importlib, secretary.model as m, secretary.api;"
            "[importlib.import_module('secretary.model.' + x.name) for x in pkgutil.iter_modules(m.__path__)];"
            "bad=[k for k in ('openpyxl','tkinter') if k in sys.modules]; print(bad); sys.exit(1 if bad else 0)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert done.returncode == 0, done.stdout + done.stderr
