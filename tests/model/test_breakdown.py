"""The exact four-part breakdown of every change (docs/model.md, section 2)."""
import datetime as dt
import random
import re
from dataclasses import replace

import numpy as np
import pytest
from hypothesis import given, settings as hyp_settings, strategies as st

from secretary.model.breakdown import displayed_parts, explain_changes
from secretary.model.league import fit_league
from secretary.model.records import Player, PublishedState, Result, Settings, fingerprint, identity
from secretary.model.response import best_response, opponent_shares
from secretary.model.scale import game_chance, points_per_logodds

JARGON = re.compile(r"\b(prior|map|hessian|log-?odds|bradley|terry|posterior|z-?score|logit|gradient)\b", re.I)
DAY = dt.timedelta(days=1)
START = dt.date(2025, 1, 7)


def publish(rows, settings=Settings(), players=()):
    """What an update with these rows would have stored for the next one."""
    fit = fit_league(rows, settings, players=players)
    return PublishedState(
        updated_at="2025-01-01T20:00:00",
        reference_date=fit.reference_date,
        ratings={n: float(v) for n, v in zip(fit.names, fit.ratings)},
        sds={n: float(v) for n, v in zip(fit.names, fit.sds)},
        rows=tuple((identity(r), fingerprint(r)) for r in rows if not r.void),
        settings=settings,
    )


def round_robin(names, date, division="", score=(5, 4), event=""):
    """Everyone meets everyone once; the earlier-listed player wins by ``score``."""
    return [
        Result(date, a, b, *score, division=division, event=event)
        for k, a in enumerate(names) for b in names[k + 1:]
    ]


def largest_part(pc):
    names = ("own", "opponents", "group", "corrections")
    return names[int(np.argmax(np.abs(pc.parts)))]


# --- invariants over random leagues -------------------------------------------------------------

NAMES = ["Ann Holt", "Bea Marsh", "Cal Penn", "Dee Varga", "Ross Kell", "Fay Dunn", "Gus Orme", "Hal Ives"]


@st.composite
def weeks(draw):
    """A random small league, last update's rows, and today's rows after edits, removals and a new week."""
    n = draw(st.integers(3, len(NAMES)))
    names = NAMES[:n]
    division = {name: draw(st.sampled_from(["Division One", "Division Two"])) for name in names}

    def match(date):
        a = draw(st.integers(0, n - 1))
        b = draw(st.integers(0, n - 2))
        b += b >= a
        ga = draw(st.integers(0, 5))
        gb = draw(st.integers(1 if ga == 0 else 0, 5))
        event = draw(st.sampled_from(["", "", "Open night"]))
        return Result(date, names[a], names[b], ga, gb, division[names[a]], event)

    old = [match(START + draw(st.integers(0, 60)) * DAY) for _ in range(draw(st.integers(1, 14)))]
    t0 = max(r.date for r in old)
    gap = draw(st.sampled_from([0, 7, 200]))
    new = [match(t0 + (gap + draw(st.integers(0, 6))) * DAY) for _ in range(draw(st.integers(0, 6)))]
    kept = []
    for res in old:
        what = draw(st.sampled_from(["keep", "keep", "keep", "edit", "remove", "void"]))
        if what == "edit":
            kept.append(replace(res, games_a=res.games_b, games_b=res.games_a + 1))
        elif what == "void":
            kept.append(replace(res, void=True))
        elif what == "keep":
            kept.append(res)
    before = Settings(skill_spread=draw(st.sampled_from([100.0, 200.0])), half_life_days=draw(st.sampled_from([0.0, 30.0, 365.0])))
    now = before
    if draw(st.booleans()):
        now = Settings(
            centre=draw(st.sampled_from([1500.0, 1000.0])),
            scale=draw(st.sampled_from([400.0, 200.0])),
            skill_spread=draw(st.sampled_from([80.0, 200.0])),
            half_life_days=draw(st.sampled_from([0.0, 90.0])),
        )
    players = [Player(names[0], division[names[0]], starting=draw(st.sampled_from([None, 1650.0])))]
    return old, kept + new, before, now, players


@hyp_settings(max_examples=40, deadline=None)
@given(weeks())
def test_parts_add_up_exactly_for_every_player(case):
    old, now_rows, before, now, players = case
    published = publish(old, before, players)
    b = explain_changes(now_rows, published, now, players)
    ppl = points_per_logodds(now.scale)

    total = b.before_r + b.corrections_r + b.own_r + b.opponents_r + b.group_r
    assert np.abs(total - b.after_r).max(initial=0.0) <= 1e-9
    fresh = fit_league(now_rows, now, players=players)
    rated = {r.player_a for r in now_rows if not r.void} | {r.player_b for r in now_rows if not r.void}
    assert {pc.name for pc in b.players} == rated
    assert {name for name, _ in b.removed_players} == set(published.ratings) - rated
    for pc in b.players:
        assert abs(pc.before + sum(pc.parts) - pc.after) <= 1e-9 * ppl
        assert pc.after == pytest.approx(fresh.rating(pc.name), abs=1e-6)
        shown_before, shown_after, change, *shown = pc.shown
        assert sum(shown) == change == shown_after - shown_before
        assert all(abs(s - v) < 2 for s, v in zip(shown, pc.parts))
        assert pc.is_new == (pc.name not in published.ratings)
        if pc.is_new:
            assert pc.corrections == 0.0
        assert pc.sentence.endswith(".") and not JARGON.search(pc.sentence), pc.sentence
        for _, points in pc.top_opponents:
            assert np.sign(points) == np.sign(pc.opponents)
        if not pc.played and not pc.is_new and b.reference_date >= b.previous_reference_date:
            # Own part of a player who did not play = ageing only: toward the starting rating, never away.
            held_at = pc.after - pc.own - pc.opponents - pc.group
            starting = players[0].starting if pc.name == players[0].name and players[0].starting else now.centre
            starting += b.level_before[pc.division]  # the prior mean given the division's level at R0
            assert np.sign(held_at - starting) * pc.own <= 1e-5
            assert pc.own == pytest.approx(pc.ageing, abs=1e-9)
    assert b.settings_changed == tuple(
        f for f in ("centre", "scale", "skill_spread", "half_life_days", "division_spread")
        if getattr(before, f) != getattr(now, f)
    )


# --- scenarios where one cause dominates --------------------------------------------------------

def test_did_not_play_while_beaten_opponent_lost_heavily_elsewhere():
    x, y, others = "Ann Holt", "Dee Varga", ["Bea Marsh", "Cal Penn", "Fay Dunn", "Gus Orme"]
    old = round_robin(others, START, "Division One", (5, 5))
    old += [Result(START + 7 * DAY, x, y, 5, 2, "Division One"), Result(START + 14 * DAY, x, y, 5, 3, "Division One")]
    old += [Result(START + 14 * DAY, y, o, 5, 5, "Division One") for o in others]
    old += [Result(START + 14 * DAY, x, o, 4, 5, "Division One") for o in others[:2]]
    new = [Result(START + 21 * DAY, o, y, 5, 0, "Division One") for o in others]
    b = explain_changes(old + new, publish(old), Settings())
    pc = b.player(x)
    assert not pc.played and pc.opponents < -3
    assert largest_part(pc) == "opponents"
    assert pc.top_opponents[0][0] == y
    assert pc.sentence.startswith("You did not play this week. Players you met earlier (Dee Varga")
    assert "did worse elsewhere" in pc.sentence and pc.sentence.endswith(f": {pc.shown[4]:+d}.")


def test_open_night_lifts_members_who_stayed_at_home_through_the_group_part():
    one = ["Ann Holt", "Bea Marsh", "Cal Penn", "Dee Varga", "Ross Kell"]
    two = ["Fay Dunn", "Gus Orme", "Hal Ives", "Ida Lowe", "Jon Pike"]
    home = "Meg Rudd"  # Division One, not at the open night
    old = round_robin(one + [home], START, "Division One", (5, 5))
    old += round_robin(two, START, "Division Two", (5, 5))
    old += [Result(START + 7 * DAY, a, b, 5, 5, "", "Cup") for a, b in zip(one, two)]
    night = START + 28 * DAY
    new = [Result(night, a, b, 5, 1, "", "Open night") for a in one for b in two]
    players = [Player(p, "Division One") for p in one + [home]] + [Player(p, "Division Two") for p in two]
    # A Division spread as wide as the skill spread: the level, not each member alone, takes the night's news.
    settings = Settings(division_spread=Settings().skill_spread)
    b = explain_changes(old + new, publish(old, settings, players), settings, players)
    pc = b.player(home)
    assert not pc.played and pc.group > 3
    assert largest_part(pc) == "group"
    assert b.group_shift["Division One"] > 0 > b.group_shift["Division Two"]
    assert "Division One as a whole did well against the other divisions at the Open night" in pc.sentence
    assert "lifts everyone in it" in pc.sentence


def test_beating_expectation_raises_own_part_and_quotes_the_games():
    players = ["Ann Holt", "Bea Marsh", "Cal Penn", "Dee Varga", "Ross Kell"]
    old = round_robin(players, START, "One", (5, 4)) + round_robin(players[::-1], START + 7 * DAY, "One", (5, 3))
    c = "Ross Kell"
    week = START + 14 * DAY
    new = [Result(week, c, "Ann Holt", 5, 0), Result(week, "Bea Marsh", c, 1, 5), Result(week, c, "Cal Penn", 5, 2)]
    published = publish(old)
    b = explain_changes(old + new, published, Settings())
    pc = b.player(c)
    assert pc.own > 10 and largest_part(pc) == "own"
    # Expected games from the published ratings with the standard logistic formula
    # E = 1 / (1 + 10 ** (-D / 400)) (docs/checks.md section 3, USCF rating system description);
    # same data and settings, so the pre-week strengths equal the published ratings.
    expected = sum(
        (res.games_a + res.games_b)
        * game_chance(published.ratings[c], published.ratings[res.player_b if res.player_a == c else res.player_a])
        for res in new
    )
    assert pc.new_games == 18 and pc.new_won == 15
    assert pc.new_expected == pytest.approx(expected, abs=1e-6)
    more = int(np.floor(15 - expected + 0.5))
    assert pc.sentence.startswith(f"You won 15 of 18 games this week, about {more} more than your rating expected: +{pc.shown[3]}.")


def test_edited_old_result_moves_only_corrections():
    players = ["Ann Holt", "Bea Marsh", "Cal Penn", "Dee Varga"]
    old = round_robin(players, START, "One", (5, 3)) + round_robin(players[::-1], START + 7 * DAY, "One", (5, 4))
    fixed = list(old)
    fixed[0] = replace(old[0], games_a=1, games_b=5)  # Ann Holt v Bea Marsh was entered the wrong way round
    b = explain_changes(fixed, publish(old), Settings())
    assert b.changes.edited_rows == 1 and b.changes.new_rows == 0
    for pc in b.players:
        assert max(abs(pc.own), abs(pc.opponents), abs(pc.group)) < 1e-5
    ann, bea = b.player("Ann Holt"), b.player("Bea Marsh")
    assert ann.corrections < -5 and bea.corrections > 5
    assert largest_part(ann) == largest_part(bea) == "corrections"
    assert ann.sentence == f"An earlier result was corrected: {ann.shown[6]:+d}."


def test_changed_skill_spread_lands_in_corrections():
    players = ["Ann Holt", "Bea Marsh", "Cal Penn", "Dee Varga"]
    old = round_robin(players, START, "One", (5, 1)) + round_robin(players, START + 7 * DAY, "One", (5, 2))
    narrow = Settings(skill_spread=80.0)
    b = explain_changes(old, publish(old), narrow)
    assert b.settings_changed == ("skill_spread",) and "settings changed" in b.note
    top = b.player("Ann Holt")
    assert top.corrections < -20 and largest_part(top) == "corrections"  # a narrower spread pulls the leader in
    for pc in b.players:
        assert max(abs(pc.own), abs(pc.opponents), abs(pc.group)) < 1e-5
        if abs(pc.change) >= 1:
            assert pc.sentence.startswith("The league's settings changed:")


# --- independent route: refitting every week from scratch --------------------------------------

def test_fits_from_scratch_reproduce_before_and_after():
    rng = random.Random(7)
    names = NAMES[:6]

    def week(date, k):
        return [Result(date, *rng.sample(names, 2), rng.randint(0, 4), 5, "One") for _ in range(k)]

    w0 = week(START, 10) + week(START + 7 * DAY, 10)
    w1 = w0 + week(START + 14 * DAY, 6)
    w2 = w1 + week(START + 21 * DAY, 6)
    for previous, now in ((w0, w1), (w1, w2)):
        last, this = fit_league(previous), fit_league(now)
        b = explain_changes(now, publish(previous), Settings())
        for pc in b.players:
            assert pc.before == pytest.approx(last.rating(pc.name), abs=1e-6)
            assert pc.after == pytest.approx(this.rating(pc.name), abs=1e-6)
            assert abs(pc.corrections) < 1e-5  # same rows and settings: last week's ratings solved again
            assert not pc.is_new


# --- newcomers, removed players, first update ---------------------------------------------------

def test_newcomer_removed_player_and_first_update():
    players = ["Ann Holt", "Bea Marsh", "Cal Penn"]
    old = round_robin(players, START, "One", (5, 3)) + [Result(START, "Dee Varga", "Ann Holt", 2, 5, "One")]
    now = round_robin(players, START, "One", (5, 3)) + [Result(START + 7 * DAY, "Ida Lowe", "Bea Marsh", 5, 4, "One")]
    sheet = [Player("Ida Lowe", "One", starting=1700.0)]
    b = explain_changes(now, publish(old), Settings(), sheet)
    assert [name for name, _ in b.removed_players] == ["Dee Varga"]
    ida = b.player("Ida Lowe")
    assert ida.is_new and ida.before == pytest.approx(1700.0) and ida.corrections == 0.0
    assert ida.sentence == "First rating: based on 9 games."

    first = explain_changes(now, None, Settings(), sheet)
    assert first.first_update and not first.state_missing and first.note.startswith("First update")
    assert all(pc.is_new and pc.sentence.startswith("First rating") for pc in first.players)
    lost = explain_changes(now, None, Settings(), sheet, state_missing=True)
    assert lost.state_missing and "record of the previous update was missing" in lost.note


def test_back_after_a_long_gap_and_ageing_of_absent_players():
    players = ["Ann Holt", "Bea Marsh", "Cal Penn", "Dee Varga"]
    old = round_robin(players, START, "One", (5, 0)) + round_robin(players, START + 7 * DAY, "One", (5, 1))
    autumn = START + 250 * DAY
    new = [Result(autumn, "Bea Marsh", "Cal Penn", 5, 4, "One")]
    quick = Settings(half_life_days=90.0, skill_spread=200.0)  # the spread this scenario was worked out for
    b = explain_changes(old + new, publish(old, quick), quick)
    bea = b.player("Bea Marsh")  # 5 of 9 against a weaker player: below expectation, and her old wins fade
    assert bea.sentence.startswith("Back after 8 months. You won 5 of 9 games this week, about 2 fewer than")
    assert "and your older games now count less" in bea.sentence and bea.ageing < -10
    ann = b.player("Ann Holt")  # the top player, absent: her old wins count less, she drifts back
    assert not ann.played and ann.own < -5 and largest_part(ann) == "own"
    assert ann.own == pytest.approx(ann.ageing, abs=1e-9)  # did not play: the own part is ageing alone
    assert ann.sentence.startswith("You have not played for 8 months. Your older games now count a little less")


# --- pieces ----------------------------------------------------------------------------------------

def test_best_response_solves_each_players_own_problem():
    rows = round_robin(NAMES[:5], START, "One", (5, 2)) + round_robin(NAMES[4::-1], START, "One", (5, 4))
    fit = fit_league(rows)
    x = np.random.default_rng(3).normal(0, 1, 5)
    y = best_response(fit.pairs, x, fit.prior_mean, fit.prior_sd)
    for k in range(5):  # each player's derivative is zero at y_k with the others at x
        z = x.copy()
        z[k] = y[k]
        p = fit.pairs
        d = z[p.i] - z[p.j]
        g = p.total / (1 + np.exp(-d)) - p.won_i
        grad_k = g[p.i == k].sum() - g[p.j == k].sum() + (y[k] - fit.prior_mean[k]) / fit.prior_sd**2
        assert abs(grad_k) < 1e-9
    # At the joint optimum everyone's best response is where they are.
    assert np.abs(best_response(fit.pairs, fit.r, fit.prior_mean, fit.prior_sd) - fit.r).max() < 1e-8


def test_displayed_parts_add_up_with_largest_remainders():
    assert displayed_parts(1500.4, 1518.4, [6.4, 6.3, 5.3, 0.0]) == (1500, 1518, 18, 7, 6, 5, 0)
    assert displayed_parts(1500.6, 1491.4, [-4.6, -4.6, 0.0, 0.0]) == (1501, 1491, -10, -5, -5, 0, 0)
    assert displayed_parts(1499.5, 1500.49, [0.33, 0.33, 0.33, 0.0]) == (1500, 1500, 0, 0, 0, 0, 0)
    assert displayed_parts(1000.0, 1003.0, [10.7, -8.4, 0.4, 0.3]) == (1000, 1003, 3, 11, -8, 0, 0)


def test_opponent_shares_add_up_to_the_opponents_part():
    rng = random.Random(5)
    names = NAMES
    old = [Result(START + rng.randint(0, 30) * DAY, *rng.sample(names, 2), rng.randint(0, 4), 5, "One") for _ in range(40)]
    new = [Result(START + 37 * DAY, *rng.sample(names, 2), rng.randint(0, 4), 5, "One") for _ in range(8)]
    fit = fit_league(old + new)
    b = explain_changes(old + new, publish(old), Settings(), current=fit)
    r0 = b.before_r + b.corrections_r
    shifted = b.after_r - b.own_r - b.opponents_r - b.group_r + (b.after_r - r0).mean()  # one division
    to_i, to_j, _ = opponent_shares(fit.pairs, shifted, b.after_r, fit.prior_mean, fit.prior_sd)
    n = len(fit.names)
    total = np.bincount(fit.pairs.i, to_i, n) + np.bincount(fit.pairs.j, to_j, n)
    assert np.abs(b.opponents_r).max() > 0.01  # the check below is not empty
    assert np.abs(total - b.opponents_r).max() < 1e-6


@pytest.mark.slow
@pytest.mark.realdata
def test_real_results_week_by_week():
    from tests.realdata import badminton

    rows = list(badminton(fold_case=True))
    last = max(r.date for r in rows)
    old = [r for r in rows if (last - r.date).days > 10]
    published = publish(old)
    fit = fit_league(rows, with_uncertainty=False)
    b = explain_changes(rows, published, Settings(), current=fit)
    total = b.before_r + b.corrections_r + b.own_r + b.opponents_r + b.group_r
    assert np.abs(total - b.after_r).max() <= 1e-9
    assert b.changes.new_rows == len(rows) - len(old) > 20 and b.changes.unchanged_rows == len(old)
    for pc in b.players:
        assert abs(pc.corrections) < 1e-4  # same rows, same settings: last update's ratings solved again
        shown_before, shown_after, change, *shown = pc.shown
        assert sum(shown) == change == shown_after - shown_before
        assert not JARGON.search(pc.sentence), pc.sentence
    assert any(not pc.played and abs(pc.opponents) >= 1 for pc in b.players)
    # Each part from its own definition for the players each part moved most and ten others
    # (measured: agreement to 8e-15 log-odds; last update's rows are unchanged, so R0 = P).
    names = list(b.names)
    who = {names[k] for part in (b.own_r, b.group_r, b.opponents_r) for k in np.argsort(-np.abs(part))[:5]}
    who |= set(np.random.default_rng(1).choice(names, 10, replace=False).tolist())
    expected, _, _, _ = parts_by_definition(old, rows, published, Settings(), (), names, sorted(who))
    assert_parts(b, expected, 1e-10)
    assert max(abs(b.group_r[names.index(n)]) for n in who) * points_per_logodds(400.0) > 3


# --- each part from its own definition ---------------------------------------------------------
#
# docs/model.md section 2: R0 = solve(D0, t0) and R1 = solve(D1, t1) with today's
# settings; BR_i(x, D, t) is player i's best strength with everyone else frozen at x. With division
# levels (r = L_d + u) the group part is the change of the player's division level with every
# deviation u frozen, so "shifted" moves each player j by L1_d(j) - L0_d(j) and player i's prior mean
# moves with their level. Here every part is computed again in the test: R0 and R1 by separate fits,
# BR by a root search (scipy's brentq) on player i's own derivative written out over the raw rows,
# and the opponents part not as the remainder but as BR_i(R1) - BR_i(shifted): at the joint optimum
# BR_i(R1) = R1_i, so that difference is what the others' own re-rating did to player i.

LN10 = np.log(10.0)


def weight(res, t, half_life):
    """Age weight of one row at the reference date t (docs/model.md section 1)."""
    return 0.5 ** (max((t - res.date).days, 0) / half_life) if half_life else 1.0


def best_alone(rows, t, settings, name, frozen, prior_mean):
    """BR for one player: the root of d/dy log posterior, everyone else at ``frozen`` (log-odds by name)."""
    from scipy.optimize import brentq
    from scipy.special import expit

    s2 = (settings.skill_spread * LN10 / settings.scale) ** 2
    games = []
    for res in rows:
        if res.void or name not in (res.player_a, res.player_b):
            continue
        won, lost = (res.games_a, res.games_b) if res.player_a == name else (res.games_b, res.games_a)
        other = res.player_b if res.player_a == name else res.player_a
        games.append((weight(res, t, settings.half_life_days), won, lost, frozen[other]))

    def slope(y):
        return sum(w * (won - (won + lost) * expit(y - x)) for w, won, lost, x in games) - (y - prior_mean) / s2

    return brentq(slope, prior_mean - 60.0, prior_mean + 60.0, xtol=1e-14, rtol=1e-15)


def tiered_weeks():
    """Three divisions, last update's rows (one of them since corrected) and a new week.

    Division Two does well at a cross-division open night; Kit Ormond, on no Players sheet, played
    mostly in Three before and mostly in Two this week, so his home division changes; Uma Vance plays
    for the first time (not published before: corrections 0, R0 her prior mean given Three's level).
    """
    one = ["Ann Holt", "Bea Marsh", "Cal Penn", "Dee Varga", "Ross Kell"]
    two = ["Fay Dunn", "Gus Orme", "Hal Ives", "Ida Lowe", "Jon Pike"]
    three = ["Lea Quinn", "Max Rudd", "Ned Sole", "Ola Tate", "Pia Ueda"]
    mover, newcomer = "Kit Ormond", "Uma Vance"
    old = round_robin(one, START, "One", (5, 3)) + round_robin(two, START + DAY, "Two", (5, 4))
    old += round_robin(three, START + 2 * DAY, "Three", (5, 2))
    old += round_robin(one[::-1], START + 14 * DAY, "One", (5, 4)) + round_robin(two[::-1], START + 15 * DAY, "Two", (5, 2))
    old += [Result(START + 7 * DAY, a, b, 5, 4, "", "Cup") for a, b in zip(one, two)]
    old += [Result(START + 8 * DAY, a, b, 5, 3, "", "Cup") for a, b in zip(two, three)]
    old += [Result(START + 9 * DAY, mover, o, 5, 4, "Three") for o in three[:3]]
    night = START + 30 * DAY
    new = [Result(night, b, a, 5, 2, "", "Open night") for a in one for b in two[:3]]
    new += [Result(night + DAY, mover, o, 3, 5, "Two") for o in two]
    new += [Result(night + DAY, newcomer, "Lea Quinn", 5, 1, "Three")]
    fixed = list(old)
    fixed[0] = replace(old[0], games_a=2, games_b=5)  # Ann Holt v Bea Marsh was entered the wrong way round
    players = ([Player(p, "One") for p in one] + [Player(p, "Two") for p in two]
               + [Player(p, "Three", starting=1400.0 if p == "Pia Ueda" else None) for p in three])
    return old, fixed, fixed + new, players, mover, newcomer


def parts_by_definition(d0, d1, published, settings, players, names, who=None):
    """Per player of ``who`` (default all): (corrections, own, group, opponents, BR_i(R1), R1_i), log-odds.

    R0 and R1 are fits of D0 and D1 from scratch, at their own reference dates; BR is ``best_alone``.
    Also returns the two fits and R0 by name.
    """
    t0, t1 = max(r.date for r in d0), max(r.date for r in d1)
    fit0 = fit_league(d0, settings, players=players, reference_date=t0)
    fit1 = fit_league(d1, settings, players=players)
    starting = {p.name: p.starting for p in players if p.starting is not None}

    def prior_mean(name):  # starting rating, else the centre, in log-odds
        return (starting[name] - settings.centre) * LN10 / settings.scale if name in starting else 0.0

    L0, L1 = dict(zip(fit0.group_names, fit0.level)), dict(zip(fit1.group_names, fit1.level))
    home0 = {n: fit0.division(n) if n in fit0.names else fit1.division(n) for n in names}
    home1 = {n: fit1.division(n) for n in names}
    # A player with no row in D0 (a newcomer) sits at their prior mean given their division's level.
    r0 = {n: float(fit0.r[fit0.index(n)]) if n in fit0.names else prior_mean(n) + L0[home1[n]] for n in names}
    r1 = {n: float(fit1.r[fit1.index(n)]) for n in names}
    if settings.division_spread:
        shifted = {n: r0[n] - L0[home0[n]] + L1[home1[n]] for n in names}  # every deviation frozen
    else:  # one pool: each division moves by its players' mean change
        move = {g: np.mean([r1[n] - r0[n] for n in names if home1[n] == g]) for g in fit1.group_names}
        shifted = {n: r0[n] + move[home1[n]] for n in names}
    out = {}
    for n in names if who is None else who:
        br0 = best_alone(d1, t1, settings, n, r0, prior_mean(n) + L0[home0[n]])
        br_shifted = best_alone(d1, t1, settings, n, shifted, prior_mean(n) + L1[home1[n]])
        br1 = best_alone(d1, t1, settings, n, r1, prior_mean(n) + L1[home1[n]])
        was = published.ratings.get(n)
        p = r0[n] if was is None else (was - settings.centre) * LN10 / settings.scale
        out[n] = (r0[n] - p, br0 - r0[n], br_shifted - br0, br1 - br_shifted, br1, r1[n])
    return out, fit0, fit1, r0


def assert_parts(b, expected, tol):
    """The breakdown's four parts against ``parts_by_definition``; R1 is everyone's best response to R1."""
    for n, (corrections, own, group, opponents, br1, r1) in expected.items():
        k = b.names.index(n)
        assert b.corrections_r[k] == pytest.approx(corrections, abs=tol), n
        assert b.own_r[k] == pytest.approx(own, abs=tol), n
        assert b.group_r[k] == pytest.approx(group, abs=tol), n
        assert b.opponents_r[k] == pytest.approx(opponents, abs=tol), n
        assert br1 == pytest.approx(r1, abs=tol), n


@pytest.mark.parametrize("division_spread", [100.0, 0.0], ids=["levels", "one pool"])
def test_each_part_equals_its_own_definition(division_spread):
    old, d0, d1, players, mover, newcomer = tiered_weeks()
    settings = Settings(half_life_days=60.0, division_spread=division_spread)
    published = publish(old, settings, players)
    b = explain_changes(d1, published, settings, players)
    ppl = settings.scale / LN10
    expected, fit0, fit1, r0 = parts_by_definition(d0, d1, published, settings, players, list(b.names))
    assert fit0.division(mover) == "Three" and fit1.division(mover) == "Two"
    # Measured: the parts agree to 5e-9 log-odds (R0's warm start against a fit from scratch), and
    # BR(R1) = R1 to 3e-15.
    assert_parts(b, expected, 2e-8)
    # The scenario moves every part somewhere, so none of the checks above is empty.
    for part in (b.corrections_r, b.own_r, b.group_r, b.opponents_r):
        assert np.abs(part).max() * ppl > 2
    for g in fit1.group_names:  # each division's shift: its level's change (one pool: its mean change)
        if division_spread:
            assert b.group_shift[g] == pytest.approx(fit1.level_points(g) - fit0.level_points(g), abs=2e-8 * ppl)
            assert b.level_before[g] == pytest.approx(fit0.level_points(g), abs=2e-8 * ppl)
        else:
            moved = np.mean([fit1.r[fit1.index(n)] - r0[n] for n in b.names if fit1.division(n) == g])
            assert b.group_shift[g] == pytest.approx(moved * ppl, abs=2e-8 * ppl)
    k = b.names.index(mover)
    if division_spread:  # the mover's group part is Two's new level against Three's old one
        assert b.group_r[k] * ppl > 5 and fit1.level_points("Two") - fit0.level_points("Three") > 0
    assert newcomer not in published.ratings and b.corrections_r[b.names.index(newcomer)] == 0.0
