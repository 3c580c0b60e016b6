"""Machine data: xd_pct is the reactance X"d; R = X / (X/R) (#12)."""

from __future__ import annotations

import math

import pytest

from faultcalc import read_system, run_study


def _motor_system(make_input, xr: float):
    return {
        "buses": [{"bus": "MCC", "kv": 0.48}],
        "machines": [
            {
                "machine": "G",
                "bus": "MCC",
                "kind": "generator",
                "kva": 1000,
                "kv": 0.48,
                "xd_pct": 20,
                "xr": xr,
            }
        ],
    }


@pytest.mark.parametrize("xr", [2.0, 3.0, 10.0, 40.0])
def test_xd_is_the_reactance_and_r_follows_from_xr(make_input, xr):
    # The trade writes machine data as X"d on the machine's rating with R = X"d / (X/R) (value
    # from memory of IEEE Std 551-2006; IEC 60909-0 writes a generator as R_G + jX"d). 1000 kVA
    # at 0.48 kV: base impedance 0.48^2 / 1 = 0.2304 ohm (common practice, no source).
    result = run_study(read_system(make_input(_motor_system(make_input, xr))))
    echo = result.elements.set_index("element").loc["G"]
    x_ohm = 0.20 * 0.48**2 / 1.0
    assert echo.x_ohm == pytest.approx(x_ohm, rel=1e-12)
    assert echo.r_ohm == pytest.approx(x_ohm / xr, rel=1e-12)
    # The bolted fault at the terminals: E / |R + jX|, E = 1 pu.
    bus = result.buses.set_index("bus").loc["MCC"]
    i_ka = 0.48 / math.sqrt(3) / abs(complex(x_ohm / xr, x_ohm))
    assert bus.i3ph_ka == pytest.approx(i_ka, rel=1e-12)


@pytest.mark.parametrize("xr,lower_pct", [(10.0, 0.5), (3.0, 5.4), (2.0, 11.8)])
def test_reactance_convention_against_the_magnitude_reading(make_input, xr, lower_pct):
    # Reading xd_pct as |Z| would overstate the machine's current by sqrt(1 + (1/(X/R))^2):
    # 0.5 % at X/R 10, 5.4 % at 3, 11.8 % at 2 (arithmetic, common practice, no source).
    bus = run_study(read_system(make_input(_motor_system(make_input, xr)))).buses.iloc[0]
    magnitude_reading_ka = 1000 / (math.sqrt(3) * 0.48) / 1000 / 0.20
    assert 100 * (magnitude_reading_ka / bus.i3ph_ka - 1) == pytest.approx(lower_pct, abs=0.05)
