"""Three-phase fault currents against hand calculations."""

from __future__ import annotations

import math

import pytest
from builders import transformer

from faultcalc import read_system, run_study

INFINITE_MVA = 1e9  # a source this strong is an infinite bus to about 1e-8 relative


def buses_of(result):
    return result.buses.set_index("bus")


def test_transformer_on_infinite_bus_1000kva_480v(make_input):
    # I = kVA / (sqrt(3) x kV x Z%/100): 1000 kVA, 480 V, 5.75 % gives 20.92 kA
    # (common practice, no source).
    path = make_input(
        {
            "buses": [{"bus": "HV", "kv": 12.47}, {"bus": "LV", "kv": 0.48}],
            "sources": [{"source": "U", "bus": "HV", "sc_mva": INFINITE_MVA, "xr": 10}],
            "transformers": [transformer()],
        }
    )
    lv = buses_of(run_study(read_system(path))).loc["LV"]
    assert lv.i3ph_ka == pytest.approx(20.92, abs=0.005)
    # kVA / (sqrt(3) x kV x Z) is in amperes; / 1000 for kA.
    assert lv.i3ph_ka == pytest.approx(1000 / (math.sqrt(3) * 0.48 * 0.0575) / 1000, rel=1e-7)
    assert lv.xr == pytest.approx(5.0, rel=1e-6)


def test_radial_utility_transformer_cable_by_hand(make_input):
    # Worked by hand below in per-unit on a 10 MVA base (common practice, no source):
    # utility 250 MVA, X/R 8 at 12.47 kV; 750 kVA 12.47/0.48 kV 5.5 % X/R 5 transformer;
    # 200 ft of 2 sets of 0.0490 + j0.0450 ohm/1000 ft cable to a 480 V panel.
    path = make_input(
        {
            "study": [{"setting": "base_mva", "value": 10}],
            "buses": [
                {"bus": "UTIL", "kv": 12.47},
                {"bus": "SWBD", "kv": 0.48},
                {"bus": "PNL", "kv": 0.48},
            ],
            "sources": [{"source": "U", "bus": "UTIL", "sc_mva": 250, "xr": 8}],
            "transformers": [
                {
                    "transformer": "T1",
                    "hv_bus": "UTIL",
                    "lv_bus": "SWBD",
                    "kva": 750,
                    "hv_kv": 12.47,
                    "lv_kv": 0.48,
                    "z_pct": 5.5,
                    "xr": 5,
                    "hv_winding": "D",
                    "lv_winding": "YN",
                }
            ],
            "cables": [
                {
                    "cable": "F1",
                    "from_bus": "SWBD",
                    "to_bus": "PNL",
                    "length_ft": 200,
                    "sets": 2,
                    "r_ohm_per_kft": 0.049,
                    "x_ohm_per_kft": 0.045,
                }
            ],
        }
    )
    base_mva = 10.0

    def by_xr(z, xr):
        r = z / math.sqrt(1 + xr * xr)
        return complex(r, r * xr)

    z_src = by_xr(base_mva / 250.0, 8.0)
    z_tx = by_xr(0.055 * base_mva / 0.75, 5.0)
    z_base_lv = 0.48**2 / base_mva
    z_cable = complex(0.049, 0.045) * 0.2 / 2 / z_base_lv
    i_base_lv = base_mva / (math.sqrt(3) * 0.48)
    i_base_hv = base_mva / (math.sqrt(3) * 12.47)
    b = buses_of(run_study(read_system(path)))
    assert b.loc["UTIL", "i3ph_ka"] == pytest.approx(i_base_hv / abs(z_src), rel=1e-9)
    assert b.loc["SWBD", "i3ph_ka"] == pytest.approx(i_base_lv / abs(z_src + z_tx), rel=1e-9)
    z_pnl = z_src + z_tx + z_cable
    assert b.loc["PNL", "i3ph_ka"] == pytest.approx(i_base_lv / abs(z_pnl), rel=1e-9)
    assert b.loc["PNL", "r1_ohm"] == pytest.approx(z_pnl.real * z_base_lv, rel=1e-9)
    assert b.loc["PNL", "x1_ohm"] == pytest.approx(z_pnl.imag * z_base_lv, rel=1e-9)
    assert b.loc["PNL", "z1_pu"] == pytest.approx(abs(z_pnl), rel=1e-9)
    assert b.loc["PNL", "xr"] == pytest.approx(z_pnl.imag / z_pnl.real, rel=1e-9)
    assert b.loc["PNL", "s3ph_mva"] == pytest.approx(base_mva / abs(z_pnl), rel=1e-9)


@pytest.mark.parametrize("prefault", [1.0, 1.05])
def test_source_bus_reproduces_the_utility_figure(make_input, prefault):
    # The utility's stated available current comes back at its bus whatever the prefault
    # voltage (the convention stated in the README; common practice, no source).
    path = make_input(
        {
            "study": [{"setting": "prefault_pu", "value": prefault}],
            "buses": [{"bus": "U", "kv": 13.8}],
            "sources": [{"source": "S", "bus": "U", "sc_ka": 18.5, "xr": 15}],
        }
    )
    u = buses_of(run_study(read_system(path))).loc["U"]
    assert u.i3ph_ka == pytest.approx(18.5, rel=1e-12)
    assert u.xr == pytest.approx(15, rel=1e-9)


def test_off_nominal_transformer_refers_source_through_the_rated_ratio(make_input):
    # A 13.2/0.48 kV transformer on a 12.47 kV bus. In ohms at 480 V the Thevenin impedance is
    # the transformer's LV ohms plus the source's ohms referred through the rated turns ratio
    # (0.48/13.2)^2 (circuit theory of an ideal transformer; common practice, no source).
    path = make_input(
        {
            "buses": [{"bus": "HV", "kv": 12.47}, {"bus": "LV", "kv": 0.48}],
            "sources": [{"source": "U", "bus": "HV", "sc_mva": 100, "xr": 10}],
            "transformers": [
                {
                    "transformer": "T",
                    "hv_bus": "HV",
                    "lv_bus": "LV",
                    "kva": 2000,
                    "hv_kv": 13.2,
                    "lv_kv": 0.48,
                    "z_pct": 6,
                    "xr": 8,
                    "hv_winding": "D",
                    "lv_winding": "YN",
                }
            ],
        }
    )
    system = read_system(path)
    assert any("off-nominal" in w for w in system.warnings)
    lv = buses_of(run_study(system)).loc["LV"]

    def by_xr(z, xr):
        r = z / math.sqrt(1 + xr * xr)
        return complex(r, r * xr)

    z_src_ohm = by_xr(12.47**2 / 100.0, 10)
    z_tx_ohm = by_xr(0.06 * 0.48**2 / 2.0, 8)
    z_lv_ohm = z_tx_ohm + z_src_ohm * (0.48 / 13.2) ** 2
    assert complex(lv.r1_ohm, lv.x1_ohm) == pytest.approx(z_lv_ohm, rel=1e-9)
    assert lv.i3ph_ka == pytest.approx(0.48 / math.sqrt(3) / abs(z_lv_ohm), rel=1e-9)


def test_parallel_sources_and_closed_tie(make_input):
    # Two identical transformers in parallel through a closed tie halve the impedance
    # (circuit theory; common practice, no source); both tied buses report the same values.
    transformer = {
        "kva": 1500,
        "hv_kv": 12.47,
        "lv_kv": 0.48,
        "z_pct": 5.75,
        "xr": 6,
        "hv_winding": "D",
        "lv_winding": "YN",
    }
    path = make_input(
        {
            "buses": [
                {"bus": "HV", "kv": 12.47},
                {"bus": "A", "kv": 0.48},
                {"bus": "B", "kv": 0.48},
            ],
            "sources": [{"source": "U", "bus": "HV", "sc_mva": INFINITE_MVA, "xr": 10}],
            "transformers": [
                {"transformer": "TA", "hv_bus": "HV", "lv_bus": "A", **transformer},
                {"transformer": "TB", "hv_bus": "HV", "lv_bus": "B", **transformer},
            ],
            "impedances": [
                {"element": "TIE", "from_bus": "A", "to_bus": "B", "r_ohm": 0, "x_ohm": 0}
            ],
        }
    )
    result = run_study(read_system(path))
    b = buses_of(result)
    one = 1500 / (math.sqrt(3) * 0.48 * 0.0575) / 1000  # A -> kA
    assert b.loc["A", "i3ph_ka"] == pytest.approx(2 * one, rel=1e-7)
    assert b.loc["B", "i3ph_ka"] == pytest.approx(b.loc["A", "i3ph_ka"], rel=1e-12)
    assert result.node_groups[1] == "B" and result.node_groups[2] == "A"
