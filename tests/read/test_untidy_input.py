"""What real workbooks contain (common practice, no source): every case read or located."""

from __future__ import annotations

import copy
import datetime as dt

import pytest
from builders import transformer

from faultcalc import InputError, read_system

BASE = {
    "buses": [{"bus": "HV", "kv": 12.47}, {"bus": "LV", "kv": 0.48}, {"bus": "P", "kv": 0.48}],
    "sources": [{"source": "U", "bus": "HV", "sc_mva": 250, "xr": 10, "slg_ka": 10}],
    "transformers": [transformer()],
    "cables": [
        {
            "cable": "C",
            "from_bus": "LV",
            "to_bus": "P",
            "length_ft": 100,
            "size": "4/0",
            "material": "cu",
            "raceway": "pvc",
        }
    ],
}


def edit(sheet, index, column, value):
    sheets = copy.deepcopy(BASE)
    sheets[sheet][index][column] = value
    return sheets


def problems_of(make_input, sheets, kind="csv"):
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets, kind=kind))
    return info.value.problems


@pytest.mark.parametrize(
    "text,value,words",
    [
        ("1,500", 1500.0, "thousands separator"),
        ("100 ft", 100.0, "unit 'ft'"),
        (" 100 ", 100.0, None),
    ],
)
def test_lenient_numbers_are_read_with_a_warning(make_input, text, value, words):
    system = read_system(make_input(edit("cables", 0, "length_ft", text)))
    assert system.cables[0].length_ft == value
    if words:
        assert any(words in w and "row 2" in w and "length_ft" in w for w in system.warnings)


def test_percent_sign_in_a_percent_column(make_input):
    system = read_system(make_input(edit("transformers", 0, "z_pct", "5.75%")))
    assert system.transformers[0].z_pct == 5.75


@pytest.mark.parametrize(
    "text,words",
    [
        ("1,5", "comma is ambiguous"),
        ("30 m", "put metres in length_m"),
        ("100 kV", "not this column's unit"),
        ("about 100", "expected a number"),
    ],
)
def test_ambiguous_numbers_are_located_errors(make_input, text, words):
    p = problems_of(make_input, edit("cables", 0, "length_ft", text))[0]
    assert (p.sheet, p.row, p.column) == ("cables", 2, "length_ft") and words in p.message


def test_percentage_formatted_xlsx_cell(make_input, tmp_path):
    path = make_input(copy.deepcopy(BASE), kind="xlsx")
    from openpyxl import load_workbook

    book = load_workbook(path)
    ws = book["transformers"]
    col = [c.value for c in ws[1]].index("z_pct") + 1
    ws.cell(row=2, column=col, value=0.0575).number_format = "0.00%"
    book.save(path)
    system = read_system(path)
    assert system.transformers[0].z_pct == pytest.approx(5.75)
    assert any("percentage-formatted" in w for w in system.warnings)
    col = [c.value for c in ws[1]].index("kva") + 1
    ws.cell(row=2, column=col, value=10).number_format = "0%"
    book.save(path)
    with pytest.raises(InputError) as info:
        read_system(path)
    assert "formatted as a percentage" in info.value.problems[0].message


def test_formula_without_saved_value(make_input):
    path = make_input(copy.deepcopy(BASE), kind="xlsx")
    from openpyxl import load_workbook

    book = load_workbook(path)
    ws = book["cables"]
    col = [c.value for c in ws[1]].index("length_ft") + 1
    ws.cell(row=2, column=col, value="=50*2")  # openpyxl saves no computed value
    book.save(path)
    with pytest.raises(InputError) as info:
        read_system(path)
    p = info.value.problems[0]
    assert (p.sheet, p.row, p.column) == ("cables", 2, "length_ft")
    assert "open the file in a spreadsheet program and save it" in p.message


def test_merged_and_hidden_cells_are_warned(make_input):
    path = make_input(copy.deepcopy(BASE), kind="xlsx")
    from openpyxl import load_workbook

    book = load_workbook(path)
    ws = book["buses"]
    ws.merge_cells("C2:C3")
    ws.row_dimensions[4].hidden = True
    book.save(path)
    system = read_system(path)
    assert any("C2:C3 are merged" in w for w in system.warnings)
    assert any("hidden row 4" in w for w in system.warnings)


def test_trailing_spaces_and_case_in_ids(make_input):
    sheets = copy.deepcopy(BASE)
    sheets["cables"][0]["to_bus"] = "p "
    system = read_system(make_input(sheets))
    assert system.cables[0].to_bus == "P"
    assert any("matched bus 'P' ignoring case" in w for w in system.warnings)
    assert any("spaces around the text removed" in w for w in system.warnings)


def test_ids_colliding_after_normalising(make_input):
    sheets = copy.deepcopy(BASE)
    sheets["buses"].append({"bus": "hv", "kv": 12.47})
    p = problems_of(make_input, sheets)[0]
    assert (p.sheet, p.row, p.column) == ("buses", 5, "bus") and "ignoring case" in p.message


def test_dates_where_numbers_belong(make_input):
    sheets = edit("cables", 0, "length_ft", dt.datetime(2024, 5, 1))
    p = problems_of(make_input, sheets, kind="xlsx")[0]
    assert "date or time" in p.message and p.column == "length_ft"


def test_empty_sheets_and_a_missing_one(make_input):
    folder = make_input(copy.deepcopy(BASE))
    (folder / "buses.csv").write_text("")
    with pytest.raises(InputError) as info:
        read_system(folder)
    assert any(x.sheet == "buses" for x in info.value.problems)
    (folder / "buses.csv").unlink()
    with pytest.raises(InputError) as info:
        read_system(folder)
    assert any("no 'buses' sheet" in x.message for x in info.value.problems)


def test_duplicate_headers(make_input, tmp_path):
    folder = make_input(copy.deepcopy(BASE))
    text = (folder / "buses.csv").read_text().splitlines()
    (folder / "buses.csv").write_text(
        "\n".join([text[0] + ",kv"] + [t + ",1" for t in text[1:]]) + "\n"
    )
    with pytest.raises(InputError) as info:
        read_system(folder)
    p = info.value.problems[0]
    assert (p.sheet, p.row, p.column) == ("buses", 1, "kv") and "appears twice" in p.message


def test_plausibility_warnings(make_input):
    sheets = copy.deepcopy(BASE)
    sheets["transformers"][0]["z_pct"] = 25
    sheets["sources"][0]["xr"] = 500
    sheets["cables"][0]["length_ft"] = 9000
    sheets["buses"].append({"bus": "X", "kv": 480})  # 480 typed for 0.48
    sheets["sources"].append({"source": "U2", "bus": "X", "sc_mva": 100, "xr": 10})
    text = "\n".join(read_system(make_input(sheets)).warnings)
    assert "looks like a voltage in volts" in text
    assert "25 % is outside" in text
    assert "X/R 500 is outside" in text
    assert "9,000 ft is longer" in text
