"""The display scale: log-odds strengths inside, rating points at the edges.

``rating = centre + scale * r / ln(10)``: a gap of ``scale`` points means
10-to-1 odds per game.
"""
from __future__ import annotations

import math

import numpy as np

LN10 = math.log(10.0)


def to_points(r, centre: float = 1500.0, scale: float = 400.0):
    """Strength ``r`` (natural log-odds) -> rating points."""
    return centre + scale * np.asarray(r, dtype=float) / LN10 if np.ndim(r) else centre + scale * float(r) / LN10


def to_strength(points, centre: float = 1500.0, scale: float = 400.0):
    """Rating points -> strength in natural log-odds."""
    return (np.asarray(points, dtype=float) - centre) * LN10 / scale if np.ndim(points) else (float(points) - centre) * LN10 / scale


def points_per_logodds(scale: float = 400.0) -> float:
    """Points per unit of log-odds (``scale / ln 10``); multiply a strength gap or SD by it."""
    return scale / LN10


def game_chance(rating_a, rating_b, scale: float = 400.0):
    """Chance that A wins one game: ``1 / (1 + 10 ** (-(Ra - Rb) / scale))``."""
    d = (np.asarray(rating_a, dtype=float) - np.asarray(rating_b, dtype=float)) / scale
    out = 1.0 / (1.0 + np.power(10.0, -d))
    return float(out) if np.ndim(out) == 0 else out
