"""Per-pair sums: the design-matrix operations every per-player quantity goes through."""
import numpy as np
from secretary.model.pairs import aggregate


def test_pair_sums_are_the_design_matrix_products():
    # Built here from the definition: X has a row e_i - e_j per pair, A = max(X, 0), B = max(-X, 0).
    rng = np.random.default_rng(2)
    n, m = 9, 60
    a = rng.integers(0, n, m)
    b = (a + rng.integers(1, n, m)) % n
    ga, gb, w = rng.integers(0, 6, m), rng.integers(0, 6, m), rng.uniform(0.1, 1, m)
    pairs = aggregate(a, b, ga, gb, n, weights=w)
    X = np.zeros((len(pairs.i), n))
    X[np.arange(len(pairs.i)), pairs.i] = 1.0
    X[np.arange(len(pairs.i)), pairs.j] = -1.0
    A, B = np.maximum(X, 0), np.maximum(-X, 0)
    x, u, v = rng.normal(size=n), rng.normal(size=len(pairs.i)), rng.normal(size=len(pairs.i))
    assert np.abs(pairs.difference(x) - X @ x).max() < 1e-12
    assert np.abs(pairs.per_player(u, v) - (A.T @ u + B.T @ v)).max() < 1e-12
    assert np.abs(pairs.per_player(u) - (A.T @ u + B.T @ u)).max() < 1e-12
    assert np.abs(pairs.per_player_difference(u) - X.T @ u).max() < 1e-12
    # Games, wins and expected wins against the raw matches, one by one.
    games, wins = np.zeros(n), np.zeros(n)
    for k in range(m):
        games[[a[k], b[k]]] += w[k] * (ga[k] + gb[k])
        wins[a[k]] += w[k] * ga[k]
        wins[b[k]] += w[k] * gb[k]
    assert np.abs(pairs.games_per_player() - games).max() < 1e-12
    assert np.abs(pairs.wins_per_player() - wins).max() < 1e-12
    p = rng.uniform(size=len(pairs.i))
    expected = np.zeros(n)
    for k in range(len(pairs.i)):
        expected[pairs.i[k]] += pairs.total[k] * p[k]
        expected[pairs.j[k]] += pairs.total[k] * (1 - p[k])
    assert np.abs(pairs.expected_wins(p) - expected).max() < 1e-12
