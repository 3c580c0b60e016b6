"""Factors from the standards the calculation methods follow.

IEC 60909-0:2016 (Short-circuit currents in three-phase a.c. systems, Part 0: Calculation of
currents):

* Voltage factor c (Table 1): low voltage (up to 1 kV) cmax = 1.05 for systems with a +6 %
  tolerance, 1.10 for +10 %, cmin = 0.95; above 1 kV cmax = 1.10, cmin = 1.00.
* Network transformer correction (6.3.3, eq. 12a): ``K_T = 0.95 cmax / (1 + 0.6 x_T)``, x_T the
  transformer's reactance in per-unit of its rating, cmax of the low-voltage side's network.
* Conductor resistance at the end of the fault (eq. 34): ``R = [1 + 0.004 (theta_e - 20)] R20``.
* Peak current by the equivalent-frequency method for meshed networks (4.3.1.2 c): Zc at
  fc = 20 Hz (50 Hz systems) or 24 Hz (60 Hz systems), ``R/X = (Rc/Xc)(fc/f)``.

IEEE Std 551-2006 (Violet Book), Table 9-1, multipliers of machine subtransient reactance:

* first-cycle (momentary) network: induction motors above 1000 hp, and above 250 hp at 3600
  r/min (two-pole: one pair of poles by the nameplate speed, see ``two_pole``): 1.0; all other
  induction motors of 50 hp and more: 1.2; below 50 hp: 1.67;
  synchronous motors and generators: 1.0.
* interrupting (1.5 to 4 cycle) network: synchronous motors 1.5; induction motors above 1000
  hp, and above 250 hp at 3600 r/min: 1.5; other induction motors of 50 hp and more: 3.0;
  below 50 hp: neglected; generators 1.0.
"""

from __future__ import annotations

import math

LV_LIMIT_KV = 1.0
IEC_ALPHA = 0.004  # per C, IEC 60909-0 eq. 34
EQUIVALENT_FREQUENCY_HZ = {50: 20.0, 60: 24.0}


def c_max(kv: float, lv_tolerance_pct: float = 10.0) -> float:
    """IEC 60909-0 Table 1 voltage factor for maximum currents."""
    if kv <= LV_LIMIT_KV:
        return 1.05 if lv_tolerance_pct <= 6.0 else 1.10
    return 1.10


def c_min(kv: float) -> float:
    """IEC 60909-0 Table 1 voltage factor for minimum currents."""
    return 0.95 if kv <= LV_LIMIT_KV else 1.00


def k_t(x_t_pu: float, cmax: float) -> float:
    """IEC 60909-0 eq. 12a network transformer correction factor."""
    return 0.95 * cmax / (1.0 + 0.6 * x_t_pu)


def end_of_fault_factor(from_c: float, to_c: float) -> float:
    """IEC 60909-0 eq. 34: R(to) / R(from) with the linear 0.004 per C from 20 C."""
    return (1.0 + IEC_ALPHA * (to_c - 20.0)) / (1.0 + IEC_ALPHA * (from_c - 20.0))


def pole_pairs(rpm, frequency_hz: int = 60):
    """Pairs of poles of a machine of nameplate speed ``rpm`` (a number or an array):
    ``round(60 f / rpm)``, at least 1 (an induction motor runs a little below synchronous)."""
    import numpy as np

    return np.maximum(1.0, np.round(60.0 * frequency_hz / rpm))


def two_pole(rpm: float | None, frequency_hz: int = 60) -> bool:
    """Whether a motor of nameplate speed ``rpm`` is a two-pole machine (the table's "3600
    r/min" class at 60 Hz): one pair of poles, ``round(60 f / rpm) == 1``; a two-pole induction
    motor runs at about 3550 to 3580 r/min at full load, so its nameplate is below 3600."""
    return rpm is not None and rpm > 0 and float(pole_pairs(rpm, frequency_hz)) == 1.0


def ieee_first_cycle_multiplier(
    kind: str, hp: float, rpm: float | None, frequency_hz: int = 60
) -> float:
    """IEEE Std 551-2006 Table 9-1 first-cycle multiplier of X"d for one machine."""
    if kind != "induction_motor":
        return 1.0
    if hp > 1000.0 or (hp > 250.0 and two_pole(rpm, frequency_hz)):
        return 1.0
    if hp >= 50.0:
        return 1.2
    return 1.67


def ieee_interrupting_multiplier(
    kind: str, hp: float, rpm: float | None, frequency_hz: int = 60
) -> float:
    """IEEE Std 551-2006 Table 9-1 interrupting-network multiplier of X"d for one machine;
    ``inf`` for a machine the interrupting network neglects (induction motors below 50 hp)."""
    if kind == "generator":
        return 1.0
    if kind == "synchronous_motor":
        return 1.5
    if hp > 1000.0 or (hp > 250.0 and two_pole(rpm, frequency_hz)):
        return 1.5
    if hp >= 50.0:
        return 3.0
    return math.inf


def transformer_x_pu(z_pct: float, xr: float) -> float:
    """Reactance in per-unit of the rating from %Z and X/R."""
    return z_pct / 100.0 * xr / math.sqrt(1.0 + xr * xr)
