"""IEC 60909-0:2016 formulas: correction factors, breaking, DC, thermal and steady-state currents.

Pure functions of numpy arrays (inputs broadcast against each other); nothing here reads the
study or the network. The formulas are written from memory of IEC 60909-0:2016 (the text was not
at hand when this module was written). Each docstring says which clause the formula comes from,
and where the equation number is uncertain it says so. What the standard gives only as curves
(the steady-state factor lambda, the near-generator AC heat factor n) is not computed. Those
functions return NaN with a reason string.

Units are in the argument names: ``_kv`` kilovolts, ``_ka`` kiloamperes, ``_mw`` megawatts,
``_s`` seconds, ``_hz`` hertz, ``_pu`` per unit (of the machine's or transformer's own rating).
Factors without a suffix are dimensionless. ``subtr`` stands for the double prime (subtransient,
initial), so ``i_kg_subtr_ka`` is I''kG in kA.

Time delays of the breaking-current factors: the standard tabulates mu and q at minimum time
delays of 0.02, 0.05, 0.10 and >= 0.25 s. Between those delays these functions take by default
the larger of the two bracketing curves (``interpolation="conservative"``). Near I''kG/IrG = 2 the
curves cross: the 0.10 s curve lies above the 0.05 s one for ratios 2 to about 2.27. So the value
at the next smaller tabulated delay is not always the larger one. ``interpolation="linear"``
interpolates linearly in t_min instead. A t_min below 0.02 s is outside the tabulated range and
raises ValueError.

>>> round(float(generator_correction_factor_kg(10.5, 10.5, 0.15, 0.8, 1.1)), 5)
1.00917
>>> float(breaking_current_factor_mu(2.0, 0.1))
1.0
"""

from __future__ import annotations

from typing import Literal, NamedTuple

import numpy as np

SQRT2 = np.sqrt(2.0)

# Minimum time delays t_min (s) of the tabulated mu and q curves; the last row is t_min >= 0.25 s.
T_MIN_TABLE_S = np.array([0.02, 0.05, 0.10, 0.25])

# mu = a + b exp(-k I''kG/IrG) per tabulated t_min (from memory of IEC 60909-0:2016, clause 9.1).
_MU_A = np.array([0.84, 0.71, 0.62, 0.56])
_MU_B = np.array([0.26, 0.51, 0.72, 0.94])
_MU_K = np.array([0.26, 0.30, 0.32, 0.38])

# q = a + b ln(m) per tabulated t_min (from memory of IEC 60909-0:2016, clause 9.1).
_Q_A = np.array([1.03, 0.79, 0.57, 0.26])
_Q_B = np.array([0.12, 0.12, 0.12, 0.10])

# Ratio I''kG/IrG at or below which a synchronous machine's contribution counts as far from the
# generator, and mu = 1 (from memory of IEC 60909-0:2016, clause 3 definitions and clause 9.1).
FAR_RATIO_LIMIT = 2.0
# Share of I''k (without motors) above which the asynchronous motors make a fault near to the
# generator (from memory of IEC 60909-0:2016, clause 3, definition of a near-to-generator fault).
MOTOR_SHARE_LIMIT = 0.05

Interpolation = Literal["conservative", "linear"]

REASON_NEAR_IK = (
    "near-to-generator fault: steady-state Ik = lambda IrG with lambda read from the standard's "
    "curves; not computed"
)
REASON_NEAR_N = (
    "near-to-generator fault: the AC heat factor n is read from the standard's curve of "
    "I''k/Ik and Tk; not computed"
)


class Valued(NamedTuple):
    """A value that may be not computed: ``value`` is NaN where ``reason`` is not ``""``."""

    value: np.ndarray
    reason: np.ndarray  # of str, "" where the value was computed


def _float(x, name: str) -> np.ndarray:
    a = np.asarray(x, dtype=float)
    if np.isnan(a).any():
        raise ValueError(f"{name} has NaN")
    return a


def _positive(x, name: str) -> np.ndarray:
    a = _float(x, name)
    if (a <= 0).any():
        raise ValueError(f"{name} must be > 0")
    return a


def _sin_phi(cos_phi_rg) -> np.ndarray:
    c = _float(cos_phi_rg, "cos_phi_rg")
    if ((c <= 0) | (c > 1)).any():
        raise ValueError("cos_phi_rg must be in (0, 1]")
    return np.sqrt(1.0 - c * c)


# --- correction factors of generators and generating units (clause 6) -----------------------


def generator_correction_factor_kg(
    u_n_kv, u_rg_kv, x_d_subtr_pu, cos_phi_rg, c_max=1.1
) -> np.ndarray:
    """K_G of a generator connected directly to the network.

    From memory of IEC 60909-0:2016, clause 6.6.1, eq. (18)::

        K_G = (U_n / U_rG) * c_max / (1 + x''_d sin(phi_rG))

    U_n: nominal system voltage (kV); U_rG: rated generator voltage (kV); x''_d: subtransient
    reactance in per unit of the generator rating (X''_d / (U_rG^2 / S_rG)); phi_rG: phase angle
    between I_rG and U_rG / sqrt(3) at rated operation (sin from the rated power factor, lagging,
    so sin >= 0); c_max: voltage factor (Table 1). The corrected impedance is Z_GK = K_G Z_G.
    """
    u_n = _positive(u_n_kv, "u_n_kv")
    u_rg = _positive(u_rg_kv, "u_rg_kv")
    x_d = _positive(x_d_subtr_pu, "x_d_subtr_pu")
    return (u_n / u_rg) * _positive(c_max, "c_max") / (1.0 + x_d * _sin_phi(cos_phi_rg))


def generating_unit_factor_ks(
    u_nq_kv, u_rg_kv, t_r, x_d_subtr_pu, x_t_pu, cos_phi_rg, c_max=1.1
) -> np.ndarray:
    """K_S of a generating unit whose unit transformer has an on-load tap changer.

    From memory of IEC 60909-0:2016, clause 6.7.1, eq. (22)::

        K_S = (U_nQ^2 / U_rG^2) * (1 / t_r^2) * c_max / (1 + |x''_d - x_T| sin(phi_rG))

    with 1 / t_r^2 = U_rTLV^2 / U_rTHV^2. U_nQ: nominal system voltage at the high-voltage side
    of the unit transformer (kV); U_rG: rated generator voltage (kV); t_r = U_rTHV / U_rTLV: rated
    transformation ratio of the unit transformer; x''_d: generator subtransient reactance in per
    unit of the generator rating; x_T: unit transformer reactance in per unit of the transformer
    rating (at the main tap); phi_rG and c_max as in ``generator_correction_factor_kg``.
    The unit's impedance at the high-voltage side is Z_S = K_S (t_r^2 Z_G + Z_THV).

    Not sure: whether the 2016 edition also puts U_rG (1 + p_G) in place of U_rG here (as it does
    in K_SO) when the generator runs permanently above its rated voltage; this function does not.
    """
    u_nq = _positive(u_nq_kv, "u_nq_kv")
    u_rg = _positive(u_rg_kv, "u_rg_kv")
    t = _positive(t_r, "t_r")
    x_d = _positive(x_d_subtr_pu, "x_d_subtr_pu")
    x_t = _positive(x_t_pu, "x_t_pu")
    c = _positive(c_max, "c_max")
    return (u_nq / u_rg) ** 2 / t**2 * c / (1.0 + np.abs(x_d - x_t) * _sin_phi(cos_phi_rg))


def generating_unit_factor_kso(
    u_nq_kv, u_rg_kv, t_r, x_d_subtr_pu, cos_phi_rg, c_max=1.1, p_g=0.0, p_t=0.0
) -> np.ndarray:
    """K_SO of a generating unit whose unit transformer has no on-load tap changer.

    From memory of IEC 60909-0:2016, clause 6.7.2, eq. (24)::

        K_SO = U_nQ / (U_rG (1 + p_G)) * (1 / t_r) * (1 +/- p_T) * c_max / (1 + x''_d sin(phi_rG))

    with 1 / t_r = U_rTLV / U_rTHV. p_G: the generator's voltage regulation range as a fraction
    (the generator runs at U_G = U_rG (1 + p_G); 0 if it runs at U_rG). p_T: the off-load tap
    position in use permanently, as a fraction (0 at the main tap). The standard writes the tap
    term as (1 +/- p_T). Here ``p_t`` is signed and the factor is (1 + p_t), so pass a negative
    p_t for (1 - p_T). I do not recall for certain which sign the standard assigns to which tap
    direction, so the caller chooses it. The other variables are as in
    ``generating_unit_factor_ks``. The unit's impedance is Z_SO = K_SO (t_r^2 Z_G + Z_THV).
    """
    u_nq = _positive(u_nq_kv, "u_nq_kv")
    u_rg = _positive(u_rg_kv, "u_rg_kv")
    t = _positive(t_r, "t_r")
    x_d = _positive(x_d_subtr_pu, "x_d_subtr_pu")
    pg = _float(p_g, "p_g")
    pt = _float(p_t, "p_t")
    if (pg <= -1).any() or (pt <= -1).any():
        raise ValueError("p_g and p_t must be > -1")
    c = _positive(c_max, "c_max")
    return u_nq / (u_rg * (1.0 + pg)) / t * (1.0 + pt) * c / (1.0 + x_d * _sin_phi(cos_phi_rg))


# --- symmetrical breaking current (clause 9) -----------------------------------------------------


def _by_time_delay(curves: np.ndarray, t_min_s, interpolation: Interpolation) -> np.ndarray:
    """Pick from ``curves`` (shape (4, ...), one row per tabulated t_min) at ``t_min_s``."""
    t = _float(t_min_s, "t_min_s")
    if (t < T_MIN_TABLE_S[0] - 1e-12).any():
        raise ValueError("t_min_s below 0.02 s is outside the tabulated minimum time delays")
    if interpolation not in ("conservative", "linear"):
        raise ValueError("interpolation must be 'conservative' or 'linear'")
    shape = np.broadcast_shapes(curves.shape[1:], t.shape)
    pad = (1,) * (len(shape) - (curves.ndim - 1))  # align the trailing axes, not the first
    curves = curves.reshape((curves.shape[0], *pad, *curves.shape[1:]))
    curves = np.broadcast_to(curves, (curves.shape[0], *shape))
    t = np.broadcast_to(t, shape)
    last = len(T_MIN_TABLE_S) - 1
    lo = np.clip(np.searchsorted(T_MIN_TABLE_S, t + 1e-12, side="right") - 1, 0, last)
    hi = np.minimum(lo + 1, last)
    f_lo = np.take_along_axis(curves, lo[None, ...], axis=0)[0]
    f_hi = np.take_along_axis(curves, hi[None, ...], axis=0)[0]
    span = T_MIN_TABLE_S[hi] - T_MIN_TABLE_S[lo]
    w = np.where(span > 0, (t - T_MIN_TABLE_S[lo]) / np.where(span > 0, span, 1.0), 0.0)
    w = np.clip(w, 0.0, 1.0)
    if interpolation == "linear":
        return (1.0 - w) * f_lo + w * f_hi
    return np.where(w > 1e-9, np.maximum(f_lo, f_hi), f_lo)


def breaking_current_factor_mu(
    i_kg_subtr_over_i_rg, t_min_s, interpolation: Interpolation = "conservative"
) -> np.ndarray:
    """mu, the decay of a machine's symmetrical current at the minimum time delay t_min.

    From memory of IEC 60909-0:2016, clause 9.1 (the brief cites eq. (70); I believe that is
    the 2001 edition's number and cannot check the 2016 one), with r = I''kG / IrG::

        mu = 0.84 + 0.26 exp(-0.26 r)   for t_min = 0.02 s
        mu = 0.71 + 0.51 exp(-0.30 r)   for t_min = 0.05 s
        mu = 0.62 + 0.72 exp(-0.32 r)   for t_min = 0.10 s
        mu = 0.56 + 0.94 exp(-0.38 r)   for t_min >= 0.25 s

    mu = 1 where r <= 2, and mu is at most 1. I''kG: the machine's own contribution to the fault;
    IrG: its rated current (for an asynchronous motor, I''kM / IrM). t_min: minimum time delay
    (shortest relay time plus the breaker's shortest opening time). Between tabulated delays see
    the module docstring. Ib = mu I''kG.
    """
    r = _float(i_kg_subtr_over_i_rg, "i_kg_subtr_over_i_rg")
    if (r < 0).any():
        raise ValueError("i_kg_subtr_over_i_rg must be >= 0")
    rr = r[None, ...]
    shape = (-1,) + (1,) * r.ndim
    curves = _MU_A.reshape(shape) + _MU_B.reshape(shape) * np.exp(-_MU_K.reshape(shape) * rr)
    curves = np.where(rr <= FAR_RATIO_LIMIT, 1.0, np.minimum(curves, 1.0))
    return _by_time_delay(curves, t_min_s, interpolation)


def motor_factor_q(
    m_mw_per_pole_pair, t_min_s, interpolation: Interpolation = "conservative"
) -> np.ndarray:
    """q, the faster decay of an asynchronous motor's symmetrical current.

    From memory of IEC 60909-0:2016, clause 9.1 (equation number not recalled; the brief says
    "eq. 73 or so"), with m the rated active power per pair of poles in MW (P_rM / p)::

        q = 1.03 + 0.12 ln(m)   for t_min = 0.02 s
        q = 0.79 + 0.12 ln(m)   for t_min = 0.05 s
        q = 0.57 + 0.12 ln(m)   for t_min = 0.10 s
        q = 0.26 + 0.10 ln(m)   for t_min >= 0.25 s

    q is at most 1 (the standard). Small motors can get a negative value from these formulas.
    This function sets such values to 0 (my choice, no source: a motor's breaking current cannot be
    negative). Between tabulated delays see the module docstring.
    """
    m = _positive(m_mw_per_pole_pair, "m_mw_per_pole_pair")
    ln_m = np.log(m)[None, ...]
    shape = (-1,) + (1,) * m.ndim
    curves = np.clip(_Q_A.reshape(shape) + _Q_B.reshape(shape) * ln_m, 0.0, 1.0)
    return _by_time_delay(curves, t_min_s, interpolation)


def breaking_current_ka(
    i_kg_subtr_ka, i_rg_ka, t_min_s, interpolation: Interpolation = "conservative"
) -> np.ndarray:
    """Ib = mu I''kG of a synchronous machine (from memory of IEC 60909-0:2016, clause 9.1)."""
    i_k = _float(i_kg_subtr_ka, "i_kg_subtr_ka")
    mu = breaking_current_factor_mu(i_k / _positive(i_rg_ka, "i_rg_ka"), t_min_s, interpolation)
    return mu * i_k


def motor_breaking_current_ka(
    i_km_subtr_ka,
    i_rm_ka,
    p_rm_mw,
    pole_pairs,
    t_min_s,
    interpolation: Interpolation = "conservative",
) -> np.ndarray:
    """Ib = mu q I''kM of an asynchronous motor (from memory of IEC 60909-0:2016, clause 9.1).

    mu from I''kM / IrM, q from m = P_rM / p (MW per pair of poles), both at t_min.
    """
    i_k = _float(i_km_subtr_ka, "i_km_subtr_ka")
    mu = breaking_current_factor_mu(i_k / _positive(i_rm_ka, "i_rm_ka"), t_min_s, interpolation)
    m = _positive(p_rm_mw, "p_rm_mw") / _positive(pole_pairs, "pole_pairs")
    return mu * motor_factor_q(m, t_min_s, interpolation) * i_k


# --- DC component (clause 10) --------------------------------------------------------------------


def dc_component_ka(i_k_subtr_ka, r_over_x, frequency_hz, t_s) -> np.ndarray:
    """Largest DC component at time t (e.g. t_min).

    From memory of IEC 60909-0:2016, clause 10 (equation number not recalled)::

        i_DC = sqrt(2) I''k exp(-2 pi f t R/X)

    I''k: initial symmetrical short-circuit current (kA); R/X of the short-circuit impedance;
    f: system frequency (Hz); t: time after fault inception (s). The R/X to pass in a meshed
    network is the caller's choice (the standard has its own rule for it; see the notes).
    """
    rx = _float(r_over_x, "r_over_x")
    t = _float(t_s, "t_s")
    if (rx < 0).any() or (t < 0).any():
        raise ValueError("r_over_x and t_s must be >= 0")
    f = _positive(frequency_hz, "frequency_hz")
    return SQRT2 * _float(i_k_subtr_ka, "i_k_subtr_ka") * np.exp(-2.0 * np.pi * f * t * rx)


# --- thermal equivalent current (clause 14) ------------------------------------------------------


def dc_heat_factor_m(kappa, frequency_hz, t_k_s) -> np.ndarray:
    """m, the heat effect of the DC component over the fault duration T_k.

    From memory of IEC 60909-0:2016, clause 14 (equation number not recalled)::

        m = 1 / (2 f T_k ln(kappa - 1)) * [exp(4 f T_k ln(kappa - 1)) - 1]

    kappa: peak factor (1 <= kappa <= 2); f: system frequency (Hz); T_k: fault duration (s).
    At kappa = 2 the formula is 0/0 and m is the limit 2 (a DC component that never decays). At
    kappa = 1, m = 0.
    """
    k = _float(kappa, "kappa")
    if ((k < 1) | (k > 2)).any():
        raise ValueError("kappa must be in [1, 2]")
    f = _positive(frequency_hz, "frequency_hz")
    t_k = _positive(t_k_s, "t_k_s")
    with np.errstate(divide="ignore", invalid="ignore"):
        x = 2.0 * f * t_k * np.log(k - 1.0)  # <= 0, -inf at kappa = 1
        m = np.expm1(2.0 * x) / x
    m = np.where(k <= 1.0, 0.0, m)
    return np.where(np.abs(x) < 1e-12, 2.0, m)


def ac_heat_factor_n(far_from_generator) -> Valued:
    """n, the heat effect of the AC component: 1 for a fault far from generators.

    From memory of IEC 60909-0:2016, clause 14: n = 1 when I''k / Ik = 1, which is the case far
    from generators. Near generators the standard reads n from a figure (curves of I''k / Ik and
    T_k). That figure is not a formula, so n is not computed there: NaN with a reason.
    """
    far = np.asarray(far_from_generator, dtype=bool)
    return Valued(np.where(far, 1.0, np.nan), np.where(far, "", REASON_NEAR_N))


def thermal_equivalent_current_ka(i_k_subtr_ka, m, n) -> np.ndarray:
    """Ith = I''k sqrt(m + n) (from memory of IEC 60909-0:2016, clause 14).

    NaN in n (not computed, near generators) gives NaN.
    """
    return np.asarray(i_k_subtr_ka, dtype=float) * np.sqrt(
        np.asarray(m, dtype=float) + np.asarray(n, dtype=float)
    )


def joule_integral_ka2s(i_k_subtr_ka, m, n, t_k_s) -> np.ndarray:
    """Joule integral I''k^2 (m + n) T_k = Ith^2 T_k in kA^2 s.

    From memory of IEC 60909-0:2016, clause 14.
    """
    return thermal_equivalent_current_ka(i_k_subtr_ka, m, n) ** 2 * _positive(t_k_s, "t_k_s")


# --- steady-state current (clause 11) and far/near (clause 3) ------------------------------------


def steady_state_current_ka(i_k_subtr_ka, far_from_generator) -> Valued:
    """Steady-state Ik: I''k far from generators; near generators not computed.

    From memory of IEC 60909-0:2016, clause 11: far from generators Ik = Ib = I''k. Near
    generators Ik = lambda IrG, with lambda_max / lambda_min read from the standard's curves
    (by x_dsat and the excitation). Curves are not formulas, so Ik is NaN there with a reason.
    """
    i_k = np.asarray(i_k_subtr_ka, dtype=float)
    far = np.broadcast_to(np.asarray(far_from_generator, dtype=bool), i_k.shape)
    return Valued(np.where(far, i_k, np.nan), np.where(far, "", REASON_NEAR_IK))


def is_far_from_generator(
    i_kg_subtr_ka,
    i_rg_ka,
    *,
    i_km_subtr_ka=None,
    i_k_subtr_without_motors_ka=None,
) -> np.ndarray:
    """Whether a fault is far from generators, by the standard's definition.

    From memory of IEC 60909-0:2016, clause 3 (terms: near-to-generator and far-from-generator
    short circuit): a fault is near to the generator if at least one synchronous machine
    contributes an I''kG more than twice its rated current IrG. If the motor arguments are given,
    the fault is also near when the asynchronous motors contribute more than 5 % of the I''k that
    flows without motors.

    ``i_kg_subtr_ka`` and ``i_rg_ka``: each synchronous machine's contribution and rated current;
    the last axis runs over machines, earlier axes over faults (an empty last axis is far).
    ``i_km_subtr_ka``: motor contributions, last axis over motors, summed (arithmetically, a
    simplification of phasor addition); ``i_k_subtr_without_motors_ka``: I''k without motors, one
    per fault. A NaN contribution compares false and so makes the fault near. Returns a bool
    (array) per fault.
    """
    i_kg = np.asarray(i_kg_subtr_ka, dtype=float)
    i_rg = _positive(i_rg_ka, "i_rg_ka")
    far = np.all(i_kg <= FAR_RATIO_LIMIT * i_rg, axis=-1)
    if (i_km_subtr_ka is None) != (i_k_subtr_without_motors_ka is None):
        raise ValueError("give both i_km_subtr_ka and i_k_subtr_without_motors_ka, or neither")
    if i_km_subtr_ka is not None:
        motors = np.sum(np.asarray(i_km_subtr_ka, dtype=float), axis=-1)
        base = np.asarray(i_k_subtr_without_motors_ka, dtype=float)
        far = far & (motors <= MOTOR_SHARE_LIMIT * base)
    return far
