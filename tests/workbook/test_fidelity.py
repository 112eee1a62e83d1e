"""Content openpyxl loses on a save: each kind is built into a real workbook by editing its XML,
found by `unsupported_content`, and shown to be really lost by an openpyxl load + save."""
import warnings
import zipfile

import pytest
from openpyxl import load_workbook

from secretary.workbook.fidelity import unsupported_content

from tests.workbook import xlsx_samples as S

NOTES_PART = "xl/worksheets/sheet2.xml"  # the sample's second sheet, 'Club notes'
R_NS = 'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"'

# name: (parts to add, XML edits, words expected in the finding, a marker openpyxl drops)
CASES = {
    "text box": (
        {}, {"xl/drawings/drawing1.xml": S.insert_before("</wsDr>", S.SHAPE_ANCHOR)},
        "shapes, text boxes", b"Bring your own cue",
    ),
    "sparklines": (
        {}, {NOTES_PART: S.insert_before("</worksheet>", S.SPARKLINES)},
        "sparklines", b"sparklineGroup",
    ),
    "slicers": (
        {"xl/slicerCaches/slicerCache1.xml": b"<slicerCacheDefinition/>"},
        {"xl/workbook.xml": S.insert_before("</workbook>", S.WORKBOOK_SLICERS)},
        "slicers", b"slicerCache",
    ),
    "threaded comments": (
        {"xl/threadedComments/threadedComment1.xml": b"<ThreadedComments/>"}, {},
        "threaded comments", b"ThreadedComments",
    ),
    "cell checkboxes": (
        {"xl/featurePropertyBag/featurePropertyBag.xml": b"<FeaturePropertyBags/>"}, {},
        "checkboxes in cells", b"FeaturePropertyBags",
    ),
    "pictures in cells": (
        {"xl/richData/rdrichvalue.xml": b"<rvData/>", "xl/metadata.xml": b"<metadata/>"}, {},
        "pictures placed in cells", b"rvData",
    ),
    "form control": (
        {"xl/ctrlProps/ctrlProp1.xml": b"<formControlPr objectType=\"CheckBox\"/>"}, {},
        "form controls", b"formControlPr",
    ),
    "form control drawn in VML": (
        {}, {"xl/drawings/commentsDrawing1.vml": lambda _: S.FORM_CONTROL_VML},
        "form controls", b'ObjectType="Checkbox"',
    ),
    "embedded object": (
        {"xl/embeddings/oleObject1.bin": b"\xd0\xcf\x11\xe0 embedded"},
        {NOTES_PART: S.insert_before("</worksheet>",
                                     f'<oleObjects {R_NS}><oleObject progId="Word.Document.12" shapeId="1025" '
                                     'r:id="rId7"/></oleObjects>')},
        "embedded objects", b"oleObject",
    ),
    "background picture": (
        {}, {NOTES_PART: S.insert_before("</worksheet>", f'<picture {R_NS} r:id="rId8"/>')},
        "background picture", b"<picture",
    ),
    "pivot table": (
        # Flagged although openpyxl claims to keep pivot tables: the workbook contract lists them,
        # and round trips of pivot tables are a known source of files Excel has to repair.
        {"xl/pivotTables/pivotTable1.xml": b"<pivotTableDefinition/>"}, {},
        "pivot tables", None,
    ),
}


@pytest.fixture
def sample(tmp_path):
    return S.secretary_workbook(tmp_path / "league.xlsx")


def test_everything_openpyxl_keeps_is_not_flagged(sample):
    assert unsupported_content(sample) == []


def test_markup_typed_into_a_cell_is_not_mistaken_for_content(sample):
    wb = load_workbook(sample)
    wb[S.NOTES]["A12"] = '<extLst><ext uri="x"><x14:sparklineGroups> <picture r:id="1"/>'
    wb.save(sample)
    assert unsupported_content(sample) == []


def test_harmless_workbook_extensions_are_not_flagged(sample):
    S.edit_zip(sample, edit={"xl/workbook.xml": S.insert_before("</workbook>", S.WORKBOOK_BENIGN_EXT)})
    assert unsupported_content(sample) == []


@pytest.mark.parametrize("case", list(CASES))
def test_content_openpyxl_drops_is_found_and_really_dropped(sample, tmp_path, case):
    add, edit, words, marker = CASES[case]
    assert S.sheet_part(sample, S.NOTES) == NOTES_PART
    S.edit_zip(sample, add, edit)
    found = unsupported_content(sample)
    assert len(found) >= 1 and any(words in f for f in found), found
    if marker is None:
        return
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # openpyxl warns about the extensions it removes
        wb = load_workbook(sample)
    again = tmp_path / "again.xlsx"
    wb.save(again)
    with zipfile.ZipFile(sample) as z:
        assert any(marker in z.read(n) for n in z.namelist())
    with zipfile.ZipFile(again) as z:
        assert not any(marker in z.read(n) for n in z.namelist()), f"openpyxl kept the {case}"
    assert unsupported_content(again) == []


def test_finding_names_the_sheet(sample):
    S.edit_zip(sample, edit={NOTES_PART: S.insert_before("</worksheet>", S.SPARKLINES)})
    assert unsupported_content(sample) == ["sparklines (small charts in cells) on 'Club notes'"]


def test_a_drawing_that_cannot_be_inspected_counts_as_content_at_risk(sample):
    S.edit_zip(sample, edit={"xl/drawings/drawing1.xml": lambda xml: xml[: len(xml) // 2]})
    assert unsupported_content(sample) == ["parts this tool could not inspect on 'Club notes'"]
