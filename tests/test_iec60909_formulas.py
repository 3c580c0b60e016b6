"""faultcalc.solve.iec60909 against hand calculations of the IEC 60909-0:2016 formulas.

Every check value is worked by hand in the comment beside it. The formulas themselves are from
memory of IEC 60909-0:2016 (the text was not at hand). Where a value follows from the
standard's own definitions, the comment names the clause. No value here was produced by running
the module.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from faultcalc.solve import iec60909 as iec

# --- K_G (from memory of IEC 60909-0:2016, clause 6.6.1, eq. 18) ---------------------------------


def test_kg_generator_at_network_voltage():
    # Hand calculation: x''d = 0.15, cos phi = 0.8 so sin phi = 0.6, U_n = U_rG, c_max = 1.1:
    # K_G = 1.1 / (1 + 0.15 * 0.6) = 1.1 / 1.09 = 1.009174.
    assert iec.generator_correction_factor_kg(10.5, 10.5, 0.15, 0.8, 1.1) == pytest.approx(
        1.009174, abs=1e-6
    )


def test_kg_voltage_ratio_and_vectorised():
    # Hand calculation: U_n = 10 kV, U_rG = 10.5 kV, same machine:
    # K_G = (10 / 10.5) * 1.1 / 1.09 = 0.952381 * 1.009174 = 0.961118.
    # cos phi = 1 (sin 0): K_G = c_max * U_n / U_rG = 1.1.
    kg = iec.generator_correction_factor_kg([10.0, 10.5], 10.5, 0.15, [0.8, 1.0], 1.1)
    assert kg == pytest.approx([0.961118, 1.1], abs=1e-6)


@pytest.mark.parametrize("cos_phi", [0.0, -0.8, 1.2])
def test_kg_rejects_impossible_power_factor(cos_phi):
    with pytest.raises(ValueError, match="cos_phi_rg"):
        iec.generator_correction_factor_kg(10.5, 10.5, 0.15, cos_phi)


# --- K_S and K_SO (from memory of IEC 60909-0:2016, clauses 6.7.1 eq. 22 and 6.7.2 eq. 24) -------


def test_ks_on_load_tap_changer():
    # Hand calculation: U_nQ = 110 kV, U_rG = 10.5 kV, t_r = 115 / 10.5, x''d = 0.17, x_T = 0.12,
    # cos phi = 0.8 (sin 0.6), c_max = 1.1:
    # K_S = (110/10.5)^2 (10.5/115)^2 * 1.1 / (1 + |0.17 - 0.12| 0.6)
    #     = (110/115)^2 * 1.1 / 1.03 = 0.914934 * 1.067961 = 0.977114.
    ks = iec.generating_unit_factor_ks(110.0, 10.5, 115.0 / 10.5, 0.17, 0.12, 0.8, 1.1)
    assert ks == pytest.approx(0.977114, abs=1e-6)


def test_ks_uses_the_absolute_difference_of_reactances():
    # Hand calculation: |x''d - x_T| is the same with the two swapped, so K_S is too.
    a = iec.generating_unit_factor_ks(110.0, 10.5, 115.0 / 10.5, 0.17, 0.12, 0.8)
    b = iec.generating_unit_factor_ks(110.0, 10.5, 115.0 / 10.5, 0.12, 0.17, 0.8)
    assert a == pytest.approx(b, rel=1e-12)
    # Hand calculation: x''d = x_T gives K_S = (110/115)^2 * 1.1 = 1.006427.
    same = iec.generating_unit_factor_ks(110.0, 10.5, 115.0 / 10.5, 0.15, 0.15, 0.8)
    assert same == pytest.approx(1.006427, abs=1e-6)


def test_kso_without_on_load_tap_changer():
    # Hand calculation: U_nQ = 110 kV, U_rG = 10.5 kV, p_G = 0.05, t_r = 115 / 10.5, x''d = 0.17,
    # cos phi = 0.8, c_max = 1.1, main tap (p_T = 0):
    # K_SO = 110 / (10.5 * 1.05) * (10.5 / 115) * 1.1 / (1 + 0.17 * 0.6)
    #      = 110 / 120.75 * 1.1 / 1.102 = 0.910973 * 0.998185 = 0.909320.
    # With the tap term (1 + p_T) = 1.05: 0.909320 * 1.05 = 0.954786.
    kso = iec.generating_unit_factor_kso(
        110.0, 10.5, 115.0 / 10.5, 0.17, 0.8, 1.1, p_g=0.05, p_t=[0.0, 0.05]
    )
    assert kso == pytest.approx([0.909320, 0.954786], abs=1e-6)


def test_kso_tap_sign_lowers_the_factor():
    # Hand calculation: (1 - 0.05) / (1 + 0.05) = 0.904762 of each other.
    up = iec.generating_unit_factor_kso(110.0, 10.5, 115.0 / 10.5, 0.17, 0.8, p_t=0.05)
    down = iec.generating_unit_factor_kso(110.0, 10.5, 115.0 / 10.5, 0.17, 0.8, p_t=-0.05)
    assert down / up == pytest.approx(0.904762, abs=1e-6)


# --- mu (from memory of IEC 60909-0:2016, clause 9.1) --------------------------------------------

T_TABLE = [0.02, 0.05, 0.10, 0.25]


@pytest.mark.parametrize("t_min", T_TABLE + [1.0])
def test_mu_is_one_at_and_below_twice_rated_current(t_min):
    # From memory of IEC 60909-0:2016, clause 9.1: mu = 1 where I''kG/IrG <= 2 (definition).
    assert iec.breaking_current_factor_mu([0.0, 1.0, 1.99, 2.0], t_min) == pytest.approx(1.0)


@pytest.mark.parametrize(
    ("t_min", "constant"), [(0.02, 0.84), (0.05, 0.71), (0.10, 0.62), (0.25, 0.56), (2.0, 0.56)]
)
def test_mu_tends_to_its_constant_term(t_min, constant):
    # Hand calculation: at I''kG/IrG = 100 the exponential term is at most 0.26 e^(-26) ~ 1e-12,
    # so mu is the constant term of the tabulated formula (from memory of IEC 60909-0:2016,
    # clause 9.1: 0.84, 0.71, 0.62, 0.56).
    assert iec.breaking_current_factor_mu(100.0, t_min) == pytest.approx(constant, abs=1e-9)


def test_mu_at_five_times_rated_current_by_hand():
    # Hand calculation at I''kG/IrG = 5:
    # 0.02 s: 0.84 + 0.26 e^-1.3 = 0.84 + 0.26 * 0.272532 = 0.910858
    # 0.05 s: 0.71 + 0.51 e^-1.5 = 0.71 + 0.51 * 0.223130 = 0.823796
    # 0.10 s: 0.62 + 0.72 e^-1.6 = 0.62 + 0.72 * 0.201897 = 0.765365
    # 0.25 s: 0.56 + 0.94 e^-1.9 = 0.56 + 0.94 * 0.149569 = 0.700595
    mu = iec.breaking_current_factor_mu(5.0, T_TABLE)
    assert mu == pytest.approx([0.910858, 0.823796, 0.765365, 0.700595], abs=2e-6)


def test_mu_just_above_two():
    # Hand calculation at I''kG/IrG = 2.1, t_min = 0.02 s: 0.84 + 0.26 e^-0.546
    # = 0.84 + 0.26 * 0.579262 = 0.990608 (below 1: the cap does not act).
    assert iec.breaking_current_factor_mu(2.1, 0.02) == pytest.approx(0.990608, abs=2e-6)


def test_mu_never_above_one():
    # From memory of IEC 60909-0:2016, clause 9.1: mu is at most 1.
    r = np.linspace(0.0, 50.0, 2001)
    for t in [0.02, 0.03, 0.05, 0.07, 0.10, 0.2, 0.25, 3.0]:
        assert np.all(iec.breaking_current_factor_mu(r, t) <= 1.0)


def test_mu_between_delays_conservative_takes_the_larger_curve():
    # Hand calculation (choice in the module: the larger of the two bracketing curves):
    # ratio 5, t_min 0.07 s: 0.05 s curve 0.823796 > 0.10 s curve 0.765365, so 0.823796.
    # ratio 2.1, t_min 0.07 s: 0.10 s curve 0.62 + 0.72 e^-0.672 = 0.62 + 0.72 * 0.510686
    # = 0.987694 lies above the 0.05 s curve 0.71 + 0.51 e^-0.63 = 0.71 + 0.51 * 0.532592
    # = 0.981622, so 0.987694 (the next smaller delay alone would give the lower 0.981622).
    mu = iec.breaking_current_factor_mu([5.0, 2.1], 0.07)
    assert mu == pytest.approx([0.823796, 0.987694], abs=2e-6)


def test_mu_between_delays_linear():
    # Hand calculation: t_min = 0.075 s is halfway from 0.05 to 0.10 s; at ratio 5:
    # (0.823796 + 0.765365) / 2 = 0.794581.
    mu = iec.breaking_current_factor_mu(5.0, 0.075, interpolation="linear")
    assert mu == pytest.approx(0.794581, abs=2e-6)


def test_mu_broadcasts_ratio_against_delay():
    # Hand calculation: ratios (3, 5) down, delays (0.02, 0.10) across.
    # ratio 3: 0.84 + 0.26 e^-0.78 = 0.84 + 0.26 * 0.458406 = 0.959186;
    #          0.62 + 0.72 e^-0.96 = 0.62 + 0.72 * 0.382893 = 0.895683.
    mu = iec.breaking_current_factor_mu([[3.0], [5.0]], [0.02, 0.10])
    assert mu.shape == (2, 2)
    assert mu == pytest.approx(np.array([[0.959186, 0.895683], [0.910858, 0.765365]]), abs=2e-6)


def test_mu_rejects_delay_below_table():
    with pytest.raises(ValueError, match="0.02"):
        iec.breaking_current_factor_mu(5.0, 0.01)


def test_breaking_current_of_a_generator():
    # Hand calculation: I''kG = 10 kA, IrG = 2 kA (ratio 5), t_min = 0.02 s:
    # Ib = 0.910858 * 10 = 9.10858 kA. Ratio 1.5 (I''kG = 3 kA): Ib = I''kG = 3 kA.
    ib = iec.breaking_current_ka([10.0, 3.0], 2.0, 0.02)
    assert ib == pytest.approx([9.10858, 3.0], abs=2e-5)


# --- q (from memory of IEC 60909-0:2016, clause 9.1) ---------------------------------------------


def test_q_at_one_megawatt_per_pole_pair():
    # Hand calculation: ln(1) = 0, so q is the constant term: 1.03 (capped to 1), 0.79, 0.57, 0.26.
    assert iec.motor_factor_q(1.0, T_TABLE) == pytest.approx([1.0, 0.79, 0.57, 0.26], abs=1e-12)


def test_q_small_and_large_motors_by_hand():
    # Hand calculation, ln(0.1) = -2.302585:
    # 0.02 s: 1.03 - 0.276310 = 0.753690; 0.05 s: 0.513690; 0.10 s: 0.293690;
    # >= 0.25 s: 0.26 - 0.230259 = 0.029741.
    assert iec.motor_factor_q(0.1, T_TABLE) == pytest.approx(
        [0.753690, 0.513690, 0.293690, 0.029741], abs=1e-6
    )
    # ln(10) = 2.302585: 0.10 s: 0.57 + 0.276310 = 0.846310; 0.25 s: 0.26 + 0.230259 = 0.490259;
    # 0.02 s and 0.05 s exceed 1 (1.306, 1.066) and are capped to 1 (the standard: q <= 1).
    assert iec.motor_factor_q(10.0, T_TABLE) == pytest.approx(
        [1.0, 1.0, 0.846310, 0.490259], abs=1e-6
    )


def test_q_not_negative_for_tiny_motors():
    # Hand calculation: m = 0.001 MW: 0.57 + 0.12 ln(0.001) = 0.57 - 0.828931 < 0; set to 0
    # (the module's choice, common practice (no source): a breaking current is not negative).
    assert iec.motor_factor_q(0.001, 0.10) == pytest.approx(0.0, abs=1e-15)


def test_motor_breaking_current_by_hand():
    # Hand calculation: P_rM = 2 MW, p = 2 (m = 1 MW per pole pair), I''kM = 1.0 kA,
    # IrM = 0.2 kA (ratio 5), t_min = 0.10 s: mu = 0.765365, q = 0.57,
    # Ib = mu q I''kM = 0.765365 * 0.57 * 1.0 = 0.436258 kA (from memory of IEC 60909-0:2016,
    # clause 9.1: Ib = mu q I''k for asynchronous motors).
    ib = iec.motor_breaking_current_ka(1.0, 0.2, 2.0, 2, 0.10)
    assert ib == pytest.approx(0.436258, abs=2e-6)


# --- DC component (from memory of IEC 60909-0:2016, clause 10) -----------------------------------


def test_dc_component_by_hand():
    # Hand calculation: I''k = 10 kA, R/X = 0.1, f = 50 Hz, t = 0.1 s:
    # exponent -2 pi 50 0.1 0.1 = -pi, e^-pi = 0.0432139; i_DC = sqrt(2) 10 0.0432139 = 0.611137.
    # At t = 0: sqrt(2) * 10 = 14.142136 kA.
    idc = iec.dc_component_ka(10.0, 0.1, 50.0, [0.1, 0.0])
    assert idc == pytest.approx([0.611137, 14.142136], abs=1e-6)


def test_dc_component_60_hz_decays_faster():
    # Hand calculation: at 60 Hz, same t and R/X: e^(-1.2 pi) = e^-3.769911 = 0.0230541;
    # 14.142136 * 0.0230541 = 0.326034.
    assert iec.dc_component_ka(10.0, 0.1, 60.0, 0.1) == pytest.approx(0.326034, abs=1e-6)


# --- m, n, Ith (from memory of IEC 60909-0:2016, clause 14) --------------------------------------


def test_m_at_kappa_1_8_50_hz_one_second():
    # Hand calculation: ln(0.8) = -0.223144; 2 f T_k ln = -22.314355; exp(4 f T_k ln) = e^-44.63
    # ~ 4e-20; m = (4e-20 - 1) / -22.314355 = 0.044814.
    assert iec.dc_heat_factor_m(1.8, 50.0, 1.0) == pytest.approx(0.044814, abs=1e-6)


def test_m_at_kappa_1_8_short_fault():
    # Hand calculation: T_k = 0.1 s: 2 f T_k ln = -2.231436; exp(-4.462871) = 0.011529;
    # m = (0.011529 - 1) / -2.231436 = 0.442975.
    assert iec.dc_heat_factor_m(1.8, 50.0, 0.1) == pytest.approx(0.442975, abs=2e-6)


def test_m_limits():
    # Hand calculation: kappa = 2 means a DC component that never decays: the heat of
    # (sqrt(2) I''k)^2 over T_k is 2 I''k^2 T_k, so m = 2. kappa = 1: no DC component, m = 0.
    assert iec.dc_heat_factor_m([2.0, 1.0, 1.999999], 50.0, 1.0) == pytest.approx(
        [2.0, 0.0, 2.0], abs=1e-3
    )


@pytest.mark.parametrize(("kappa", "t_k"), [(1.8, 0.1), (1.5, 0.05), (1.95, 0.5)])
def test_m_matches_the_integral_of_the_dc_component(kappa, t_k):
    # Hand derivation (common practice, no source): the DC component sqrt(2) I''k e^(-t/tau)
    # whose value half a period after the fault is kappa - 1 (per sqrt(2) I''k), i.e.
    # tau = -1 / (2 f ln(kappa - 1)), heats as m I''k^2 T_k with
    # m = (1 / T_k) integral_0^T_k 2 e^(-2t/tau) dt. That integral is taken numerically here.
    f = 50.0
    tau = -1.0 / (2.0 * f * math.log(kappa - 1.0))
    t = np.linspace(0.0, t_k, 200_001)
    y = 2.0 * np.exp(-2.0 * t / tau)
    integral = float(np.sum((y[1:] + y[:-1]) / 2.0 * np.diff(t)))
    assert iec.dc_heat_factor_m(kappa, f, t_k) == pytest.approx(integral / t_k, rel=1e-6)


def test_m_rejects_kappa_outside_one_to_two():
    with pytest.raises(ValueError, match="kappa"):
        iec.dc_heat_factor_m(2.1, 50.0, 1.0)


def test_n_far_and_near():
    # From memory of IEC 60909-0:2016, clause 14: n = 1 far from generators (I''k / Ik = 1);
    # near generators n is from a figure and is not computed here.
    n = iec.ac_heat_factor_n([True, False])
    assert n.value[0] == 1.0 and np.isnan(n.value[1])
    assert n.reason[0] == "" and "not computed" in n.reason[1]


def test_ith_and_joule_integral_far_from_generators():
    # Hand calculation: I''k = 20 kA, kappa = 1.8, f = 50 Hz, T_k = 1 s: m = 0.044814, n = 1;
    # Ith = 20 sqrt(1.044814) = 20 * 1.022162 = 20.44323 kA;
    # Joule integral = 20^2 * 1.044814 * 1 = 417.9257 kA^2 s.
    m = iec.dc_heat_factor_m(1.8, 50.0, 1.0)
    n = iec.ac_heat_factor_n(True).value
    assert iec.thermal_equivalent_current_ka(20.0, m, n) == pytest.approx(20.44323, abs=1e-4)
    assert iec.joule_integral_ka2s(20.0, m, n, 1.0) == pytest.approx(417.9257, abs=1e-3)


def test_ith_with_m_and_n_by_hand():
    # Hand calculation: m = 0.44, n = 0.9 (figures chosen by hand): Ith = 10 sqrt(1.34)
    # = 10 * 1.157584 = 11.57584 kA.
    assert iec.thermal_equivalent_current_ka(10.0, 0.44, 0.9) == pytest.approx(11.57584, abs=1e-5)


def test_ith_near_generators_is_not_a_number():
    n = iec.ac_heat_factor_n(False).value
    assert np.isnan(iec.thermal_equivalent_current_ka(20.0, 0.04, n))


# --- steady state (clause 11) and far/near (clause 3) --------------------------------------------


def test_steady_state_far_equals_initial_and_near_not_computed():
    # From memory of IEC 60909-0:2016, clause 11: far from generators Ik = I''k; near generators
    # Ik = lambda IrG with lambda from curves: not computed.
    ik = iec.steady_state_current_ka([12.5, 30.0], [True, False])
    assert ik.value[0] == 12.5 and np.isnan(ik.value[1])
    assert ik.reason[0] == "" and "lambda" in ik.reason[1] and "not computed" in ik.reason[1]


def test_far_from_generator_at_twice_rated_current():
    # From memory of IEC 60909-0:2016, clause 3: near if any synchronous machine gives more than
    # 2 IrG. Rows are faults, columns machines (IrG 1 kA and 0.5 kA):
    # (2.0, 1.0) -> ratios 2, 2: far; (2.0, 1.01) -> 2, 2.02: near; (0.1, 0.1) -> far.
    far = iec.is_far_from_generator([[2.0, 1.0], [2.0, 1.01], [0.1, 0.1]], [1.0, 0.5])
    assert far.tolist() == [True, False, True]


def test_far_from_generator_without_machines_and_with_nan():
    # No synchronous machine: far. An unknown (NaN) contribution: not shown far, so near.
    assert bool(iec.is_far_from_generator([], [])) is True
    assert bool(iec.is_far_from_generator([np.nan], [1.0])) is False


def test_far_from_generator_motor_share():
    # From memory of IEC 60909-0:2016, clause 3: near if motors give more than 5 % of I''k
    # without motors. I''k without motors 10 kA: motors 0.3 + 0.2 = 0.5 kA (5.0 %): far;
    # 0.3 + 0.21 = 0.51 kA (5.1 %): near.
    far = iec.is_far_from_generator(
        [[1.0], [1.0]],
        [1.0],
        i_km_subtr_ka=[[0.3, 0.2], [0.3, 0.21]],
        i_k_subtr_without_motors_ka=[10.0, 10.0],
    )
    assert far.tolist() == [True, False]
    with pytest.raises(ValueError, match="both"):
        iec.is_far_from_generator([1.0], [1.0], i_km_subtr_ka=[0.1])
