"""A workbook updated earlier (e.g. by `secretary update`) shows its last update as soon as it is opened."""
from __future__ import annotations

import datetime as dt

import pytest

from secretary import pipeline
from secretary.errors import SecretaryError
from secretary.gui import views
from secretary.workbook.append import append_results
from tests.gui.helpers import settle, wait_until
from tests.gui.test_window import sheet_rows
from tests.test_cli import folder_state

NEW_RESULT = {"Date": "2026-04-16", "Division": "Division Two", "Player A": "Petra Scantlebury",
              "Player B": "Ravi Dunstall", "Games A": "4", "Games B": "2"}  # two players of the demo league


@pytest.fixture
def updated_copy(demo_copy):
    """The demo league after one update from outside the window (as the command line does it)."""
    pipeline.run_update(demo_copy, now=dt.datetime(2026, 4, 16, 10, 30))
    return demo_copy


def test_last_update_rebuilds_the_published_ratings_and_writes_nothing(demo_copy):
    with pytest.raises(SecretaryError, match="has not been updated yet"):
        pipeline.last_update(demo_copy)
    update = pipeline.run_update(demo_copy)
    before = folder_state(demo_copy.parent)
    shown = pipeline.last_update(demo_copy)
    assert folder_state(demo_copy.parent) == before  # byte for byte: no save, no backup, no PDF
    assert [(p.name, p.division, p.change, p.is_new) for p in shown.ratings] == \
        [(p.name, p.division, p.change, p.is_new) for p in update.ratings]
    assert [p.rating for p in shown.ratings] == pytest.approx([p.rating for p in update.ratings], abs=1e-6)
    assert shown.written is None and shown.backup is None and not shown.companion
    assert shown.notice_pdf == pipeline.notice_pdf_path(demo_copy) and shown.notice_pdf.exists()
    assert shown.log.updated_at == update.log.updated_at and shown.log.rows_rated == update.log.rows_rated
    assert len(shown.forecasts) == len(update.forecasts) and shown.watch == update.watch
    append_results(demo_copy, [NEW_RESULT])
    with pytest.raises(SecretaryError, match="not current"):
        pipeline.last_update(demo_copy)


def test_opening_an_updated_workbook_shows_its_last_update(app, updated_copy):
    app.open_workbook(updated_copy)
    settle(app, 300)
    assert views.step_states(app.session)[:2] == (views.DONE, views.DONE)
    assert views.next_step(app.session) == 2 and app.step_buttons[2].cget("style") == "Next.TButton"
    assert "(last update 16 Apr 2026)" in app.step_labels[1].cget("text")  # the fixture's update time
    assert "last update (16 Apr 2026)" in app.status.cget("text") and not app.dialogs.named("error")
    # Ratings table == Ratings sheet written by the update (rank, player, shown rating).
    # The players (a rank in column A); the divisions table under them has none.
    sheet = [(r[0], r[1], round(r[3])) for r in sheet_rows(updated_copy, "Ratings") if isinstance(r[0], int)]
    tree = [(int(v[0]), v[1], int(v[2])) for v in app.ratings.table.shown_values()]
    assert tree == sheet and len(tree) == 63
    assert len(app.fixtures.table.shown_values()) == len(sheet_rows(updated_copy, "Fixtures"))
    assert {v[0] for v in app.watch.tables[0].shown_values()} == set(app.updated.divisions)
    app.step_buttons[2].invoke()
    wait_until(app.root, lambda: app.changes.shown, 10, app.errors)
    assert "first ratings" in app.changes.summary.cget("text")
    assert {c.name for c in app.changes.shown} <= {name for _, name, _ in sheet}
    assert views.next_step(app.session) == 3


def test_new_results_since_the_last_update_wait_for_step_2(app, updated_copy):
    append_results(updated_copy, [NEW_RESULT])
    app.open_workbook(updated_copy)
    settle(app, 300)
    assert views.next_step(app.session) == 1 and app.step_buttons[1].cget("style") == "Next.TButton"
    assert "new results are waiting for an update" in app.status.cget("text")
    assert app.ratings.table.shown_values() == [] and not app.dialogs.named("error")
