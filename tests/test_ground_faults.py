"""Ground faults, winding connections, machines and contributions on small systems."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from builders import transformer
from click.testing import CliRunner

from faultcalc import InputError, read_system, run_study
from faultcalc.cli import main
from faultcalc.study import analyse, contributions_of


def two_bus(source=None, machines=None, **tx):
    sheets = {
        "buses": [{"bus": "HV", "kv": 12.47}, {"bus": "LV", "kv": 0.48}],
        "sources": [
            source
            or {"source": "U", "bus": "HV", "sc_mva": 500, "xr": 10, "slg_ka": 20, "slg_xr": 10}
        ],
        "transformers": [transformer(kva=1500, xr=6, **tx)],
    }
    if machines:
        sheets["machines"] = machines
    return sheets


def buses(result):
    return result.buses.set_index("bus")


def test_delta_wye_grounded_secondary_slg_exceeds_three_phase(make_input):
    # D-YN solidly grounded, fed from a strong source, Z0 = Z1: the source is not in the
    # secondary's zero-sequence loop, so 3E / (2 Z1 + Z0) > E / Z1 (common practice, no source).
    lv = buses(run_study(read_system(make_input(two_bus())))).loc["LV"]
    assert lv.islg_ka > lv.i3ph_ka
    assert lv.max_fault == "slg"
    # Z0 at the LV bus is the transformer's own impedance alone (on its LV ohms).
    z_t = 0.0575 * 0.48**2 / 1.5
    assert math.hypot(lv.r0_ohm, lv.x0_ohm) == pytest.approx(z_t, rel=1e-9)


def test_ungrounded_secondary_has_no_ground_fault_current(make_input, tmp_path):
    # A D-Y (ungrounded) secondary offers no zero-sequence path (common practice, no source).
    path = make_input(two_bus(lv_winding="Y"))
    lv = buses(run_study(read_system(path))).loc["LV"]
    assert np.isnan(lv.islg_ka) and np.isnan(lv.ig_llg_ka) and np.isnan(lv.r0_ohm)
    assert "capacitance" in lv.ground_note
    assert lv.illg_ka == pytest.approx(lv.ill_ka, rel=1e-12)  # LLG becomes LL
    out = tmp_path / "r.json"
    result = CliRunner().invoke(
        main, ["study", str(path), "-o", str(tmp_path / "r.xlsx"), "--json", str(out)]
    )
    assert result.exit_code == 0, result.output
    entry = next(b for b in json.loads(out.read_text())["buses"] if b["bus"] == "LV")
    assert entry["islg_ka"] is None and entry["r0_ohm"] is None and entry["x0_ohm"] is None


@pytest.mark.parametrize("r_ohm", [1.386, 5.0])
def test_neutral_resistor_limits_ground_fault_to_vln_over_r(make_input, r_ohm):
    # A resistor of R ohms from the wye neutral limits a ground fault at the transformer
    # terminals to about V_LN / R (common practice, no source): 277 V / 1.386 ohm = 200 A.
    lv = buses(run_study(read_system(make_input(two_bus(lv_neutral_ohm=r_ohm))))).loc["LV"]
    v_ln_kv = 0.48 / math.sqrt(3)
    assert lv.islg_ka == pytest.approx(v_ln_kv / r_ohm, rel=0.01)
    assert lv.islg_ka < v_ln_kv / r_ohm  # the winding impedance only lowers it


def test_yn_yn_passes_zero_sequence_and_y_blocks_it(make_input):
    # YN-YN: the source's zero-sequence impedance is seen through the transformer; a Y winding
    # on either side blocks it (common practice, no source).
    passes = buses(run_study(read_system(make_input(two_bus(hv_winding="YN"))))).loc["LV"]
    dyn = buses(run_study(read_system(make_input(two_bus())))).loc["LV"]
    assert math.hypot(passes.r0_ohm, passes.x0_ohm) > math.hypot(dyn.r0_ohm, dyn.x0_ohm)
    blocked = buses(run_study(read_system(make_input(two_bus(hv_winding="Y"))))).loc["LV"]
    assert np.isnan(blocked.islg_ka)
    # A YN-D transformer grounds its HV side: the HV Z0 is the source in parallel with it.
    ynd = run_study(read_system(make_input(two_bus(hv_winding="YN", lv_winding="D"))))
    plain = run_study(read_system(make_input(two_bus(lv_winding="D"))))
    assert buses(ynd).loc["HV", "islg_ka"] > buses(plain).loc["HV", "islg_ka"]
    assert np.isnan(buses(ynd).loc["LV", "islg_ka"])


def test_source_zero_sequence_reproduces_its_line_to_ground_figure(make_input):
    # The utility's line-to-ground current comes back at its bus (the convention stated in the
    # README; common practice, no source).
    hv = buses(run_study(read_system(make_input(two_bus())))).loc["HV"]
    assert hv.islg_ka == pytest.approx(20.0, rel=1e-9)


def test_induction_motor_contributes_about_six_times_rated(make_input):
    # Induction motor subtransient reactance 16.7 % (IEEE Std 551-2006, Table 9-1): the
    # contribution to a bolted fault at its terminals is about 1 / 0.167 = 6.0 times rated
    # current; exactly 1 / |0.167 / 10 + j 0.167| with X"d the reactance and R = X / (X/R).
    motor = {
        "machine": "M1",
        "bus": "LV",
        "kind": "induction_motor",
        "hp": 500,
        "kv": 0.48,
        "xd_pct": 16.7,
        "xr": 10,
    }
    result = run_study(read_system(make_input(two_bus(machines=[motor]))), contributions=["LV"])
    c = result.contributions
    row = c[(c.element == "M1") & (c.fault == "3ph")].iloc[0]
    rated_ka = 500 / (math.sqrt(3) * 0.48) / 1000  # 1 kVA per hp
    assert row.i_ka / rated_ka == pytest.approx(1 / abs(complex(0.167 / 10, 0.167)), rel=1e-9)
    assert row.i_ka / rated_ka == pytest.approx(6.0, rel=0.01)
    # And the motor raises the bus's fault current by that much (in phase-aware sum).
    without = buses(run_study(read_system(make_input(two_bus())))).loc["LV", "i3ph_ka"]
    assert buses(result).loc["LV", "i3ph_ka"] > without + 0.9 * row.i_ka


def test_primary_current_of_a_secondary_ground_fault_on_delta_wye(make_input):
    # A line-to-ground fault on the wye side of a delta-wye transformer draws 1/sqrt(3) of the
    # fault current (in per-unit) in two primary lines and none in the third (common practice,
    # no source; it follows from the 30-degree phase displacement).
    source = {"source": "U", "bus": "HV", "sc_mva": 1e9, "xr": 10}
    result = run_study(read_system(make_input(two_bus(source=source))), contributions="LV")
    c = result.contributions.set_index(["fault", "element"])
    islg = buses(result).loc["LV", "islg_ka"]
    assert c.loc[("slg", "U"), "i_ka"] == pytest.approx(
        islg * 0.48 / 12.47 / math.sqrt(3), rel=1e-6
    )
    result_system = read_system(make_input(two_bus(source=source)))
    phasors = [
        p
        for p in contributions_of(analyse(result_system), [1])
        if p.element == "U" and p.fault == "slg"
    ]
    magnitudes = sorted(np.abs(phasors[0].phases_ka) / (islg * 0.48 / 12.47 / math.sqrt(3)))
    assert magnitudes == pytest.approx([0, 1, 1], abs=1e-6)
    assert result_system.transformers[0].phase_shift_clock == 1
    # Three-phase: the primary current is the secondary current times the turns ratio.
    i3 = buses(result).loc["LV", "i3ph_ka"]
    assert c.loc[("3ph", "U"), "i_ka"] == pytest.approx(i3 * 0.48 / 12.47, rel=1e-6)


@pytest.mark.parametrize("fault", ["3ph", "slg"])
def test_contributions_add_up_to_the_fault_current(make_input, fault):
    # Kirchhoff's current law at the faulted bus: the branches and shunts there deliver the
    # fault current (circuit theory, common practice, no source).
    from networks import random_sheets

    sheets = random_sheets(
        seed=21, n_mv=6, n_lv=14, loops=2, sources=2, zero_sequence=True, machines=8
    )
    a = analyse(read_system(make_input(sheets)))
    result = run_study(a.system)
    for b in range(len(a.system.buses)):
        node = a.network.node_of_bus[b]
        phasors = [p for p in contributions_of(a, [b]) if p.fault == fault]
        if not phasors:
            assert fault == "slg" and not a.network.grounded[node]
            continue
        name = a.system.buses[b].bus
        at_bus = [
            p
            for p in phasors
            if p.kind in ("transformer", "cable", "impedance") or p.from_bus == name
        ]
        total = sum(p.phases_ka[0] for p in at_bus)
        expected = result.buses.loc[b, "i3ph_ka" if fault == "3ph" else "islg_ka"]
        assert abs(total) == pytest.approx(expected, rel=1e-9)


def test_contribution_option_and_sheet(tmp_path):
    from faultcalc import sample_path

    out, js = tmp_path / "r.xlsx", tmp_path / "r.json"
    result = CliRunner().invoke(
        main,
        [
            "study",
            str(sample_path()),
            "-o",
            str(out),
            "--json",
            str(js),
            "--contributions",
            "SWBD-1,MCC-1",
        ],
    )
    assert result.exit_code == 0, result.output
    doc = json.loads(js.read_text())
    entries = doc["contributions"]
    assert {e["faulted_bus"] for e in entries} == {"SWBD-1", "MCC-1"}
    assert {e["fault"] for e in entries} == {"3ph", "slg"}
    for key in ("faulted_bus", "fault", "element", "from_bus", "i_ka", "angle_deg"):
        assert key in entries[0]
    from openpyxl import load_workbook

    assert "Contributions" in load_workbook(out).sheetnames
    bad = CliRunner().invoke(
        main, ["study", str(sample_path()), "-o", str(out) + "x", "--contributions", "NOPE"]
    )
    assert bad.exit_code == 2 and "NOPE" in bad.output


def test_generator_only_system_and_a_utility_outage_case(make_input):
    # A standby generator alone: I = rated current / |Z"| at its terminals, Z" = X"d (1/(X/R) + j)
    # with X"d the reactance (common practice, no source); a case taking the utility out leaves
    # the generator feeding the fault.
    gen = {
        "machine": "G",
        "bus": "LV",
        "kind": "generator",
        "kva": 500,
        "kv": 0.48,
        "xd_pct": 12.5,
        "xr": 20,
        "neutral_ohm": 0,
        "x0_pct": 5,
    }
    alone = make_input({"buses": [{"bus": "LV", "kv": 0.48}], "machines": [gen]})
    lv = buses(run_study(read_system(alone))).loc["LV"]
    rated_ka = 500 / (math.sqrt(3) * 0.48) / 1000
    assert lv.i3ph_ka == pytest.approx(rated_ka / abs(complex(0.125 / 20, 0.125)), rel=1e-9)
    assert lv.islg_ka > lv.i3ph_ka  # X0 below X"d, solidly grounded
    sheets = two_bus(machines=[gen])
    sheets["cases"] = [
        {"case": "utility out", "element": "U", "column": "in_service", "value": "no"}
    ]
    result = run_study(read_system(make_input(sheets)))
    out = result.cases["utility out"].set_index("bus")
    assert out.loc["LV", "i3ph_ka"] == pytest.approx(
        rated_ka / abs(complex(0.125 / 20, 0.125)), rel=1e-9
    )
    assert out.loc["LV", "i3ph_ka"] < buses(result).loc["LV", "i3ph_ka"]
    with pytest.raises(InputError) as info:
        read_system(
            make_input(
                {
                    "buses": [{"bus": "LV", "kv": 0.48}],
                    "machines": [dict(gen, kind="induction_motor")],
                }
            )
        )
    assert "no utility source" in info.value.problems[0].message
