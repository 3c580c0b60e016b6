"""Names and text from the input can never act: control characters in names and names that look
alike are located errors; every text in the results workbook is a string cell; no field of the
bus CSV begins like a formula; the SPICE netlist holds input text only in comment lines; label
sheet titles fit Excel's limits and each label tab holds its own bus.

Check values: the Unicode standard (UAX #15, NFKC; Zl/Zp line and paragraph separators; the
zero-width and bidirectional control characters of UAX #9), the OWASP "CSV Injection" guidance
(the characters = + - @ tab and carriage return that make a field a formula, and the single
quote before it), Excel's specifications and limits (sheet names of at most 31 characters
without []:*?/\\, compared ignoring case), the SpreadsheetML cell markup of ECMA-376 Part 1
(<f> is a formula, t="e" an error value), the ngspice manual (a line beginning .control starts
a block of commands, shell runs one in the operating system) and a trial with ngspice-39 (a
comment line beginning *# is run as a command too).
Otherwise common practice (no source). Names and data are invented.
"""

from __future__ import annotations

import copy
import csv
import dataclasses
import random
import re
import zipfile

import openpyxl
import pytest
from builders import transformer
from click.testing import CliRunner
from conftest import without_origin, write_csv_folder, write_xlsx

from faultcalc import InputError, cli, read_system, run_study
from faultcalc.netlist import build_netlist
from faultcalc.report import csvout, outputs
from faultcalc.report.workbook import build_workbook

GOOD = {
    "study": [{"setting": "title", "value": "Invented test system"}],
    "buses": [
        {"bus": "HV", "kv": 12.47, "description": "utility point (invented)"},
        {"bus": "LV", "kv": 0.48, "description": "main switchboard", "service": "yes"},
        {"bus": "PNL", "kv": 0.48, "description": "panel"},
        {"bus": "MCC", "kv": 0.48, "description": "motor control centre"},
    ],
    "sources": [{"source": "U", "bus": "HV", "sc_mva": 200, "xr": 8, "slg_ka": 7}],
    "transformers": [transformer()],
    "cables": [
        {
            "cable": "C",
            "from_bus": "LV",
            "to_bus": "PNL",
            "length_ft": 100,
            "r_ohm_per_kft": 0.05,
            "x_ohm_per_kft": 0.045,
        }
    ],
    "impedances": [
        {"element": "Z", "from_bus": "LV", "to_bus": "MCC", "r_ohm": 0.001, "x_ohm": 0.002}
    ],
    "machines": [
        {
            "machine": "M",
            "bus": "MCC",
            "kind": "induction_motor",
            "hp": 50,
            "kv": 0.46,
            "xd_pct": 16.7,
            "xr": 6,
        }
    ],
}
# Every column holding a name: (sheet, column).
NAME_COLUMNS = [
    ("buses", "bus"),
    ("sources", "source"),
    ("sources", "bus"),
    ("transformers", "transformer"),
    ("transformers", "hv_bus"),
    ("transformers", "lv_bus"),
    ("cables", "cable"),
    ("cables", "from_bus"),
    ("cables", "to_bus"),
    ("impedances", "element"),
    ("impedances", "from_bus"),
    ("impedances", "to_bus"),
    ("machines", "machine"),
    ("machines", "bus"),
]
# C0 (tab and line ends included), ESC, DEL, C1 (NEL, CSI), line and paragraph separators, a
# bidirectional override and isolate.
CONTROLS = ["\x01", "\t", "\n", "\r", "\x1b", "\x7f", "\x85", "\x9b", "\u2028", "\u2029"]
CONTROLS += ["\u202e", "\u2067"]
SHELL = "\n.control\nshell touch {marker}\n.endc\n"


def renamed(sheets, old: str, new: str):
    """``sheets`` with the name ``old`` replaced by ``new`` in every name column."""
    sheets = copy.deepcopy(sheets)
    for sheet, column in NAME_COLUMNS:
        for row in sheets.get(sheet, []):
            if row.get(column) == old:
                row[column] = new
    return sheets


def problems_of(path) -> list:
    with pytest.raises(InputError) as caught:
        read_system(path)
    return caught.value.problems


def where(problems) -> set:
    return {(p.sheet, p.row, p.column) for p in problems}


def test_the_good_system_is_read_alike_from_csv_and_workbook(make_input):
    folder = make_input(GOOD)
    book = make_input(GOOD, name="book", kind="xlsx")
    assert without_origin(read_system(folder)) == without_origin(read_system(book))


@pytest.mark.parametrize("char", CONTROLS, ids=[repr(c) for c in CONTROLS])
def test_a_control_character_in_a_bus_name_is_a_located_error(make_input, char):
    name = f"L{char}V"
    folder = make_input(renamed(GOOD, "LV", name))
    problems = problems_of(folder)
    expected = {  # the bus row and every reference to it
        ("buses", 3, "bus"),
        ("transformers", 2, "lv_bus"),
        ("cables", 2, "from_bus"),
        ("impedances", 2, "from_bus"),
    }
    if char in "\n\r":  # the CSV record spans two lines; the next rows are counted from there
        assert len(problems) == 4
        assert {(p.sheet, p.column) for p in problems} == {(s, c) for s, _, c in expected}
    else:
        assert where(problems) == expected
    for p in problems:
        assert p.value == name
        assert "control characters" in p.message
        assert repr(char) in p.message  # which character, escaped
        assert repr(name) in str(p) and char not in str(p)  # the value shown escaped


@pytest.mark.parametrize(("sheet", "column"), NAME_COLUMNS)
@pytest.mark.parametrize("char", ["\x01", "\u2028"])
def test_every_name_column_refuses_control_characters(make_input, sheet, column, char):
    sheets = copy.deepcopy(GOOD)
    row = sheets[sheet][0]
    row[column] = row[column][0] + char + row[column]  # inside the name, not stripped
    problems = problems_of(make_input(sheets))
    assert (sheet, 2, column) in where(problems)
    found = [p for p in problems if (p.sheet, p.row, p.column) == (sheet, 2, column)]
    assert "control characters" in found[0].message


@pytest.mark.parametrize("char", ["\n", "\t", "\x85", "\u2028"])
def test_a_workbook_name_with_a_line_break_is_a_located_error(make_input, char):
    path = make_input(renamed(GOOD, "PNL", f"P{char}NL"), kind="xlsx")
    problems = problems_of(path)
    assert ("buses", 4, "bus") in where(problems) and ("cables", 2, "to_bus") in where(problems)


def test_a_name_of_invisible_characters_only_is_refused(make_input):
    problems = problems_of(make_input(renamed(GOOD, "PNL", "\u200b\u200d")))
    assert ("buses", 4, "bus") in where(problems)
    assert any("visible" in p.message for p in problems)


def test_free_text_may_hold_line_breaks_but_not_other_controls(make_input):
    sheets = copy.deepcopy(GOOD)
    sheets["buses"][1]["description"] = "main switchboard\nroom 2\ttab"
    sheets["study"][0]["value"] = "Invented study\nsecond line"
    system = read_system(make_input(sheets))
    assert system.buses[1].description == "main switchboard\nroom 2\ttab"
    assert system.settings.title == "Invented study\nsecond line"
    build_workbook(run_study(system))  # a workbook holds them
    sheets = copy.deepcopy(GOOD)
    sheets["buses"][2]["description"] = "bell\x07"
    sheets["study"][0]["value"] = "ti\x0ctle"
    problems = problems_of(make_input(sheets))
    assert where(problems) == {("buses", 4, "description"), ("study", 2, "value")}
    assert all("control character" in p.message for p in problems)


# Names that differ from "PNL" only in what a reader cannot see or in a compatibility form.
LOOKALIKES = [
    "P\u200bNL",  # zero-width space
    "PN\u200cL",  # zero-width non-joiner
    "P\u200dNL",  # zero-width joiner
    "PNL\u2060",  # word joiner
    "PNL\ufeff",  # zero-width no-break space (byte order mark)
    "P\u00adNL",  # soft hyphen
    "\uff30\uff2e\uff2c",  # full-width letters (NFKC: PNL)
    "pn\u200bl",  # other capitals and a zero-width space
]


@pytest.mark.parametrize("name", LOOKALIKES, ids=[repr(n) for n in LOOKALIKES])
def test_names_alike_after_nfkc_and_invisible_characters_collide(make_input, name):
    sheets = copy.deepcopy(GOOD)
    sheets["buses"].append({"bus": name, "kv": 0.48})
    folder = make_input(sheets)
    problems = problems_of(folder)
    assert where(problems) == {("buses", 6, "bus")}
    message = problems[0].message
    assert "sheet 'buses' row 4" in message and "'PNL'" in message  # names both rows
    assert "must be unique" in message


def test_element_names_alike_across_sheets_collide(make_input):
    sheets = copy.deepcopy(GOOD)
    sheets["machines"][0]["machine"] = "\uff23"  # full-width C: NFKC gives the cable's name
    sheets["impedances"][0]["element"] = "\u2126-1"  # OHM SIGN: NFKC gives GREEK CAPITAL OMEGA
    sheets["cables"].append(dict(sheets["cables"][0], cable="\u03a9-1"))
    folder = make_input(sheets)
    problems = problems_of(folder)
    assert where(problems) == {("impedances", 2, "element"), ("machines", 2, "machine")}
    by_sheet = {p.sheet: p.message for p in problems}
    assert "sheet 'cables' row 3" in by_sheet["impedances"]
    assert "sheet 'cables' row 2" in by_sheet["machines"]
    assert "NFKC" in by_sheet["machines"]


def test_names_differing_only_in_case_keep_their_message(make_input):
    sheets = copy.deepcopy(GOOD)
    sheets["buses"].append({"bus": "pnl", "kv": 0.48})
    problems = problems_of(make_input(sheets))
    assert problems[0].message == (
        "the name is already used on sheet 'buses' row 4 as 'PNL' (names are matched ignoring "
        "case); names must be unique"
    )


def test_distinct_non_ascii_names_are_read_alike_from_csv_and_workbook(make_input):
    sheets = renamed(renamed(GOOD, "PNL", "Verteiler-\u00c4"), "MCC", "Verteiler-A")
    sheets = renamed(sheets, "C", "Kabel-\u03a9")
    folder = make_input(sheets)
    fast = read_system(folder)  # names that do not collide are taken as they are
    book = read_system(make_input(sheets, name="book", kind="xlsx"))
    assert without_origin(fast) == without_origin(book)
    assert [b.bus for b in fast.buses] == ["HV", "LV", "Verteiler-\u00c4", "Verteiler-A"]


def test_a_tab_inside_an_ascii_name_is_a_located_error(make_input):
    folder = make_input(renamed(GOOD, "C", "C\t1"))
    assert where(problems_of(folder)) == {("cables", 2, "cable")}


def test_the_command_exits_2_and_writes_nothing(make_input, tmp_path):
    folder = make_input(renamed(GOOD, "LV", "L\x01V"))
    out = tmp_path / "out.xlsx"
    run = CliRunner().invoke(cli.main, ["study", str(folder), "-o", str(out)])
    assert run.exit_code == 2, run.output
    assert "sheet 'buses', row 3, column 'bus'" in run.output
    assert "'L\\x01V'" in run.output and "\x01" not in run.output
    assert "internal error" not in run.output and not out.exists()


def test_sheet_and_column_names_are_printed_escaped(make_input):
    folder = make_input(GOOD)
    (folder / "notes\x1b[2J.csv").write_text("a\n1\n")
    buses = folder / "buses.csv"
    lines = buses.read_text().splitlines()
    lines = [lines[0] + ",\x1b]0;x\x07"] + [line + "," for line in lines[1:]]
    buses.write_text("\n".join(lines) + "\n")
    system = read_system(folder)
    text = "\n".join(system.warnings)
    assert "\x1b" not in text and "\x07" not in text
    assert "sheet 'notes\\x1b[2j'" in text and "column '\\x1b]0;x\\x07'" in text


# -- the results workbook -------------------------------------------------------------------

FORMULAS = ['=HYPERLINK("http://x","y")', "+1+2", "-2+3", "@SUM(A1)", "=1+1", "#N/A"]


def _formula_sheets():
    sheets = copy.deepcopy(GOOD)
    for old, new in zip(["LV", "PNL", "MCC", "C", "Z", "M"], FORMULAS, strict=True):
        sheets = renamed(sheets, old, new)
    for row in sheets["buses"]:
        row["service"] = "yes"
    sheets["buses"][0]["description"] = "=1+2"
    sheets["study"][0]["value"] = '=HYPERLINK("http://x","R&D")'
    sheets["cases"] = [{"case": "=2*3", "element": "U", "column": "sc_mva", "value": 150}]
    return sheets


def _no_formula_markup(path):
    with zipfile.ZipFile(path) as z:
        for name in z.namelist():
            if name.startswith("xl/worksheets/") and name.endswith(".xml"):
                xml = z.read(name).decode()
                assert not re.search(r"<f[ >/]", xml), name
                assert 't="e"' not in xml, name


def test_text_from_the_input_is_never_a_formula_in_the_workbook(make_input, tmp_path):
    folder = make_input(_formula_sheets())
    out = tmp_path / "results.xlsx"
    run = CliRunner().invoke(
        cli.main, ["study", str(folder), "-o", str(out), "--contributions", "all"]
    )
    assert run.exit_code == 0, run.output
    _no_formula_markup(out)
    book = openpyxl.load_workbook(out)
    texts: dict[str, set] = {}
    for ws in book.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                if isinstance(cell.value, str):
                    texts.setdefault(cell.value, set()).add(cell.data_type)
    for text in [*FORMULAS, "=1+2", "=2*3", '=HYPERLINK("http://x","R&D")']:
        assert texts.get(text) == {"s"}, text
    faults = book["Fault currents"]
    assert [faults.cell(row=i, column=1).value for i in range(2, 6)] == ["HV", *FORMULAS[:3]]


def test_the_cell_writer_keeps_text_from_the_api_as_text(make_input):
    system = read_system(make_input(GOOD))
    buses = [dataclasses.replace(b, description="=SUM(1)\x01", service="no") for b in system.buses]
    book = build_workbook(run_study(dataclasses.replace(system, buses=tuple(buses))))
    cell = book["Fault currents"].cell(row=2, column=2)
    assert cell.value == "=SUM(1)\\x01" and cell.data_type == "s"


def test_the_page_header_doubles_the_ampersand(make_input):
    sheets = copy.deepcopy(GOOD)
    sheets["study"][0]["value"] = "R&D &P&F " + "&" * 200
    book = build_workbook(run_study(read_system(make_input(sheets))))
    header = book["Fault currents"].oddHeader.left.text
    assert header.startswith("R&&D &&P&&F &&") and len(header) <= 120
    assert not re.search("(?<!&)&(?!&)", header.replace("&&", ""))  # no & left single


# -- the bus CSV ----------------------------------------------------------------------------


def test_no_field_of_the_bus_csv_begins_like_a_formula(make_input, monkeypatch, tmp_path):
    monkeypatch.setattr(outputs, "BIG_OUTPUT_BUSES", 2)
    out = tmp_path / "big.xlsx"
    run = CliRunner().invoke(
        cli.main, ["study", str(make_input(_formula_sheets())), "-o", str(out)]
    )
    assert run.exit_code == 0, run.output
    _no_formula_markup(out)
    with (tmp_path / "big-buses.csv").open(newline="") as handle:
        rows = list(csv.DictReader(handle))
    assert [r["bus"] for r in rows] == ["HV"] + ["'" + n for n in FORMULAS[:3]]
    for row in rows:
        for value in row.values():
            if value[:1] in csvout.FORMULA_STARTS:
                float(value)  # only numbers may begin so


def test_numbers_stay_numbers_and_other_text_stays_as_it_is(make_input, tmp_path):
    result = run_study(read_system(make_input(_formula_sheets())))
    buses = result.buses.copy()
    buses["r1_ohm"] = -1.5  # a negative number is no formula
    buses["ground_note"] = ["\rnote", "-", "plain", "@x"]
    path = tmp_path / "buses.csv"
    csvout.write_bus_csv_to(dataclasses.replace(result, buses=buses), path)
    with path.open(newline="") as handle:
        rows = list(csv.DictReader(handle))
    assert [r["r1_ohm"] for r in rows] == ["-1.5"] * 4
    assert [r["ground_note"] for r in rows] == ["'\rnote", "'-", "plain", "'@x"]
    assert [r["max_fault"] for r in rows] == list(result.buses.max_fault)


# -- the SPICE netlist ----------------------------------------------------------------------


def _hostile_system(system, marker):
    """``system`` with every name and text carrying a shell command after a line break,
    built through the API (the reader refuses such names)."""
    evil = SHELL.format(marker=marker)

    def each(records, *fields):
        return tuple(
            dataclasses.replace(r, **{f: getattr(r, f) + evil for f in fields}) for r in records
        )

    return dataclasses.replace(
        system,
        settings=dataclasses.replace(system.settings, title="Study" + evil + "*#shell x"),
        buses=tuple(
            dataclasses.replace(b, bus=b.bus + evil, description="desc" + evil)
            for b in system.buses
        ),
        sources=each(system.sources, "source", "bus"),
        transformers=each(system.transformers, "transformer", "hv_bus", "lv_bus"),
        cables=each(system.cables, "cable", "from_bus", "to_bus"),
        impedances=each(system.impedances, "element", "from_bus", "to_bus"),
        machines=each(system.machines, "machine", "bus"),
    )


def _check_lines(text: str) -> list[str]:
    """The netlist's lines, checked: no line break but '\\n', one .control block (its own,
    the last lines), no shell or *# line, statements of printable ASCII."""
    lines = text.splitlines()
    assert text.count("\n") == len(lines)  # no other line break (\r, \u2028...) in the file
    first = [line.lower().lstrip().split(" ")[0] for line in lines]
    assert first.count(".control") == 1 and first.count(".endc") == 1
    assert lines.index(".control") > max(k for k, line in enumerate(lines) if line.startswith("*"))
    assert "shell" not in first
    assert not [line for line in lines if line.startswith("*#")]
    for line in lines:
        if not line.startswith("*"):
            assert re.fullmatch(r"[ -~]*", line), line
    return lines


def _alike(hostile: str, benign: str) -> None:
    """Line by line: a line that differs is a comment in both, or a statement with the same
    element type and number of fields (only the names of elements differ)."""
    a, b = _check_lines(hostile), _check_lines(benign)
    assert len(a) == len(b)  # the input text added no line
    for x, y in zip(a, b, strict=True):
        if x == y:
            continue
        if y.startswith("* "):
            assert x.startswith("* "), x
        else:
            assert x[0] == y[0] and len(x.split()) == len(y.split()), (x, y)


def test_the_netlist_holds_input_text_only_in_comments(make_input, tmp_path):
    good = read_system(make_input(GOOD))
    system = _hostile_system(good, tmp_path / "pwned")
    for k, fault in enumerate((None, "3ph", "slg", "ll", "llg")):
        at = k % len(good.buses)
        _alike(
            build_netlist(system, system.buses[at].bus if fault else None, fault),
            build_netlist(good, good.buses[at].bus if fault else None, fault),
        )
    text = build_netlist(system, system.buses[1].bus, "slg")
    assert "* Study\\n.control\\nshell touch" in text  # the title, escaped on one line


def test_ngspice_runs_no_command_from_the_input(make_input, tmp_path):
    from tests.crosscheck.spice import run

    marker = tmp_path / "pwned"
    system = _hostile_system(read_system(make_input(GOOD)), marker)
    values = run(build_netlist(system, system.buses[1].bus, "3ph"))
    assert "vf_a" in values  # the netlist ran
    assert not marker.exists()


def test_the_netlist_command_keeps_a_hostile_title_in_one_comment(make_input, tmp_path):
    marker = tmp_path / "pwned"
    sheets = copy.deepcopy(GOOD)
    sheets["study"][0]["value"] = "Study" + SHELL.format(marker=marker)
    out = tmp_path / "net.cir"
    run = CliRunner().invoke(
        cli.main,
        ["netlist", str(make_input(sheets)), "--bus", "LV", "--fault", "slg", "-o", str(out)],
    )
    assert run.exit_code == 0, run.output
    text = out.read_text()
    _alike(text, build_netlist(read_system(make_input(GOOD)), "LV", "slg"))
    assert text.splitlines()[0].startswith("* Study\\n.control\\nshell touch")


# -- label sheet titles ---------------------------------------------------------------------


def _label_system(names):
    sheets = copy.deepcopy(GOOD)
    for i, name in enumerate(names):
        sheets["buses"].append(
            {"bus": name, "kv": 0.48, "service": "yes", "description": f"[label {i:03d}]"}
        )
        sheets["cables"].append(dict(sheets["cables"][0], cable=f"F{i}", to_bus=name))
    return sheets


def _label_tabs(names, folder):
    """The label sheet titles of a study of ``names`` (all service buses) and, for each, the
    index of the bus whose description its tab shows; the book's titles checked."""
    book = build_workbook(run_study(read_system(write_csv_folder(folder, _label_system(names)))))
    titles = book.sheetnames
    assert len({t.casefold() for t in titles}) == len(titles)  # unique ignoring case
    held = {}
    for title in titles:
        if not title.startswith("Label ") or title == "Label LV":
            continue
        assert len(title.encode("utf-16-le")) // 2 <= 31, title
        assert not set(title) & set("[]:*?/\\") and not title.endswith("'"), title
        text = "\n".join(str(c.value) for r in book[title].iter_rows() for c in r if c.value)
        (i,) = [i for i in range(len(names)) if f"[label {i:03d}]" in text]
        assert names[i] in text, title  # the tab names its bus
        held[title] = i
    assert sorted(held.values()) == list(range(len(names)))  # every bus has its own tab
    for title, i in held.items():  # a title that is some bus's own names that bus
        for j, name in enumerate(names):
            if title.casefold() == f"Label {name}".casefold():
                assert i == j, (title, names[i])
    return held


NEARLY_ALIKE = [
    "Main switchboard north building A",  # long names sharing a prefix
    "Main switchboard north building B",
    "Main switchboard north building A1",
    "Main switchboard north~1",  # a bus named like a shortened title
    "SWBD",
    "SWBD?",  # differs only in a character a title cannot hold
    "swbd/",  # ... and in case
    "SWBD_",
    "SWBD1",
    "Panel 'A'",  # ends with an apostrophe
    "Pa[nel]:1*",
    "\U0001d4d0" * 14,  # letters outside the basic plane count twice in Excel's 31
]


def test_label_tabs_hold_their_own_bus_with_titles_excel_accepts(tmp_path):
    held = _label_tabs(NEARLY_ALIKE, tmp_path / "labels")
    assert held["Label SWBD"] == 4 and held["Label SWBD1"] == 8  # own titles kept
    assert held["Label Main switchboard north~1"] == 3  # nobody else takes it
    assert {held[f"Label Main switchboard north~{k}"] for k in (2, 3, 4)} == {0, 1, 2}


def test_many_long_nearly_alike_service_buses(tmp_path):
    names = [f"Switchboard serving building {k // 10} level {k % 10}" for k in range(60)]
    names += [n.upper() + "?" for n in names[:20]]
    names += ["Panel 1?", "Panel 1/", "PANEL 1:", "Panel 1_~1", "Panel 1_~2"]
    held = _label_tabs(names, tmp_path / "labels")
    assert held["Label Panel 1_~1"] == names.index("Panel 1_~1")
    assert held["Label Panel 1_~2"] == names.index("Panel 1_~2")


# -- a fuzz of hostile names through every writer --------------------------------------------

HOSTILE_NAMES = [
    *FORMULAS,
    *(f"X{c}Y" for c in CONTROLS),
    *LOOKALIKES,
    "'",
    "&P&F",
    "Label LV",
    "a" * 40,
    "[]:*?/\\",
    " ",
]


def test_hostile_names_end_in_a_located_error_or_safe_outputs(tmp_path):
    rng = random.Random(12)
    outcomes = {"result": 0, "input error": 0}
    names = ["HV", "LV", "PNL", "MCC", "U", "T", "C", "Z", "M"]
    for i in range(60):
        sheets = copy.deepcopy(GOOD)
        for _ in range(rng.randint(1, 3)):
            if rng.random() < 0.7:  # a name changed everywhere it is used
                sheets = renamed(sheets, rng.choice(names), rng.choice(HOSTILE_NAMES))
            else:  # one cell
                sheet, column = rng.choice(NAME_COLUMNS)
                rng.choice(sheets[sheet])[column] = rng.choice(HOSTILE_NAMES)
        if rng.random() < 0.5:
            for row in sheets["buses"]:
                row["service"] = "yes"
        cells = [str(v) for rows in sheets.values() for row in rows for v in row.values()]
        if i % 4 == 0 and not any(re.search("[\x00-\x08\x0b\x0c\x0e-\x1f]", c) for c in cells):
            path = write_xlsx(tmp_path / f"m{i}.xlsx", sheets)  # a workbook holds no other C0
        else:
            path = write_csv_folder(tmp_path / f"m{i}", sheets)
        try:
            system = read_system(path)
        except InputError as exc:
            assert all(p.sheet and p.message for p in exc.problems)
            outcomes["input error"] += 1
            continue
        outcomes["result"] += 1
        result = run_study(system)
        out = tmp_path / f"m{i}-results.xlsx"
        build_workbook(result).save(out)
        _no_formula_markup(out)
        csv_path = tmp_path / f"m{i}.csv"
        csvout.write_bus_csv_to(result, csv_path)
        with csv_path.open(newline="") as handle:
            for row in csv.reader(handle):
                for value in row:
                    if value[:1] in csvout.FORMULA_STARTS:
                        float(value)
        _check_lines(build_netlist(system, system.buses[0].bus, "slg"))
    print(outcomes)
    assert outcomes["result"] > 5 and outcomes["input error"] > 10, outcomes


def test_a_reference_alike_after_nfkc_names_its_bus_with_a_warning(make_input):
    # Full-width letters (NFKC folds them to ASCII: Unicode Standard Annex #15) and a zero-width
    # space name the same bus as the plain name: the reference is matched, and said so.
    sheets = copy.deepcopy(GOOD)
    sheets["cables"][0]["to_bus"] = "\uff30\uff2e\uff2c"  # full-width PNL
    sheets["impedances"][0]["to_bus"] = "M\u200bCC"
    system = read_system(make_input(sheets))
    assert system.cables[0].to_bus == "PNL" and system.impedances[0].to_bus == "MCC"
    said = [w for w in system.warnings if "matched bus" in w]
    assert len(said) == 2 and all("compatibility forms (NFKC)" in w for w in said)


def test_a_case_names_an_element_alike_after_nfkc(make_input):
    sheets = copy.deepcopy(GOOD)
    sheets["cases"] = [
        {"case": "short cable", "element": "\uff23", "column": "length_ft", "value": 10}
    ]  # full-width C: the cable C
    system = read_system(make_input(sheets))
    ((name, case),) = system.cases
    assert case.cables[0].length_ft == 10 and system.cables[0].length_ft == 100
