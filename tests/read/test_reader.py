"""Reader behaviour on well-formed but untidy input (common practice, no source)."""

from __future__ import annotations

import copy

from builders import transformer

from faultcalc import read_system

BASE = {
    "buses": [{"bus": "HV", "kv": 12.47}, {"bus": "LV", "kv": 0.48}],
    "sources": [{"source": "U", "bus": "HV", "sc_mva": 200, "xr": 8}],
    "transformers": [transformer(hv_winding="d", lv_winding="yn")],
}


def test_choices_are_case_insensitive(make_input):
    system = read_system(make_input(copy.deepcopy(BASE)))
    assert (system.transformers[0].hv_winding, system.transformers[0].lv_winding) == ("D", "YN")


def test_unknown_column_and_sheet_are_warnings(make_input):
    sheets = copy.deepcopy(BASE)
    sheets["buses"][0]["colour"] = "red"
    sheets["notes"] = [{"text": "hello"}]
    warnings = read_system(make_input(sheets)).warnings
    assert any(
        "sheet 'buses', row 1, column 'colour'" in w and "unknown column" in w for w in warnings
    )
    assert any("sheet 'notes'" in w and "unknown sheet" in w for w in warnings)


def test_blank_rows_are_ignored_and_rows_numbered_as_the_spreadsheet(make_input, tmp_path):
    folder = make_input(copy.deepcopy(BASE))
    text = (folder / "buses.csv").read_text()
    lines = text.splitlines()
    (folder / "buses.csv").write_text("\n".join([lines[0], ",,", lines[1], "", lines[2]]) + "\n")
    system = read_system(folder)
    assert [(b.bus, b.row) for b in system.buses] == [("HV", 3), ("LV", 5)]


def test_headers_are_trimmed_and_case_insensitive(make_input):
    sheets = copy.deepcopy(BASE)
    sheets["buses"] = [{" BUS ": b["bus"], "kV": b["kv"]} for b in sheets["buses"]]
    system = read_system(make_input(sheets, kind="xlsx"))
    assert [b.kv for b in system.buses] == [12.47, 0.48]
    assert system.warnings == ()


def test_study_settings_defaults_and_values(make_input):
    sheets = copy.deepcopy(BASE)
    sheets["study"] = [
        {"setting": "frequency_hz", "value": 50},
        {"setting": "title", "value": "Invented test"},
    ]
    s = read_system(make_input(sheets)).settings
    assert (s.frequency_hz, s.base_mva, s.prefault_pu, s.title) == (50, 100.0, 1.0, "Invented test")
