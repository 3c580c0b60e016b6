"""Gross mistakes are located errors naming the likely slip; unusual values stay warnings (#12).

Each input below is a slip an engineer makes (invented data); the thresholds and their bases are
in faultcalc/read/slips.py. Every case is read as a CSV folder (the column-wise reader must give
way to the careful one) and as a workbook.
"""

from __future__ import annotations

import copy

import pytest
from builders import transformer
from click.testing import CliRunner

from faultcalc import InputError, read_system, run_study
from faultcalc.cli import main

BASE = {
    "buses": [{"bus": "HV", "kv": 12.47}, {"bus": "LV", "kv": 0.48}],
    "sources": [{"source": "U", "bus": "HV", "sc_mva": 259, "xr": 10, "slg_ka": 10}],
    "transformers": [transformer(kva=1500)],
}
MOTOR = {
    "machine": "M1",
    "bus": "LV",
    "kind": "induction_motor",
    "hp": 200,
    "kv": 0.46,
    "xd_pct": 16.7,
    "xr": 8,
}


def _problems(make_input, sheets, kind):
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets, kind=kind))
    return info.value.problems


def _edit(**rows):
    sheets = copy.deepcopy(BASE)
    for sheet, change in rows.items():
        change(sheets[sheet] if sheet in sheets else sheets.setdefault(sheet, []))
    return sheets


KINDS = ["csv", "xlsx"]


@pytest.mark.parametrize("kind", KINDS)
def test_the_correct_input_reads(make_input, kind):
    # The base case itself passes: 1500 kVA, 12.47/0.48 kV, 5.75 % on a 259 MVA utility gives
    # 28 kA at the 480 V bus (infinite-bus estimate 1500 / (sqrt(3) 0.48 0.0575) = 31.4 kA;
    # common practice, no source).
    lv = run_study(read_system(make_input(copy.deepcopy(BASE), kind=kind))).buses.iloc[1]
    assert 27 < lv.i3ph_ka < 31.4


@pytest.mark.parametrize("kind", KINDS)
def test_transformer_kva_typed_in_mva(make_input, kind):
    sheets = _edit(transformers=lambda t: t[0].update(kva=1.5))
    (p,) = _problems(make_input, sheets, kind)
    assert (p.sheet, p.row, p.column, p.value) == ("transformers", 2, "kva", 1.5)
    assert "1500 for 1.5 MVA" in p.message


@pytest.mark.parametrize("kind", KINDS)
def test_transformer_buses_swapped(make_input, kind):
    sheets = _edit(transformers=lambda t: t[0].update(hv_bus="LV", lv_bus="HV"))
    (p,) = _problems(make_input, sheets, kind)
    assert (p.sheet, p.row, p.column) == ("transformers", 2, "hv_bus")
    assert "look swapped" in p.message


@pytest.mark.parametrize("kind", KINDS)
def test_transformer_between_buses_of_another_voltage(make_input, kind):
    # A 12.47/0.48 kV unit placed between two 4.16 kV buses.
    sheets = copy.deepcopy(BASE)
    sheets["buses"] = [{"bus": "HV", "kv": 4.16}, {"bus": "LV", "kv": 4.16}]
    problems = _problems(make_input, sheets, kind)
    assert [(p.column, p.value) for p in problems] == [("hv_kv", 12.47), ("lv_kv", 0.48)]
    assert all("more than 1.5 x apart" in p.message for p in problems)


@pytest.mark.parametrize("kind", KINDS)
def test_machine_kv_typed_in_volts(make_input, kind):
    sheets = _edit(machines=lambda m: m.append(dict(MOTOR, kv=460)))
    (p,) = _problems(make_input, sheets, kind)
    assert (p.sheet, p.row, p.column, p.value) == ("machines", 2, "kv", 460)
    assert "reads as volts" in p.message and "0.46 for 460 V" in p.message


@pytest.mark.parametrize("kind", KINDS)
def test_machine_reactance_as_a_fraction(make_input, kind):
    sheets = _edit(machines=lambda m: m.append(dict(MOTOR, xd_pct=0.167)))
    (p,) = _problems(make_input, sheets, kind)
    assert (p.column, p.value) == ("xd_pct", 0.167) and "16.7 for a fraction" in p.message


@pytest.mark.parametrize("kind", KINDS)
def test_transformer_impedance_as_a_fraction(make_input, kind):
    sheets = _edit(transformers=lambda t: t[0].update(z_pct=0.0575))
    (p,) = _problems(make_input, sheets, kind)
    assert (p.column, p.value) == ("z_pct", 0.0575) and "5.75 for a fraction" in p.message


@pytest.mark.parametrize("kind", KINDS)
def test_available_current_typed_in_amperes(make_input, kind):
    def amperes(sources):
        sources[0].pop("sc_mva")
        sources[0]["sc_ka"] = 12000

    (p,) = _problems(make_input, _edit(sources=amperes), kind)
    assert (p.sheet, p.column, p.value) == ("sources", "sc_ka", 12000)
    assert "12 for 12000 A" in p.message


@pytest.mark.parametrize("kind", KINDS)
def test_prefault_typed_as_a_percent(make_input, kind):
    sheets = _edit(study=lambda s: s.append({"setting": "prefault_pu", "value": 105}))
    (p,) = _problems(make_input, sheets, kind)
    assert (p.sheet, p.row, p.column, p.value) == ("study", 2, "value", 105)
    assert "1.05 for 105 %" in p.message


@pytest.mark.parametrize("kind", KINDS)
def test_bus_kv_above_any_system(make_input, kind):
    sheets = _edit(buses=lambda b: b[1].update(kv=480))  # 480 kV: warned, see below
    sheets["buses"][0]["kv"] = 12470
    problems = _problems(make_input, sheets, kind)
    # One problem for the bus, none echoed by every element on it.
    assert [(p.sheet, p.column, p.value) for p in problems][0] == ("buses", "kv", 12470)
    assert "12.47 for 12470 V" in problems[0].message
    assert all(p.sheet != "sources" for p in problems)


@pytest.mark.parametrize("kind", KINDS)
def test_unusual_values_stay_warnings(make_input, kind):
    # Unusual but real: a 1.15 pu prefault (warned), a 13.8 kV winding on a 12.47 kV bus
    # (warned, 10.7 % off), an infinite bus for a hand check (warned), a 15 kVA unit.
    sheets = _edit(
        study=lambda s: s.append({"setting": "prefault_pu", "value": 1.15}),
        transformers=lambda t: t[0].update(hv_kv=13.8, kva=15),
        sources=lambda s: s[0].update(sc_mva=1e9, slg_ka=5e4),
    )
    warnings = "\n".join(read_system(make_input(sheets, kind=kind)).warnings)
    assert "prefault_pu: 1.15 pu is outside 0.9 to 1.1 pu" in warnings
    assert "winding rated 13.8 kV on bus HV of 12.47 kV" in warnings
    assert "infinite bus" in warnings


def test_a_slip_fails_the_command_with_status_2(make_input, tmp_path):
    sheets = _edit(transformers=lambda t: t[0].update(kva=1.5))
    out = tmp_path / "r.xlsx"
    run = CliRunner().invoke(main, ["study", str(make_input(sheets)), "-o", str(out)])
    assert run.exit_code == 2 and "kva" in run.output and not out.exists()
    assert "Traceback" not in run.output


def test_a_rated_kv_off_its_bus_is_one_rule():
    import numpy as np

    from faultcalc.read import slips

    # Warned beyond 5 % (slips.KV_MISMATCH_WARN, common practice, no source): 13.8 kV on
    # 12.47 kV is 10.7 % off, 13.0 kV is 4.25 %; a blank (NaN) kV is never warned.
    rated = np.array([13.8, 13.0, np.nan, 0.48])
    nominal = np.array([12.47, 12.47, 12.47, np.nan])
    assert slips.off_nominal(rated, nominal).tolist() == [True, False, False, False]
    assert bool(slips.off_nominal(0.6, 0.48)) and not slips.off_nominal(0.48, 0.48)
    assert slips.winding_off_nominal(13.8, "HV", 12.47) == (
        "winding rated 13.8 kV on bus HV of 12.47 kV (differs by +10.7%); modelled as an "
        "off-nominal ratio; check the nameplate and the bus voltage"
    )
