"""Fault currents from the sequence Thevenin impedances (per-unit in, per-unit out).

Symmetrical components (Fortescue, 1918), as derived in any power-system analysis text (e.g.
Grainger and Stevenson, Power System Analysis, Chapter 12), with E the prefault voltage and Zf
the fault impedance:

* three-phase: ``I1 = E / (Z1 + Zf)``
* line-to-ground (phase a): ``I1 = I2 = I0 = E / (Z1 + Z2 + Z0 + 3 Zf)``, ``Ia = 3 I0``
* line-to-line (b-c, Zf between them): ``I1 = -I2 = E / (Z1 + Z2 + Zf)``, ``|Ib| = sqrt(3) |I1|``
* double-line-to-ground (b-c, Zf from their junction to ground), with ``Zg = Z0 + 3 Zf``:
  ``I1 = E / (Z1 + Z2 Zg / (Z2 + Zg))``, ``I2 = -I1 Zg / (Z2 + Zg)``, ``I0 = -I1 Z2 / (Z2 + Zg)``

Where there is no zero-sequence path (``z0`` is NaN) the ground currents are zero and the
double-line-to-ground fault becomes a line-to-line fault.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..choices import FAULT_TYPES

A = np.exp(2j * np.pi / 3)  # the 120-degree operator


@dataclass(frozen=True)
class SequenceCurrents:
    """Sequence currents flowing into the fault, per-unit, one entry per bus."""

    i1: np.ndarray
    i2: np.ndarray
    i0: np.ndarray


def sequence_currents(fault: str, z1, z2, z0, prefault_pu: float, zf=0.0) -> SequenceCurrents:
    """Sequence currents into a fault of type ``fault`` ('3ph', 'slg', 'll', 'llg').

    ``z0`` may hold NaN where a bus has no zero-sequence path to ground.
    """
    z1, z2, z0 = (np.asarray(z, dtype=complex) for z in (z1, z2, z0))
    zf = np.broadcast_to(np.asarray(zf, dtype=complex), z1.shape)
    e = prefault_pu
    zero = np.zeros_like(z1)
    grounded = ~np.isnan(z0)
    z0g = np.where(grounded, z0, 0)
    if fault == "3ph":
        return SequenceCurrents(e / (z1 + zf), zero, zero)
    if fault == "slg":
        i = np.where(grounded, e / (z1 + z2 + z0g + 3 * zf), 0)
        return SequenceCurrents(i, i, i)
    if fault == "ll":
        i1 = e / (z1 + z2 + zf)
        return SequenceCurrents(i1, -i1, zero)
    if fault == "llg":
        zg = z0g + 3 * zf
        par = np.where(grounded, z2 * zg / np.where(grounded, z2 + zg, 1), z2)
        i1 = e / (z1 + par)
        i2 = np.where(grounded, -i1 * zg / np.where(grounded, z2 + zg, 1), -i1)
        i0 = np.where(grounded, -i1 * z2 / np.where(grounded, z2 + zg, 1), 0)
        return SequenceCurrents(i1, i2, i0)
    raise ValueError(f"unknown fault type {fault!r}; expected one of {FAULT_TYPES}")


def phase_currents(i1, i2, i0) -> np.ndarray:
    """Phase currents (a, b, c) from sequence currents; shape (3, ...)."""
    i1, i2, i0 = (np.asarray(i, dtype=complex) for i in (i1, i2, i0))
    return np.stack([i0 + i1 + i2, i0 + A * A * i1 + A * i2, i0 + A * i1 + A * A * i2])


@dataclass(frozen=True)
class BusFaults:
    """Magnitudes per bus, per-unit: the phase current of each fault type and the ground current."""

    i3ph: np.ndarray
    islg: np.ndarray  # NaN where no zero-sequence path
    ill: np.ndarray
    illg: np.ndarray  # the larger of the two faulted phases
    ig_llg: np.ndarray  # 3 |I0| of the double-line-to-ground fault; NaN where no path


def all_faults(z1, z2, z0, prefault_pu: float, zf=0.0) -> BusFaults:
    """Every fault type at every bus."""
    grounded = ~np.isnan(np.asarray(z0, dtype=complex))
    s3 = sequence_currents("3ph", z1, z2, z0, prefault_pu, zf)
    slg = sequence_currents("slg", z1, z2, z0, prefault_pu, zf)
    ll = sequence_currents("ll", z1, z2, z0, prefault_pu, zf)
    llg = sequence_currents("llg", z1, z2, z0, prefault_pu, zf)
    p_llg = phase_currents(llg.i1, llg.i2, llg.i0)
    nan = np.full(np.shape(z1), np.nan)
    return BusFaults(
        i3ph=np.abs(s3.i1),
        islg=np.where(grounded, np.abs(3 * slg.i0), nan),
        ill=np.sqrt(3.0) * np.abs(ll.i1),
        illg=np.maximum(np.abs(p_llg[1]), np.abs(p_llg[2])),
        ig_llg=np.where(grounded, np.abs(3 * llg.i0), nan),
    )
