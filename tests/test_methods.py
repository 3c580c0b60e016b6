"""Calculation methods: IEC 60909-0 maximum and minimum, IEEE first-cycle multipliers."""

from __future__ import annotations

import math

import pytest
from builders import transformer

from faultcalc import read_system, run_study
from faultcalc.solve import standards


def test_iec_60909_voltage_factors_and_transformer_correction():
    # IEC 60909-0:2016 Table 1: LV cmax 1.05 (+6 % systems) or 1.10 (+10 %), cmin 0.95; above
    # 1 kV cmax 1.10, cmin 1.00. Eq. 12a: K_T = 0.95 cmax / (1 + 0.6 xT).
    assert standards.c_max(0.4, 6) == 1.05 and standards.c_max(0.4, 10) == 1.10
    assert standards.c_min(0.48) == 0.95
    assert standards.c_max(13.8) == 1.10 and standards.c_min(13.8) == 1.00
    assert standards.k_t(0.06, 1.05) == pytest.approx(0.95 * 1.05 / 1.036, rel=1e-12)
    # IEC 60909-0 eq. 34: R at the end of the fault, 0.004 per C from 20 C.
    assert standards.end_of_fault_factor(20, 160) == pytest.approx(1.56, rel=1e-12)


def test_ieee_551_table_9_1_multipliers():
    # IEEE Std 551-2006 Table 9-1, first cycle.
    m = standards.ieee_first_cycle_multiplier
    assert m("induction_motor", 1500, 1800) == 1.0
    assert m("induction_motor", 300, 3600) == 1.0
    assert m("induction_motor", 300, 1800) == 1.2
    assert m("induction_motor", 50, None) == 1.2
    assert m("induction_motor", 40, None) == 1.67
    assert m("synchronous_motor", 40, None) == 1.0
    assert m("generator", 100, None) == 1.0


def _plant(make_input, method, motors=(), extra=None):
    sheets = {
        "study": [{"setting": "method", "value": method}, *(extra or [])],
        "buses": [{"bus": "HV", "kv": 12.47}, {"bus": "LV", "kv": 0.4}, {"bus": "P", "kv": 0.4}],
        "sources": [{"source": "U", "bus": "HV", "sc_mva": 250, "xr": 10}],
        "transformers": [transformer(lv_kv=0.4, z_pct=6, xr=8)],
        "cables": [
            {
                "cable": "F",
                "from_bus": "LV",
                "to_bus": "P",
                "length_m": 50,
                "sets": 1,
                "r_ohm_per_km": 0.2,
                "x_ohm_per_km": 0.08,
            }
        ],
    }
    if motors:
        sheets["machines"] = list(motors)
    return make_input(sheets)


def test_iec_60909_maximum_by_hand(make_input):
    # Worked by hand with IEC 60909-0 (2016): c = 1.10 (LV, +10 %), Z_Q = c U^2 / S"kQ at
    # 12.47 kV referred to 0.4 kV, Z_T x K_T, cable R from 75 C to 20 C with 0.004 per C;
    # I"k = c U_n / (sqrt(3) |Z_k|).
    b = run_study(read_system(_plant(make_input, "iec60909"))).buses.set_index("bus")
    c = 1.10
    zq = (1.10 * 12.47**2 / 250) * (0.4 / 12.47) ** 2
    zq = complex(zq / math.sqrt(101), zq * 10 / math.sqrt(101))
    x_t = 0.06 * 8 / math.sqrt(65)
    kt = 0.95 * c / (1 + 0.6 * x_t)
    zt = 0.06 * 0.4**2 / 1.0 * kt
    zt = complex(zt / math.sqrt(65), zt * 8 / math.sqrt(65))
    zl = complex(0.2 * 0.05 / (1 + 0.004 * 55), 0.08 * 0.05)
    i_lv = c * 0.4 / (math.sqrt(3) * abs(zq + zt))
    i_p = c * 0.4 / (math.sqrt(3) * abs(zq + zt + zl))
    assert b.loc["LV", "i3ph_ka"] == pytest.approx(i_lv, rel=1e-9)
    assert b.loc["P", "i3ph_ka"] == pytest.approx(i_p, rel=1e-9)
    assert b.loc["LV", "prefault_pu"] == 1.10 and b.loc["HV", "prefault_pu"] == 1.10
    # The utility's own figure comes back at its bus (IEC's Z_Q carries the same c).
    assert b.loc["HV", "i3ph_ka"] == pytest.approx(250 / (math.sqrt(3) * 12.47), rel=1e-9)


def test_iec_60909_minimum_by_hand(make_input):
    # Minimum: cmin 0.95 (LV), 1.00 above 1 kV; Z_Q with cmin; motors left out; cable at the
    # end-of-fault temperature 160 C (IEC 60909-0 eq. 34).
    motor = {
        "machine": "M",
        "bus": "P",
        "kind": "induction_motor",
        "kva": 200,
        "kv": 0.4,
        "xd_pct": 16.7,
        "xr": 10,
    }
    b = run_study(read_system(_plant(make_input, "iec60909", [motor]))).buses.set_index("bus")
    zq = (1.00 * 12.47**2 / 250) * (0.4 / 12.47) ** 2
    zq = complex(zq / math.sqrt(101), zq * 10 / math.sqrt(101))
    x_t = 0.06 * 8 / math.sqrt(65)
    zt = 0.06 * 0.4**2 * 0.95 * 1.10 / (1 + 0.6 * x_t)
    zt = complex(zt / math.sqrt(65), zt * 8 / math.sqrt(65))
    zl = complex(0.2 * 0.05 * (1 + 0.004 * 140) / (1 + 0.004 * 55), 0.08 * 0.05)
    i_min = 0.95 * 0.4 / (math.sqrt(3) * abs(zq + zt + zl))
    assert b.loc["P", "i3ph_min_ka"] == pytest.approx(i_min, rel=1e-9)
    assert b.loc["P", "i3ph_min_ka"] < b.loc["P", "i3ph_ka"]
    assert b.loc["P", "islg_min_ka"] < b.loc["P", "islg_ka"]


def test_thevenin_method_has_no_minimum_columns(make_input):
    b = run_study(read_system(_plant(make_input, "thevenin"))).buses
    assert b.i3ph_min_ka.isna().all()


@pytest.mark.parametrize(
    "hp,rpm,multiplier", [(40, None, 1.67), (100, 1800, 1.2), (300, 3600, 1.0), (1500, 1200, 1.0)]
)
def test_ieee_first_cycle_motor_contribution(make_input, hp, rpm, multiplier):
    # IEEE Std 551-2006 Table 9-1: the first-cycle contribution of a motor at its terminals is
    # rated current / (multiplier x Z"), Z" = X"d (1/(X/R) + j) with X"d the reactance.
    motor = {
        "machine": "M",
        "bus": "P",
        "kind": "induction_motor",
        "hp": hp,
        "kv": 0.4,
        "xd_pct": 16.7,
        "xr": 10,
    }
    if rpm:
        motor["rpm"] = rpm
    result = run_study(read_system(_plant(make_input, "ieee", [motor])), contributions=["P"])
    c = result.contributions
    row = c[(c.element == "M") & (c.fault == "3ph")].iloc[0]
    rated_ka = hp / (math.sqrt(3) * 0.4) / 1000
    assert row.i_ka == pytest.approx(
        rated_ka / (multiplier * abs(complex(0.0167, 0.167))), rel=1e-9
    )
    # IEEE practice: X/R from separate R and X reductions by default.
    assert result.basis.settings.xr_method == "separate"
