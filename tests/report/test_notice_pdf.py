"""The PDF notice board, read back with poppler: every player and sentence, paper size, a rendered page."""
import pytest
from PIL import Image

from secretary.model.league import fit_league
from secretary.model.linkage import watch_list
from secretary.model.notice import CLOSING, build_notice
from secretary.report import layout
from secretary.report.notice import HOW_IT_WORKS, PART_COLOURS, change_text, rating_text, write_notice_pdf
from tests.invented_league import SETTINGS, players, two_updates
from tests.report.poppler import (
    A4_POINTS, LETTER_POINTS, needs_poppler, page_points, pdf_info, pdf_text, render_page, squeeze,
)

pytestmark = needs_poppler


@pytest.fixture(scope="module")
def updates():
    return two_updates()


@pytest.fixture(scope="module")
def second_pdf(updates, tmp_path_factory):
    update = updates[1]
    # In one pool; Premier, with its few cup matches, is weakly linked either way (linked share 0.47).
    watch = watch_list(fit_league(update.results, SETTINGS.replace(division_spread=0.0), players=players()),
                       update.results)
    path = tmp_path_factory.mktemp("pdf") / "notice.pdf"
    assert write_notice_pdf(path, update.breakdown, update.ratings, SETTINGS, watch=watch) == path
    return path, watch


def test_every_player_with_rating_change_and_sentence(updates, second_pdf):
    update = updates[1]
    text = squeeze(pdf_text(second_pdf[0]))
    notice = build_notice(update.breakdown, update.ratings, SETTINGS)
    lines = [line for block in notice.divisions for line in block.lines]
    assert {line.name for line in lines} == {p.name for p in update.ratings}
    for line in lines:
        # The whole table row, in reading order: rank, name, rating ± sd, change, why.
        row = f"{line.rank} {line.name} {rating_text(line)} {change_text(line)} {line.sentence}"
        assert squeeze(row) in text, row
    assert squeeze("Nia Quell") in text and "new" in pdf_text(second_pdf[0])  # the newcomer is marked new


def test_title_dates_box_and_closing_words(second_pdf):
    raw = pdf_text(second_pdf[0])
    text = squeeze(raw)
    assert squeeze("Riverside Cue League: ratings notice board") in text
    assert squeeze("results up to 3 March 2026, now up to 10 March 2026") in text
    for line in (*HOW_IT_WORKS, *CLOSING):
        assert squeeze(line) in text, line
    for words in ("committee", "data-protection", "estimates", "uncertainty"):
        assert words in raw


def test_divisions_strongest_first_and_watch_lines(updates, second_pdf):
    path, watch = second_pdf
    text = squeeze(pdf_text(path))
    notice = build_notice(updates[1].breakdown, updates[1].ratings, SETTINGS)
    positions = [text.index(squeeze(f"RankPlayerRatingChangeWhyitchanged1{block.lines[0].name}"))
                 for block in notice.divisions]
    assert positions == sorted(positions)
    flagged = [d.what_to_do for d in watch.divisions if d.flagged] + [p.what_to_do for p in watch.held if p.flagged]
    assert flagged  # Premier plays the others only through one cup match each
    for line in flagged:
        assert squeeze(line) in text


def test_paper_size_and_rendered_page(updates, second_pdf, tmp_path):
    path = second_pdf[0]
    # A4 = 210 x 297 mm (ISO 216); Letter = 8.5 x 11 in: see poppler.py.
    assert page_points(path) == pytest.approx(A4_POINTS, abs=0.5)
    assert "A4" in pdf_info(path)["Page size"]
    first = updates[0]
    letter = write_notice_pdf(tmp_path / "letter.pdf", first.breakdown, first.ratings, SETTINGS.replace(paper="Letter"))
    assert page_points(letter) == pytest.approx(LETTER_POINTS, abs=0.5)
    png = render_page(path, "notice-board-page1")
    with Image.open(png) as image:
        assert image.size == pytest.approx((A4_POINTS[0] * 60 / 72, A4_POINTS[1] * 60 / 72), abs=1)
        # Not a blank page: plenty of dark (text) pixels.
        dark = sum(image.convert("L").histogram()[:100])
        assert dark > 2000


def test_chart_draws_each_part_in_its_own_colour(updates, second_pdf, tmp_path):
    """The bar chart shows in colour on some page (each coloured part at least once)."""
    path = second_pdf[0]
    pages = int(pdf_info(path)["Pages"])
    seen = set()
    for page in range(1, pages + 1):
        with Image.open(render_page(path, f"page{page}", page, tmp_path)) as image:
            pixels = {rgb for _, rgb in image.convert("RGB").getcolors(1 << 24)}
        for k, colour in enumerate(PART_COLOURS[:3]):  # no correction this week: the fourth is legend only
            rgb = tuple(round(c * 255) for c in colour.rgb())
            if any(max(abs(a - b) for a, b in zip(rgb, px)) < 12 for px in pixels):
                seen.add(k)
    assert seen == {0, 1, 2}


def test_first_update_has_no_changes_or_chart(updates, tmp_path):
    first = updates[0]
    path = write_notice_pdf(tmp_path / "first.pdf", first.breakdown, first.ratings, SETTINGS)
    raw = pdf_text(path)
    assert squeeze("First ratings, from results up to 3 March 2026") in squeeze(raw)
    assert "The biggest changes" not in raw and "About the rating" in raw
    for p in first.ratings:
        assert squeeze(first.breakdown.player(p.name).sentence) in squeeze(raw)


def test_letters_a_font_lacks_are_replaced():
    # Helvetica (standard PDF font) holds the Windows Western letters only.
    assert layout.printable("Brûlé Wąs", "Helvetica") == "Brûlé Was"
    assert layout.printable("Łucja 王", "Helvetica") == "?ucja ?"
    regular = layout.fonts()[0]
    assert layout.printable("Łucja Wąs Øby", regular) == "Łucja Wąs Øby" or regular == "Helvetica"


def _median_word_heights(path) -> list[float]:
    """Per page, the median height (points) of the words' boxes above the footer, from ``pdftotext -bbox``."""
    import re
    import statistics
    import subprocess

    html = subprocess.run(["pdftotext", "-bbox", str(path), "-"], check=True, capture_output=True,
                          text=True).stdout
    out = []
    for page in html.split("<page ")[1:]:
        bottom = float(re.search(r'height="([\d.]+)"', page).group(1)) - 50  # the footer line sits below this
        boxes = re.findall(r'yMin="([\d.]+)" xMax="[\d.]+" yMax="([\d.]+)"', page)
        out.append(statistics.median(float(b) - float(a) for a, b in boxes if float(b) < bottom))
    return out


def test_a_wall_page_in_large_type_then_the_full_list_in_12_point_text(updates, second_pdf):
    path, _ = second_pdf
    # poppler gives each word a box as tall as its font size (checked: 12-point text gives 12.00).
    heights = _median_word_heights(path)
    assert heights[0] >= 13.9  # the wall page: 14 to 26 points, readable at a metre
    assert all(h >= 11.9 for h in heights), heights  # the full list's body text: 12 points
    first = [squeeze(page) for page in pdf_text(path).split("\f")]
    assert squeeze("Biggest movers this week") in first[0] and squeeze("How ratings work") in first[0]
    assert squeeze("the full list") in first[1]


def test_watch_lines_are_the_watch_lists_own_words_islands_and_more(updates, tmp_path):
    """The board's watch lines are model.watch_sentences.watch_lines: a separate pool named on its own line,
    a long list of held-back players cut to the summary's few with "and N more"."""
    import dataclasses
    import datetime as dt

    from secretary.model.records import Player, Result
    from secretary.model.watch_sentences import SUMMARY_PLAYERS, watch_lines

    update = updates[1]
    day = update.results[-1].date
    island = [Result(day - dt.timedelta(days=k), "Cara Quill", "Dov Reed", 5, 2 + k % 3, "Second") for k in range(6)]
    results = (*update.results, *island)
    everyone = players() + [Player("Cara Quill", "Second"), Player("Dov Reed", "Second")]
    # Every division weakly linked (a threshold above their shares, 0.46-0.54): their held-back players are flagged.
    watch = watch_list(fit_league(results, SETTINGS.replace(weakly_linked_below=0.6), players=everyone), results)
    (pool,) = watch.pools
    assert {"Cara Quill", "Dov Reed"} == set(pool.players)
    flagged = watch.flagged_players
    assert flagged
    extra = SUMMARY_PLAYERS + 3 - len(flagged)  # more flagged players than the summary names
    more = tuple(dataclasses.replace(flagged[0], name=f"Extra Player {k}") for k in range(max(extra, 0)))
    watch = dataclasses.replace(watch, held=(*watch.held, *more))
    path = write_notice_pdf(tmp_path / "watch.pdf", update.breakdown, update.ratings, SETTINGS, watch=watch)
    text = squeeze(pdf_text(path))
    lines = watch_lines(watch)
    for line in lines:
        assert squeeze(line) in text, line
    hidden = len(watch.flagged_players) - SUMMARY_PLAYERS
    assert squeeze(f"and {hidden} more players held back") in text
    assert squeeze("Cara Quill, Dov Reed (2 players) have played nobody outside their group") in text
    assert more and squeeze(more[-1].name) not in text  # past the summary's few: counted, not named


def _words_by_page(path) -> list[list[tuple[float, str]]]:
    """Per page, (height in points, text) of every word above the footer, from ``pdftotext -bbox``."""
    import html
    import re
    import subprocess

    out = subprocess.run(["pdftotext", "-bbox", str(path), "-"], check=True, capture_output=True,
                         text=True).stdout
    pages = []
    for page in out.split("<page ")[1:]:
        bottom = float(re.search(r'height="([\d.]+)"', page).group(1)) - 50
        pages.append([(float(b) - float(a), html.unescape(t)) for a, b, t in
                      re.findall(r'yMin="([\d.]+)" xMax="[\d.]+" yMax="([\d.]+)">([^<]*)<', page) if float(b) < bottom])
    return pages


def test_only_the_charts_print_below_12_points(updates, second_pdf):
    """Body text, tables and headings of the full list are 12 points or more; the wall page 14 or more.
    Smaller type is allowed only for the words of the parts charts: their names, totals, legend and caption."""
    from secretary.model.notice import PART_NAMES
    from secretary.report.notice import _short

    path, _ = second_pdf
    pages = _words_by_page(path)
    assert min(h for h, _ in pages[0]) >= 13.9, "the wall page has text under 14 points"
    notice = build_notice(updates[1].breakdown, updates[1].ratings, SETTINGS)
    chart = {"Points", "from:", "gains", "right,", "losses", "left", *" ".join(PART_NAMES).split()}
    for block in notice.divisions:
        chart |= set(f"The biggest changes in {block.division}, split into their four parts. The number at the end "
                     "of each bar is the whole change, in points.".split())
        for line in block.biggest_changes():
            chart |= {*_short(line.name).split(), change_text(line)}
    small = [(round(h, 1), word) for page in pages[1:] for h, word in page if h < 11.9]
    assert small, "no chart was drawn: the test would pass whatever the type size"
    assert [(h, word) for h, word in small if word not in chart] == []
