"""Fault currents from the Thevenin impedances (per-unit in, per-unit out)."""

from __future__ import annotations

import numpy as np


def three_phase_pu(z1_pu: np.ndarray, prefault_pu: float, fault_z_pu: complex = 0j) -> np.ndarray:
    """Bolted (or through ``fault_z_pu``) three-phase fault current magnitude, per-unit.

    ``I = E / |Z1 + Zf|``: the prefault voltage behind the positive-sequence Thevenin impedance.
    """
    return prefault_pu / np.abs(np.asarray(z1_pu) + fault_z_pu)
