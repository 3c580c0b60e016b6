"""The study report (PDF): every bus and its maximum available current as the workbook prints
it, the title page, the cautions, page N of M on every page, headers repeated, fonts embedded
and never below 8 pt, landscape where the tables are wide, hostile names as text (#14).

What a study report holds is common practice for a short-circuit study deliverable (no
source); the figures compared are the study's own (the report computes nothing)."""

from __future__ import annotations

import re

import pytest
from builders import transformer
from click.testing import CliRunner
from pypdf import PdfReader

from faultcalc import read_system, run_study, sample_path, write_results
from faultcalc.cautions import CAUTIONS
from faultcalc.cli import main

SMALLEST_PT = 8.0  # the issue: legible at 8 pt or more everywhere


def _report(tmp_path, system, name="r", contributions=None):
    result = run_study(system, contributions=contributions)
    written = write_results(
        result,
        tmp_path / f"{name}.xlsx",
        report_path=tmp_path / f"{name}.pdf",
        system=system,
    )
    return result, PdfReader(written.report), tmp_path / f"{name}.xlsx"


def _pages(reader) -> list[str]:
    return [p.extract_text() for p in reader.pages]


def _flat(text: str) -> str:
    return re.sub(r"\s+", " ", text)


@pytest.fixture(scope="module", params=["plant_480v", "double_ended_480v"])
def sample_report(request, tmp_path_factory):
    system = read_system(sample_path(request.param))
    tmp = tmp_path_factory.mktemp(request.param)
    return _report(tmp, system, contributions="all")


def test_every_bus_and_its_maximum_as_the_workbook_prints_it(sample_report):
    # Each bus's row of the report's summary table holds the Summary sheet's maximum cell as
    # that cell prints (its number format, 0.00): the row read as a line of the page.
    from openpyxl import load_workbook

    result, reader, workbook = sample_report
    plain = _pages(reader)
    first = next(i for i, t in enumerate(plain) if "Maximum available, kA" in _flat(t))
    pages = [p.extract_text(extraction_mode="layout") for p in reader.pages]
    lines = [line.split() for t in pages[first : first + 3] for line in t.splitlines()]
    ws = load_workbook(workbook)["Summary"]
    head = [c.value for c in ws[1]]
    column = head.index("Maximum available, kA")
    printed = {}
    for cells in ws.iter_rows(min_row=2):
        value = cells[column].value
        if isinstance(value, float):
            assert cells[column].number_format == "0.00"
            printed[cells[0].value] = f"{value:.2f}"
    assert set(printed) == set(result.maximum.bus)
    for bus, figure in printed.items():
        rows = [words for words in lines if words and words[0] == bus]
        assert rows and figure in rows[0], (bus, figure, rows[:1])


def test_title_page_names_the_input_its_hash_the_tool_and_leaves_room_for_review(
    sample_report,
):
    result, reader, _ = sample_report
    first = _flat(reader.pages[0].extract_text())
    b = result.basis
    for expected in (
        b.settings.title[:30],
        b.input_name,
        b.input_sha256,
        b.calculated_at,
        f"{b.tool_name} {b.tool_version}",
        "Reviewed by",
        "Signature and seal",
    ):
        assert expected in first, expected


def test_contents_name_every_section_at_its_page(sample_report):
    _, reader, _ = sample_report
    pages = [_flat(t) for t in _pages(reader)]
    lines = reader.pages[1].extract_text(extraction_mode="layout").splitlines()
    entries = {}
    for line in lines:
        found = re.match(r"\s*(\S.*?)\s+(?:\.\s+)+(\d+)\s*$", line)
        if found:
            entries[found.group(1)] = int(found.group(2))
    headings = [
        "Cautions",
        "Basis and method",
        "One-line diagram",
        "Maximum available fault current at each bus",
        "Equipment evaluation",
        "Cable check",
        "Warnings",
        "Input restated",
    ]
    assert set(headings) <= set(entries), entries
    assert any(e.startswith("Service label: ") for e in entries)
    for heading, page in entries.items():
        if heading == "One-line diagram":  # the sheet: its bus names are on that page
            assert "UTIL" in pages[page - 1] or "MV-MAIN" in pages[page - 1]
        elif heading not in ("Cautions", "Warnings"):  # those words are on other pages too
            assert heading in pages[page - 1], (heading, page)
    assert sorted(entries.values()) == list(entries.values())  # in page order


def test_every_caution_and_every_page_numbered(sample_report):
    _, reader, _ = sample_report
    pages = _pages(reader)
    text = _flat(" ".join(pages))
    for caution in CAUTIONS:
        assert _flat(caution) in text
    total = len(pages)
    for n, page in enumerate(pages, start=1):
        assert f"page {n} of {total}" in page


def test_wide_tables_landscape_with_their_header_on_every_page(sample_report):
    _, reader, _ = sample_report
    pages = _pages(reader)
    continued = [i for i, t in enumerate(pages) if i > 1 and "Contributions to the fault" in t]
    assert continued
    start = continued[0]
    contribution_pages = [start]
    for i in range(start + 1, len(pages)):  # the table's pages before the next section
        if any(h in pages[i] for h in ("Cable check", "Warnings")):
            break
        contribution_pages.append(i)
    if "MV-MAIN" in pages[start]:  # the double-ended sample's table runs over pages
        assert len(contribution_pages) > 1
    for i in contribution_pages:
        assert "Faulted bus" in pages[i] and "Residual 3I0, kA" in _flat(pages[i]), i
        box = reader.pages[i].mediabox
        assert box.width > box.height  # landscape


def test_header_words_are_never_broken(sample_report):
    # A header word broken over two lines ("Nomina l kV") would not be found whole.
    _, reader, _ = sample_report
    text = _flat(" ".join(_pages(reader)))
    for word in ("Nominal", "available,", "Multiplying", "asym.,", "Residual", "degrees"):
        assert word in text, word


def _font_sizes(reader) -> list[tuple[int, float, str]]:
    """(page, effective size in points, text) of every piece of text drawn."""
    found = []
    for n, page in enumerate(reader.pages, start=1):

        def visit(text, cm, tm, font, size, n=n):
            if text.strip():
                scale = abs(cm[3] * tm[3] + cm[1] * tm[2]) or abs(cm[0] * tm[0])
                found.append((n, size * scale, text.strip()))

        page.extract_text(visitor_text=visit)
    return found


def test_no_text_below_eight_points_and_every_font_embedded(sample_report):
    _, reader, _ = sample_report
    small = [(n, round(s, 2), t) for n, s, t in _font_sizes(reader) if s < SMALLEST_PT - 0.01]
    assert not small, small[:10]
    for page in reader.pages:
        fonts = page["/Resources"].get("/Font", {})
        for key in fonts:
            font = fonts[key].get_object()
            descriptor = font.get("/FontDescriptor")
            if descriptor is None:  # a composite font: its descendant holds it
                descriptor = font["/DescendantFonts"][0].get_object()["/FontDescriptor"]
            descriptor = descriptor.get_object()
            assert any(k in descriptor for k in ("/FontFile", "/FontFile2", "/FontFile3")), font


def test_the_one_line_is_in_the_report_as_text(sample_report):
    result, reader, _ = sample_report
    pages = _pages(reader)
    # the diagram's title block says what its currents are; its bus names are text
    sheet = next(i for i, t in enumerate(pages) if "Currents are the largest" in _flat(t))
    for bus in result.buses.bus:
        assert bus in pages[sheet], bus


def test_service_labels_print_their_figure(sample_report):
    result, reader, _ = sample_report
    text = _flat(" ".join(_pages(reader)))
    assert len(result.labels)  # both samples have service equipment
    for row in result.labels.itertuples(index=False):
        assert f"Service label: {row.bus}" in text
        assert f"{row.label_ka:.1f} kA" in text


def test_hostile_names_print_as_text(make_input, tmp_path):
    # reportlab reads < and & in a paragraph as markup: names must print as typed
    # (common practice, no source).
    odd = ["<b>bold</b>", "A&B", "=cmd|' /C calc'!A0", "<font size=40>x"]
    sheets = {
        "buses": [
            {"bus": odd[0], "kv": 12.47, "description": "<i>desc"},
            {"bus": odd[1], "kv": 0.48, "service": "yes"},
            {"bus": odd[2], "kv": 0.48},
            {"bus": odd[3], "kv": 0.48},
        ],
        "sources": [{"source": "U&1", "bus": odd[0], "sc_mva": 300, "xr": 10, "slg_ka": 12}],
        "transformers": [transformer(transformer="T<1>", hv_bus=odd[0], lv_bus=odd[1])],
        "impedances": [
            {"element": "Z1", "from_bus": odd[1], "to_bus": odd[2], "r_ohm": 0.001, "x_ohm": 0.002},
            {"element": "Z2", "from_bus": odd[1], "to_bus": odd[3], "r_ohm": 0.001, "x_ohm": 0.002},
        ],
    }
    system = read_system(make_input(sheets))
    _, reader, _ = _report(tmp_path, system)
    text = _flat(" ".join(_pages(reader)))
    for name in [*odd, "<i>desc", "U&1", "T<1>"]:
        assert name in text, name
    assert not [s for s in _font_sizes(reader) if s[1] > 41]  # no markup took effect


def test_cli_writes_the_report_and_refuses_another_suffix(tmp_path):
    out = tmp_path / "r.xlsx"
    runner = CliRunner()
    done = runner.invoke(
        main, ["study", str(sample_path()), "-o", str(out), "--report", str(tmp_path / "r.pdf")]
    )
    assert done.exit_code == 0, done.output
    assert "study report:" in done.output
    assert PdfReader(tmp_path / "r.pdf").pages
    refused = runner.invoke(
        main, ["study", str(sample_path()), "-o", str(tmp_path / "s.xlsx"), "--report", "s.docx"]
    )
    assert (
        refused.exit_code == 2
        and "--report" in refused.output
        and "ending in .pdf" in refused.output
    )
    assert not (tmp_path / "s.xlsx").exists()


def test_a_failing_report_leaves_no_output(tmp_path, monkeypatch):
    # all or none: the workbook is not placed when the report cannot be written
    import faultcalc.report.pdf.build as build

    def fail(*args, **kw):
        raise OSError("disk full (simulated)")

    monkeypatch.setattr(build.ReportDocument, "build", fail)
    system = read_system(sample_path())
    with pytest.raises(OSError):
        write_results(
            run_study(system), tmp_path / "r.xlsx", report_path=tmp_path / "r.pdf", system=system
        )
    assert list(tmp_path.iterdir()) == []


def test_a_report_needs_the_system(tmp_path):
    with pytest.raises(ValueError, match="system"):
        write_results(
            run_study(read_system(sample_path())),
            tmp_path / "r.xlsx",
            report_path=tmp_path / "r.pdf",
        )


@pytest.mark.parametrize(
    "cells",
    [
        ["A", "B", "C"],
        ["X" * 80, "Y" * 80, "Z" * 80],  # no room for every word: the table still fits
        ["SWITCHBOARD-" + "X" * 40, "short", "3.14"],
    ],
)
def test_columns_never_wider_than_the_page_and_words_kept_whole_where_they_fit(cells):
    # A table wider than its frame is cut at both edges (seen on a hostile one-line).
    from reportlab.pdfbase.pdfmetrics import stringWidth

    from faultcalc import typeface as fonts
    from faultcalc.report.pdf.sections import LANDSCAPE_WIDTH_PT, PAD_PT, column_widths

    fonts.register()
    head = ["Faulted bus", "Multiplying factor", "Current, kA"]
    widths = column_widths(head, [cells], [0.2, 0.1, 0.7], LANDSCAPE_WIDTH_PT)
    assert sum(widths) <= LANDSCAPE_WIDTH_PT + 1e-6
    for word in "Faulted Multiplying Current,".split():
        assert any(stringWidth(word, fonts.BOLD, 8) + PAD_PT <= w for w in widths)
    fits = all(stringWidth(c, fonts.REGULAR, 8) + PAD_PT < LANDSCAPE_WIDTH_PT / 4 for c in cells)
    if fits:
        for c, w in zip(cells, widths, strict=True):
            assert stringWidth(c, fonts.REGULAR, 8) + PAD_PT <= w, c


def test_cases_say_what_each_changes_as_the_cases_sheet_has_it(tmp_path):
    # Read back from the sample's own cases sheet (CSV), independently of the reader.
    import csv

    folder = sample_path().parent / "plant_480v"
    with open(folder / "cases.csv", newline="") as f:
        rows = [r for r in csv.DictReader(f) if r["case"].strip()]
    system = read_system(folder)
    result, reader, _ = _report(tmp_path, system)
    text = _flat(" ".join(_pages(reader)))
    assert rows
    for r in rows:
        said = f"{r['element'].strip()} "
        assert any(
            c.startswith(said) and c.endswith(f"{r['column'].strip()} = {r['value'].strip()}")
            for c in result.case_changes[r["case"].strip()]
        ), r
        assert f"{r['column'].strip()} = {r['value'].strip()}" in text


def test_a_large_study_report_says_it_prints_a_summary(tmp_path, monkeypatch):
    # Above BIG_OUTPUT_BUSES the workbook is a summary and every bus goes to the CSV; the
    # report prints the same cut and says where every bus is (lowered here to 3 buses).
    import faultcalc.report.outputs as outputs

    monkeypatch.setattr(outputs, "BIG_OUTPUT_BUSES", 3)
    system = read_system(sample_path())
    result, reader, _ = _report(tmp_path, system)
    text = _flat(" ".join(_pages(reader)))
    assert f"A study of {len(result.buses):,} buses: this report prints the" in text
    assert "r-buses.csv" in text
    assert "The element echo is left out" in text


def _small_system(make_input, *, lv="LV-1", description="Main switchboard", case="", title=""):
    sheets = {
        "buses": [
            {"bus": "HV", "kv": 12.47},
            {"bus": lv, "kv": 0.48, "service": "yes", "description": description},
        ],
        "sources": [{"source": "U1", "bus": "HV", "sc_mva": 300, "xr": 10, "slg_ka": 12}],
        "transformers": [transformer(transformer="T1", hv_bus="HV", lv_bus=lv)],
    }
    if case:
        sheets["cases"] = [{"case": case, "element": "U1", "column": "sc_mva", "value": 250}]
    if title:
        sheets["study"] = [{"setting": "title", "value": title}]
    return read_system(make_input(sheets))


@pytest.mark.parametrize(
    "name",
    ["<font size=99>big", '<img src="/etc/hostname" width="300" height="200"/>', "A&B", "A<B"],
)
def test_a_service_bus_name_with_markup_prints_as_typed_in_the_contents(make_input, tmp_path, name):
    # Found by an independent hostile pass: the contents set each heading as a paragraph
    # again, so a label's bus name acted as markup there (a crash, a local image pulled in).
    system = _small_system(make_input, lv=name)
    _, reader, _ = _report(tmp_path, system)
    contents = _flat(reader.pages[1].extract_text())
    assert f"Service label: {name}" in contents
    for page in reader.pages:
        xobjects = page["/Resources"].get("/XObject", {})
        assert all(xobjects[k].get_object()["/Subtype"] != "/Image" for k in xobjects)


def test_long_free_text_runs_on_over_pages(make_input, tmp_path):
    # A row taller than a page (a 2,000-character description, a 500-character case name)
    # ended every output with a layout error; it now runs on to the next page, cut nowhere.
    description = ("Main switchboard " * 130)[:2000]
    case = "utility maximum " + "x" * 484
    system = _small_system(make_input, description=description, case=case)
    result, reader, _ = _report(tmp_path, system)
    text = re.sub(r"\s+", "", " ".join(_pages(reader)))
    assert re.sub(r"\s+", "", description) in text
    assert case.replace(" ", "") in text


def test_title_with_line_breaks_and_the_review_block_kept_on_one_page(make_input, tmp_path):
    title = "Plant A\nfeeder study " + "with a long title " * 12
    system = _small_system(make_input, title=title)
    _, reader, _ = _report(tmp_path, system)
    first = _flat(reader.pages[0].extract_text())
    assert "Reviewed by" in first and "Signature and seal" in first and "Remarks" in first
    assert "Plant A feeder study" in _flat(reader.pages[2].extract_text())  # header: a space


def test_wording_when_no_rating_no_label_and_no_typed_cable(make_input, tmp_path):
    sheets = {
        "buses": [{"bus": "HV", "kv": 12.47}, {"bus": "LV", "kv": 0.48}],
        "sources": [{"source": "U1", "bus": "HV", "sc_mva": 300, "xr": 10}],
        "transformers": [transformer(transformer="T1", hv_bus="HV", lv_bus="LV")],
    }
    _, reader, _ = _report(tmp_path, read_system(make_input(sheets)))
    text = _flat(" ".join(_pages(reader)))
    assert "none: no bus has a device and rating_ka" in text
    assert "Devices over their rating" not in text
    assert "No bus is marked service = yes" in text
    assert "there is nothing to compare" in text


def test_a_label_that_cannot_print_as_typed_says_so(make_input, tmp_path):
    # reportlab neither shapes right-to-left text nor has CJK glyphs in DejaVu Sans: the
    # label page must not be posted as it prints (common practice, no source).
    for k, name in enumerate(["لوحة التوزيع", "配電盤-1"]):
        system = _small_system(make_input, lv=name)
        _, reader, _ = _report(tmp_path, system, name=f"r{k}")
        text = _flat(" ".join(_pages(reader)))
        assert "do not post this page" in text
        assert "cannot print as typed" in _flat(reader.pages[0].extract_text())
    system = _small_system(make_input, lv="LV-1")
    _, reader, _ = _report(tmp_path, system, name="plain")
    assert "do not post this page" not in _flat(" ".join(_pages(reader)))


def test_header_words_stay_whole_when_long_names_squeeze_the_table():
    from reportlab.pdfbase.pdfmetrics import stringWidth

    from faultcalc import typeface as fonts
    from faultcalc.report.pdf.sections import LANDSCAPE_WIDTH_PT, PAD_PT, column_widths

    fonts.register()
    head = ["Bus", "Description", "Nominal kV", "Maximum available, kA", "Case"]
    long_word = "W" * 120
    widths = column_widths(
        head,
        [[long_word, long_word, "0.480", "33.38", long_word]],
        [0.11, 0.2, 0.06, 0.08, 0.55],
        LANDSCAPE_WIDTH_PT,
    )
    assert sum(widths) <= LANDSCAPE_WIDTH_PT + 1e-6
    for h, w in zip(head, widths, strict=True):
        for word in h.split():
            assert stringWidth(word, fonts.BOLD, 8) + PAD_PT <= w + 1e-6, (word, w)


def test_method_sections_print_the_currents_after_the_first_instant(make_input, tmp_path):
    # method iec60909: Ib, i_DC, Ik, Ith per bus; method ieee: the interrupting network's E/X
    # (#15); every bus's figure as the bus table has it, two decimals
    for method, heading, column in (
        ("iec60909", "IEC 60909-0 currents after the first instant", "ib_ka"),
        ("ieee", "IEEE interrupting network", "i_int_ka"),
    ):
        sheets = {
            "study": [{"setting": "method", "value": method}],
            "buses": [{"bus": "MV", "kv": 13.8}, {"bus": "LV", "kv": 0.48}],
            "sources": [{"source": "U", "bus": "MV", "sc_mva": 300, "xr": 12, "slg_ka": 10}],
            "transformers": [transformer(transformer="T1", hv_bus="MV", lv_bus="LV")],
            "machines": [
                {
                    "machine": "M1",
                    "bus": "MV",
                    "kind": "induction_motor",
                    "hp": 800,
                    "kv": 13.2,
                    "xd_pct": 17,
                    "xr": 20,
                    "rpm": 1780,
                },
            ],
        }
        result, reader, _ = _report(tmp_path, read_system(make_input(sheets)), name=method)
        pages = [_flat(t) for t in _pages(reader)]
        page = next(t for t in pages[2:] if heading in t)
        assert "MV 13.800" in page
        value = result.buses.set_index("bus").loc["MV", column]
        assert f"{value:.2f}" in page


def _rows_per_part(parts, head=1):
    return [len(p._cellvalues) - head for p in parts if hasattr(p, "_cellvalues")]


def test_a_table_leaves_no_row_alone_on_a_page():
    # Common practice in typesetting (no source): never one row alone under the repeated
    # header at the top of a page when the page before can give up one more.
    from reportlab.platypus import FrameBreak, LongTable

    from faultcalc import typeface
    from faultcalc.report.pdf import sections

    typeface.register()

    def made(rows):
        return sections.table(["Bus", "Note"], rows, [0.2, 0.8], set())

    plain = made([[f"B{k}", f"{k}.0"] for k in range(10)])
    plain.wrap(400, 10_000)
    header, row = plain._rowHeights[0], plain._rowHeights[1]
    # room for the header and 9 of 10 rows: a plain table carries one row on
    room = header + 9 * row + 0.1
    assert _rows_per_part(LongTable.split(plain, 400, room)) == [9, 1]
    parts = plain.split(400, room)
    assert _rows_per_part(parts) == [8, 2]
    assert isinstance(parts[1], type(FrameBreak()))  # the two rows start the next page
    # the header and one or two rows at the foot of a page: split as usual (moving the table
    # on would leave the headings above it alone)
    assert _rows_per_part(plain.split(400, header + row + 0.1)) == [1, 9]
    assert _rows_per_part(plain.split(400, header + 2 * row + 0.1)) == [2, 8]
    # short rows kept, a tall row carried, spare room at the foot: still two carried
    mixed = made([[f"B{k}", "x"] for k in range(10)] + [["TALL", "word " * 200]])
    mixed.wrap(400, 10_000)
    heights = mixed._rowHeights
    assert heights[-1] > 3 * heights[1]
    foot = sum(heights[:11]) + 30  # the tall row does not fit the 30 pt to spare
    assert _rows_per_part(LongTable.split(mixed, 400, foot)) == [10, 1]
    assert _rows_per_part(mixed.split(400, foot)) == [9, 2]
    # two rows kept and one carried: left (one fewer would leave one alone at the foot)
    three = made([[f"B{k}", f"{k}"] for k in range(3)])
    three.wrap(400, 10_000)
    assert _rows_per_part(three.split(400, header + 2 * row + 0.1)) == [2, 1]
    # rows taller than a page split inside themselves, as they would
    tall = made([[f"B{k}", "word " * 900] for k in range(5)])
    tall.wrap(400, 10_000)
    assert tall.split(400, tall._rowHeights[0] + tall._rowHeights[1] + 0.1) != []


def test_a_table_in_a_document_carries_two_rows_on():
    # The same rule where reportlab places the pieces: the shorter first piece leaves room at
    # the foot of its page (here more than the header and a row), and the two carried rows
    # must still start the next page together.
    import io

    from reportlab.platypus import SimpleDocTemplate

    from faultcalc import typeface
    from faultcalc.report.pdf import sections

    typeface.register()
    placed = []  # (page, rows) of every table piece drawn

    class Doc(SimpleDocTemplate):
        def afterFlowable(self, flowable):  # noqa: N802 - reportlab's name
            if hasattr(flowable, "_cellvalues"):
                placed.append((self.page, len(flowable._cellvalues) - 1))

    rows = [[f"B{k}", "x"] for k in range(10)] + [["TALL", "word " * 200]]

    def made():
        return sections.table(["Bus", "Note"], rows, [0.2, 0.8], set())

    probe = made()
    probe.wrap(400, 10_000)
    heights = probe._rowHeights
    spare = heights[0] + heights[1] + 5  # room for the header and a short row, not the tall
    assert heights[-1] > spare
    frame = sum(heights[:11]) + spare
    doc = Doc(io.BytesIO(), pagesize=(500, frame + 2 * 36 + 12), topMargin=36, bottomMargin=36)
    doc.build([made()])
    assert placed == [(1, 9), (2, 2)]
