"""Cases as overrides of the base's columns: what a case changes is read afresh, and only that.

Check values: hand calculations of a three-phase bolted fault through a utility source and one
cable (I = V_LN / |Z_source + Z_cable|, Z_source = V_LL / (sqrt(3) I_sc) split by X/R; common
practice (no source): the Ohm's-law form of every short-circuit handbook), and the reader's own
per-cell messages (faultcalc/read/cells.py) for the cells a case sets.
"""

from __future__ import annotations

import math

import pytest
from openpyxl import Workbook

from faultcalc import InputError, read_system, run_study

M_PER_FT = 0.3048  # exact, by definition of the international foot


def _network(cases):
    return {
        "buses": [{"bus": "SWBD", "kv": 0.48}, {"bus": "MCC", "kv": 0.48}],
        "sources": [{"source": "UTIL", "bus": "SWBD", "sc_ka": 30, "xr": 6}],
        "cables": [
            {
                "cable": "F1",
                "from_bus": "SWBD",
                "to_bus": "MCC",
                "length_ft": 200,
                "size": "1/0",
                "material": "cu",
                "raceway": "steel",
            }
        ],
        "cases": cases,
    }


def _hand_i3_ka(r_cable_ohm: float, x_cable_ohm: float) -> float:
    z_source = 0.48 / (math.sqrt(3) * 30)  # ohm, from 30 kA at 0.48 kV
    r_source = z_source / math.sqrt(1 + 6**2)
    source = complex(r_source, 6 * r_source)
    return 0.48 / math.sqrt(3) / abs(source + complex(r_cable_ohm, x_cable_ohm))


def test_a_case_typing_per_km_impedance_on_a_cable_from_the_tables_uses_it(make_input):
    # The base cable takes R and X from the conductor tables; the case gives them per km.
    cases = [
        {"case": "per km", "element": "F1", "column": "r_ohm_per_km", "value": 0.1},
        {"case": "per km", "element": "F1", "column": "x_ohm_per_km", "value": 0.1},
    ]
    system = read_system(make_input(_network(cases)))
    ((_, case),) = system.cases
    cable = case.cables[0]
    assert cable.r_ohm_per_kft is None and cable.x_ohm_per_kft is None
    assert (cable.r_ohm_per_km, cable.x_ohm_per_km) == (0.1, 0.1)
    assert cable.impedance_source == ""
    assert system.cables[0].r_ohm_per_kft is not None  # the base keeps its table values
    length_km = 200 * M_PER_FT / 1000
    result = run_study(system).cases["per km"].set_index("bus")
    expected = _hand_i3_ka(0.1 * length_km, 0.1 * length_km)
    assert result.loc["MCC", "i3ph_ka"] == pytest.approx(expected, rel=1e-9)


def test_a_case_typing_per_kft_impedance_leaves_no_table_named(make_input):
    cases = [
        {"case": "typed", "element": "F1", "column": "r_ohm_per_kft", "value": 0.03},
        {"case": "typed", "element": "F1", "column": "x_ohm_per_kft", "value": 0.05},
    ]
    system = read_system(make_input(_network(cases)))
    cable = system.cases[0][1].cables[0]
    assert (cable.r_ohm_per_kft, cable.x_ohm_per_kft, cable.impedance_source) == (0.03, 0.05, "")
    result = run_study(system).cases["typed"].set_index("bus")
    assert result.loc["MCC", "i3ph_ka"] == pytest.approx(_hand_i3_ka(0.006, 0.01), rel=1e-9)


def test_a_case_resizing_a_table_cable_takes_the_tables_again(make_input):
    cases = [{"case": "bigger", "element": "F1", "column": "size", "value": "4/0"}]
    system = read_system(make_input(_network(cases)))
    base, case = system.cables[0], system.cases[0][1].cables[0]
    assert "1/0" in base.impedance_source and "4/0" in case.impedance_source
    assert case.r_ohm_per_kft < base.r_ohm_per_kft  # a larger conductor: less resistance


def _workbook_with_percent_case(path, column: str, value: float):
    sheets = _network([])
    book = Workbook()
    book.remove(book.active)
    for name, rows in sheets.items():
        if name == "cases":
            continue
        ws = book.create_sheet(name)
        headers = list(dict.fromkeys(k for row in rows for k in row))
        ws.append(headers)
        for row in rows:
            ws.append([row.get(h) for h in headers])
    ws = book.create_sheet("cases")
    ws.append(["case", "element", "column", "value"])
    ws.append(["formatted", "UTIL", column, value])
    ws.cell(2, 4).number_format = "0.0%"
    book.save(path)
    return path


def test_a_percent_formatted_case_value_is_read_as_the_base_sheet_reads_it(tmp_path):
    # A % column takes a percentage-formatted cell as percent (with a note); another column
    # refuses it (cells.py), in a case as on the element's own sheet.
    path = _workbook_with_percent_case(tmp_path / "kva.xlsx", "sc_ka", 0.25)
    with pytest.raises(InputError) as info:
        read_system(path)
    (problem,) = info.value.problems
    assert problem.sheet == "sources" and "formatted as a percentage" in problem.message
    assert "in case 'formatted'" in problem.message


def test_a_case_keeps_the_base_warnings_about_cells_it_does_not_set(make_input):
    sheets = _network([{"case": "long", "element": "F1", "column": "length_ft", "value": 300}])
    sheets["cables"][0]["from_bus"] = "swbd"  # matched ignoring case: a warning in the base
    sheets["cases"].append(
        {"case": "other ", "element": "UTIL", "column": "xr", "value": 7}
    )  # a case name with a space after it: a note on the cases sheet
    system = read_system(make_input(sheets))
    matched = [w for w in system.warnings if "matched bus 'SWBD'" in w]
    assert len(matched) == 1
    for _, case in system.cases:
        assert matched[0] in case.warnings  # the cell is as the base has it
        assert not any("sheet 'cases'" in w for w in case.warnings)


def test_a_workbook_number_in_a_message_shows_as_the_spreadsheet_shows_it(make_input):
    sheets = _network([])
    del sheets["cases"]
    sheets["sources"][0]["xr"] = -1
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets, kind="xlsx"))
    assert "(found -1)" in str(info.value.problems[0])
