"""The blank template prints on few, legible pages: the units in the header row, a worked
example of every sheet on the guide sheet and none on the sheets the tool reads.

Layout limits are common practice (no source); widths are Arial's (report.sheetfit).
"""

from __future__ import annotations

import math

import pytest
from openpyxl import load_workbook
from openpyxl.utils import get_column_letter

from faultcalc import read_system, run_study, schema
from faultcalc.report import sheetfit
from faultcalc.report import sheetpages as pages
from faultcalc.schema.examples import EXAMPLES
from faultcalc.schema.template import build_template, header_shown
from tests.conftest import write_xlsx


@pytest.fixture(scope="module")
def book(tmp_path_factory):
    path = tmp_path_factory.mktemp("template") / "blank.xlsx"
    build_template().save(path)
    return load_workbook(path)


def test_every_font_names_the_one_face(book):
    assert {f.name for f in book._fonts} == {sheetfit.FACE}


def test_the_header_row_shows_each_unit_and_keeps_the_bare_name(book):
    for sheet in schema.SHEETS:
        ws = book[sheet.name]
        for cell, column in zip(ws[1], sheet.columns, strict=True):
            assert cell.value == column.name  # what the reader looks for
            if column.unit:
                assert cell.number_format == f'@" ({column.unit})"'
            shown = header_shown(column)
            width = ws.column_dimensions[cell.column_letter].width
            room = sheetfit.room_pt(width, cell.alignment.indent)
            for word in shown.replace("-", "- ").split():
                assert sheetfit.text_width_pt(word, bold=True) <= room, (sheet.name, word)
            lines = sheetfit.lines_needed(shown, width, bold=True, indent=cell.alignment.indent)
            assert ws.row_dimensions[1].height >= lines * 10 * 1.2, (sheet.name, shown)


def test_no_example_is_a_row_the_tool_would_read(book):
    for sheet in schema.SHEETS:
        ws = book[sheet.name]
        if sheet is schema.STUDY:
            names = [ws.cell(i, 1).value for i in range(2, ws.max_row + 1)]
            assert names == [s.name for s in schema.SETTINGS]
        else:
            assert ws.max_row == 1, sheet.name


def test_the_guide_has_a_worked_example_of_every_sheet(book):
    guide = book[schema.GUIDE_SHEET]
    cells = {}
    for row in guide.iter_rows():
        if row[0].value is not None:
            cells.setdefault(row[0].value, []).append([c.value for c in row])
    for sheet in schema.SHEETS:
        rows = EXAMPLES[sheet.name]
        assert rows, sheet.name
        for column in sheet.columns:
            for k, example in enumerate(rows[:3]):
                want = example.get(column.name)
                assert any(r[2 + k] == want for r in cells[column.name]), (sheet.name, column)


def test_the_worked_example_is_a_complete_input_that_the_tool_studies(tmp_path):
    for sheet in schema.SHEETS:
        assert {k for r in EXAMPLES[sheet.name] for k in r} <= set(sheet.names), sheet.name
    assert set(EXAMPLES) == {s.name for s in schema.SHEETS}
    system = read_system(write_xlsx(tmp_path / "example.xlsx", EXAMPLES))
    result = run_study(system)
    assert all("in_service" in w for w in result.warnings)  # the bypass left out, said so
    assert list(result.cases) == ["utility minimum"] and result.service_buses == ("SWBD-1",)
    assert (result.maximum.max_ka > 0).all()


def _pages(ws) -> int:
    """Pages a sheet prints on, from its geometry: columns packed greedily into the page
    width (the repeated columns on every page), rows into its height."""
    orientation = ws.page_setup.orientation
    area = pages.page(orientation)
    fitted = ws.sheet_properties.pageSetUpPr.fitToPage
    scale = pages.fit_scale(ws, orientation) if fitted else 1.0
    widths = [
        (ws.column_dimensions[get_column_letter(j)].width or 8.43)
        * sheetfit.PRINT_PT_PER_WIDTH
        * scale
        for j in range(1, ws.max_column + 1)
    ]
    repeated = widths[0] if ws.print_title_cols else 0.0
    across, used = 1, 0.0
    for w in widths:
        if used + w > area.width_pt + 0.5:
            across, used = across + 1, repeated + w
        else:
            used += w
    heights = [(ws.row_dimensions[i].height or 12.75) * scale for i in range(1, ws.max_row + 1)]
    tall = max(1, math.ceil(sum(heights) / area.height_pt))
    return across * tall


# The template's pages: 19 after #15; 27 with the sheets of #16 (see the test).
TOTAL_PAGES = 27


def test_the_template_prints_on_few_legible_pages(book):
    total = 0
    for ws in book.worksheets:
        orientation = ws.page_setup.orientation
        if ws.sheet_properties.pageSetUpPr.fitToPage:
            assert pages.fit_scale(ws, orientation) >= pages.LEGIBLE_SCALE, ws.title
            assert ws.page_setup.fitToHeight == 0
        else:
            assert ws.print_title_cols == "$A:$A" and ws.print_title_rows == "$1:$1"
        # the guide: 8 pages until #16 added the three-winding (and inverter) sheets, each
        # about a page of the guide's column list
        # and the three-winding sheet's 32 columns (three windings, three pairs) take 3 pages
        most = {schema.GUIDE_SHEET: 10, "three_winding_transformers": 3}.get(ws.title, 2)
        assert _pages(ws) <= most, ws.title
        total += _pages(ws)
    # it printed on 25, 18 of them header pieces and help cut across pages; 19 since the MV
    # breaker, IEC 60909 and generating unit columns of #15 (machines and study: 2 pages); with
    # the sheets of #16: grounding_transformers and inverters a page each, three-winding
    # transformers 3 (32 columns), and the guide a page longer for each
    assert total <= TOTAL_PAGES
