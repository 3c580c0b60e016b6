"""Inverter-based sources (#16 item 3): currents held at their limit, against hand
calculations (invented data).

The hand calculations below are written in ohms and amperes on a 480 V radial feeder and
solve each inverter's angle with a scalar root finder (scipy's brentq), their own
formulation: superposition on the feeder's Thevenin equivalents, not the module's formulas.
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest
from scipy.optimize import brentq

from faultcalc import read_system, run_study
from faultcalc.solve import inverters

KV = 0.48
E_V = KV * 1000 / math.sqrt(3)  # prefault phase voltage, volts (prefault_pu 1)
SOURCE_MVA, SOURCE_XR = 20.0, 8.0
R_KFT, X_KFT = 0.05, 0.04  # ohm per 1000 ft, both cables
LIMIT_PU, KVA, COUNT = 1.2, 250.0, 2
LIMIT_A = LIMIT_PU * COUNT * KVA / (math.sqrt(3) * KV)  # 721.7 A


def _z(magnitude, xr):
    r = magnitude / math.sqrt(1 + xr * xr)
    return complex(r, r * xr)


Z_S = _z(KV**2 / SOURCE_MVA, SOURCE_XR)  # the utility's impedance, ohms
Z_1 = complex(R_KFT, X_KFT) * 0.1  # cable S-A, 100 ft
Z_2 = complex(R_KFT, X_KFT) * 0.2  # cable A-F, 200 ft
Z_3 = complex(R_KFT, X_KFT) * 0.6  # cable S-G, 600 ft


def _cable(name, a, b, feet):
    return {
        "cable": name,
        "from_bus": a,
        "to_bus": b,
        "length_ft": feet,
        "r_ohm_per_kft": R_KFT,
        "x_ohm_per_kft": X_KFT,
    }


def feeder(inverter: dict | None = None, **settings) -> dict:
    """S (utility) - A (the inverter) - F, and S - G: a 480 V radial feeder (invented)."""
    sheets = {
        "buses": [{"bus": b, "kv": KV} for b in ("S", "A", "F", "G")],
        "sources": [{"source": "U", "bus": "S", "sc_mva": SOURCE_MVA, "xr": SOURCE_XR}],
        "cables": [_cable("C1", "S", "A", 100), _cable("C2", "A", "F", 200)]
        + [_cable("C3", "S", "G", 600)],
    }
    if inverter is not None:
        row = {
            "inverter": "PV",
            "bus": "A",
            "kva": KVA,
            "kv": KV,
            "count": COUNT,
            "current_limit_pu": LIMIT_PU,
        }
        row.update(inverter)
        sheets["inverters"] = [row]
    if settings:
        sheets["study"] = [{"setting": k, "value": v} for k, v in settings.items()]
    return sheets


def study(make_input, sheets, **options):
    return run_study(read_system(make_input(sheets)), **options)


def locked(c: complex, b: complex, m: float) -> complex:
    """Hand calculation: the terminal voltage V = c + b I of a source of current I = m at 90
    degrees behind V, its angle found by brentq on the angle mismatch."""

    def mismatch(phi):
        v = c + b * m * cmath.exp(1j * (phi - math.pi / 2))
        return (cmath.phase(v * cmath.exp(-1j * phi)) + math.pi) % (2 * math.pi) - math.pi

    centre = cmath.phase(c)
    phi = brentq(mismatch, centre - 1.2, centre + 0.3, xtol=1e-15)
    return c + b * m * cmath.exp(1j * (phi - math.pi / 2))


def test_an_inverter_at_its_limit_by_hand(make_input):
    # Bolted three-phase fault at F. Hand calculation (superposition): the inverter at A sees
    # the feeder's Thevenin equivalent with F shorted, c = E Z2 / (Zs + Z1 + Z2) behind
    # (Zs + Z1) || Z2, and delivers its limit current 90 degrees behind its own voltage; the
    # fault current is what reaches F through cable C2, V_A / Z2.
    result = study(make_input, feeder({}), contributions="F")
    c = E_V * Z_2 / (Z_S + Z_1 + Z_2)
    b = (Z_S + Z_1) * Z_2 / (Z_S + Z_1 + Z_2)
    v_a = locked(c, b, LIMIT_A)
    i_f = v_a / Z_2
    f = result.buses.set_index("bus").loc["F"]
    assert f.i3ph_ka == pytest.approx(abs(i_f) / 1000, rel=1e-9)
    # it counts: about 45 % of its current reaches F, the rest flows back towards the utility
    assert f.i3ph_ka > abs(E_V / (Z_S + Z_1 + Z_2)) / 1000 + 0.3 * LIMIT_A / 1000
    assert abs(v_a) / E_V < 0.9  # below prefault: the inverter is at its limit
    rows = result.contributions.set_index(["fault", "element"])
    pv = rows.loc[("3ph", "PV")]
    assert pv.kind == "inverter" and pv.from_bus == "A"
    assert pv.i_ka == pytest.approx(LIMIT_A / 1000, rel=1e-9)
    # 90 degrees behind its terminal voltage (angles against the prefault voltage at F)
    lag = pv.angle_deg - math.degrees(cmath.phase(v_a))
    assert (lag + 180) % 360 - 180 == pytest.approx(-90.0, abs=1e-7)
    # the cable into the fault carries all of it (a branch's current as contributions gives it)
    assert rows.loc[("3ph", "C2")].i_ka == pytest.approx(abs(i_f) / 1000, rel=1e-9)
    assert f.inverter_sweeps >= 1 and f.inverter_residual_pu <= inverters.TOLERANCE
    assert f.inverter_note == ""


def test_less_than_its_limit_where_its_voltage_would_rise_above_prefault(make_input):
    # Bolted fault at G, on the other branch: the voltage at A is high, and the full limit
    # current of a large group would lift it above prefault, so the inverter delivers the
    # current that holds |V_A| at E (hand calculation: brentq on the magnitude, each magnitude's
    # angle by brentq as above). c = E Z3 / (Zs + Z3) behind Zs || Z3 + Z1.
    big = {"count": 40}  # 40 x 250 kVA: 14.4 kA of limit current
    result = study(make_input, feeder(big), contributions="G")
    c = E_V * Z_3 / (Z_S + Z_3)
    b = Z_S * Z_3 / (Z_S + Z_3) + Z_1
    limit = LIMIT_A * 40 / COUNT
    assert abs(locked(c, b, limit)) > E_V  # at its limit it would lift A above prefault
    m = brentq(lambda m: abs(locked(c, b, m)) - E_V, 0.0, limit, xtol=1e-12)
    v_a = locked(c, b, m)
    i_inv = (v_a - c) / b
    v_s = v_a - Z_1 * i_inv  # the inverter's current flows from A to S through C1
    g = result.buses.set_index("bus").loc["G"]
    assert g.i3ph_ka == pytest.approx(abs(v_s / Z_3) / 1000, rel=1e-9)
    pv = result.contributions.set_index(["fault", "element"]).loc[("3ph", "PV")]
    assert pv.i_ka == pytest.approx(m / 1000, rel=1e-7)
    assert pv.i_ka < 0.5 * limit / 1000


def test_at_its_own_bus_the_inverter_holds_its_prefault_angle(make_input):
    # Bolted fault at A: no voltage is left there to lock to, and the grid alone gives A none,
    # so the current lags the prefault voltage by 90 degrees (the phase-locked loop held;
    # common practice, no source): I = E / (Zs + Z1) + L at -90 degrees (hand calculation).
    result = study(make_input, feeder({}))
    a = result.buses.set_index("bus").loc["A"]
    expected = E_V / (Z_S + Z_1) + LIMIT_A * cmath.exp(-1j * math.pi / 2)
    assert a.i3ph_ka == pytest.approx(abs(expected) / 1000, rel=1e-9)
    assert "3ph: angle held at prefault PV" in a.inverter_note
    assert any("cut off from every source" in w for w in result.warnings)


def test_negative_sequence_share_in_a_line_to_line_fault_by_hand(make_input):
    # Line-to-line fault (b-c, bolted) at the inverter's own bus A; Z = Z1 = Z2 there. With the
    # inverter's I1 and I2 in the open-circuit voltages (E1 = E + Z I1, E2 = Z I2) the fault
    # gives I1f = (E1 - E2) / (2 Z) and V1 = V2 = (E + Z (I1 + I2)) / 2 at A (symmetrical
    # components by hand). I1 lags V1 and I2 leads V2 = V1 by 90 degrees, so I1 + I2 is one
    # current of (1 - 2 s) L lagging V1: the hand calculation above with c = E / 2, b = Z / 2.
    share = 0.3
    result = study(make_input, feeder({"behaviour": "negative_share", "negative_share_pct": 30}))
    z = Z_S + Z_1
    v1 = locked(E_V / 2, z / 2, (1 - 2 * share) * LIMIT_A)
    u = v1 / abs(v1)
    i1 = -1j * (1 - share) * LIMIT_A * u
    i2 = 1j * share * LIMIT_A * u
    i1f = (E_V + z * i1 - z * i2) / (2 * z)
    a = result.buses.set_index("bus").loc["A"]
    assert a.ill_ka == pytest.approx(math.sqrt(3) * abs(i1f) / 1000, rel=1e-9)
    # the same inverter without the share: (1 - 0) L lagging V1
    plain = study(make_input, feeder({})).buses.set_index("bus").loc["A"]
    v1p = locked(E_V / 2, z / 2, LIMIT_A)
    i1p = (E_V + z * (-1j) * LIMIT_A * v1p / abs(v1p)) / (2 * z)
    assert plain.ill_ka == pytest.approx(math.sqrt(3) * abs(i1p) / 1000, rel=1e-9)
    # (I1 - I2 is L lagging V1 whatever the share, so the share moves the current only through
    # the angle: 1.6e-4 here, well above the 1e-9 asked)


def test_iec60909_clause_6_9_by_hand(make_input):
    # IEC 60909-0:2016 6.9 (from memory): I"k = (c Un / sqrt(3) + sum |Z_kj| I_skPFj) / |Z_kk|,
    # with Z_Q = c Un^2 / S"kQ (eq. 1), c = 1.10 (Table 1, LV +10 %), conductors at 20 C as
    # given (conductor_temp_c 20). On the radial feeder Z_FF = ZQ + Z1 + Z2 and the transfer
    # impedance Z_FA = ZQ + Z1 (their common path); by hand.
    sheets = feeder({}, method="iec60909", conductor_temp_c=20)
    result = study(make_input, sheets).buses.set_index("bus")
    c = 1.10
    z_q = c * _z(KV**2 / SOURCE_MVA, SOURCE_XR)
    z_ff, z_fa = z_q + Z_1 + Z_2, z_q + Z_1
    raised = c * E_V + abs(z_fa) * LIMIT_A
    f = result.loc["F"]
    assert f.i3ph_ka == pytest.approx(raised / abs(z_ff) / 1000, rel=1e-9)
    assert f.ill_ka == pytest.approx(math.sqrt(3) * raised / abs(2 * z_ff) / 1000, rel=1e-9)
    # the converter's current does not decay: Ib = Ik = I"k without machines (from memory)
    assert f.ib_ka == pytest.approx(f.i3ph_ka, rel=1e-9)
    assert f.ik_ka == pytest.approx(f.i3ph_ka, rel=1e-9)
    assert "IEC 60909-0 6.9" in f.inverter_note and np.isnan(f.inverter_sweeps)
    # minimum currents leave the inverters out: the same as without them
    without = study(make_input, feeder(None, method="iec60909", conductor_temp_c=20))
    assert f.i3ph_min_ka == pytest.approx(without.buses.set_index("bus").loc["F"].i3ph_min_ka)


def test_momentary_cessation(make_input):
    # With the fault at F the voltage at A falls to about 0.45 pu (hand calculation above):
    # an inverter that ceases below 0.9 pu injects nothing (the feeder alone), one that ceases
    # below 0.1 pu stays at its limit (the hand calculation of the first test).
    v_a = abs(
        locked(
            E_V * Z_2 / (Z_S + Z_1 + Z_2),
            (Z_S + Z_1) * Z_2 / (Z_S + Z_1 + Z_2),
            LIMIT_A,
        )
    )
    assert 0.1 < v_a / E_V < 0.9
    ceasing = study(make_input, feeder({"cease_below_pu": 0.9})).buses.set_index("bus")
    alone = study(make_input, feeder(None)).buses.set_index("bus")
    staying = study(make_input, feeder({"cease_below_pu": 0.1})).buses.set_index("bus")
    assert ceasing.loc["F", "i3ph_ka"] == pytest.approx(alone.loc["F", "i3ph_ka"], rel=1e-12)
    assert "3ph: ceased PV" in ceasing.loc["F", "inverter_note"]
    assert staying.loc["F", "i3ph_ka"] == pytest.approx(abs(v_a / Z_2) / 1000, rel=1e-9)
    assert "ceased" not in staying.loc["F", "inverter_note"]


def test_a_current_not_converged_on_is_not_reported(make_input, monkeypatch):
    # One sweep is not enough to converge at a bus where the inverter is locked to its
    # voltage: the currents there are refused (NaN), said in the note and the warnings.
    monkeypatch.setattr(inverters, "MAX_SWEEPS", 1)
    result = study(make_input, feeder({}))
    f = result.buses.set_index("bus").loc["F"]
    assert np.isnan(f.i3ph_ka) and np.isnan(f.ip_ka) and np.isnan(f.iasym_ka)
    assert "3ph: not converged after 1 sweeps" in f.inverter_note
    assert f.inverter_residual_pu > inverters.TOLERANCE
    assert any("did not converge" in w and "F" in w for w in result.warnings)


def test_limit_outside_the_usual_range_is_warned(make_input):
    # 1.05 to 1.5 x rated current usual (value from memory); 1.8 studied, with a warning
    system = read_system(make_input(feeder({"current_limit_pu": 1.8})))
    assert any("current_limit_pu" in w and "1.05 to 1.5" in w for w in system.warnings)


def test_no_duty_maximum_or_label_from_a_current_not_converged_on(
    make_input, tmp_path, monkeypatch
):
    # Where the iteration did not converge the device's duty is "not computed" (never "below
    # rating"), the bus's maximum and its service label have no figure (never the largest of
    # the other fault types), and every output says "not converged" where the current would
    # be (common practice, no source: a number not computed is not shown as one).
    import json
    import subprocess

    from faultcalc import write_json, write_workbook
    from faultcalc.report.labeltext import label_lines
    from faultcalc.report.pdf.build import write_report_to
    from faultcalc.results import NOT_CONVERGED
    from faultcalc.solve import duty

    monkeypatch.setattr(inverters, "MAX_SWEEPS", 1)
    sheets = feeder({})
    sheets["buses"][2].update(device="mccb", rating_ka=25, service="yes")
    result = study(make_input, sheets)
    f = result.buses.set_index("bus").loc["F"]
    assert f.duty_status == duty.STATUS_NOT_COMPUTED and np.isnan(f.duty_pct)
    worst = result.duty.set_index("bus").loc["F"]
    assert worst.duty_status == duty.STATUS_NOT_COMPUTED and np.isnan(worst.duty_pct)
    top = result.maximum.set_index("bus").loc["F"]
    assert np.isnan(top.max_ka) and top.max_case == NOT_CONVERGED
    label = result.labels.set_index("bus").loc["F"]
    assert np.isnan(label.label_ka) and label.label_case == NOT_CONVERGED
    words = " ".join(line.text for line in label_lines(result, "F"))
    assert "not computed" in words and "nan" not in words
    write_json(result, tmp_path / "r.json")
    row = next(b for b in json.loads((tmp_path / "r.json").read_text())["buses"] if b["bus"] == "F")
    assert row["i3ph_ka"] is None and NOT_CONVERGED in row["inverter_note"]
    from openpyxl import load_workbook

    write_workbook(result, tmp_path / "r.xlsx")
    book = load_workbook(tmp_path / "r.xlsx")
    cells = [c.value for row_ in book["Fault currents"].iter_rows() for c in row_]
    assert NOT_CONVERGED in cells
    summary = [c.value for row_ in book["Summary"].iter_rows() for c in row_]
    assert NOT_CONVERGED in summary
    write_report_to(result, tmp_path / "r.pdf")
    text = subprocess.run(
        ["pdftotext", str(tmp_path / "r.pdf"), "-"], capture_output=True, text=True, check=True
    ).stdout
    assert "Inverter-based sources" in text and NOT_CONVERGED in text


def test_cases_change_inverters(make_input):
    # A case takes the inverter out, another makes it ceases at 0.9 pu: both are the feeder
    # alone at F (the fault at F leaves about 0.45 pu at A, above), a third triples it; the
    # envelope takes the largest (common practice, no source).
    sheets = feeder({})
    sheets["cases"] = [
        {"case": "pv off", "element": "PV", "column": "in_service", "value": "no"},
        {"case": "pv ceases", "element": "PV", "column": "cease_below_pu", "value": 0.9},
        {"case": "pv big", "element": "PV", "column": "count", "value": 3 * COUNT},
    ]
    result = study(make_input, sheets)
    alone = study(make_input, feeder(None)).buses.set_index("bus")
    for case in ("pv off", "pv ceases"):
        f = result.cases[case].set_index("bus").loc["F"]
        assert f.i3ph_ka == pytest.approx(alone.loc["F", "i3ph_ka"], rel=1e-12), case
    big = result.cases["pv big"].set_index("bus").loc["F", "i3ph_ka"]
    assert big > result.buses.set_index("bus").loc["F", "i3ph_ka"]
    envelope = result.envelope.set_index("bus").loc["F"]
    assert envelope.i3ph_case == "pv big" and envelope.i3ph_ka == pytest.approx(big)


def test_ieee_interrupting_network_adds_the_limit_currents(make_input):
    # Method ieee, the 1.5-4 cycle network of a 13.8 kV version of the feeder: the inverter's
    # limit current does not decay, and is added in magnitude through the X-only network:
    # I = E / X_FF + (X_FA / X_FF) L with X_FF = Xs + X1 + X2, X_FA = Xs + X1, their common
    # path (hand calculation; IEEE C37.010's E/X with the converter added as IEC 60909-0 6.9
    # adds it, the conservative choice).
    kv = 13.8
    sheets = feeder({"kv": kv, "kva": 2000}, method="ieee")
    for b in sheets["buses"]:
        b["kv"] = kv
    sheets["sources"][0]["sc_mva"] = 300
    f = study(make_input, sheets).buses.set_index("bus").loc["F"]
    x_s = _z(kv**2 / 300, SOURCE_XR).imag
    x_ff, x_fa = x_s + Z_1.imag + Z_2.imag, x_s + Z_1.imag
    limit = LIMIT_PU * COUNT * 2000 / (math.sqrt(3) * kv)
    expected = kv * 1000 / math.sqrt(3) / x_ff + x_fa / x_ff * limit
    assert f.i_int_ka == pytest.approx(expected / 1000, rel=1e-9)
