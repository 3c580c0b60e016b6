"""The voltage behind each Thevenin impedance as the network's open-circuit voltage (setting
prefault_voltage = open_circuit, #16 item 4)."""

from __future__ import annotations

import pytest
from builders import transformer

from faultcalc import read_system, run_study
from faultcalc.errors import InputError


def _sheets(setting: str, method: str = "thevenin"):
    return {
        "study": [
            {"setting": "prefault_voltage", "value": setting},
            {"setting": "method", "value": method},
        ],
        "buses": [{"bus": "HV", "kv": 13.8}, {"bus": "LV", "kv": 0.48}],
        "sources": [{"source": "U", "bus": "HV", "sc_mva": 300, "xr": 10, "slg_ka": 10}],
        "transformers": [
            transformer(transformer="T1", hv_bus="HV", lv_bus="LV", hv_kv=13.2, lv_kv=0.48)
        ],
    }


def test_a_13_2_kv_winding_on_a_13_8_kv_bus_lifts_the_secondary(make_input):
    # Ideal ratio at no load (hand calculation): the secondary sits at 13.8 / 13.2 of its
    # nominal, 1.045455 pu; the currents scale with it (Thevenin: I = V_oc / Z).
    nominal = run_study(read_system(make_input(_sheets("nominal")))).buses.set_index("bus")
    open_ = run_study(read_system(make_input(_sheets("open_circuit")))).buses.set_index("bus")
    assert open_.loc["HV", "prefault_pu"] == pytest.approx(1.0, rel=1e-12)
    assert open_.loc["LV", "prefault_pu"] == pytest.approx(13.8 / 13.2, rel=1e-12)
    assert nominal.loc["LV", "prefault_pu"] == 1.0
    for column in ("i3ph_ka", "islg_ka", "ill_ka", "illg_ka"):
        assert open_.loc["LV", column] == pytest.approx(
            nominal.loc["LV", column] * 13.8 / 13.2, rel=1e-12
        )
    assert open_.loc["HV", "i3ph_ka"] == pytest.approx(nominal.loc["HV", "i3ph_ka"], rel=1e-12)


def test_open_circuit_is_refused_with_the_iec_method(make_input):
    with pytest.raises(InputError) as found:
        read_system(make_input(_sheets("open_circuit", method="iec60909")))
    p = found.value.problems[0]
    assert (p.sheet, p.column, p.value) == ("study", "value", "open_circuit")
    assert "equivalent source" in p.message


def test_the_interrupting_network_takes_the_open_circuit_voltage_too(make_input):
    # Found in a re-read: method ieee's E/X kept the nominal voltage while the first-cycle
    # currents took the open-circuit one. With a 13.2 kV winding on a 13.8 kV bus the 4.16 kV
    # secondary's E/X rises by 13.8 / 13.2 like the rest (hand calculation, ideal ratio).
    def sheets(setting):
        out = _sheets(setting, method="ieee")
        out["buses"][1]["kv"] = 4.16
        out["transformers"][0]["lv_kv"] = 4.16
        return out

    nominal = run_study(read_system(make_input(sheets("nominal")))).buses.set_index("bus")
    open_ = run_study(read_system(make_input(sheets("open_circuit")))).buses.set_index("bus")
    assert open_.loc["LV", "i_int_ka"] == pytest.approx(
        nominal.loc["LV", "i_int_ka"] * 13.8 / 13.2, rel=1e-12
    )
