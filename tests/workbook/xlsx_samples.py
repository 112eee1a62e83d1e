"""Sample workbooks for the writing and saving tests: a secretary's workbook with everything openpyxl keeps,
and a way to add, by editing its XML, the kinds of content openpyxl drops."""
from __future__ import annotations

import datetime as dt
import io
import zipfile
from pathlib import Path
from typing import Callable, Mapping

from openpyxl import Workbook, load_workbook
from openpyxl.chart import BarChart, Reference
from openpyxl.comments import Comment
from openpyxl.drawing.image import Image
from openpyxl.formatting.rule import CellIsRule
from openpyxl.styles import Font, PatternFill
from openpyxl.workbook.defined_name import DefinedName
from openpyxl.worksheet.datavalidation import DataValidation

NOTES = "Club notes"
FORMULA_NAMES = ("=SUM(A1)", "+44 7700", "-Tom-", "@home")


def tiny_png() -> bytes:
    """A 4 x 4 red PNG made with Pillow."""
    from PIL import Image as PILImage

    out = io.BytesIO()
    PILImage.new("RGB", (4, 4), (200, 30, 30)).save(out, format="PNG")
    return out.getvalue()


def secretary_workbook(path: Path, results: int = 8) -> Path:
    """A league workbook with the secretary's own extras: formulas, styles, merged cells,
    data validation, conditional formatting, a chart, an image, a comment, a defined name."""
    wb = Workbook()
    ws = wb.active
    ws.title = "Results"
    ws.append(["Date", "Division", "Player A", "Player B", "Games A", "Games B"])
    people = ["Ada Finch", "Bram Oak", "Cleo Marsh", "Dev Pike", *FORMULA_NAMES]
    start = dt.date(2026, 1, 5)
    for i in range(results):
        a, b = people[i % len(people)], people[(i * 3 + 1) % len(people)]
        if a == b:
            b = people[(i + 1) % len(people)]
        ws.append([start + dt.timedelta(days=7 * (i // 4)), "Premier", a, b, 5, i % 5])
    for row in ws.iter_rows(min_row=2, min_col=3, max_col=4):
        for cell in row:
            cell.data_type = "s"  # the formula-like names are text in the secretary's sheet
    notes = wb.create_sheet(NOTES)
    notes["A1"] = "Club notes"
    notes["A1"].font = Font(bold=True, size=14, color="FF1F4E79")
    notes["A1"].fill = PatternFill("solid", fgColor="FFFFF2CC")
    notes.merge_cells("A1:D1")
    notes.append(["Week", "Tables", "Fee", "Total"])
    for week in range(1, 6):
        notes.append([week, 2 + week % 3, 4.5, f"=B{week + 2}*C{week + 2}"])
    notes["F2"] = "Sum"
    notes["F3"] = "=SUM(D3:D7)"
    notes["B3"].comment = Comment("Two tables were out of order.", "Secretary")
    validation = DataValidation(type="whole", operator="between", formula1="0", formula2="10")
    validation.add("B3:B7")
    notes.add_data_validation(validation)
    notes.conditional_formatting.add(
        "D3:D7", CellIsRule(operator="greaterThan", formula=["20"], fill=PatternFill("solid", fgColor="FFC6EFCE"))
    )
    chart = BarChart()
    chart.add_data(Reference(notes, min_col=2, min_row=2, max_row=7), titles_from_data=True)
    notes.add_chart(chart, "H2")
    notes.add_image(Image(io.BytesIO(tiny_png())), "H20")
    wb.defined_names["Fees"] = DefinedName("Fees", attr_text=f"'{NOTES}'!$C$3:$C$7")
    wb.save(path)
    return path


def edit_zip(
    path: Path,
    add: Mapping[str, bytes] | None = None,
    edit: Mapping[str, Callable[[str], str]] | None = None,
) -> Path:
    """Rewrite an xlsx file in place, adding parts and editing parts' XML text."""
    with zipfile.ZipFile(path) as z:
        parts = {name: z.read(name) for name in z.namelist()}
    for name, change in (edit or {}).items():
        parts[name] = change(parts[name].decode("utf-8")).encode("utf-8")
    parts.update(add or {})
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for name, data in parts.items():
            z.writestr(name, data)
    return path


def sheet_part(path: Path, sheet: str) -> str:
    """The zip part holding a sheet, e.g. 'xl/worksheets/sheet2.xml' (openpyxl numbers them in order)."""
    return f"xl/worksheets/sheet{load_workbook(path, read_only=True).sheetnames.index(sheet) + 1}.xml"


# --- pieces of content openpyxl does not keep (written the way Excel writes them) ----------

SHAPE_ANCHOR = (
    '<xdr:twoCellAnchor xmlns:xdr="http://schemas.openxmlformats.org/drawingml/2006/spreadsheetDrawing"'
    ' xmlns:a="http://schemas.openxmlformats.org/drawingml/2006/main">'
    '<xdr:from><xdr:col>1</xdr:col><xdr:colOff>0</xdr:colOff><xdr:row>9</xdr:row>'
    '<xdr:rowOff>0</xdr:rowOff></xdr:from><xdr:to><xdr:col>4</xdr:col><xdr:colOff>0</xdr:colOff>'
    '<xdr:row>14</xdr:row><xdr:rowOff>0</xdr:rowOff></xdr:to><xdr:sp macro="" textlink="">'
    '<xdr:nvSpPr><xdr:cNvPr id="9" name="TextBox 1"/><xdr:cNvSpPr txBox="1"/></xdr:nvSpPr>'
    '<xdr:spPr><a:xfrm><a:off x="0" y="0"/><a:ext cx="1800000" cy="900000"/></a:xfrm>'
    '<a:prstGeom prst="rect"><a:avLst/></a:prstGeom></xdr:spPr><xdr:txBody><a:bodyPr/><a:lstStyle/>'
    '<a:p><a:r><a:t>Bring your own cue</a:t></a:r></a:p></xdr:txBody></xdr:sp><xdr:clientData/>'
    '</xdr:twoCellAnchor>'
)

SPARKLINES = (
    '<extLst><ext uri="{05C60535-1F16-4fd2-B633-F4F36F0B64E0}" '
    'xmlns:x14="http://schemas.microsoft.com/office/spreadsheetml/2009/9/main">'
    '<x14:sparklineGroups xmlns:xm="http://schemas.microsoft.com/office/excel/2006/main">'
    '<x14:sparklineGroup displayEmptyCellsAs="gap"><x14:colorSeries rgb="FF376092"/>'
    '<x14:sparklines><x14:sparkline><xm:f>\'Club notes\'!B3:B7</xm:f><xm:sqref>B8</xm:sqref>'
    '</x14:sparkline></x14:sparklines></x14:sparklineGroup></x14:sparklineGroups></ext></extLst>'
)

WORKBOOK_SLICERS = (
    '<extLst><ext uri="{BBE1A952-AA13-448e-AADC-164F8A28A991}" '
    'xmlns:x14="http://schemas.microsoft.com/office/spreadsheetml/2009/9/main" '
    'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships">'
    '<x14:slicerCaches><x14:slicerCache r:id="rId99"/></x14:slicerCaches></ext></extLst>'
)

WORKBOOK_BENIGN_EXT = (
    '<extLst><ext uri="{B58B0392-4F1F-4190-BB64-5DF3571DCE5F}" '
    'xmlns:xcalcf="http://schemas.microsoft.com/office/spreadsheetml/2018/calcfeatures">'
    '<xcalcf:calcFeatures><xcalcf:feature name="microsoft.com:RD"/></xcalcf:calcFeatures></ext></extLst>'
)

FORM_CONTROL_VML = (
    '<xml xmlns:v="urn:schemas-microsoft-com:vml" xmlns:o="urn:schemas-microsoft-com:office:office" '
    'xmlns:x="urn:schemas-microsoft-com:office:excel"><v:shape id="_x0000_s1025" type="#_x0000_t201">'
    '<x:ClientData ObjectType="Checkbox"><x:Anchor>1, 0, 1, 0, 2, 0, 2, 0</x:Anchor></x:ClientData>'
    '</v:shape></xml>'
)


def insert_before(marker: str, text: str) -> Callable[[str], str]:
    """An XML edit that puts `text` before the last `marker`."""

    def change(xml: str) -> str:
        at = xml.rindex(marker)
        return xml[:at] + text + xml[at:]

    return change
