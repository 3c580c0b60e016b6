"""in_service on the element sheets, and cases that switch elements and buses (#12).

Invented systems. Expectations: an element out of service is exactly as if its row were not
there, and a bus out of service takes with it what is fed only through it (common practice, no
source); both readers give the same System.
"""

from __future__ import annotations

import copy

import pytest
from builders import transformer
from conftest import without_origin

from faultcalc import read_system, run_study, sample_path

BASE = {
    "buses": [
        {"bus": "HV", "kv": 12.47},
        {"bus": "A", "kv": 0.48},
        {"bus": "B", "kv": 0.48},
        {"bus": "PNL", "kv": 0.48},
    ],
    "sources": [{"source": "U", "bus": "HV", "sc_mva": 300, "xr": 10, "slg_ka": 12}],
    "transformers": [
        transformer(transformer="TA", lv_bus="A"),
        transformer(transformer="TB", lv_bus="B"),
    ],
    "impedances": [
        {"element": "TIE", "from_bus": "A", "to_bus": "B", "r_ohm": 0, "x_ohm": 0},
    ],
    "cables": [
        {
            "cable": "C1",
            "from_bus": "B",
            "to_bus": "PNL",
            "length_ft": 80,
            "r_ohm_per_kft": 0.05,
            "x_ohm_per_kft": 0.04,
        }
    ],
    "machines": [
        {
            "machine": "GEN",
            "bus": "A",
            "kind": "generator",
            "kva": 500,
            "kv": 0.48,
            "xd_pct": 12,
            "xr": 15,
        }
    ],
}


def _with(changes):
    sheets = copy.deepcopy(BASE)
    for (sheet, index), values in changes.items():
        sheets[sheet][index].update(values)
    return sheets


def _i3(result, bus):
    return float(result.buses.set_index("bus").loc[bus, "i3ph_ka"])


@pytest.mark.parametrize("kind", ["csv", "xlsx"])
def test_a_normally_open_tie_and_a_standby_generator(make_input, kind):
    sheets = copy.deepcopy(BASE)
    sheets["impedances"][0]["in_service"] = "no"
    sheets["machines"][0]["in_service"] = "no"
    system = read_system(make_input(sheets, kind=kind))
    assert len(system.impedances) == 0 and len(system.machines) == 0
    notes = [w for w in system.warnings if "out of service" in w]
    assert len(notes) == 2 and "TIE is out of service" in notes[0]
    # Exactly the system without those rows.
    without = copy.deepcopy(BASE)
    del without["impedances"], without["machines"]
    expected = run_study(read_system(make_input(without, kind=kind)))
    got = run_study(system)
    assert got.buses.i3ph_ka.tolist() == pytest.approx(expected.buses.i3ph_ka.tolist(), rel=1e-12)
    assert _i3(got, "B") < _i3(run_study(read_system(make_input(BASE, kind=kind))), "B")


def test_the_out_of_service_row_is_still_checked(make_input):
    sheets = _with({("machines", 0): {"in_service": "no", "bus": "NOWHERE"}})
    with pytest.raises(Exception) as info:
        read_system(make_input(sheets))
    assert "NOWHERE" in str(info.value)
    sheets = _with({("impedances", 0): {"in_service": "maybe"}})
    with pytest.raises(Exception) as info:
        read_system(make_input(sheets))
    assert "in_service" in str(info.value) and "maybe" in str(info.value)


def test_a_case_puts_an_element_back_in_service(make_input):
    sheets = _with({("impedances", 0): {"in_service": "no"}, ("machines", 0): {"in_service": "no"}})
    sheets["cases"] = [
        {
            "case": "tie closed, generator on",
            "element": "TIE",
            "column": "in_service",
            "value": "yes",
        },
        {
            "case": "tie closed, generator on",
            "element": "GEN",
            "column": "in_service",
            "value": "yes",
        },
    ]
    result = run_study(read_system(make_input(sheets)))
    everything = run_study(read_system(make_input(copy.deepcopy(BASE))))
    case = result.cases["tie closed, generator on"].set_index("bus")
    assert case.loc["B", "i3ph_ka"] == pytest.approx(_i3(everything, "B"), rel=1e-12)
    assert case.loc["B", "i3ph_ka"] > _i3(result, "B")


def test_csv_and_workbook_leave_out_the_same_rows(make_input):
    sheets = _with({("impedances", 0): {"in_service": "no"}, ("cables", 0): {"in_service": "no"}})
    fast = read_system(make_input(sheets))
    careful = read_system(make_input(sheets, name="book", kind="xlsx"))
    assert without_origin(fast) == without_origin(careful)
    assert fast.warnings == careful.warnings
    assert [c.row for c in careful.cables] == [] and [e.row for e in fast.impedances] == []


def test_a_case_takes_a_bus_out_with_what_hangs_on_it(make_input):
    # B out: TB and the tie and the cable to PNL go with it, and PNL, fed only through B.
    sheets = copy.deepcopy(BASE)
    sheets["cases"] = [{"case": "B out", "element": "B", "column": "in_service", "value": "no"}]
    system = read_system(make_input(sheets))
    ((name, case),) = system.cases
    assert [b.bus for b in case.buses] == ["HV", "A"]
    assert [t.transformer for t in case.transformers] == ["TA"]
    assert not case.impedances and not case.cables
    note = [w for w in system.warnings if "case 'B out'" in w]
    assert len(note) == 1 and "bus B" in note[0] and "PNL" in note[0] and "TB" in note[0]
    result = run_study(system)
    b_out = result.cases["B out"].set_index("bus")
    assert list(b_out.index) == ["HV", "A"]
    # A alone on TA (the tie gone) against A and B tied in the base case.
    assert b_out.loc["A", "i3ph_ka"] < _i3(result, "A")


def test_taking_a_bus_out_on_the_bundled_sample(tmp_path):
    # The bundled sample with a case that takes SUB-A out (it was an internal error before).
    folder = tmp_path / "sample"
    folder.mkdir()
    for f in sample_path("double_ended_480v").glob("*.csv"):
        (folder / f.name).write_bytes(f.read_bytes())
    with (folder / "cases.csv").open("a", encoding="utf-8") as handle:
        handle.write("SUB-A out,SUB-A,in_service,no\n")
    result = run_study(read_system(folder))
    sub_a_out = result.cases["SUB-A out"].set_index("bus")
    assert "SUB-A" not in sub_a_out.index and "DP-1" not in sub_a_out.index
    assert "SUB-B" in sub_a_out.index
    assert any("SUB-A out" in w and "DP-1" in w for w in result.warnings)


@pytest.mark.parametrize("kind", ["csv", "xlsx"])
def test_a_bus_out_of_service_in_the_base_case_and_back_in_a_case(make_input, kind):
    sheets = copy.deepcopy(BASE)
    sheets["buses"][2]["in_service"] = "no"  # B, and PNL fed only through it
    sheets["cases"] = [{"case": "B back", "element": "B", "column": "in_service", "value": "yes"}]
    system = read_system(make_input(sheets, kind=kind))
    assert [b.bus for b in system.buses] == ["HV", "A"]
    assert any(w.startswith("sheet 'buses': out of service: bus B") for w in system.warnings)
    result = run_study(system)
    everything = run_study(read_system(make_input(copy.deepcopy(BASE), kind=kind)))
    back = result.cases["B back"].set_index("bus")
    assert back.loc["PNL", "i3ph_ka"] == pytest.approx(_i3(everything, "PNL"), rel=1e-12)


def test_bus_positions_carried_past_a_removed_bus_are_those_looked_up_afresh(make_input):
    # B (and PNL with it) listed first, so every bus after them moves up when they go: the
    # positions a case keeps for its references must follow (renumbered, not looked up again).
    sheets = copy.deepcopy(BASE)
    sheets["buses"] = [sheets["buses"][2], sheets["buses"][3], *sheets["buses"][:2]]
    sheets["cases"] = [
        {"case": "B out", "element": "B", "column": "in_service", "value": "no"},
        {"case": "B out", "element": "GEN", "column": "in_service", "value": "no"},
    ]
    system = read_system(make_input(sheets))
    ((_, case),) = system.cases
    assert [b.bus for b in case.buses] == ["HV", "A"]
    fresh = {b.bus: k for k, b in enumerate(case.buses)}
    for sheet, columns in (("sources", ("bus",)), ("transformers", ("hv_bus", "lv_bus"))):
        for column in columns:
            names = getattr(case, sheet).column(column)
            assert case.bus_positions(names).tolist() == [fresh[n] for n in names]
    # And the case studies as the input without those rows (common practice, no source).
    without = copy.deepcopy(BASE)
    del without["impedances"], without["cables"], without["machines"]
    without["buses"] = without["buses"][:2]
    without["transformers"] = without["transformers"][:1]
    expected = run_study(read_system(make_input(without, name="without")))
    got = run_study(system).cases["B out"].set_index("bus")
    for bus in ("HV", "A"):
        assert got.loc[bus, "i3ph_ka"] == pytest.approx(_i3(expected, bus), rel=1e-12)
