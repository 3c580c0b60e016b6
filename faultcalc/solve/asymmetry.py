"""Peak and asymmetrical currents from X/R (pure functions of numpy arrays).

* ``half_cycle_factor``: RMS of the asymmetrical current at half a cycle over the symmetrical
  RMS, ``sqrt(1 + 2 exp(-2 pi / (X/R)))`` (the DC offset decayed by half a cycle; IEEE Std
  C37.010 and Sheldrake, Handbook of Electrical Engineering, Table 8.1 give this factor).
* ``kappa``: the IEC 60909-0 peak factor ``1.02 + 0.98 exp(-3 R/X)`` (IEC 60909-0:2016, eq. 55),
  so that ``ip = kappa sqrt(2) I"k``.
* ``peak_factor_exact``: the true first maximum of ``sin(wt - phi) + sin(phi) exp(-wt R/X)``
  over the symmetrical RMS, for comparison (the worst closing angle is within a few degrees of
  the voltage zero; the formula above runs about 0.5 % above this).
* ``dc_time_constant_ms``: ``tau = (X/R) / (2 pi f)``.
"""

from __future__ import annotations

import numpy as np

SQRT2 = np.sqrt(2.0)


def half_cycle_factor(xr) -> np.ndarray:
    """Asymmetrical RMS at half a cycle / symmetrical RMS; X/R may be inf."""
    xr = np.asarray(xr, dtype=float)
    with np.errstate(divide="ignore"):
        return np.sqrt(1.0 + 2.0 * np.exp(-2.0 * np.pi / xr))


def kappa(r_over_x) -> np.ndarray:
    """IEC 60909-0 peak factor from R/X."""
    return 1.02 + 0.98 * np.exp(-3.0 * np.asarray(r_over_x, dtype=float))


def peak_factor_exact(xr: float, points: int = 40_001) -> float:
    """Largest |i| / I_rms over all closing angles and the first cycles (numerical)."""
    wt = np.linspace(0.0, 2.0 * np.pi, points)
    best = 0.0
    for closing in np.linspace(0.0, np.pi, 361):  # closing angle of the voltage
        phi = np.arctan(xr) if np.isfinite(xr) else np.pi / 2
        decay = np.exp(-wt / xr) if np.isfinite(xr) else 1.0
        i = np.sin(wt + closing - phi) - np.sin(closing - phi) * decay
        best = max(best, float(np.max(np.abs(i))))
    return SQRT2 * best


def dc_time_constant_ms(xr, frequency_hz: float) -> np.ndarray:
    return 1000.0 * np.asarray(xr, dtype=float) / (2.0 * np.pi * frequency_hz)
