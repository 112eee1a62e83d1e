"""secretary: weekly player ratings for a small cue-sports league.

The scripting API (names kept stable):

    rate(results, *, centre=1500, scale=400, skill_spread=None,
         half_life_days=None, starting=None) -> Ratings
    race_chance(p, a, b) -> float
    fair_race(rating_a, rating_b, *, longest=9, shortest=2, scale=400) -> (a, b)
"""
__version__ = "0.1.0"
__all__ = ["rate", "race_chance", "fair_race", "Ratings", "__version__"]


def __getattr__(name: str):
    # The API loads numpy and scipy on first use, not on ``import secretary``: the window draws sooner.
    if name in ("rate", "race_chance", "fair_race", "Ratings"):
        from secretary import api

        return getattr(api, name)
    raise AttributeError(f"module 'secretary' has no attribute {name!r}")
