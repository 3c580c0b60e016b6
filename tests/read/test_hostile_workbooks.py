"""Hostile and broken workbooks: a located input error, found quickly, never an internal error.

Each workbook is the bundled sample rewritten with zipfile. The sizes are chosen so that the
reader before these checks took minutes or more on them (one cell in column XFD: the whole grid
up to it was visited; 1000:1 parts under 10 MB were not checked), while the checks answer in
about a second. Bounds used: Excel's grid of 1,048,576 rows by 16,384 columns (Microsoft,
"Excel specifications and limits"); the other bounds are the tool's own (faultcalc/read/tables.py
and xlsxparts.py), each with its basis there.
"""

from __future__ import annotations

import random
import re
import zipfile
from pathlib import Path

import pytest

from faultcalc import InputError, read_system
from faultcalc.read import tables, xlsx
from faultcalc.read.cells import FORMULA_MESSAGE
from tests.conftest import REPO

SAMPLE = REPO / "sample_systems" / "plant_480v.xlsx"
MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
WORKSHEET_TYPE = "http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet"
WORKSHEET_CT = "application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"
STRINGS_CT = "application/vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"
BIG = 21 << 20  # above the 20 MB up to which a workbook was once read in full


def sheet_parts() -> dict[str, str]:
    """Sheet name -> zip member in the sample workbook."""
    with zipfile.ZipFile(SAMPLE) as z:
        book = z.read("xl/workbook.xml").decode()
        rels = z.read("xl/_rels/workbook.xml.rels").decode()
    targets = dict(re.findall(r'Target="/?([^"]+)" Id="(rId\d+)"', rels))
    by_id = {rid: target for target, rid in targets.items()}
    return {name: by_id[rid] for name, rid in re.findall(r'name="(\w+)"[^>]*r:id="(rId\d+)"', book)}


def build(path: Path, change=None, add=None, sheets=(), stored=None, strings=None) -> Path:
    """The sample with parts changed (member -> function of its bytes), parts added (deflated),
    extra worksheets [(name, xml)], parts stored uncompressed and a shared-strings part."""
    change, add, stored = change or {}, add or {}, stored or {}
    extra_types, extra_rels, extra_sheets = [], [], []
    for k, (name, xml) in enumerate(sheets, start=100):
        member = f"xl/worksheets/extra{k}.xml"
        add[member] = xml
        extra_types.append(f'<Override PartName="/{member}" ContentType="{WORKSHEET_CT}"/>')
        extra_rels.append(f'<Relationship Type="{WORKSHEET_TYPE}" Target="/{member}" Id="rX{k}"/>')
        extra_sheets.append(f'<sheet name="{name}" sheetId="{k}" state="visible" r:id="rX{k}"/>')
    if strings is not None:
        add["xl/sharedStrings.xml"] = strings
        extra_types.append(
            f'<Override PartName="/xl/sharedStrings.xml" ContentType="{STRINGS_CT}"/>'
        )

    def insert(before: str, text: list[str]):
        return lambda data: data.replace(before.encode(), "".join(text).encode() + before.encode())

    steps = {
        "[Content_Types].xml": insert("</Types>", extra_types),
        "xl/_rels/workbook.xml.rels": insert("</Relationships>", extra_rels),
        "xl/workbook.xml": insert("</sheets>", extra_sheets),
    }
    with zipfile.ZipFile(SAMPLE) as src, zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as dst:
        for item in src.infolist():
            data = steps.get(item.filename, lambda d: d)(src.read(item.filename))
            data = change.get(item.filename, lambda d: d)(data)
            dst.writestr(item.filename, data)
        for member, data in add.items():
            dst.writestr(member, data)
        for member, data in stored.items():
            dst.writestr(member, data, compress_type=zipfile.ZIP_STORED)
    return path


def big_part() -> dict[str, bytes]:
    """An incompressible stored part that makes the workbook larger than 20 MB, cheaply."""
    return {"xl/media/photo.bin": random.Random(1).randbytes(BIG)}


def refusal(path: Path) -> str:
    with pytest.raises(InputError) as info:
        read_system(path)
    problems = info.value.problems
    assert len(problems) == 1 and problems[0].sheet == path.name, problems
    assert "Traceback" not in problems[0].message
    return problems[0].message


def in_sheet(rows_xml: str) -> callable:
    """Put extra XML at the end of a sheet's sheetData."""
    return lambda data: data.replace(b"</sheetData>", rows_xml.encode() + b"</sheetData>")


# --- the decompression bound, on every part -------------------------------------------------


def test_many_small_parts_compressing_1000_to_1(tmp_path):
    # 2,000 sheets of 210 kB of empty rows, each deflating about 500 to 1: a file of 1 MB
    # that unpacks to 420 MB (the reader used to parse every sheet: minutes); then parts that
    # are not sheets, deflating about 900 to 1.
    xml = f'<worksheet xmlns="{MAIN}"><sheetData>{"<row/>" * 35_000}</sheetData></worksheet>'
    path = build(tmp_path / "parts.xlsx", sheets=[(f"s{k}", xml.encode()) for k in range(2_000)])
    assert path.stat().st_size < 2 << 20
    message = refusal(path)
    assert "xl/worksheets/extra" in message and "decompression bomb" in message
    junk = {f"customXml/item{k}.xml": b"<a/>" * 50_000 for k in range(100)}
    assert "customXml/item0.xml" in refusal(build(tmp_path / "junk.xlsx", add=junk))


def test_dense_small_elements_are_bounded(tmp_path):
    # Under the per-part ratio, but many more XML elements per byte than any workbook saved by
    # a spreadsheet program (measured up to 1.45 a byte; see tables.MAX_XML_ELEMENTS_PER_BYTE).
    rng = random.Random(2)
    rows = "".join(
        "<row>" + "<c><v>1</v></c>" * 20 + f"</row><!--{rng.getrandbits(16):04x}-->"
        for _ in range(60_000)
    )
    path = build(tmp_path / "dense.xlsx", change={sheet_parts()["cases"]: in_sheet(rows)})
    with zipfile.ZipFile(path) as z:
        worst = max(i.file_size / i.compress_size for i in z.infolist() if i.compress_size)
    assert worst < tables.MAX_COMPRESSION_RATIO  # the element bound refuses it, not the ratio
    assert "XML elements" in refusal(path)


@pytest.mark.parametrize("count, compiled", [("1", True), ("4000000000", False)])
def test_a_count_of_strings_beyond_the_part_is_not_given_to_calamine(
    tmp_path, monkeypatch, count, compiled
):
    # calamine reserves room for the shared strings' stated uniqueCount before it reads one:
    # 4e9 asked for 96 GB and ended the process. Such a workbook is read the careful way.
    strings = f'<sst xmlns="{MAIN}" count="1" uniqueCount="{count}"><si><t>x</t></si></sst>'
    path = build(tmp_path / "count.xlsx", strings=strings.encode())
    expected = read_system(SAMPLE).buses
    opened: list[bool] = []
    real = xlsx._Calamine

    class Calamine(real):
        def __init__(self, data):
            opened.append(True)
            if not compiled:
                raise AssertionError("calamine was given the workbook")
            super().__init__(data)

    monkeypatch.setattr(xlsx, "_Calamine", Calamine)
    assert read_system(path).buses == expected
    assert opened == ([True] if compiled else [])


# --- malformed XML: the part is named, in small and large workbooks alike --------------------


def truncated(data: bytes) -> bytes:
    return data[: len(data) - 20]


STRINGS = f'<sst xmlns="{MAIN}" count="1" uniqueCount="1"><si><t>x</t></si></sst>'.encode()


@pytest.mark.parametrize("large", [False, True], ids=["small", "over 20 MB"])
@pytest.mark.parametrize(
    "member, label",
    [
        ("buses", "sheet 'buses' (part xl/worksheets/sheet2.xml)"),
        ("cases", "sheet 'cases' (part xl/worksheets/sheet7.xml)"),
        ("xl/sharedStrings.xml", "part xl/sharedStrings.xml"),
        ("xl/styles.xml", "part xl/styles.xml"),
        ("xl/workbook.xml", "part xl/workbook.xml"),
        ("xl/_rels/workbook.xml.rels", "part xl/_rels/workbook.xml.rels"),
        ("[Content_Types].xml", "part [Content_Types].xml"),
        ("docProps/core.xml", "part docProps/core.xml"),
    ],
)
def test_malformed_xml_names_its_part(tmp_path, member, label, large):
    member = sheet_parts().get(member, member)
    change = {} if member == "xl/sharedStrings.xml" else {member: truncated}
    strings = truncated(STRINGS) if member == "xl/sharedStrings.xml" else None
    stored = big_part() if large else None
    path = build(tmp_path / "broken.xlsx", change=change, strings=strings, stored=stored)
    assert (path.stat().st_size > 20 << 20) == large
    message = refusal(path)
    assert label in message and "is not well-formed XML" in message and "line 1" in message


def test_a_sheet_the_tool_does_not_read_is_not_parsed(tmp_path):
    path = build(tmp_path / "notes.xlsx", sheets=[("notes", b"<worksheet><<not xml")])
    system = read_system(path)
    assert len(system.buses) == len(read_system(SAMPLE).buses)
    assert any("notes" in w and "unknown sheet" in w for w in system.warnings)


def test_many_unknown_sheets_cost_nothing(tmp_path):
    # 300 extra sheets holding 100 MB of XML in all: named in workbook.xml, never parsed.
    rows = "".join(f'<row r="{r}"><c r="A{r}"><v>{r % 7}</v></c></row>' for r in range(1, 9000))
    xml = f'<worksheet xmlns="{MAIN}"><sheetData>{rows}</sheetData></worksheet>'.encode()
    path = build(tmp_path / "many.xlsx", sheets=[(f"extra{k}", xml) for k in range(300)])
    system = read_system(path)
    assert sum("unknown sheet" in w for w in system.warnings) == 300


def test_a_document_type_declaration_is_refused_in_any_part(tmp_path):
    def with_dtd(data: bytes) -> bytes:
        text = data.decode()
        start = text.index("<styleSheet")
        return ('<!DOCTYPE x [<!ENTITY a "aaaaaaaaaa">]>' + text[start:]).encode()

    path = build(tmp_path / "dtd.xlsx", change={"xl/styles.xml": with_dtd})
    message = refusal(path)
    assert "part xl/styles.xml declares a document type" in message


# --- the grid: rows and cells where a spreadsheet program puts them --------------------------


def test_a_stray_cell_far_away_is_read_quickly(tmp_path):
    # A space typed in the last cell of the sheet (XFD1048576), far from the table.
    buses = sheet_parts()["buses"]
    stray = '<row r="1048576"><c r="XFD1048576" t="inlineStr"><is><t> </t></is></c></row>'
    path = build(tmp_path / "stray.xlsx", change={buses: in_sheet(stray)})
    assert read_system(path).buses == read_system(SAMPLE).buses


def test_a_long_attribute_full_of_colons_is_read(tmp_path):
    # An attribute no reader uses, holding 250,000 colons in 1 MB (random letters between
    # them, so that the part is not refused as a bomb): the light pass looked at every colon
    # as far as the tag's start and asked for 1.8 TiB (a MemoryError, not a message).
    rng = random.Random(3)
    note = "".join(":" + "".join(rng.choices("abcdefgh", k=3)) for _ in range(250_000))
    buses = sheet_parts()["buses"]

    def noted(data: bytes) -> bytes:
        return data.replace(b'<c r="A2"', f'<c r="A2" note="{note}"'.encode(), 1)

    path = build(tmp_path / "colons.xlsx", change={buses: noted})
    assert read_system(path).buses == read_system(SAMPLE).buses


def test_cells_spread_over_the_grid_are_refused(tmp_path):
    rows = "".join(f'<row r="{r}"><c r="XFD{r}"><v>1</v></c></row>' for r in range(100, 5100))
    path = build(tmp_path / "spread.xlsx", change={sheet_parts()["cases"]: in_sheet(rows)})
    message = refusal(path)
    assert "sheet 'cases'" in message and "spread over" in message


@pytest.mark.parametrize(
    "rows, expected",
    [
        ('<row r="1048577"><c r="A1048577"><v>1</v></c></row>', "outside Excel's rows"),
        ('<row r="3"><c r="A3"><v>1</v></c></row>', "rows out of order"),
        ('<row r="90"><c r="C90"><v>1</v></c><c r="B90"><v>2</v></c></row>', "out of order"),
        ('<row r="90"><c r="B91"><v>1</v></c></row>', "cell B91 is written inside row 90"),
        ('<row r="90"><c r="9A"><v>1</v></c></row>', "is not a cell reference"),
        ('<row r="90"><c r="XFE90"><v>1</v></c></row>', "beyond column XFD"),
        ('<row r="nine"><c><v>1</v></c></row>', "is not a whole number"),
    ],
)
def test_rows_and_cells_out_of_place_are_refused(tmp_path, rows, expected):
    path = build(tmp_path / "grid.xlsx", change={sheet_parts()["buses"]: in_sheet(rows)})
    message = refusal(path)
    assert "sheet 'buses' (part xl/worksheets/sheet2.xml)" in message and expected in message


# --- what a large workbook now says, like a small one ----------------------------------------


def test_a_large_workbook_reports_merged_hidden_and_formula_cells(tmp_path):
    buses = sheet_parts()["buses"]

    def untidy(data: bytes) -> bytes:
        data = data.replace(b'<row r="3"', b'<row r="3" hidden="1"', 1)
        merge = b'<mergeCells count="1"><mergeCell ref="C4:C5"/></mergeCells>'
        return data.replace(b"</sheetData>", b"</sheetData>" + merge)

    path = build(tmp_path / "untidy.xlsx", change={buses: untidy}, stored=big_part())
    warnings = read_system(path).warnings
    assert any("C4:C5 are merged" in w for w in warnings)
    assert any("hidden row 3" in w for w in warnings)

    cables = sheet_parts()["cables"]
    formula = '<row r="40"><c r="A40"><f>1+1</f><v/></c></row>'
    path = build(tmp_path / "formula.xlsx", change={cables: in_sheet(formula)}, stored=big_part())
    with pytest.raises(InputError) as info:
        read_system(path)
    (problem,) = [p for p in info.value.problems if p.message == FORMULA_MESSAGE]
    assert (problem.sheet, problem.row, problem.value) == ("cables", 40, "=1+1")


def test_a_wrong_stated_size_does_not_drop_rows(tmp_path):
    # A sheet's <dimension> says where its cells end; some programs write it wrong. The
    # streaming reader used to stop there and drop the rest silently.
    buses = sheet_parts()["buses"]

    def wrong(data: bytes) -> bytes:
        return re.sub(rb'<dimension ref="[^"]*"', b'<dimension ref="A1:B2"', data)

    path = build(tmp_path / "dimension.xlsx", change={buses: wrong}, stored=big_part())
    assert len(read_system(path).buses) == len(read_system(SAMPLE).buses)


def test_the_bounds_refuse_nothing_real(tmp_path, make_input, monkeypatch):
    # Without the floor, so that the bound per byte is what is tested: random-network data
    # (invented; about 0.35 elements a byte) reads as its CSV twin does, and the most regular
    # table we could make (rows of 20 equal strings, 1.45 a byte) passes the checks.
    from openpyxl import Workbook

    from faultcalc.read import xlsxparts
    from tests.networks import random_sheets

    monkeypatch.setattr(tables, "MIN_XML_ELEMENTS", 0)
    sheets = random_sheets(11, n_mv=200, n_lv=1_800)
    book = make_input(sheets, kind="xlsx")
    assert read_system(book).buses == read_system(make_input(sheets)).buses
    book = Workbook()
    for _ in range(5_000):
        book.active.append(["x"] * 20)
    path = tmp_path / "regular.xlsx"
    book.save(path)
    size = path.stat().st_size
    with zipfile.ZipFile(path) as archive:
        survey = xlsxparts.survey(archive, {"sheet"}, tables.MAX_XML_ELEMENTS_PER_BYTE * size, size)
    assert [(s.name, s.read) for s in survey.sheets] == [("Sheet", True)]
