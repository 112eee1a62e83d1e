"""One name per idea: the window's headings are the sheets' own, its words are plain, and the technical term
behind a plain word is in that word's tooltip (the glossary in DEVELOPERS.md)."""
from __future__ import annotations

import re
import tkinter as tk
from tkinter import ttk

import pytest

from secretary.gui import views
from secretary.gui.tooltips import tip_of
from secretary.model import watch_sentences
from secretary.workbook import fixtures_sheet, schema, watch_sheet, write
from tests.gui.helpers import settle

# Technical terms that stay off the screen's headings, labels, buttons and tabs (tooltips may name them).
JARGON = ("linked share", "severity", "held by the prior", "prior", "posterior", "laplace", "log-odds",
          "z-score", "breakdown")
# Plain word on screen -> the technical term its tooltip must name.
TERMS = {"How well linked": "linked share", "Kind": "severity", "Player": "held by the prior"}
SETTING_TERMS = {"skill_spread": "prior standard deviation", "held_z": "z-score", "weakly_linked_below": "linked share"}
# Window columns that join two sheet columns into one (the sheet keeps them apart for sorting and sums).
JOINED = {"Divisions": ("Division A", "Division B"),
          f"{watch_sentences.GAP_SD} now \u2192 after": (watch_sheet.GAP_NOW, watch_sheet.GAP_AFTER),
          "Race": ("Race A", "Race B"), "Fair race": ("Fair race A", "Fair race B"),
          "Chance A (fair)": ("Fair race A", "Fair race B")}


def _sheet_of(columns):
    fixtures = (*(c.header for c in schema.FIXTURES.columns), *fixtures_sheet.TOOL_HEADERS)
    return {id(views.RATING_COLUMNS): write.RATINGS_HEADERS, id(views.PROBLEM_COLUMNS): write.PROBLEM_HEADERS,
            id(views.DIVISION_COLUMNS): watch_sheet.DIVISION_HEADERS, id(views.HELD_COLUMNS): watch_sheet.HELD_HEADERS,
            id(views.SUGGESTION_COLUMNS): watch_sheet.MATCH_HEADERS, id(views.FIXTURE_COLUMNS): fixtures,
            id(views.LEVEL_COLUMNS): write.LEVEL_HEADERS}[id(columns)]


@pytest.mark.parametrize("columns", [views.RATING_COLUMNS, views.PROBLEM_COLUMNS, views.DIVISION_COLUMNS,
                                     views.HELD_COLUMNS, views.SUGGESTION_COLUMNS, views.FIXTURE_COLUMNS,
                                     views.LEVEL_COLUMNS],
                         ids=["ratings", "problems", "divisions", "held", "suggestions", "fixtures", "levels"])
def test_every_window_heading_is_its_sheets_heading(columns):
    sheet = _sheet_of(columns)
    for column in columns:
        parts = JOINED.get(column.heading, (column.heading,))
        assert all(p in sheet for p in parts), f"{column.heading!r} is not a heading of the sheet: {sheet}"


def _widgets(widget):
    yield widget
    for child in widget.winfo_children():
        yield from _widgets(child)


def _shown_words(root: tk.Misc) -> list[str]:
    """Every label, button, check box, tab and table heading text of a window and its dialogs."""
    words = []
    for w in _widgets(root):
        if isinstance(w, (ttk.Label, ttk.Button, ttk.Checkbutton, tk.Label, tk.Button)):
            words.append(str(w.cget("text")))
        elif isinstance(w, ttk.Notebook):
            words += [str(w.tab(t, "text")) for t in w.tabs()]
        elif isinstance(w, ttk.Treeview):
            words += [str(w.heading(c, "text")) for c in w["columns"]]
    return words


def _plain(text: str) -> list[str]:
    return [term for term in JARGON if re.search(rf"\b{re.escape(term)}\b", text, re.IGNORECASE)]


def test_the_screen_says_plain_words_and_tooltips_give_the_terms(app, demo_copy):
    app.open_workbook(demo_copy)
    settle(app)
    app.update()
    settle(app, 300)
    assert app.session.updated
    dialog = app.open_settings()
    app.root.update()
    try:
        shown = _shown_words(app.root)
        settings_labels = [str(w.cget("text")) for w in _widgets(dialog.top) if isinstance(w, ttk.Label)
                           and "SecretaryBold" in str(w.cget("font"))]
        assert len(settings_labels) == len(schema.SETTINGS_TABLE)
        for text in shown + settings_labels:
            assert not _plain(text), f"jargon on screen: {text!r} ({_plain(text)})"
        assert {"How well linked", "Kind", "Held back from", "Skill spread"} <= set(shown) | set(settings_labels)
        # The technical term sits in the tooltip of its plain word.
        trees = [w for w in _widgets(app.root) if isinstance(w, ttk.Treeview)]
        for plain, term in TERMS.items():
            tips = [tip_of(t)[c] for t in trees for c in t["columns"] if t.heading(c, "text") == plain]
            assert tips and any(term in tip.casefold() for tip in tips), (plain, tips)
        for field, term in SETTING_TERMS.items():
            assert term in tip_of(dialog.fields[field]).casefold(), (field, tip_of(dialog.fields[field]))
    finally:
        dialog.top.destroy()


def test_window_sentences_name_the_player(app, demo_copy):
    """The printed board may say "you" to the player; the window's reader is the secretary, so every sentence
    on screen (What changed, the Ratings panel, the Watch list) names the player instead."""
    from secretary.pipeline import DATA, append_results_csv

    app.open_workbook(demo_copy)
    settle(app)
    app.update()
    settle(app, 300)
    append_results_csv(demo_copy, DATA / "demo-new-week.csv")  # the second week: changes with reasons
    app.check()
    settle(app)
    app.update()
    settle(app, 300)
    app.review()
    settle(app)
    texts = []
    for name in [c.name for c in app.updated.changes][:20]:  # the Ratings panel of twenty players
        app.notebook.select(app.ratings.frame)
        app.ratings.table.tree.selection_set(name)
        app.root.update()
        canvas = app.ratings.change_canvas
        texts += [canvas.itemcget(i, "text") for i in canvas.find_all() if canvas.type(i) == "text"]
    canvas = app.changes.canvas
    texts += [canvas.itemcget(i, "text") for i in canvas.find_all() if canvas.type(i) == "text"]
    texts += _shown_words(app.root)
    assert sum(1 for t in texts if " won " in t) >= 10  # sentences about the week's games were drawn
    assert [t for t in texts if re.search(r"\b(you|your|yours)\b", t, re.IGNORECASE)] == []


def test_counts_on_screen_are_in_the_right_number(app, demo_copy):
    """No "(s)" or "(es)" plural on screen: every count goes through sentences.plural."""
    app.open_workbook(demo_copy)
    settle(app)
    app.update()
    settle(app, 300)
    texts = _shown_words(app.root) + [app.status.cget("text")]
    assert not [t for t in texts if re.search(r"\w\((e?s)\)", t)]
    assert not [t for t in texts if re.search(r"\b1 (warnings|errors|players|matches|fixtures|games)\b", t)]
