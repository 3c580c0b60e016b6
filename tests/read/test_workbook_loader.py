"""The workbook loader: python-calamine's values with the light pass beside it, against openpyxl.

The reference for every cell value is openpyxl 3.1 reading the same file (``read_only``,
``data_only``: the careful reader before the compiled one), with what the loader adds on top
of it as it always did: a number in a cell whose format holds '%' is a PercentCell, a formula
cell with no saved value is a FormulaCell holding the formula openpyxl reads without
``data_only``. The workbooks are the bundled samples, the random networks of tests/networks.py
(invented data), one written by openpyxl with untidy cells and one written part by part in the
form Excel saves (shared strings, styles, shared formulas); values in them are invented.
"""

from __future__ import annotations

import datetime as dt
import random
import zipfile
from pathlib import Path

import openpyxl
import pytest
from openpyxl.cell.rich_text import CellRichText, TextBlock
from openpyxl.cell.text import InlineFont

from faultcalc import InputError, read_system
from faultcalc.read import sheetbytes, tables, xlsx, xlsxparts
from faultcalc.read.cells import FORMULA_MESSAGE
from faultcalc.read.marked import FormulaCell, PercentCell
from tests.conftest import REPO, write_xlsx
from tests.networks import random_sheets

SAMPLES = REPO / "sample_systems"
MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
BIG = 21 << 20  # above 20 MB, as BIG in test_hostile_workbooks.py


def reference(path: Path) -> dict[str, dict[tuple[int, int], object]]:
    """The non-blank cells of every sheet the tool reads, as openpyxl gives them."""
    values = openpyxl.load_workbook(path, read_only=True, data_only=True)
    formulas = openpyxl.load_workbook(path, data_only=False)
    found = {}
    for ws in values.worksheets:
        if ws.title.strip().lower() not in tables.READ_SHEETS:
            continue
        ws.reset_dimensions()
        cells = {}
        for r, row in enumerate(ws.iter_rows(), start=1):
            for c, cell in enumerate(row, start=1):
                value = cell.value
                if value is None:
                    text = formulas[ws.title].cell(r, c).value
                    if isinstance(text, str) and text.startswith("="):
                        value = FormulaCell(text)
                elif (
                    isinstance(value, (int, float))
                    and not isinstance(value, bool)
                    and "%" in (cell.number_format or "")
                ):
                    value = PercentCell(value)
                if not tables.is_blank(value):
                    cells[(r, c)] = value
        found[ws.title.strip().lower()] = cells
    return found


def loaded(path: Path, notes: list[str] | None = None):
    found = {}
    for name, rows in xlsx.load_workbook_rows(path, [] if notes is None else notes).items():
        if rows is not None:
            found[name] = {
                (r, c): v
                for r, cells in rows
                for c, v in enumerate(cells, 1)
                if not tables.is_blank(v)
            }
    return found


def same(a, b) -> bool:
    """Equal cells: the same type, except that a whole number may come as int or float."""
    numbers = (int, float)
    if type(a) in numbers and type(b) in numbers:
        return a == b
    return type(a) is type(b) and a == b


@pytest.fixture
def no_expat_scan(monkeypatch):
    """Fail if a sheet is read by the expat scan: what is asserted came from the light pass."""

    def refused(archive, facts, budget):
        raise AssertionError(f"sheet {facts.name!r} went to the expat scan")

    monkeypatch.setattr(xlsxparts, "scan_sheet", refused)


def untidy_book(path: Path) -> Path:
    """Cells of every kind openpyxl writes, a table starting at C3 (invented values)."""
    book = openpyxl.Workbook()
    ws = book.active
    ws.title = "buses"
    ws.append([])
    ws["C3"], ws["D3"], ws["E3"] = "bus", "kv", "note"
    ws["C4"], ws["D4"], ws["E4"] = " p ", 0.48, True
    ws["C5"], ws["D5"], ws["E5"] = "x", dt.datetime(2024, 5, 1, 12, 30), dt.date(2024, 5, 1)
    ws["C6"], ws["D6"], ws["E6"] = dt.time(7, 15), dt.timedelta(hours=30), "=1/0"
    ws["C7"] = CellRichText(["ab", TextBlock(InlineFont(b=True), "cd ")])
    ws["D7"] = 0.0575
    ws["D7"].number_format = "0.00%"
    ws["E7"] = 5
    ws["E7"].number_format = '0.0" kV"'
    ws["C8"], ws["D8"], ws["E8"] = "a\nb", -0.0, 1e-300
    ws["C9"], ws["D9"], ws["E9"] = "x_x000D_y", 12345678901234567890, "=SUM(D4:D5)"
    ws["C11"] = 7
    ws["C11"].number_format = "0%"
    ws["D11"], ws["E11"] = "  ", "tab\t"
    cables = book.create_sheet("cables")
    cables.append(["cable", "length_ft"])
    for k in range(30):
        cables.append([f"C{k}", k * 1.5])
    book.save(path)
    return path


STYLES = (
    '<numFmts count="2"><numFmt numFmtId="164" formatCode="0.0%"/>'
    '<numFmt numFmtId="165" formatCode="0.00&quot; kV&quot;"/></numFmts>'
    '<fonts count="1"><font><sz val="11"/><name val="Calibri"/></font></fonts>'
    '<fills count="1"><fill><patternFill patternType="none"/></fill></fills>'
    '<borders count="1"><border/></borders>'
    '<cellStyleXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0"/></cellStyleXfs>'
    '<cellXfs count="6"><xf numFmtId="0" fontId="0" fillId="0" borderId="0" xfId="0"/>'
    '<xf numFmtId="164" fontId="0" fillId="0" borderId="0" xfId="0" applyNumberFormat="1"/>'
    '<xf numFmtId="14" fontId="0" fillId="0" borderId="0" xfId="0" applyNumberFormat="1"/>'
    '<xf numFmtId="165" fontId="0" fillId="0" borderId="0" xfId="0" applyNumberFormat="1"/>'
    '<xf numFmtId="10" fontId="0" fillId="0" borderId="0" xfId="0" applyNumberFormat="1"/>'
    '<xf numFmtId="2" fontId="0" fillId="0" borderId="0" xfId="0" applyNumberFormat="1"/>'
    '</cellXfs><cellStyles count="1"><cellStyle name="Normal" xfId="0" builtinId="0"/></cellStyles>'
)
STRINGS = [
    "<t>bus</t>",
    "<t>kv</t>",
    "<t>z_pct</t>",
    "<t>note</t>",
    '<t xml:space="preserve"> LV </t>',
    '<r><t>ri</t></r><r><rPr><b/></rPr><t>ch</t></r><rPh sb="0" eb="1"><t>PH</t></rPh>',
    "<t>P&amp;Q</t>",
    "<t/>",
]
# A sheet as Excel saves one: spans, prefixed attributes, shared strings, styled numbers, a
# shared formula whose cells hold no value, error, formula-string, boolean and ISO-date cells,
# inline text with spaces and no xml:space, a hidden row and column, a merged range.
SHEET = (
    '<sheetPr/><dimension ref="A1:E9"/><sheetViews><sheetView workbookViewId="0"/></sheetViews>'
    '<sheetFormatPr defaultRowHeight="15"/>'
    '<cols><col min="4" max="4" width="9" hidden="1" customWidth="1"/>'
    '<col min="5" max="5" width="12" customWidth="1"/></cols><sheetData>'
    '<row r="1" spans="1:5" x14ac:dyDescent="0.25"><c r="A1" t="s"><v>0</v></c>'
    '<c r="B1" t="s"><v>1</v></c><c r="C1" t="s"><v>2</v></c><c r="D1" t="s"><v>3</v></c></row>'
    '<row r="2" spans="1:5"><c r="A2" t="s"><v>4</v></c><c r="B2" s="5"><v>0.48</v></c>'
    '<c r="C2" s="1"><v>5.7500000000000002E-2</v></c><c r="D2" t="s"><v>5</v></c>'
    '<c r="E2" s="3"><v>13.8</v></c></row>'
    '<row r="3" spans="1:5" hidden="1"><c r="A3" t="s"><v>6</v></c><c r="B3"><v>-2.5</v></c>'
    '<c r="C3" s="4"><v>0.06</v></c><c r="D3" t="e"><f>1/0</f><v>#DIV/0!</v></c>'
    '<c r="E3" t="str"><f>A3&amp;"x"</f><v>P&amp;Qx</v></c></row>'
    '<row r="4" spans="1:5"><c r="A4" t="inlineStr"><is><t> q </t></is></c>'
    '<c r="B4"><f t="shared" ref="B4:B6" si="0">B2*2</f></c><c r="C4" s="2"><v>45413</v></c>'
    '<c r="D4" t="b"><v>1</v></c><c r="E4" t="d"><v>2024-05-01T10:00:00</v></c></row>'
    '<row r="5" spans="1:5"><c r="A5" t="inlineStr"><is><t>x_x0041_y</t></is></c>'
    '<c r="B5"><f t="shared" si="0"/></c><c r="C5"><v>1.5E+3</v></c><c r="D5" t="e"><v>#N/A</v></c>'
    '<c r="E5" t="s"><v>7</v></c></row>'
    '<row r="6" spans="1:5"><c r="A6" s="1"/><c r="B6"><f t="shared" si="0"/><v>0.96</v></c>'
    '<c r="C6" s="1"><v>12</v></c></row>'
    '<row r="9" spans="1:5"><c r="B9" s="5"><v>7</v></c></row>'
    '</sheetData><mergeCells count="1"><mergeCell ref="E5:E6"/></mergeCells>'
    '<pageMargins left="0.7" right="0.7" top="0.75" bottom="0.75" header="0.3" footer="0.3"/>'
)


def excel_like_book(path: Path, sheet: str = SHEET, strings=STRINGS) -> Path:
    ct = "application/vnd.openxmlformats-officedocument.spreadsheetml"
    parts = {
        "[Content_Types].xml": (
            '<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
            '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.'
            'relationships+xml"/><Default Extension="xml" ContentType="application/xml"/>'
            f'<Override PartName="/xl/workbook.xml" ContentType="{ct}.sheet.main+xml"/>'
            f'<Override PartName="/xl/worksheets/sheet1.xml" ContentType="{ct}.worksheet+xml"/>'
            f'<Override PartName="/xl/styles.xml" ContentType="{ct}.styles+xml"/>'
            f'<Override PartName="/xl/sharedStrings.xml" ContentType="{ct}.sharedStrings+xml"/>'
            "</Types>"
        ),
        "_rels/.rels": (
            '<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
            f'<Relationship Id="rId1" Type="{REL}/officeDocument" Target="xl/workbook.xml"/>'
            "</Relationships>"
        ),
        "xl/workbook.xml": (
            f'<workbook xmlns="{MAIN}" xmlns:r="{REL}"><workbookPr/><sheets>'
            '<sheet name="buses" sheetId="1" r:id="rId1"/></sheets></workbook>'
        ),
        "xl/_rels/workbook.xml.rels": (
            '<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
            f'<Relationship Id="rId1" Type="{REL}/worksheet" Target="worksheets/sheet1.xml"/>'
            f'<Relationship Id="rId2" Type="{REL}/styles" Target="styles.xml"/>'
            f'<Relationship Id="rId3" Type="{REL}/sharedStrings" Target="sharedStrings.xml"/>'
            "</Relationships>"
        ),
        "xl/styles.xml": f'<styleSheet xmlns="{MAIN}">{STYLES}</styleSheet>',
        "xl/sharedStrings.xml": f'<sst xmlns="{MAIN}">'
        + "".join(f"<si>{s}</si>" for s in strings)
        + "</sst>",
        "xl/worksheets/sheet1.xml": (
            f'<worksheet xmlns="{MAIN}" xmlns:r="{REL}" xmlns:x14ac="http://schemas.microsoft.'
            f'com/office/spreadsheetml/2009/9/ac">{sheet}</worksheet>'
        ),
    }
    declaration = '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, xml in parts.items():
            archive.writestr(name, declaration + xml)
    return path


def books(tmp: Path) -> list[Path]:
    random_books = [
        write_xlsx(tmp / f"random{seed}.xlsx", random_sheets(seed, n_mv=30, n_lv=120))
        for seed in (3, 11)
    ]
    return [
        SAMPLES / "plant_480v.xlsx",
        SAMPLES / "double_ended_480v.xlsx",
        untidy_book(tmp / "untidy.xlsx"),
        excel_like_book(tmp / "excel.xlsx"),
        *random_books,
    ]


def test_both_loaders_give_the_same_cells(tmp_path, no_expat_scan):
    for path in books(tmp_path):
        expected, found = reference(path), loaded(path)
        assert found.keys() == expected.keys(), path.name
        for name, cells in expected.items():
            assert found[name].keys() == cells.keys(), (path.name, name)
            wrong = {
                k: (v, found[name][k]) for k, v in cells.items() if not same(v, found[name][k])
            }
            assert not wrong, (path.name, name, wrong)


@pytest.mark.parametrize(
    "change",
    [
        lambda x: x,
        lambda x: x.replace('<c r="B2" s="5">', '<c r="B2" s="5" t="n">'),
        lambda x: x.replace('<c r="D3" t="e">', '<c r="D3" s="4" t="e">'),
        lambda x: x.replace('<c r="C2" s="1">', '<c r="C2" t="n" s="1">'),
        lambda x: x.replace('<c r="C6" s="1">', '<c r="C6" cm="1" s="1">'),  # another attribute
    ],
    ids=["as Excel writes", "s then t", "s then an error type", "t then s", "another attribute"],
)
def test_cell_types_and_styles_read_in_place_or_anywhere(tmp_path, no_expat_scan, change):
    # A cell tag's t and s attributes are read in place after its reference when they are
    # all it holds, else wherever they are in the tag: the same, and what openpyxl reads.
    path = excel_like_book(tmp_path / "excel.xlsx", sheet=change(SHEET))
    expected, found = reference(path)["buses"], loaded(path)["buses"]
    assert found.keys() == expected.keys()
    assert all(same(v, found[k]) for k, v in expected.items())
    with zipfile.ZipFile(path) as archive:
        grid = sheetbytes.prepare(archive.read("xl/worksheets/sheet1.xml"), 1_048_576, 16_384, 8)
    tag_end = grid.tags.ends(grid.cell_index)
    anywhere = sheetbytes._attributes_anywhere(
        grid.tags.a, grid.body, grid.closing, grid.cells, tag_end, 6
    )
    in_place = sheetbytes._attributes_in_place(grid, tag_end, 6)
    if "cm=" in change(SHEET):
        assert in_place is None
    else:
        assert all((x == y).all() for x, y in zip(in_place, anywhere, strict=True))


def test_the_excel_like_book_says_what_values_do_not(tmp_path, no_expat_scan):
    # What the sheet above holds, as its XML says: the merge, the hidden row 3 and column D.
    notes: list[str] = []
    cells = loaded(excel_like_book(tmp_path / "excel.xlsx"), notes)["buses"]
    assert cells[(2, 3)] == 0.0575 and type(cells[(2, 3)]) is PercentCell  # format 0.0%
    assert type(cells[(6, 3)]) is PercentCell and type(cells[(3, 3)]) is PercentCell
    assert cells[(4, 2)] == "=B2*2" and cells[(5, 2)] == "=B3*2"  # the shared formula, moved
    assert type(cells[(5, 2)]) is FormulaCell and cells[(6, 2)] == 0.96  # this one was saved
    assert cells[(3, 4)] == "#DIV/0!" and cells[(5, 4)] == "#N/A"  # error cells keep their text
    assert cells[(4, 1)] == " q "  # untrimmed: the reader says it removed the spaces
    assert any("E5:E6 are merged" in n for n in notes)
    assert any("hidden row 3, column D" in n for n in notes)


def _untidy_sample(path: Path, big: bool) -> Path:
    """The sample with a percent-formatted z_pct, a formula without a value, a hidden row and a
    merged range (openpyxl writes the formula and saves no value for it)."""
    book = openpyxl.load_workbook(SAMPLES / "plant_480v.xlsx")
    ws = book["transformers"]
    ws.cell(2, [c.value for c in ws[1]].index("z_pct") + 1, 0.0575).number_format = "0.00%"
    ws = book["buses"]
    ws.merge_cells("C4:C5")
    ws.row_dimensions[3].hidden = True
    ws = book["cables"]
    ws.cell(2, [c.value for c in ws[1]].index("length_ft") + 1, "=50*2")
    book.save(path)
    if big:
        with zipfile.ZipFile(path, "a") as archive:
            archive.writestr("xl/media/photo.bin", random.Random(1).randbytes(BIG))
        assert path.stat().st_size > 20 << 20
    return path


@pytest.mark.parametrize("big", [False, True], ids=["small", "over 20 MB"])
def test_the_light_pass_finds_percent_formula_hidden_and_merged(tmp_path, no_expat_scan, big):
    path = _untidy_sample(tmp_path / "untidy.xlsx", big)
    with pytest.raises(InputError) as info:
        read_system(path)
    (problem,) = [p for p in info.value.problems if p.message == FORMULA_MESSAGE]
    assert (problem.sheet, problem.row, problem.column, problem.value) == (
        "cables",
        2,
        "length_ft",
        "=50*2",
    )
    cells = loaded(path)
    header = {v: c for (r, c), v in cells["transformers"].items() if r == 1}
    value = cells["transformers"][(2, header["z_pct"])]
    assert type(value) is PercentCell and value == 0.0575  # shown as 5.75 %
    notes: list[str] = []
    loaded(path, notes)
    assert any("C4:C5 are merged" in n for n in notes)
    assert any("hidden row 3" in n for n in notes)


def test_an_empty_row_is_left_out_and_its_number_skipped(tmp_path, no_expat_scan):
    # An empty row inside the buses table, then one holding only spaces (blank too), and a
    # name cell of spaces in a row with values (read as blank: a located problem): every bus
    # keeps its name and its spreadsheet row.
    book = openpyxl.load_workbook(SAMPLES / "plant_480v.xlsx")
    ws = book["buses"]
    ws.insert_rows(4)
    book.save(tmp_path / "gap.xlsx")
    expected = [
        (b.bus, b.row + (b.row >= 4)) for b in read_system(SAMPLES / "plant_480v.xlsx").buses
    ]
    assert [(b.bus, b.row) for b in read_system(tmp_path / "gap.xlsx").buses] == expected
    ws["A4"] = "  "
    book.save(tmp_path / "spaces.xlsx")
    assert [(b.bus, b.row) for b in read_system(tmp_path / "spaces.xlsx").buses] == expected
    ws["A5"] = "   "
    book.save(tmp_path / "blank.xlsx")
    with pytest.raises(InputError) as info:
        read_system(tmp_path / "blank.xlsx")
    assert any(
        (p.sheet, p.row, p.column) == ("buses", 5, "bus") and "required" in p.message
        for p in info.value.problems
    )


def test_a_hidden_sheet_is_noted(tmp_path, no_expat_scan):
    book = openpyxl.load_workbook(SAMPLES / "plant_480v.xlsx")
    book["machines"].sheet_state = "hidden"
    book.save(tmp_path / "hidden.xlsx")
    warnings = read_system(tmp_path / "hidden.xlsx").warnings
    assert any("sheet 'machines' is hidden" in w for w in warnings)


def _sheet_changed(tmp_path: Path, change) -> Path:
    """The sample with its buses sheet (xl/worksheets/sheet2.xml) changed."""
    path = tmp_path / "changed.xlsx"
    with zipfile.ZipFile(SAMPLES / "plant_480v.xlsx") as src:
        with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as dst:
            for item in src.infolist():
                data = src.read(item.filename)
                if item.filename == "xl/worksheets/sheet2.xml":
                    data = change(data)
                dst.writestr(item.filename, data)
    return path


def _expat_scans(monkeypatch) -> list[str]:
    scanned: list[str] = []
    real = xlsxparts.scan_sheet

    def spy(archive, facts, budget):
        scanned.append(facts.name)
        return real(archive, facts, budget)

    monkeypatch.setattr(xlsxparts, "scan_sheet", spy)
    return scanned


def test_an_irregular_grid_goes_to_the_expat_scan(tmp_path, monkeypatch):
    # cells out of order: the light pass gives way, the expat scan's message is the one
    out_of_order = '<row r="90"><c r="C90"><v>1</v></c><c r="B90"><v>2</v></c></row>'
    path = _sheet_changed(
        tmp_path, lambda d: d.replace(b"</sheetData>", out_of_order.encode() + b"</sheetData>")
    )
    with zipfile.ZipFile(path) as archive, pytest.raises(sheetbytes.Irregular):
        sheetbytes.prepare(archive.read("xl/worksheets/sheet2.xml"), 1_048_576, 16_384, 8)
    scanned = _expat_scans(monkeypatch)
    with pytest.raises(InputError) as info:
        read_system(path)
    assert scanned == ["buses"]
    assert info.value.problems[0].message == (
        "cannot be read as an .xlsx workbook: sheet 'buses' (part xl/worksheets/sheet2.xml): "
        "cell B90 comes after column C of its row: cells out of order, which a spreadsheet "
        "program never writes; open the file in one and save it"
    )


@pytest.mark.parametrize(
    "change",
    [
        lambda d: d.replace(b"<sheetData>", b"<sheetData><!-- a note -->"),
        lambda d: d.replace(b' r="A', b' r="a'),  # lower-case references: openpyxl reads them
    ],
    ids=["a comment", "lower-case references"],
)
def test_another_form_is_read_the_careful_way(tmp_path, monkeypatch, change):
    path = _sheet_changed(tmp_path, change)
    expected = read_system(SAMPLES / "plant_480v.xlsx").buses
    scanned = _expat_scans(monkeypatch)
    assert read_system(path).buses == expected
    assert scanned == ["buses"]


def test_calamine_is_not_given_a_sheet_it_would_fill_to_the_last_cell(tmp_path, monkeypatch):
    # One cell in XFD1048576: calamine would build a grid of 17e9 positions (and end the
    # process); the sheet goes to the careful reader, which reads it row by row.
    stray = b'<row r="1048576"><c r="XFD1048576" t="inlineStr"><is><t> </t></is></c></row>'
    path = _sheet_changed(tmp_path, lambda d: d.replace(b"</sheetData>", stray + b"</sheetData>"))
    expected = read_system(SAMPLES / "plant_480v.xlsx").buses
    given: list[str] = []
    real = xlsx._Calamine.submit
    monkeypatch.setattr(xlsx._Calamine, "submit", lambda self, n: (given.append(n), real(self, n)))
    assert read_system(path).buses == expected
    assert "buses" not in given and "cables" in given


def test_calamine_is_not_given_a_sheet_with_a_prefixed_sheet_data_first(tmp_path, monkeypatch):
    # calamine matches element names without their prefix and reads the first sheetData it
    # meets: an empty <x:sheetData/> (the main namespace under a prefix) before the real one
    # gave it no cells, and one holding a cell at XFD1048576 made it fill 17e9 positions. Such
    # a sheet goes to the careful reader, which reads both as XML says.
    def prefixed(data: bytes) -> bytes:
        data = data.replace(b"<worksheet ", f'<worksheet xmlns:x="{MAIN}" '.encode(), 1)
        return data.replace(b"<sheetData>", b"<x:sheetData/><sheetData>", 1)

    path = _sheet_changed(tmp_path, prefixed)
    expected = read_system(SAMPLES / "plant_480v.xlsx").buses
    given: list[str] = []
    real = xlsx._Calamine.submit
    monkeypatch.setattr(xlsx._Calamine, "submit", lambda self, n: (given.append(n), real(self, n)))
    scanned = _expat_scans(monkeypatch)
    assert read_system(path).buses == expected
    assert "buses" not in given and "cables" in given and scanned == ["buses"]


def test_element_counts_are_expat_counts(tmp_path):
    # The light pass counts elements as expat does (the element budget is spent alike).
    from xml.parsers import expat

    for path in books(tmp_path)[:4]:
        with zipfile.ZipFile(path) as archive:
            for name in archive.namelist():
                if not name.endswith((".xml", ".rels")):
                    continue
                data = archive.read(name)
                starts: list[str] = []
                parser = expat.ParserCreate()
                parser.StartElementHandler = lambda tag, attrs, seen=starts: seen.append(tag)
                parser.Parse(data, True)
                assert sheetbytes.element_count(data) == len(starts), (path.name, name)


def test_a_document_type_in_the_shared_strings_is_refused(tmp_path):
    strings = ["<t>bus</t>"]
    path = excel_like_book(tmp_path / "dtd.xlsx", strings=strings)
    with zipfile.ZipFile(path) as src, zipfile.ZipFile(tmp_path / "b.xlsx", "w") as dst:
        for item in src.infolist():
            data = src.read(item.filename)
            if item.filename == "xl/sharedStrings.xml":
                data = data.replace(b"<sst", b'<!DOCTYPE sst [<!ENTITY a "b">]><sst', 1)
            dst.writestr(item.filename, data)
    with pytest.raises(InputError) as info:
        read_system(tmp_path / "b.xlsx")
    assert "part xl/sharedStrings.xml declares a document type" in info.value.problems[0].message
