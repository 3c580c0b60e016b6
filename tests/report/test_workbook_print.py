"""The results workbook prints legibly: checked on the geometry openpyxl reads back.

Layout limits (legible scale, margins, line height) are common practice (no source); the
character widths are Arial's (sheetfit). The checks recompute what each sheet needs from the
cells read back, so a sheet that loses its row heights, widths or print titles fails.
"""

from __future__ import annotations

import io
import math

import pytest
from openpyxl import load_workbook

from faultcalc import read_system, run_study, sample_path
from faultcalc.cautions import SHORT_CAUTION
from faultcalc.report import sheetfit
from faultcalc.report import sheetpages as pages
from faultcalc.report.frontsheets import FAULT_WORDS
from faultcalc.report.sheettable import NUMBER_GAP_PT, shown
from faultcalc.report.workbook import build_workbook, write_workbook_to


@pytest.fixture(scope="module")
def system():
    return read_system(sample_path("double_ended_480v"))


@pytest.fixture(scope="module")
def result(system):
    return run_study(system, contributions="all")


@pytest.fixture(scope="module")
def png(system, result, tmp_path_factory):
    from faultcalc.diagram import draw, save

    path = tmp_path_factory.mktemp("diagram") / "one-line.png"
    save(draw(system, result), path)
    return path.read_bytes()


@pytest.fixture(scope="module")
def book(result, png, tmp_path_factory):
    path = tmp_path_factory.mktemp("book") / "r.xlsx"
    write_workbook_to(result, path, diagram_png=png)
    return load_workbook(path)


def _width(ws, letter: str) -> float:
    return ws.column_dimensions[letter].width or 8.43


def _tables(book):
    """The sheets holding a table under a header row (not the text, label or picture ones)."""
    return [ws for ws in book.worksheets if ws.print_title_rows]


# -- arithmetic of the measurements, by hand -------------------------------------------------


def test_text_widths_and_wrapped_lines_by_hand():
    # 'n' is 556/1000 em: four at 10 pt are 22.24 pt; a space is 2.78 pt.
    assert sheetfit.text_width_pt("nnnn") == pytest.approx(22.24)
    assert sheetfit.text_width_pt("nnnn nnnn") == pytest.approx(47.26)
    # width 10 holds 10 x 5.25 - 4 = 48.5 pt: one line; width 9 (43.25 pt): two.
    assert sheetfit.lines_needed("nnnn nnnn", 10) == 1
    assert sheetfit.lines_needed("nnnn nnnn", 9) == 2
    # an indent step takes 9 pt: 39.5 pt left, two lines again
    assert sheetfit.lines_needed("nnnn nnnn", 10, indent=1) == 2
    # a word longer than the line is broken: 20 n = 111.2 pt over 48.5 pt lines = 3 lines
    assert sheetfit.lines_needed("n" * 20, 10) == 3
    assert sheetfit.lines_needed("a\nb", 10) == 2
    assert sheetfit.row_height_pt(2) == pytest.approx(2 * 10 * 1.28 + 3)


def test_a_long_title_is_cut_after_a_word_to_fit_the_page_header():
    title = "Plant " + "switchboard " * 30
    cut = pages.fitted(title, 300, 8)
    assert cut.endswith(" ...") and sheetfit.text_width_pt(cut, 8) <= 300
    assert cut[:-4].split(" ")[-1] == "switchboard"  # after a whole word


# -- every sheet ------------------------------------------------------------------------------


def test_every_font_of_the_workbook_names_the_one_face(book):
    assert {f.name for f in book._fonts} == {sheetfit.FACE}  # bold and italic included
    for ws in book.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                if cell.value is not None:
                    assert cell.font.name == sheetfit.FACE, (ws.title, cell.coordinate)


def test_header_and_footer_never_run_into_each_other(book):
    for ws in book.worksheets:
        orientation = ws.page_setup.orientation
        width = pages.page(orientation).width_pt
        footer, number = ws.oddFooter.left, ws.oddFooter.right
        assert footer.text == SHORT_CAUTION and "\n" not in footer.text
        assert number.text == "page &P of &N"
        caution_and_number = sheetfit.text_width_pt(footer.text + "page 999 of 999", footer.size)
        assert caution_and_number + 24 <= width, ws.title
        assert footer.size >= pages.MIN_FOOTER_PT
        header = ws.oddHeader.left.text.replace("&&", "&")
        right = ws.oddHeader.right.text
        assert sheetfit.text_width_pt(header + right, ws.oddHeader.left.size) + 24 <= width
        assert {footer.font, number.font, ws.oddHeader.left.font} == {"Arial,Regular"}
        # the footer sits in the bottom margin, clear of the table
        margins = ws.page_margins
        assert margins.bottom - margins.footer >= 2 * footer.size / 72


def test_every_sheet_is_fitted_only_where_it_stays_legible(book):
    for ws in book.worksheets:
        orientation = ws.page_setup.orientation
        assert orientation in ("portrait", "landscape"), ws.title
        if ws.sheet_properties.pageSetUpPr.fitToPage:
            assert ws.page_setup.fitToWidth == 1, ws.title
            if ws.title.startswith("Label") or ws.title == "One-line":
                continue  # one page by design; their widths fit at full size (below)
            assert ws.page_setup.fitToHeight == 0, ws.title  # as many pages tall as needed
            scale = pages.page(orientation).width_pt / pages.sheet_width_pt(ws)
            assert scale >= pages.LEGIBLE_SCALE, ws.title
        else:
            assert ws.page_setup.scale in (None, 100), ws.title


def test_wide_sheets_print_across_pages_with_the_titles_repeated(book):
    wide = [
        ws
        for ws in _tables(book)
        if pages.sheet_width_pt(ws) * pages.LEGIBLE_SCALE > pages.page("landscape").width_pt
    ]
    assert {"Fault currents", "Equipment duty", "Element impedances"} <= {w.title for w in wide}
    for ws in wide:
        assert not ws.sheet_properties.pageSetUpPr.fitToPage, ws.title
        assert ws.print_title_rows == "$1:$1", ws.title
        frozen = ws[ws.freeze_panes].column - 1
        assert ws.print_title_cols == f"$A:${'AB'[frozen - 1]}", ws.title
        assert ws["A1"].value in ("Bus", "Element", "Case", "Cable"), ws.title


def test_header_words_are_never_broken(book):
    for ws in _tables(book):
        for cell in ws[1]:
            if not cell.value:
                continue
            room = sheetfit.room_pt(_width(ws, cell.column_letter), cell.alignment.indent)
            # a line may end after a space or a hyphen, never inside a word
            for word in cell.value.replace("-", "- ").split():
                assert sheetfit.text_width_pt(word, bold=True) <= room, (ws.title, word)


def test_wrapped_cells_have_rows_tall_enough(book):
    checked = 0
    for ws in book.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                if not (isinstance(cell.value, str) and cell.alignment.wrap_text):
                    continue
                if any(cell.coordinate in r for r in ws.merged_cells.ranges):
                    continue  # notes under a table: checked below
                size = cell.font.size or sheetfit.BODY_PT
                lines = sheetfit.lines_needed(
                    cell.value,
                    _width(ws, cell.column_letter),
                    size,
                    bool(cell.font.b),
                    int(cell.alignment.indent),
                )
                height = ws.row_dimensions[cell.row].height
                assert height is not None and height >= lines * size * 1.2, (
                    ws.title,
                    cell.coordinate,
                )
                checked += 1
    assert checked > 100


def test_notes_under_tables_fit_their_merged_width_and_page(book):
    notes = 0
    for ws in book.worksheets:
        for merged in ws.merged_cells.ranges:
            cell = ws.cell(merged.min_row, merged.min_col)
            if merged.min_row == 1:
                continue  # the basis sheet's title
            width = sum(
                _width(ws, ws.cell(1, j).column_letter)
                for j in range(merged.min_col, merged.max_col + 1)
            )
            lines = sheetfit.lines_needed(cell.value, width, indent=1)
            assert ws.row_dimensions[merged.min_row].height >= lines * 10 * 1.2
            # never starting in a column repeated on every page (it would print cut there)
            if ws.print_title_cols:
                assert merged.min_col > ws[ws.freeze_panes].column - 1, ws.title
            notes += 1
    assert notes >= 5


def test_numbers_never_touch_the_text_beside_them(book):
    for ws in _tables(book):
        for row in ws.iter_rows(min_row=1, max_row=ws.max_row):
            for cell in row:
                value = cell.value
                if isinstance(value, str) and value and cell.row >= 1:
                    if any(cell.coordinate in r for r in ws.merged_cells.ranges):
                        continue
                    right_aligned = cell.alignment.horizontal == "right"  # 'no path'
                    assert right_aligned or (
                        cell.alignment.horizontal == "left" and cell.alignment.indent >= 1
                    ), (ws.title, cell.coordinate)
                elif isinstance(value, int | float) and not isinstance(value, bool):
                    text = shown(value, cell.number_format)
                    need = sheetfit.text_width_pt(text, bold=bool(cell.font.b)) + NUMBER_GAP_PT
                    assert need <= _width(ws, cell.column_letter) * sheetfit.PT_PER_WIDTH, (
                        ws.title,
                        cell.coordinate,
                    )


# -- the Summary --------------------------------------------------------------------------------


def test_summary_is_first_one_page_wide_with_the_header_repeated(book):
    ws = book.worksheets[0]
    assert ws.title == "Summary"
    assert ws.sheet_properties.pageSetUpPr.fitToPage
    assert (ws.page_setup.fitToWidth, ws.page_setup.fitToHeight) == (1, 0)
    assert ws.print_title_rows == "$1:$1"
    assert pages.fit_scale(ws, ws.page_setup.orientation) >= pages.LEGIBLE_SCALE
    assert [c.value for c in ws[1]][:6] == [
        "Bus",
        "Description",
        "Nominal kV",
        "Maximum available, kA",
        "Fault type giving it",
        "Case giving it",
    ]


def test_summary_values_are_the_results_maximum(book, result):
    ws = book["Summary"]
    header = [c.value for c in ws[1]]
    col = {h: j for j, h in enumerate(header, start=1)}
    rows = list(result.maximum.itertuples(index=False))
    assert len(rows) == len(result.buses)
    for i, r in enumerate(rows, start=2):
        assert ws.cell(i, col["Bus"]).value == r.bus
        assert ws.cell(i, col["Nominal kV"]).value == pytest.approx(r.kv, rel=1e-12)
        assert ws.cell(i, col["Maximum available, kA"]).value == pytest.approx(r.max_ka)
        assert ws.cell(i, col["Maximum available, kA"]).font.b
        assert ws.cell(i, col["Fault type giving it"]).value == FAULT_WORDS[r.max_fault]
        case = ws.cell(i, col["Case giving it"]).value
        assert case == ("base case" if r.max_case == "base" else r.max_case)
        assert ws.cell(i, col["X/R in that case"]).value == pytest.approx(r.xr)
        assert ws.cell(i, col["Worst peak ip, kA"]).value == pytest.approx(r.ip_ka)
        status = ws.cell(i, col["Worst duty status"]).value
        assert status == (None if r.duty_status == "no rating given" else r.duty_status)
    # the maximum is at least each of the four base-case currents of the bus
    base = result.buses.set_index("bus")
    for i, r in enumerate(rows, start=2):
        four = base.loc[r.bus, ["i3ph_ka", "islg_ka", "ill_ka", "illg_ka"]].astype(float)
        assert ws.cell(i, col["Maximum available, kA"]).value >= four.max() - 1e-9


def test_a_summary_of_a_big_study_says_so_on_the_summary_sheet(result, tmp_path):
    path = tmp_path / "s.xlsx"
    write_workbook_to(result, path, summary_of="r-buses.csv")
    ws = load_workbook(path)["Summary"]
    texts = [c for row in ws.iter_rows(values_only=True) for c in row if isinstance(c, str)]
    assert any("r-buses.csv" in t for t in texts)


# -- the One-line sheet -------------------------------------------------------------------------


def test_the_diagram_is_on_its_own_sheet_after_the_summary(book, png):
    from PIL import Image

    assert book.sheetnames[:3] == ["Summary", "One-line", "Fault currents"]
    ws = book["One-line"]
    assert "One-line diagram" in ws["A1"].value
    assert len(ws._images) == 1
    picture = ws._images[0]
    drawn = Image.open(io.BytesIO(png))
    dpi = drawn.info["dpi"][0]
    area = pages.page(ws.page_setup.orientation)
    emu_per_pt = 12700
    shown_w = picture.anchor.ext.width / emu_per_pt
    shown_h = picture.anchor.ext.height / emu_per_pt
    top = ws.row_dimensions[1].height + ws.row_dimensions[2].height  # the note, a blank row
    assert shown_w <= area.width_pt + 0.5 and shown_h + top <= area.height_pt + 0.5
    natural = drawn.size[0] * 72 / dpi
    assert shown_w <= natural + 0.5  # shrunk to the page, never enlarged
    assert shown_h / shown_w == pytest.approx(drawn.size[1] / drawn.size[0], rel=1e-3)
    if shown_w < natural - 1:
        assert f"{shown_w / natural:.0%}" in ws["A1"].value
    # upright or across, whichever shows it larger
    other = pages.page("portrait" if ws.page_setup.orientation == "landscape" else "landscape")
    assert (
        shown_w / natural >= min(1, other.width_pt / natural)
        or shown_h / (drawn.size[1] * 72 / dpi)
        >= min(1, (other.height_pt - top) / (drawn.size[1] * 72 / dpi)) - 1e-6
    )


def test_no_diagram_no_sheet_and_a_bad_picture_is_said_not_raised(result):
    assert "One-line" not in build_workbook(result).sheetnames
    book = build_workbook(result, diagram_png=b"not a picture")
    ws = book["One-line"]
    assert "could not be included" in ws["A1"].value and not ws._images


# -- the Contributions sheet --------------------------------------------------------------------


def test_contributions_say_at_which_voltage_each_current_is(book, result):
    ws = book["Contributions"]
    header = [c.value for c in ws[1]]
    at = header.index("Currents at kV (line-line)")
    kv = dict(zip(result.buses.bus, result.buses.kv, strict=True))
    rows = [[c.value for c in r] for r in ws.iter_rows(min_row=2) if r[2].value]
    rows = [r for r in rows if r[1] in FAULT_WORDS.values()]
    assert len(rows) == len(result.contributions)
    sources = {"source", "generator", "induction motor", "synchronous motor"}
    for r in rows:
        faulted, kind, from_bus = r[0], r[3], r[4]
        assert r[at] == kv[from_bus if kind in sources else faulted]


def test_a_current_referred_by_the_voltages_the_sheet_names_adds_up():
    # The invented plant's utility feeds its 480 V switchboard only through XF-1, so for a
    # three-phase fault there the utility's current, referred by the two voltages the sheet
    # names, is the transformer's current at the faulted bus.
    result = run_study(read_system(sample_path("plant_480v")), contributions="SWBD-1")
    ws = build_workbook(result)["Contributions"]
    header = [c.value for c in ws[1]]
    at = header.index("Currents at kV (line-line)")
    current = header.index("Current, kA sym (largest phase)")
    by = {(r[1].value, r[2].value): [c.value for c in r] for r in ws.iter_rows(min_row=2)}
    utility, transformer = by[("3-phase", "UTILITY")], by[("3-phase", "XF-1")]
    assert (utility[at], transformer[at]) == (12.47, 0.48)
    referred = utility[current] * utility[at] / transformer[at]
    assert referred == pytest.approx(transformer[current], rel=1e-6)
    assert not math.isclose(utility[current], transformer[current], rel_tol=0.1)
