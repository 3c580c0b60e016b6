"""Grounding transformers (zig-zag or wye-delta banks): a zero-sequence path to ground at their
bus and none in the positive and negative sequences (#16 item 2)."""

from __future__ import annotations

import math

import pytest
from builders import transformer

from faultcalc import read_system, run_study
from faultcalc.errors import InputError

KV_LV = 4.16


def _sheets(bank: dict | None):
    sheets = {
        "buses": [{"bus": "HV", "kv": 13.8}, {"bus": "LV", "kv": KV_LV}],
        "sources": [{"source": "U", "bus": "HV", "sc_mva": 300, "xr": 10, "slg_ka": 10}],
        "transformers": [
            transformer(
                transformer="T1",
                hv_bus="HV",
                lv_bus="LV",
                hv_kv=13.8,
                lv_kv=KV_LV,
                hv_winding="YN",
                lv_winding="D",
                clock_number=1,
                kva=1000,  # the impedances the hand calculation below uses
                z_pct=5.75,
                xr=5,
            )
        ],
    }
    if bank is not None:
        sheets["grounding_transformers"] = [bank]
    return sheets


ZIGZAG = {
    "grounding_transformer": "ZZ1",
    "bus": "LV",
    "kind": "zigzag",
    "z0_ohm": 2.0,
    "xr": 8,
    "neutral_ohm": 1.0,
}


def _z(magnitude: float, xr: float) -> complex:
    r = magnitude / math.sqrt(1 + xr * xr)
    return complex(r, r * xr)


def test_a_zigzag_on_a_delta_fed_bus_by_hand(make_input):
    # Symmetrical components (any power-system analysis text, e.g. Grainger and Stevenson,
    # Chapter 12): I_slg = 3 E / |Z1 + Z2 + Z0| with Z0 = Z0(bank) + 3 Zn the only zero-sequence
    # path on the delta side; hand calculation of every impedance in ohms at 4.16 kV.
    result = run_study(read_system(make_input(_sheets(ZIGZAG)))).buses.set_index("bus")
    z_source = _z(13.8**2 / 300, 10) * (KV_LV / 13.8) ** 2
    z_t = _z(0.0575 * KV_LV**2 / 1.0, 5)
    z1 = z_source + z_t
    z0 = _z(2.0, 8) + 3 * 1.0
    e = KV_LV / math.sqrt(3)
    assert result.loc["LV", "i3ph_ka"] == pytest.approx(e / abs(z1), rel=1e-9)
    assert result.loc["LV", "islg_ka"] == pytest.approx(3 * e / abs(2 * z1 + z0), rel=1e-9)
    assert complex(result.loc["LV", "r0_ohm"], result.loc["LV", "x0_ohm"]) == pytest.approx(z0)


def test_without_the_bank_there_is_no_path_and_positive_sequence_is_untouched(make_input):
    with_bank = run_study(read_system(make_input(_sheets(ZIGZAG)))).buses.set_index("bus")
    without = run_study(read_system(make_input(_sheets(None)))).buses.set_index("bus")
    assert math.isnan(without.loc["LV", "islg_ka"])
    assert with_bank.loc["LV", "i3ph_ka"] == pytest.approx(without.loc["LV", "i3ph_ka"], rel=1e-9)
    assert with_bank.loc["LV", "ill_ka"] == pytest.approx(without.loc["LV", "ill_ka"], rel=1e-9)


def test_z0_in_percent_of_its_rating(make_input):
    # z0_pct on kva and kv: |Z0| = z0_pct/100 x kv^2 / MVA (common practice, no source)
    bank = dict(ZIGZAG, z0_ohm=None, z0_pct=2.0 / (KV_LV**2 / 0.5) * 100, kva=500, kv=KV_LV)
    del bank["z0_ohm"]
    a = run_study(read_system(make_input(_sheets(bank)))).buses.set_index("bus")
    b = run_study(read_system(make_input(_sheets(ZIGZAG)))).buses.set_index("bus")
    assert a.loc["LV", "islg_ka"] == pytest.approx(b.loc["LV", "islg_ka"], rel=1e-12)


def test_a_bank_without_its_impedance_is_located(make_input):
    bank = {k: v for k, v in ZIGZAG.items() if k != "z0_ohm"}
    with pytest.raises(InputError) as found:
        read_system(make_input(_sheets(bank)))
    assert any(p.sheet == "grounding_transformers" and p.row == 2 for p in found.value.problems)


def test_a_bank_on_an_unknown_bus_is_located(make_input):
    # common practice (no source): a reference to a bus that is not on the buses sheet is a
    # located error, as on every other element sheet (it was taken as the last bus)
    with pytest.raises(InputError) as found:
        read_system(make_input(_sheets(dict(ZIGZAG, bus="NOPE"))))
    (problem,) = found.value.problems
    assert (problem.sheet, problem.row, problem.column, problem.value) == (
        "grounding_transformers",
        2,
        "bus",
        "NOPE",
    )


def test_a_bank_goes_with_its_bus_out_of_service(make_input):
    # A bank on a bus taken out of service leaves with it (it was hung on the last bus of the
    # sheet): the other feeder's bus keeps its own zero-sequence path, equal to its positive
    # one (a source with Z0 = Z1: I_slg = I_3ph, symmetrical components by hand).
    sheets = _sheets(ZIGZAG)
    sheets["buses"][1]["in_service"] = "no"
    sheets["buses"].append({"bus": "X", "kv": KV_LV})
    sheets["sources"].append({"source": "U2", "bus": "X", "sc_mva": 100, "xr": 5})
    system = read_system(make_input(sheets))
    assert not len(system.grounding_transformers)
    assert any("ZZ1" in w for w in system.warnings)
    x = run_study(system).buses.set_index("bus").loc["X"]
    assert x.islg_ka == pytest.approx(x.i3ph_ka, rel=1e-12)
