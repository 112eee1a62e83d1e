"""The handicap card, read back with poppler: every fixture's players, fair race, chance and flags."""
import dataclasses

import pytest
from PIL import Image

from secretary.model.notice import CLOSING, long_date, percent_chance
from secretary.report.handicap import chance_text, fair_race_text, write_handicap_pdf
from tests.invented_league import SETTINGS, chance_by_integral, forecasts, two_updates
from tests.report.poppler import A4_POINTS, LETTER_POINTS, needs_poppler, page_points, pdf_text, render_page, squeeze

pytestmark = needs_poppler


@pytest.fixture(scope="module")
def league():
    update = two_updates()[1]
    return update, forecasts(update.results)


@pytest.fixture(scope="module")
def card(league, tmp_path_factory):
    update, fcs = league
    path = tmp_path_factory.mktemp("card") / "handicap.pdf"
    assert write_handicap_pdf(path, fcs, SETTINGS, ratings=update.ratings) == path
    return path


def test_every_fixture_in_plain_words(league, card):
    update, fcs = league
    text = squeeze(pdf_text(card))
    rated = {p.name: p for p in update.ratings}
    for fc in fcs:
        a, b = fc.fixture.player_a, fc.fixture.player_b
        assert squeeze(fair_race_text(fc)) in text
        assert squeeze(f"{a} races to {fc.fair_race_a}, {b} races to {fc.fair_race_b}") in text
        assert squeeze(chance_text(fc, SETTINGS)) in text
        for name in (a, b):
            shown = f"{rated[name].rating:.0f} ± {rated[name].sd:.0f}" if name in rated else "not yet rated"
            assert squeeze(f"{name} {shown}") in text
    assert squeeze("Otto Newman is not rated yet: this chance is a rough guess") in text
    assert squeeze("Nia Quell has 7 games: this chance could be far off") in text
    assert squeeze("17 March 2026") in text and squeeze("18 March 2026") in text
    for line in CLOSING:
        assert squeeze(line) in text


def test_chance_printed_matches_an_independent_race_formula(league, card):
    """A's chance at the set race: first to a before the other gets b, averaged over the posterior.

    Source: docs/checks.md section 4, unequal races computed with scipy.stats.nbinom.cdf(b - 1, a, p),
    integrated over the difference's normal posterior by the trapezoid rule.
    """
    _, fcs = league
    text = squeeze(pdf_text(card))
    for fc in fcs:
        chance = chance_by_integral(fc, fc.race_a, fc.race_b)
        assert chance == pytest.approx(fc.race_chance, abs=1e-6)
        assert squeeze(f"{fc.fixture.player_a} wins {chance:.0%}") in text
    handicap = [fc for fc in fcs if fc.fixture.race_a is not None]
    assert squeeze("=Dev Pike to 5, Kit Ellis to 4: =Dev Pike wins") in text and handicap


def test_paper_and_rendered_card(league, card, tmp_path):
    update, fcs = league
    assert page_points(card) == pytest.approx(A4_POINTS, abs=0.5)
    letter = write_handicap_pdf(tmp_path / "letter.pdf", fcs, SETTINGS.replace(paper="Letter"))
    assert page_points(letter) == pytest.approx(LETTER_POINTS, abs=0.5)
    # Without ratings the card still names both players of each match.
    assert squeeze("Zoë Ångström v Finn Yarrow") in squeeze(pdf_text(letter))
    with Image.open(render_page(card, "handicap-card-page1")) as image:
        assert sum(image.convert("L").histogram()[:100]) > 1000  # text was drawn


def test_no_fixtures_says_so(tmp_path):
    path = write_handicap_pdf(tmp_path / "none.pdf", (), SETTINGS)
    assert "There are no fixtures" in pdf_text(path)


def test_a_rating_is_never_split_and_an_empty_column_is_left_out(league, tmp_path):
    import subprocess
    from dataclasses import replace

    update, fcs = league
    card = write_handicap_pdf(tmp_path / "card.pdf", fcs, SETTINGS, ratings=update.ratings)
    lines = subprocess.run(["pdftotext", "-layout", "-enc", "UTF-8", str(card), "-"], check=True,
                           capture_output=True, text=True).stdout.replace("\u00a0", " ").splitlines()
    playing = {n for fc in fcs for n in (fc.fixture.player_a, fc.fixture.player_b)}
    for p in update.ratings:
        if p.name in playing:  # "1598 ± 47" stands whole on one line
            assert any(f"{p.rating:.0f} ± {p.sd:.0f}" in line for line in lines), p.name
    sure = [replace(fc, not_rated=(), care="") for fc in fcs]  # every chance sure enough: "How sure" is empty
    text = pdf_text(write_handicap_pdf(tmp_path / "sure.pdf", sure, SETTINGS, ratings=update.ratings))
    assert "How sure" not in text and "Fair race" in text


def test_past_fixtures_are_marked_and_come_after_the_coming_ones(league, tmp_path):
    """A fixture dated before the newest result is past: its date's heading says so, and coming days come first."""
    update, fcs = league
    latest = max(fc.fixture.date for fc in fcs)  # as if results had come in up to the last fixture day
    past_days = sorted({fc.fixture.date for fc in fcs if fc.fixture.date < latest})
    assert past_days  # the invented fixtures span two days: the first is past
    card = write_handicap_pdf(tmp_path / "past.pdf", fcs, SETTINGS, ratings=update.ratings, latest=latest)
    text = squeeze(pdf_text(card))
    past = [squeeze(f"{long_date(d)} (past: dated before the latest results, {long_date(latest)})") for d in past_days]
    assert all(p in text for p in past)
    assert text.index(squeeze(f"{long_date(latest)}Match")) < min(text.index(p) for p in past)
    count = sum(1 for fc in fcs if fc.fixture.date < latest)
    assert squeeze(f"{count} past fixtures (dated before the latest results) at the end") in text
    # Without a newest result nothing is past, and the card says nothing about past fixtures.
    assert "past" not in pdf_text(write_handicap_pdf(tmp_path / "none.pdf", fcs, SETTINGS, ratings=update.ratings))


def test_a_long_card_fills_its_pages(league, tmp_path):
    """48 fixtures over six days: a day's table runs on over a page break (its header repeated) rather than
    leave a page half empty, so every page but the last is filled to near its foot (measured 82-92 %)."""
    import datetime as dt
    import itertools
    import re
    import subprocess

    from secretary.model.fixtures import forecast_fixtures
    from secretary.model.league import fit_league
    from secretary.model.records import Fixture
    from tests.invented_league import WEEK_2, players

    update, _ = league
    fit = fit_league(update.results, SETTINGS, players=players())
    pairs = list(itertools.combinations([p.name for p in players()], 2))[:48]
    fixtures = [Fixture(WEEK_2 + dt.timedelta(days=7 + k // 8), a, b, None, None, row=2 + k)
                for k, (a, b) in enumerate(pairs)]
    card = write_handicap_pdf(tmp_path / "long.pdf", forecast_fixtures(fixtures, fit), SETTINGS,
                              ratings=update.ratings)
    boxes = subprocess.run(["pdftotext", "-bbox", str(card), "-"], check=True, capture_output=True,
                           text=True).stdout.split("<page ")[1:]
    assert len(boxes) >= 3
    filled = []
    for page in boxes:
        height = float(re.search(r'height="([\d.]+)"', page).group(1))
        lowest = max(float(y) for y in re.findall(r'yMax="([\d.]+)"', page) if float(y) < height - 50)  # not the footer
        filled.append(lowest / height)
    assert min(filled[:-1]) >= 0.78, filled
    text = pdf_text(card)
    assert text.count("Fair race") >= len(boxes)  # every page's table has its header row


def test_a_chance_that_is_not_certain_never_prints_as_0_or_100_percent(league, tmp_path):
    update, fcs = league
    extreme = [dataclasses.replace(fcs[0], race_chance=0.0009), dataclasses.replace(fcs[1], race_chance=0.9993)]
    card = write_handicap_pdf(tmp_path / "card.pdf", extreme, SETTINGS, ratings=update.ratings)
    text = squeeze(pdf_text(card))
    assert squeeze(f"{fcs[0].fixture.player_a} wins <1%") in text
    assert squeeze(f"{fcs[1].fixture.player_a} wins >99%") in text
    assert [percent_chance(p) for p in (0.0, 0.0049, 0.005, 0.42, 0.9949, 0.995, 1.0)] == \
        ["0%", "<1%", "1%", "42%", "99%", ">99%", "100%"]
