"""Grafting the tool's sheets into the secretary's package: the secretary's parts stay byte for byte,
the tool's sheets read back as written (openpyxl and LibreOffice), a second graft replaces the first."""
import csv
import datetime as dt
import io
import math
import re
import shutil
import zipfile

import pytest
from openpyxl import Workbook, load_workbook
from openpyxl.comments import Comment

from secretary.model.records import PlayerRating, PublishedState, Settings
from secretary.workbook.graft import GraftRefused, graft_outputs, graft_package, load_tool_sheets, save_grafted
from secretary.workbook.schema import HISTORY_SHEET, RATINGS_SHEET, STATE_SHEET, WATCH_SHEET
from secretary.workbook.state import read_state, write_state
from secretary.workbook.watch_sheet import write_watch
from secretary.workbook.write import write_history, write_ratings

from tests.workbook import xlsx_samples as S
from tests.workbook.test_libreoffice import CSV_EVERY_SHEET, _convert
from tests.workbook.test_watch_sheet import league

SECRETARY_SHEETS = ("Results", S.NOTES)


@pytest.fixture(scope="module")
def watch():
    return league()


def _ratings(shift=0.0):
    names = [*S.FORMULA_NAMES, "Zoë Ōtake", "Ada Finch"]
    return [
        PlayerRating(name, "Premier", 1500 + 13.123456789 * i + shift, 48.5 + i, 10.0 + i / 4, 5.0,
                     dt.date(2026, 3, 12), change=None if i == 2 else 2.5 - i, is_new=i == 2)
        for i, name in enumerate(names)
    ]


def _state(ratings):
    return PublishedState(
        updated_at="2026-03-14T21:05:00+00:00", reference_date=dt.date(2026, 3, 12),
        ratings={p.name: p.rating for p in ratings}, sds={p.name: p.sd for p in ratings},
        rows=(("a1", "f1"), ("a2", "f2")), settings=Settings(few_games=11.0),
    )


def _outputs(watch, shift=0.0, date=dt.date(2026, 3, 12), history_from=None):
    """The tool's sheets, written by the real writers into a workbook of their own."""
    wb = history_from or Workbook()
    if history_from is None:
        wb.remove(wb.active)
    ratings = _ratings(shift)
    write_ratings(wb, ratings, Settings(few_games=11.0))
    write_history(wb, date, ratings)
    write_watch(wb, watch)
    write_state(wb, _state(ratings))
    wb[RATINGS_SHEET].print_title_rows = "1:1"  # a sheet-local name, to check its localSheetId
    return wb


def _parts(path):
    with zipfile.ZipFile(path) as z:
        return {name: z.read(name) for name in z.namelist()}


def _cells(ws):
    """Value, number format and font of every used cell (the font as plain fields)."""
    out = {}
    for row in ws.iter_rows():
        for c in row:
            if c.value is not None:
                f = c.font
                colour = f.color.rgb if f.color is not None and f.color.type == "rgb" else None
                out[c.coordinate] = (c.value, c.number_format, f.b, f.i, f.sz, f.name, colour)
    return out


def _written(wb, tmp_path):
    """What openpyxl reads from the outputs workbook saved on its own: the reference for 'as written'."""
    path = tmp_path / "outputs-alone.xlsx"
    wb.save(path)
    return load_workbook(path)


def test_secretary_parts_stay_byte_identical_and_tool_sheets_read_back(tmp_path, watch):
    original = S.secretary_workbook(tmp_path / "league.xlsx")
    outputs = _outputs(watch)
    dest = tmp_path / "grafted.xlsx"
    graft_outputs(original, outputs, dest)

    before, after = _parts(original), _parts(dest)
    # The secretary's sheets, their drawing, chart, image, comment and shared strings, byte for byte.
    changed = {"xl/workbook.xml", "xl/_rels/workbook.xml.rels", "[Content_Types].xml", "xl/styles.xml"}
    for name, data in before.items():
        if name not in changed:
            assert after.get(name) == data, f"{name} changed"
    assert any(n.startswith("xl/media/") for n in before) and any(n.startswith("xl/comments") for n in before)

    book = load_workbook(dest)
    assert book.sheetnames == [*SECRETARY_SHEETS, RATINGS_SHEET, HISTORY_SHEET, WATCH_SHEET, STATE_SHEET]
    assert book[STATE_SHEET].sheet_state == "veryHidden"
    assert book.active.title == "Results"  # the sheet that was open stays the open one
    reference = _written(outputs, tmp_path)
    for name in (RATINGS_SHEET, HISTORY_SHEET, WATCH_SHEET, STATE_SHEET):
        assert _cells(book[name]) == _cells(reference[name]), name
    assert book[RATINGS_SHEET]["D2"].number_format == "0"  # RATING_FORMAT, from style.py
    assert book[RATINGS_SHEET].print_title_rows == "$1:$1"
    assert "Secretary_Ratings" in book[RATINGS_SHEET].tables
    assert len(book[HISTORY_SHEET]._charts) == 1
    # The secretary's own content still there as openpyxl sees it.
    notes = book[S.NOTES]
    assert notes["D3"].value == "=B3*C3" and notes["B3"].comment.text == "Two tables were out of order."
    assert "A1:D1" in {str(r) for r in notes.merged_cells.ranges}
    assert notes["A1"].font.b and notes["A1"].font.sz == 14
    assert "Fees" in book.defined_names
    assert read_state(book) == _state(_ratings())


def _needs_libreoffice():
    if shutil.which("soffice") is None:
        pytest.skip("LibreOffice (soffice) is not on PATH")


def _shown_by_libreoffice(path, tmp_path, sheets):
    """Each named sheet as LibreOffice shows it (CSV rows); its exit code is not trusted, its files are."""
    out = tmp_path / "csv"
    _convert(path, out, CSV_EVERY_SHEET, tmp_path / "profile")
    shown = []
    for sheet in sheets:
        target = out / f"{path.stem}-{sheet}.csv"
        assert target.exists(), f"LibreOffice wrote no {sheet} file; it wrote {sorted(p.name for p in out.glob('*'))}"
        with target.open(encoding="utf-8") as f:
            shown.append(list(csv.reader(f)))
    return shown


@pytest.mark.slow
def test_libreoffice_reads_the_grafted_ratings(tmp_path, watch):
    _needs_libreoffice()
    original = S.secretary_workbook(tmp_path / "league.xlsx")
    dest = tmp_path / "grafted.xlsx"
    graft_outputs(original, _outputs(watch), dest)
    shown, notes = _shown_by_libreoffice(dest, tmp_path, [RATINGS_SHEET, S.NOTES])
    expected = [list(r) for r in load_workbook(dest)[RATINGS_SHEET].iter_rows(values_only=True)]
    assert len(shown) == len(expected) == len(_ratings()) + 1
    assert shown[0] == [str(h) for h in expected[0]]
    for got, want in zip(shown[1:], expected[1:]):
        assert got[1] == want[1]  # names as written: "=SUM(A1)" stays text
        for col in (0, 3, 4, 5):
            assert math.isclose(float(got[col]), want[col], rel_tol=1e-12)
        assert got[7] == "2026-03-12"
    # The sample's week 1 has 3 tables at 4.5 (=B3*C3); weeks 1-5 have 3+4+2+3+4 = 16 tables (=SUM(D3:D7)).
    assert notes[2][3] == "13.5" and notes[2][5] == "72"


def test_grafting_again_replaces_the_tool_sheets_without_growing(tmp_path, watch):
    original = S.secretary_workbook(tmp_path / "league.xlsx")
    first, second = tmp_path / "first.xlsx", tmp_path / "second.xlsx"
    graft_outputs(original, _outputs(watch), first)
    graft_outputs(first, _outputs(watch, shift=7.0), second)
    a, b = _parts(first), _parts(second)
    assert sorted(a) == sorted(b)  # the same parts under the same names: nothing piles up
    assert a["xl/styles.xml"] == b["xl/styles.xml"]  # equal styles are reused, not appended again
    book = load_workbook(second)
    assert book[RATINGS_SHEET]["B2"].value == "Ada Finch"
    assert book[RATINGS_SHEET]["D2"].value == pytest.approx(1500 + 13.123456789 * 5 + 7.0, rel=1e-15)
    assert book.sheetnames == load_workbook(first).sheetnames
    assert read_state(book) == _state(_ratings(7.0))
    with zipfile.ZipFile(second) as z:
        tables = [n for n in z.namelist() if n.startswith("xl/tables/")]
        charts = [n for n in z.namelist() if n.startswith("xl/charts/")]
    assert len(tables) == 2 and len(charts) == 2  # Ratings' and History's tables; the secretary's chart and History's


def test_tool_sheets_keep_their_places_and_new_ones_join_them(tmp_path, watch):
    original = S.secretary_workbook(tmp_path / "league.xlsx")
    wb = load_workbook(original)
    write_ratings(wb, _ratings(), Settings())
    wb.move_sheet(RATINGS_SHEET, offset=-1)  # the secretary put Ratings between the two sheets
    wb[S.NOTES].print_title_rows = "2:2"  # a name local to a sheet that moves from place 2 to place 5
    wb.save(original)
    dest = tmp_path / "grafted.xlsx"
    graft_outputs(original, _outputs(watch), dest)
    book = load_workbook(dest)
    assert book.sheetnames == ["Results", RATINGS_SHEET, HISTORY_SHEET, WATCH_SHEET, STATE_SHEET, S.NOTES]
    assert book[S.NOTES].print_title_rows == "$2:$2" and book[RATINGS_SHEET].print_title_rows == "$1:$1"


def test_history_is_carried_from_one_graft_to_the_next(tmp_path, watch):
    original = S.secretary_workbook(tmp_path / "league.xlsx")
    first, second = tmp_path / "first.xlsx", tmp_path / "second.xlsx"
    graft_outputs(original, _outputs(watch), first)
    # The tool reads its own earlier sheets (history, state) without loading the secretary's.
    previous = load_tool_sheets(first)
    assert previous.sheetnames == [RATINGS_SHEET, HISTORY_SHEET, WATCH_SHEET, STATE_SHEET]
    assert read_state(previous) == _state(_ratings())
    graft_outputs(first, _outputs(watch, shift=1.0, date=dt.date(2026, 3, 19), history_from=previous), second)
    rows = list(load_workbook(second)[HISTORY_SHEET].iter_rows(values_only=True))
    assert rows[0] == ("Player", "2026-03-12", "2026-03-19")
    assert rows[1][1:] == pytest.approx((1500 + 13.123456789 * 5, 1500 + 13.123456789 * 5 + 1.0), rel=1e-15)


def test_load_tool_sheets_of_a_workbook_without_them_is_empty(tmp_path):
    assert load_tool_sheets(S.secretary_workbook(tmp_path / "league.xlsx")).sheetnames == []


def _as_shared_strings(package):
    """The same package with every inline string of its sheets moved to a shared-strings part
    (the way Excel and older openpyxl write text), to exercise the conversion back to inline."""
    with zipfile.ZipFile(io.BytesIO(package)) as z:
        parts = {n: z.read(n) for n in z.namelist()}
    strings = []

    def shared(match):
        strings.append(match.group(2))
        return match.group(1) + b' t="s"><v>%d</v></c>' % (len(strings) - 1)

    inline = re.compile(rb'(<c r="[A-Z]+\d+"(?: s="\d+")?) t="inlineStr"><is>(<t(?: [^>]*)?>.*?</t>|<t/>)</is></c>', re.S)
    for name in [n for n in parts if n.startswith("xl/worksheets/sheet")]:
        parts[name] = inline.sub(shared, parts[name])
    main = b"http://schemas.openxmlformats.org/spreadsheetml/2006/main"
    parts["xl/sharedStrings.xml"] = b'<sst xmlns="' + main + b'">' + b"".join(b"<si>" + s + b"</si>" for s in strings) + b"</sst>"
    parts["xl/_rels/workbook.xml.rels"] = parts["xl/_rels/workbook.xml.rels"].replace(b"</Relationships>", (
        b'<Relationship Id="rId999" Target="sharedStrings.xml" Type="http://schemas.openxmlformats.org/'
        b'officeDocument/2006/relationships/sharedStrings"/></Relationships>'))
    parts["[Content_Types].xml"] = parts["[Content_Types].xml"].replace(b"</Types>", (
        b'<Override PartName="/xl/sharedStrings.xml" ContentType="application/vnd.openxmlformats-'
        b'officedocument.spreadsheetml.sharedStrings+xml"/></Types>'))
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w") as z:
        for name, data in parts.items():
            z.writestr(name, data)
    return out.getvalue(), len(strings)


def test_shared_strings_of_the_tool_sheets_become_inline(tmp_path, watch):
    original = S.secretary_workbook(tmp_path / "league.xlsx")
    outputs = _outputs(watch)
    outputs[RATINGS_SHEET]["J1"] = "  spaced  "  # kept exactly only with xml:space="preserve"
    buffer = io.BytesIO()
    outputs.save(buffer)
    package, moved = _as_shared_strings(buffer.getvalue())
    assert moved > 20 and load_workbook(io.BytesIO(package))[RATINGS_SHEET]["B2"].value == "Ada Finch"
    dest = tmp_path / "grafted.xlsx"
    graft_package(original, package, dest)
    parts = _parts(dest)
    assert "xl/sharedStrings.xml" not in _parts(original) and "xl/sharedStrings.xml" not in parts  # none added
    assert b' t="s"' not in parts["xl/worksheets/sheet3.xml"] and b'xml:space="preserve"' in parts["xl/worksheets/sheet3.xml"]
    book = load_workbook(dest)
    assert _cells(book[RATINGS_SHEET]) == _cells(_written(outputs, tmp_path)[RATINGS_SHEET])
    assert book[RATINGS_SHEET]["J1"].value == "  spaced  "
    assert read_state(book) == _state(_ratings())


def test_save_grafted_replaces_the_file_and_keeps_a_backup(tmp_path, watch):
    original = S.secretary_workbook(tmp_path / "league.xlsx")
    first = original.read_bytes()
    outcome = save_grafted(original, _outputs(watch))
    assert outcome.path == original and not outcome.companion
    assert outcome.backup.read_bytes() == first
    assert read_state(load_workbook(original)) == _state(_ratings())
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".~secretary-")] == []  # no temp left


@pytest.mark.filterwarnings("ignore:Sparkline Group extension")  # openpyxl's reader drops what the graft keeps
def test_content_openpyxl_would_drop_survives_the_graft(tmp_path, watch):
    original = S.secretary_workbook(tmp_path / "league.xlsx")
    notes = S.sheet_part(original, S.NOTES)
    S.edit_zip(original, edit={notes: S.insert_before("</worksheet>", S.SPARKLINES)})
    dest = tmp_path / "grafted.xlsx"
    graft_outputs(original, _outputs(watch), dest)
    assert b"x14:sparklineGroups" in _parts(dest)[notes] and _parts(dest)[notes] == _parts(original)[notes]
    assert load_workbook(dest)[RATINGS_SHEET]["B2"].value == "Ada Finch"


def test_a_tool_sheet_with_a_comment_is_refused_plainly(tmp_path, watch):
    original = S.secretary_workbook(tmp_path / "league.xlsx")
    outputs = _outputs(watch)
    outputs[RATINGS_SHEET]["A1"].comment = Comment("note", "tool")
    dest = tmp_path / "grafted.xlsx"
    with pytest.raises(GraftRefused, match="comments"):
        graft_outputs(original, outputs, dest)
    assert not dest.exists()


def test_a_secretary_sheet_named_like_a_tool_sheet_is_refused(tmp_path, watch):
    original = S.secretary_workbook(tmp_path / "league.xlsx")
    wb = load_workbook(original)
    wb.create_sheet("ratings")
    wb.save(original)
    with pytest.raises(GraftRefused, match="named like one of the tool's"):
        graft_outputs(original, _outputs(watch), tmp_path / "grafted.xlsx")


@pytest.mark.slow
def test_graft_of_a_large_workbook_keeps_its_results_sheet_byte_for_byte(tmp_path, watch):
    # Its speed against a full openpyxl load + save is measured by tests/bench/bench_update.py.
    from tests.bench.make_league import make_league_workbook

    path = tmp_path / "big.xlsx"
    make_league_workbook(path, 20000, 500)
    graft_outputs(path, _outputs(watch), tmp_path / "grafted.xlsx")
    assert _parts(tmp_path / "grafted.xlsx")["xl/worksheets/sheet1.xml"] == _parts(path)["xl/worksheets/sheet1.xml"]


@pytest.mark.slow
def test_graft_into_a_workbook_saved_by_libreoffice(tmp_path, watch):
    """Another producer's package (shared strings, its own styles and namespaces) takes the graft too."""
    _needs_libreoffice()
    sample = S.secretary_workbook(tmp_path / "sample.xlsx")
    first = tmp_path / "lo"
    _convert(sample, first, "xlsx", tmp_path / "profile")
    original = first / "sample.xlsx"
    assert original.exists(), "LibreOffice did not re-save the sample"
    dest = tmp_path / "grafted.xlsx"
    graft_outputs(original, _outputs(watch), dest)
    before, after = _parts(original), _parts(dest)
    assert "xl/sharedStrings.xml" in before and after["xl/sharedStrings.xml"] == before["xl/sharedStrings.xml"]
    book = load_workbook(dest)
    assert book.sheetnames[-4:] == [RATINGS_SHEET, HISTORY_SHEET, WATCH_SHEET, STATE_SHEET]
    # Plain cells take this workbook's own plain font (LibreOffice's names its colour): compare the rest.
    plain = {k: v[:5] for k, v in _cells(_written(_outputs(watch), tmp_path)[RATINGS_SHEET]).items()}
    assert {k: v[:5] for k, v in _cells(book[RATINGS_SHEET]).items()} == plain
    assert read_state(book) == _state(_ratings())
    shown, results = _shown_by_libreoffice(dest, tmp_path / "again", [RATINGS_SHEET, "Results"])
    assert [row[1] for row in shown[1:]] == [book[RATINGS_SHEET].cell(r, 2).value for r in range(2, len(shown) + 1)]
    assert results[0][:2] == ["Date", "Division"]


def test_tool_sheets_saved_with_shared_strings_load_with_their_text(tmp_path, watch):
    # A spreadsheet program that saves the workbook moves every text to shared strings: load_tool_sheets
    # must then keep the shared strings it otherwise leaves out.
    original = S.secretary_workbook(tmp_path / "league.xlsx")
    grafted, path = tmp_path / "grafted.xlsx", tmp_path / "saved-elsewhere.xlsx"
    graft_outputs(original, _outputs(watch), grafted)
    package, moved = _as_shared_strings(grafted.read_bytes())
    path.write_bytes(package)
    assert moved > 20
    loaded, reference = load_tool_sheets(path), load_workbook(path)
    assert loaded.sheetnames == [RATINGS_SHEET, HISTORY_SHEET, WATCH_SHEET, STATE_SHEET]
    for name in loaded.sheetnames:
        assert _cells(loaded[name]) == _cells(reference[name])
    assert loaded[RATINGS_SHEET]["B2"].value == "Ada Finch"


def test_tool_sheets_loaded_without_rows_must_be_rewritten_before_a_graft(tmp_path, watch):
    original = S.secretary_workbook(tmp_path / "league.xlsx")
    first = tmp_path / "first.xlsx"
    graft_outputs(original, _outputs(watch), first)
    previous = load_tool_sheets(first, cells=(HISTORY_SHEET,))
    assert previous.sheetnames == [RATINGS_SHEET, HISTORY_SHEET, WATCH_SHEET, STATE_SHEET]
    assert previous[RATINGS_SHEET].max_row == 1 and previous[RATINGS_SHEET]["A1"].value is None
    assert _cells(previous[HISTORY_SHEET]) == _cells(load_tool_sheets(first)[HISTORY_SHEET])
    with pytest.raises(ValueError, match="not rewritten"):
        graft_outputs(first, previous, tmp_path / "second.xlsx")
    graft_outputs(first, _outputs(watch, shift=1.0, date=dt.date(2026, 3, 19), history_from=previous),
                  tmp_path / "second.xlsx")
    rows = list(load_workbook(tmp_path / "second.xlsx")[HISTORY_SHEET].iter_rows(values_only=True))
    assert rows[0] == ("Player", "2026-03-12", "2026-03-19")


def test_a_graft_that_does_not_read_back_is_not_saved(tmp_path, watch, monkeypatch):
    from secretary.errors import FileRefused
    from secretary.workbook import graft

    original = S.secretary_workbook(tmp_path / "league.xlsx")
    before = original.read_bytes()
    real = graft._graft_parts

    def garbled(source, parts, dest):  # one name of the Ratings sheet changes on its way to the disk
        real(source, parts, dest)
        parts = _parts(dest)
        sheet = next(n for n, d in parts.items() if n.startswith("xl/worksheets/") and b"<t>Rank</t>" in d)
        assert b"Ada Finch" in parts[sheet]
        parts[sheet] = parts[sheet].replace(b"Ada Finch", b"Ada Fitch", 1)
        with zipfile.ZipFile(dest, "w") as z:
            for name, data in parts.items():
                z.writestr(name, data)

    monkeypatch.setattr(graft, "_graft_parts", garbled)
    with pytest.raises(FileRefused, match="does not read back as written"):
        save_grafted(original, _outputs(watch))
    assert original.read_bytes() == before
