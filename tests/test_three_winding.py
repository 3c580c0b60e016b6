"""Three-winding transformers and autotransformers (#16 item 1): the star equivalent, the zero
sequence by winding connection, the autotransformer, the rules of the sheet (invented data
unless a source is named)."""

from __future__ import annotations

import math

import pytest

from faultcalc import read_system, run_study
from faultcalc.errors import InputError
from faultcalc.solve import threewinding

BASE_MVA = 100.0
XR = 20.0


def _z(magnitude: float, xr: float) -> complex:
    r = magnitude / math.sqrt(1 + xr * xr)
    return complex(r, r * xr)


def _i_base_ka(kv: float) -> float:
    return BASE_MVA / (math.sqrt(3) * kv)


# The three-winding example of Grainger and Stevenson, Power System Analysis (value from memory
# of the book's three-winding transformer example, recomputed in the first test): 66/13.2/2.3
# kV, 15/10/5 MVA, Z_PS 7 % and Z_PT 9 % on 15 MVA, Z_ST 8 % on 10 MVA.
def _example(**changes) -> dict:
    row = dict(
        transformer="T3",
        h_bus="P",
        h_kva=15000,
        h_kv=66,
        h_winding="YN",
        m_bus="S",
        m_kva=10000,
        m_kv=13.2,
        m_winding="YN",
        l_bus="T",
        l_kva=5000,
        l_kv=2.3,
        l_winding="D",
        hm_z_pct=7,
        hm_kva=15000,
        hm_xr=XR,
        hl_z_pct=9,
        hl_kva=15000,
        hl_xr=XR,
        ml_z_pct=8,
        ml_kva=10000,
        ml_xr=XR,
    )
    row.update(changes)
    return {k: v for k, v in row.items() if v is not None}


SOURCE = {"source": "U", "bus": "P", "sc_mva": 500, "xr": XR, "r0_ohm": 1.0, "x0_ohm": 12.0}


def _sheets(row: dict, buses=("P", "S", "T"), source=SOURCE) -> dict:
    kv = {"P": 66, "S": 13.2, "T": 2.3}
    return {
        "buses": [{"bus": b, "kv": kv[b]} for b in buses],
        "sources": [source],
        "three_winding_transformers": [row],
    }


def _study(make_input, sheets):
    return run_study(read_system(make_input(sheets))).buses.set_index("bus")


def test_star_equivalent_of_the_textbook_example(make_input):
    # Z_ST = 8 % on 10 MVA is 12 % on 15 MVA; Z_P = (7 + 9 - 12) / 2 = 2 %, Z_S = (7 + 12 - 9) / 2
    # = 5 %, Z_T = (9 + 12 - 7) / 2 = 7 % on 15 MVA (recomputed by hand here; the book's values).
    legs = threewinding.star(0.07j, 0.09j, 0.08j * 15 / 10)
    assert [abs(z) for z in legs] == pytest.approx([0.02, 0.05, 0.07], rel=1e-12)
    result = run_study(read_system(make_input(_sheets(_example()))))
    echo = result.elements[result.elements["element"] == "T3"].set_index("from_bus")
    for bus, pct in (("P", 2.0), ("S", 5.0), ("T", 7.0)):
        z_pu = complex(echo.loc[bus, "r_pu"], echo.loc[bus, "x_pu"])
        assert abs(z_pu) == pytest.approx(pct / 100 * BASE_MVA / 15, rel=1e-12), bus


def test_three_phase_currents_through_two_legs_by_hand(make_input):
    # Per-unit on 100 MVA: source 100/500 at X/R 20; every pair at X/R 20, so the legs add as
    # magnitudes: P-S through Z_P + Z_S = 7 % on 15 MVA, P-T through Z_P + Z_T = 9 % (hand).
    buses = _study(make_input, _sheets(_example()))
    z_src = _z(BASE_MVA / 500, XR)
    for bus, kv, pct in (("S", 13.2, 7.0), ("T", 2.3, 9.0)):
        z = z_src + _z(pct / 100 * BASE_MVA / 15, XR)
        assert buses.loc[bus, "i3ph_ka"] == pytest.approx(_i_base_ka(kv) / abs(z), rel=1e-12)


def _z0_source_pu() -> complex:
    return complex(SOURCE["r0_ohm"], SOURCE["x0_ohm"]) / (66**2 / BASE_MVA)


def _legs_pu() -> tuple[complex, complex, complex]:
    scale = BASE_MVA / 15
    return tuple(_z(p / 100 * scale, XR) for p in (2.0, 5.0, 7.0))


def _parallel(a: complex, b: complex) -> complex:
    return a * b / (a + b)


def test_a_delta_tertiary_gives_the_ground_fault_its_path_on_both_sides(make_input):
    # Symmetrical components (Grainger and Stevenson, Ch. 12): I_slg = 3 E / |2 Z1 + Z0|. The
    # zero-sequence network of YN-yn-d (any power-system analysis text): the P and S legs in
    # series, the delta's leg T from the star point to ground. Hand calculation of Z0:
    zp, zs, zt = _legs_pu()
    z1_src = _z(BASE_MVA / 500, XR)
    buses = _study(make_input, _sheets(_example()))
    z0_s = zs + _parallel(zt, zp + _z0_source_pu())
    z1_s = z1_src + zp + zs
    assert buses.loc["S", "islg_ka"] == pytest.approx(
        3 * _i_base_ka(13.2) / abs(2 * z1_s + z0_s), rel=1e-12
    )
    z0_p = _parallel(_z0_source_pu(), zp + zt)  # S has no ground of its own: its leg is open
    assert buses.loc["P", "islg_ka"] == pytest.approx(
        3 * _i_base_ka(66) / abs(2 * z1_src + z0_p), rel=1e-12
    )
    # Without the delta (l wye, ungrounded) the source is P's only ground path.
    wye = _study(make_input, _sheets(_example(l_winding="Y")))
    assert wye.loc["P", "islg_ka"] == pytest.approx(
        3 * _i_base_ka(66) / abs(2 * z1_src + _z0_source_pu()), rel=1e-12
    )
    assert buses.loc["P", "islg_ka"] > wye.loc["P", "islg_ka"]


def test_a_tertiary_not_brought_out_is_the_same_unloaded_delta(make_input):
    # Circuit theory (no source): an unloaded delta tertiary carries no positive-sequence
    # current, so leaving its bus out changes nothing at P and S.
    with_bus = _study(make_input, _sheets(_example()))
    buried = _study(
        make_input,
        _sheets(_example(l_bus=None, l_kva=None, l_kv=None), buses=("P", "S")),
    )
    for bus in ("P", "S"):
        for column in ("i3ph_ka", "islg_ka", "ill_ka", "illg_ka"):
            assert buried.loc[bus, column] == pytest.approx(with_bus.loc[bus, column], rel=1e-12), (
                bus,
                column,
            )


def test_a_negative_leg_is_legal(make_input):
    # Z_PS 4 %, Z_PT 12 %, Z_ST 7 % on one base: Z_P = 4.5 %, Z_S = -0.5 %, Z_T = 7.5 % (hand);
    # the three-phase current at S still follows Z_P + Z_S = Z_PS.
    row = _example(hm_z_pct=4, hl_z_pct=12, ml_z_pct=7, ml_kva=15000)
    legs = threewinding.star(*(_z(p / 100, XR) for p in (4.0, 12.0, 7.0)))
    assert [abs(z) * (1 if z.imag > 0 else -1) for z in legs] == pytest.approx(
        [0.045, -0.005, 0.075], rel=1e-12
    )
    result = run_study(read_system(make_input(_sheets(row))))
    buses = result.buses.set_index("bus")
    z = _z(BASE_MVA / 500, XR) + _z(0.04 * BASE_MVA / 15, XR)
    assert buses.loc["S", "i3ph_ka"] == pytest.approx(_i_base_ka(13.2) / abs(z), rel=1e-12)
    notes = result.elements.set_index("from_bus").loc["S", "note"]
    assert "negative leg" in notes


def test_a_solidly_grounded_autotransformer_is_a_yn_yn_d_transformer(make_input):
    # With its neutral solidly grounded an autotransformer's terminals behave as a YN-yn
    # transformer's with one neutral (from memory of Anderson, Analysis of Faulted Power
    # Systems, the autotransformer): the same currents everywhere.
    auto = _study(make_input, _sheets(_example(kind="auto")))
    separate = _study(make_input, _sheets(_example()))
    for bus in ("P", "S", "T"):
        for column in ("i3ph_ka", "islg_ka", "ill_ka", "illg_ka"):
            a, b = auto.loc[bus, column], separate.loc[bus, column]
            assert a == pytest.approx(b, rel=1e-12, nan_ok=True), (bus, column)


def test_the_neutral_impedance_of_an_autotransformer_without_tertiary(make_input):
    # Without a tertiary the auto's zero sequence is one series impedance Z_hm + 3 Zn (n - 1)^2
    # (per-unit on h's base). Derivation (circuit theory): the neutral carries 3 (I_h + I_m)
    # in amperes, i.e. 3 (i_h + n i_m) I_base,h in per-unit currents, and i_m = -i_h with no
    # tertiary, so the neutral rises by 3 zn (1 - n) i_h in h's per-unit and n times that in
    # m's; the terminal difference v_h - v_m gains 3 zn (1 - n)(1 - n) i_h. The same form as
    # the autotransformer equivalent of Anderson, Analysis of Faulted Power Systems (value from
    # memory). Hand calculation of the line-to-ground current at S fed from P.
    zn_ohm = 20.0
    row = _example(kind="auto", h_neutral_ohm=zn_ohm)
    for column in ("l_bus", "l_kva", "l_kv", "l_winding", "hl_z_pct", "hl_kva", "hl_xr"):
        row.pop(column)
    for column in ("ml_z_pct", "ml_kva", "ml_xr"):
        row.pop(column)
    buses = _study(make_input, _sheets(row, buses=("P", "S")))
    n = 66 / 13.2
    z_hm = _z(0.07 * BASE_MVA / 15, XR)
    zn_pu = zn_ohm / (66**2 / BASE_MVA)
    z1 = _z(BASE_MVA / 500, XR) + z_hm
    z0 = _z0_source_pu() + z_hm + 3 * zn_pu * (n - 1) ** 2
    assert buses.loc["S", "islg_ka"] == pytest.approx(
        3 * _i_base_ka(13.2) / abs(2 * z1 + z0), rel=1e-12
    )


def test_the_open_circuit_voltage_through_an_off_nominal_winding(make_input):
    # Ideal ratio, hand calculation: a 66 kV winding on a 69 kV bus lifts the 13.2 kV side to
    # 69 / 66 of nominal at no load.
    sheets = _sheets(_example(h_kv=66))
    sheets["buses"][0]["kv"] = 69
    sheets["study"] = [{"setting": "prefault_voltage", "value": "open_circuit"}]
    buses = _study(make_input, sheets)
    assert buses.loc["S", "prefault_pu"] == pytest.approx(69 / 66, rel=1e-12)
    assert buses.loc["T", "prefault_pu"] == pytest.approx(69 / 66, rel=1e-12)


def test_iec_60909_corrects_each_pair_by_its_own_k_t(make_input):
    # IEC 60909-0:2016 6.3.3 (eq. 13, from memory): K_Tab = 0.95 cmax / (1 + 0.6 x_Tab), cmax =
    # 1.10 above 1 kV (Table 1); the source as c U_n^2 / S"kQ (6.2). At S the current flows
    # through Z_P + Z_S = K_PS Z_PS (hand calculation).
    sheets = _sheets(_example())
    sheets["study"] = [{"setting": "method", "value": "iec60909"}]
    buses = _study(make_input, sheets)
    x_ps = 0.07 * XR / math.hypot(1, XR)
    k_ps = 0.95 * 1.1 / (1 + 0.6 * x_ps)
    z = _z(1.1 * BASE_MVA / 500, XR) + k_ps * _z(0.07 * BASE_MVA / 15, XR)
    assert buses.loc["S", "i3ph_ka"] == pytest.approx(1.1 * _i_base_ka(13.2) / abs(z), rel=1e-9)


def test_contributions_through_each_winding_add_up(make_input):
    # Kirchhoff's current law at the faulted bus (circuit theory, no source).
    sheets = _sheets(_example())
    sheets["buses"].append({"bus": "G", "kv": 2.3})
    sheets["impedances"] = [
        {"element": "Z", "from_bus": "T", "to_bus": "G", "r_ohm": 0.002, "x_ohm": 0.02}
    ]
    sheets["machines"] = [
        {
            "machine": "M1",
            "bus": "G",
            "kind": "induction_motor",
            "kva": 2000,
            "kv": 2.3,
            "xd_pct": 17,
            "xr": 15,
        }
    ]
    result = run_study(read_system(make_input(sheets)), contributions="all")
    c = result.contributions
    at_s = c[(c.faulted_bus == "S") & (c.fault == "3ph")]
    assert list(at_s["element"]) == ["U", "M1", "T3"]
    assert at_s.set_index("element").loc["T3", "from_bus"] == "T3 star point"
    total = result.buses.set_index("bus").loc["S", "i3ph_ka"]
    leg = at_s.set_index("element").loc["T3", "i_ka"]
    assert leg == pytest.approx(total, rel=1e-9)  # S is fed only through its winding


@pytest.mark.parametrize(
    "changes, column, words",
    [
        (dict(l_winding=None), "l_winding", "two-winding transformer goes on the"),
        (dict(l_bus=None, l_winding="Y"), "l_winding", "not brought out"),
        (dict(hl_xr=None), "hl_xr", "needs the impedance of the pair hl"),
        (dict(l_kv=None), "l_kv", "needs its rating"),
        (dict(m_bus="P"), "m_bus", "same bus as h_bus"),
        (dict(m_kv=70), "m_kv", "must not be higher than h_kv"),
        (dict(kind="auto", m_winding="D", m_clock=None), "m_winding", "YNa0"),
        (dict(kind="auto", m_neutral_ohm=5), "m_neutral_ohm", "one neutral"),
        (dict(kind="auto", l_winding="YN"), "l_winding", "tertiary is a delta"),
        (dict(hm_kva=15, hl_kva=15, ml_kva=10), "hm_kva", "hm_kva is in kVA"),
        (dict(h_kv=66000), "h_kv", "more than 1.5 x apart"),
        (dict(h_bus="S", m_bus="P"), "h_bus", "h_bus and m_bus look swapped"),
        (dict(hm_z_pct=0.07), "hm_z_pct", "not a fraction"),
        (dict(hm_z0_pct=700), "hm_z0_pct", "decimal point"),
        (dict(l_clock=2), "l_clock", "odd"),
        (dict(m_clock=12), "m_clock", "from 0 to 11"),
        (dict(l_bus="T-TYPO"), "l_bus", "no bus of that name"),
    ],
)
def test_each_slip_is_located(make_input, changes, column, words):
    row = _example(**{k: v for k, v in changes.items() if v is not None})
    for k, v in changes.items():
        if v is None:
            row.pop(k, None)
    with pytest.raises(InputError) as caught:
        read_system(make_input(_sheets(row)))
    (problem,) = caught.value.problems
    assert (problem.sheet, problem.row, problem.column) == (
        "three_winding_transformers",
        2,
        column,
    )
    assert words in problem.message


def test_an_off_nominal_winding_is_warned(make_input):
    sheets = _sheets(_example(m_kv=12.47))
    system = read_system(make_input(sheets))
    assert any("m_kv" in w and "off-nominal" in w for w in system.warnings)


def test_out_of_service_and_a_case_that_changes_it(make_input):
    sheets = _sheets(_example(in_service="no"), buses=("P", "S", "T"))
    sheets["transformers"] = [
        dict(
            transformer="T2",
            hv_bus="P",
            lv_bus="S",
            kva=10000,
            hv_kv=66,
            lv_kv=13.2,
            z_pct=7,
            xr=XR,
            hv_winding="YN",
            lv_winding="YN",  # in phase with T3's yn0: a YN-d1 in parallel would be refused
        )
    ]
    sheets["buses"][2]["in_service"] = "no"  # the tertiary's bus out: its winding opened
    sheets["cases"] = [
        {"case": "T3 in", "element": "T3", "column": "in_service", "value": "yes"},
        {"case": "T3 in", "element": "T", "column": "in_service", "value": "yes"},
    ]
    result = run_study(read_system(make_input(sheets)))
    base = result.buses.set_index("bus")
    assert list(base.index) == ["P", "S"]
    z = _z(BASE_MVA / 500, XR) + _z(0.07 * BASE_MVA / 10, XR)
    assert base.loc["S", "i3ph_ka"] == pytest.approx(_i_base_ka(13.2) / abs(z), rel=1e-12)
    case = result.cases["T3 in"].set_index("bus")
    # T2 in parallel with the P-S path of T3 (7 % on 15 MVA), both at X/R 20: hand.
    z_par = _parallel(_z(0.07 * BASE_MVA / 10, XR), _z(0.07 * BASE_MVA / 15, XR))
    z = _z(BASE_MVA / 500, XR) + z_par
    assert case.loc["S", "i3ph_ka"] == pytest.approx(_i_base_ka(13.2) / abs(z), rel=1e-12)


def test_a_tertiary_bus_out_of_service_opens_its_winding(make_input):
    # The delta stays in the tank: with its bus out of service the transformer is the same as
    # one whose tertiary is not brought out (circuit theory, no source), and the note says so.
    sheets = _sheets(_example())
    sheets["buses"][2]["in_service"] = "no"
    system = read_system(make_input(sheets))
    assert any("windings opened" in w and "T3 (winding l on T)" in w for w in system.warnings)
    out = run_study(system).buses.set_index("bus")
    buried = _study(
        make_input, _sheets(_example(l_bus=None, l_kva=None, l_kv=None), buses=("P", "S"))
    )
    assert list(out.index) == ["P", "S"]
    for column in ("i3ph_ka", "islg_ka"):
        assert out.loc["S", column] == pytest.approx(buried.loc["S", column], rel=1e-12)


def test_a_medium_voltage_bus_out_takes_the_transformer_and_what_it_alone_fed(make_input):
    sheets = _sheets(_example())
    sheets["buses"][1]["in_service"] = "no"  # S out: T3 goes, and T fed only through it
    system = read_system(make_input(sheets))
    note = next(w for w in system.warnings if "out of service: bus S" in w)
    assert "fed only through it: bus(es) T" in note and "T3" in note
    assert list(run_study(system).buses["bus"]) == ["P"]


def test_iec_k_t_takes_cmax_of_the_pairs_low_voltage_bus(make_input):
    # IEC 60909-0:2016 Table 1 (from memory): cmax = 1.05 at low voltage with a +6 % tolerance
    # (lv_tolerance_pct 6) and 1.10 above 1 kV; the h-l pair of a 66/13.2/0.48 kV unit takes
    # the 0.48 kV side's 1.05 in K_T = 0.95 cmax / (1 + 0.6 x_T), and the fault at L c = 1.05.
    # Through Z_H + Z_L = K_HL Z_HL (hand calculation).
    row = _example(l_kv=0.48)
    sheets = _sheets(row)
    sheets["buses"][2]["kv"] = 0.48
    sheets["study"] = [
        {"setting": "method", "value": "iec60909"},
        {"setting": "lv_tolerance_pct", "value": 6},
    ]
    buses = _study(make_input, sheets)
    x_hl = 0.09 * XR / math.hypot(1, XR)
    k_hl = 0.95 * 1.05 / (1 + 0.6 * x_hl)
    z = _z(1.1 * BASE_MVA / 500, XR) + k_hl * _z(0.09 * BASE_MVA / 15, XR)
    assert buses.loc["T", "i3ph_ka"] == pytest.approx(1.05 * _i_base_ka(0.48) / abs(z), rel=1e-9)
