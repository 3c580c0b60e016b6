"""One reader, two loaders: a CSV folder and a workbook of the same sheets read alike, and the
two CSV parsers (Arrow for plain files, Python's csv module for the others) give the same cells.

Check values: Python's csv module (the reference parser of CSV text: RFC 4180 with Python's
dialect) and Python's float() for number text; openpyxl writes the workbooks. Inputs: the
invented samples and random networks, and mutations of them (common practice (no source): two
loaders of one network must agree).
"""

from __future__ import annotations

import copy
import random
import shutil

import numpy as np
import pytest
from conftest import without_origin, write_csv_folder, write_xlsx
from networks import random_sheets
from test_fuzz import _mutate, as_rows

from faultcalc import InputError, read_system, sample_path
from faultcalc.read import csvload
from faultcalc.read.raw import is_blank
from faultcalc.read.reader import read_tables
from faultcalc.read.tables import load_input


def _sample_without_cases(tmp_path, name):
    folder = tmp_path / name
    shutil.copytree(sample_path(name), folder)
    (folder / "cases.csv").unlink(missing_ok=True)
    return folder


def _rows_of(folder) -> dict[str, list[dict]]:
    return {
        name: [values for _, values in sheet.rows] or [dict.fromkeys(sheet.headers)]
        for name, sheet in as_rows(load_input(folder)).sheets.items()
    }


def _rounded(sheets: dict[str, list[dict]]) -> dict[str, list[dict]]:
    """Numbers to 12 significant digits: a workbook writer keeps about 15 (openpyxl rounds
    the last digit of some), so both files hold the same numbers."""
    return {
        name: [
            {k: float(f"{v:.12g}") if isinstance(v, float) else v for k, v in row.items()}
            for row in rows
        ]
        for name, rows in sheets.items()
    }


def _with_csv_module(monkeypatch, folder):
    """The folder loaded with Python's csv module for every file."""
    with monkeypatch.context() as m:
        m.setattr(csvload, "_with_arrow", lambda *args: None)
        return load_input(folder)


def _outcome(raw) -> tuple:
    """("system", System, warnings) or ("problems", their text, warnings) of a raw input."""
    try:
        system = read_tables(raw)
    except InputError as exc:
        return ("problems", [str(p) for p in exc.problems], exc.warnings)
    return ("system", system, system.warnings)


def _same_cells(one, two) -> None:
    assert one.sheets.keys() == two.sheets.keys()
    assert [str(p) for p in one.problems] == [str(p) for p in two.problems]
    for name, a in one.sheets.items():
        b = two.sheets[name]
        assert a.headers == b.headers, name
        assert a.row_numbers.tolist() == b.row_numbers.tolist(), name
        assert a.blank_header_columns == b.blank_header_columns, name
        for h in a.headers:  # a blank cell is '' from Arrow, None from the csv module
            assert [None if is_blank(c) else c for c in a.cells(h)] == [
                None if is_blank(c) else c for c in b.cells(h)
            ], (name, h)


@pytest.mark.parametrize("name", ["plant_480v", "double_ended_480v"])
def test_samples_read_alike_from_csv_and_workbook(tmp_path, name):
    folder = _sample_without_cases(tmp_path, name)
    book = write_xlsx(tmp_path / f"{name}.xlsx", _rows_of(folder))
    from_csv, from_book = read_system(folder), read_system(book)
    assert without_origin(from_csv) == without_origin(from_book)
    assert from_csv.warnings == from_book.warnings


def test_the_samples_cases_read_alike_from_csv_and_workbook(tmp_path):
    folder = sample_path("plant_480v")
    book = write_xlsx(tmp_path / "plant.xlsx", _rows_of(folder))
    from_csv, from_book = read_system(folder), read_system(book)
    assert [n for n, _ in from_csv.cases] == [n for n, _ in from_book.cases]
    for (_, a), (_, b) in zip(from_csv.cases, from_book.cases, strict=True):
        assert without_origin(a) == without_origin(b)


def test_random_networks_read_alike_from_csv_and_workbook(tmp_path, monkeypatch):
    for seed in range(12):
        sheets = random_sheets(
            seed,
            n_mv=6,
            n_lv=10,
            loops=seed % 3,
            sources=1 + seed % 2,
            ties=seed % 2,
            off_nominal=seed % 4 == 1,
            zero_sequence=seed % 2 == 0,
            machines=seed % 5,
            clocks=seed % 3 == 2,
        )
        sheets = _rounded(sheets)
        folder = write_csv_folder(tmp_path / f"net{seed}", sheets)
        book = write_xlsx(tmp_path / f"net{seed}.xlsx", sheets)
        from_csv, from_book = read_system(folder), read_system(book)
        assert without_origin(from_csv) == without_origin(from_book)
        assert from_csv.warnings == from_book.warnings
        assert [c.row for c in from_csv.cables] == [c.row for c in from_book.cables]
        _same_cells(load_input(folder), _with_csv_module(monkeypatch, folder))


@pytest.mark.slow  # fuzzing: `make test` runs it, `make quick` not
def test_mutated_files_give_the_same_cells_with_either_parser(tmp_path, monkeypatch):
    """Arrow and the csv module give the same raw cells, row numbers and problems, on every
    mutated input, whichever of them took it."""
    bases = [as_rows(load_input(_sample_without_cases(tmp_path, "plant_480v")))]
    for seed in (1, 2):
        sheets = random_sheets(
            seed, n_mv=4, n_lv=6, loops=1, sources=2, ties=1, zero_sequence=True, machines=3
        )
        bases.append(as_rows(load_input(write_csv_folder(tmp_path / f"net{seed}", sheets))))
    rng = random.Random(11)
    by_arrow = studied = 0
    for i in range(400):
        raw = copy.deepcopy(bases[i % len(bases)])
        for _ in range(rng.randint(1, 2)):
            _mutate(raw, rng)
        sheets = {
            name: [values for _, values in s.rows] or [dict.fromkeys(s.headers)]
            for name, s in raw.sheets.items()
        }
        folder = write_csv_folder(tmp_path / f"m{i}", sheets)
        text = (folder / "buses.csv").read_bytes() if (folder / "buses.csv").exists() else b""
        by_arrow += csvload._with_arrow("buses", text, []) is not None
        arrow, module = load_input(folder), _with_csv_module(monkeypatch, folder)
        _same_cells(arrow, module)
        # and the same System, warnings and problems (Arrow columns and lists typed alike)
        one, two = _outcome(arrow), _outcome(module)
        assert one == two, f"mutation {i}"
        studied += one[0] == "system"
    print(f"400 mutations: buses.csv parsed by Arrow in {by_arrow}, {studied} read")
    assert by_arrow > 100 and studied > 40


@pytest.mark.parametrize(
    "file, change, note",
    [
        ("buses", lambda t: t.replace("\n", "\n\n", 2), None),  # a blank line
        ("buses", lambda t: t.replace("\r\n", "\r", 1), None),  # an old (lone CR) line end
        ("buses", lambda t: t.replace(",13.8", ",13.8 kV", 1), "unit 'kV' after the number"),
        ("transformers", lambda t: t.replace(",1500.0,", ',"1,500.0",', 1), "thousands separator"),
    ],
)
def test_untidy_cells_read_as_their_tidy_twin(tmp_path, file, change, note):
    # Expected: the tidy file's buses and elements; the notes are the per-cell parser's
    # (faultcalc/read/cells.py).
    sheets = random_sheets(4, n_mv=4, n_lv=4)
    tidy = read_system(write_csv_folder(tmp_path / "tidy", sheets))
    folder = write_csv_folder(tmp_path / "net", sheets)
    path = folder / f"{file}.csv"
    before = path.read_bytes().decode()
    path.write_bytes(change(before).encode())
    assert path.read_bytes().decode() != before
    untidy = read_system(folder)
    assert [(b.bus, b.kv) for b in untidy.buses] == [(b.bus, b.kv) for b in tidy.buses]
    assert [(t.transformer, t.kva) for t in untidy.transformers] == [
        (t.transformer, t.kva) for t in tidy.transformers
    ]
    assert len(untidy.cables) == len(tidy.cables)
    if note is not None:
        assert any(note in w for w in untidy.warnings), untidy.warnings


def test_spaces_around_names_are_noted_alike(tmp_path):
    """A note for each name with spaces around it, in CSV (Arrow) and in a workbook."""
    sheets = _rounded(random_sheets(4, n_mv=5, n_lv=5, machines=2))
    folder = write_csv_folder(tmp_path / "net", sheets)
    for name, old, new in (("buses", "\nM1,", "\n M1 ,"), ("cables", ",M1,", ",M1  ,")):
        path = folder / f"{name}.csv"
        path.write_text(path.read_text().replace(old, new))
    from_csv = read_system(folder)
    from_book = read_system(write_xlsx(tmp_path / "net.xlsx", _rows_of(folder)))
    assert without_origin(from_csv) == without_origin(from_book)
    assert from_csv.warnings == from_book.warnings
    assert sum("spaces around the text removed" in w for w in from_csv.warnings) >= 2


def test_quoted_fields_read_alike(tmp_path, monkeypatch):
    sheets = random_sheets(6, n_mv=4, n_lv=4)
    sheets["buses"][0]["description"] = 'Main board, "north" room'
    folder = write_csv_folder(tmp_path / "net", sheets)
    _same_cells(load_input(folder), _with_csv_module(monkeypatch, folder))
    assert read_system(folder).buses[0].description == 'Main board, "north" room'


def test_number_text_reads_as_python_float_reads_it():
    """Arrow's number parser accepts a text only if Python's float() reads it the same."""
    import pyarrow as pa
    import pyarrow.compute as pc

    rng = random.Random(3)
    parts = ["", "+", "-", "0", "1", "9", ".", "e", "E", "5", "00", "_", " ", "inf", "nan", "x"]
    texts = ["".join(rng.choice(parts) for _ in range(rng.randint(1, 6))) for _ in range(5000)]
    texts += [repr(v) for v in np.random.default_rng(2).uniform(-1e6, 1e6, 2000).tolist()]
    for text in texts:
        try:
            value = pc.cast(pa.array([text]), pa.float64())[0].as_py()
        except pa.ArrowInvalid:
            continue
        assert value == float(text) or (value != value and float(text) != float(text)), text


def test_the_plain_number_pattern_reads_as_python_float_reads_it():
    """Text the fast path takes as a plain number (columns.PLAIN_NUMBER) is read by Arrow as
    Python's float() reads it; anything else goes to the per-cell parser."""
    import re

    import pyarrow as pa
    import pyarrow.compute as pc

    from faultcalc.read.columns import PLAIN_NUMBER

    rng = random.Random(4)
    parts = ["", "+", "-", "0", "1", "9", ".", "e", "E", "5", "00", "_", " ", "inf", "nan", ","]
    texts = ["".join(rng.choice(parts) for _ in range(rng.randint(1, 7))) for _ in range(5000)]
    plain = [t for t in texts if re.match(PLAIN_NUMBER, t)]
    assert len(plain) > 500
    values = pc.cast(pa.array(plain), pa.float64()).to_pylist()
    assert values == [float(t) for t in plain]


@pytest.mark.parametrize(
    "change",
    [
        lambda t: t.replace("\r\n", "\r\n\r\n", 3),  # blank lines (the writer's CR LF)
        lambda t: t.replace("\r\n", "\n").replace("\n", "\n\n", 2),  # LF, blank lines
        lambda t: t.replace("M0,", '"M0",', 1).replace("\r\n", "\r\n\r\n", 2),  # a quote too
        lambda t: t + "\r\n\r\n",  # blank lines at the end
    ],
)
def test_blank_lines_give_the_csv_modules_cells_and_rows(tmp_path, monkeypatch, change):
    # Reference: Python's csv module, which counts every line (an empty one is an empty row).
    sheets = random_sheets(5, n_mv=4, n_lv=4)
    folder = write_csv_folder(tmp_path / "net", sheets)
    path = folder / "buses.csv"
    path.write_bytes(change(path.read_bytes().decode()).encode())
    assert csvload._with_arrow("buses", path.read_bytes(), []) is not None  # Arrow took it
    _same_cells(load_input(folder), _with_csv_module(monkeypatch, folder))


def test_the_fast_name_check_flags_what_the_per_cell_parser_refuses_or_folds():
    """Every code point up to U+3000 (and the invisible ones): Arrow's check of a name
    (columns.UNCLEAN_NAME) flags exactly the characters names.py refuses or drops, so a name
    it passes is one the per-cell parser takes as it is. Reference: names.py's own rules."""
    import pyarrow as pa
    import pyarrow.compute as pc

    from faultcalc.read import names
    from faultcalc.read.columns import UNCLEAN_NAME, UNCLEAN_TEXT

    chars = [chr(c) for c in range(0x3000) if not 0xD800 <= c <= 0xDFFF]
    chars += list(names.INVISIBLE)
    texts = [f"A{c}B" for c in chars]
    flagged = pc.match_substring_regex(pa.array(texts), UNCLEAN_NAME).to_pylist()
    refused = [names.name_problem(t) is not None or t.translate(names._DROP) != t for t in texts]
    assert flagged == refused
    flagged = pc.match_substring_regex(pa.array(texts), UNCLEAN_TEXT).to_pylist()
    assert flagged == [names.text_problem(t) is not None for t in texts]


def test_blank_and_trim_on_whole_columns_agree_with_python():
    """A cell is blank when Python's str.isspace() says so (raw.is_blank); the whole-column
    form (raw.blank_cells, Arrow's utf8_is_space) agrees on every code point to U+3000 and the
    Unicode spaces above it; Arrow's ASCII trim agrees with str.strip() wherever the fast path
    uses it (ASCII without the control characters U+001C to U+001F, which go cell by cell).
    Reference: Python's str methods."""
    import pyarrow as pa
    import pyarrow.compute as pc

    from faultcalc.read.raw import blank_cells

    codes = [c for c in range(0x3000) if not 0xD800 <= c <= 0xDFFF]
    codes += [0x3000, 0x205F, 0xFEFF, 0x180E]
    texts = [chr(c) * 2 for c in codes] + ["", " x ", "x"]
    assert blank_cells(texts).tolist() == [is_blank(t) for t in texts]
    assert blank_cells(pa.array(texts)).tolist() == [is_blank(t) for t in texts]
    padded = [chr(c) + "x" + chr(c) for c in range(128) if c not in range(0x1C, 0x20)]
    trimmed = pc.ascii_trim_whitespace(pa.array(padded)).to_pylist()
    assert trimmed == [t.strip() for t in padded]
