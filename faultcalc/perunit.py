"""Every element on one MVA base, with each bus's nominal kV as its base kV.

Conventions (stated in the README's method section):

* Base impedance of a bus: ``z_base_ohm = kv**2 / base_mva``; base current
  ``i_base_ka = base_mva / (sqrt(3) * kv)``.
* Utility source: ``|Z| = prefault_pu * base_mva / sc_mva``, so that the study reproduces the
  utility's figure at the point of delivery whatever the prefault voltage; R and X split by X/R.
* Transformer: the leakage impedance sits on the low-voltage side, changed from the nameplate base
  to the common base, ``z_pu = z_pct/100 * base_mva/(kva/1000) * (lv_kv/lv_bus_kv)**2``, behind an
  ideal ratio ``tap = (hv_kv/hv_bus_kv) / (lv_kv/lv_bus_kv)`` on the high-voltage side. With
  rated kV equal to bus kV the tap is 1 and the usual series impedance remains.
* Cable and impedance: total ohms divided by the bus's base impedance.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .model import System

SQRT3 = math.sqrt(3.0)


def z_base_ohm(kv: float, base_mva: float) -> float:
    return kv * kv / base_mva


def i_base_ka(kv: float, base_mva: float) -> float:
    return base_mva / (SQRT3 * kv)


def split_by_xr(z_abs: float, xr: float) -> complex:
    """Complex impedance of magnitude ``z_abs`` with reactance/resistance ratio ``xr``."""
    r = z_abs / math.sqrt(1.0 + xr * xr)
    return complex(r, r * xr)


@dataclass(frozen=True)
class SeriesPU:
    """A series element between two buses; ``tap`` is an ideal ratio at the from-bus side."""

    element: str
    kind: str  # "transformer", "cable", "impedance", "tie"
    from_bus: str
    to_bus: str
    z1_pu: complex
    z1_ohm: complex  # the same impedance in ohms at the voltage of `ohm_bus`
    ohm_bus: str
    base_kv: float
    tap: float = 1.0


@dataclass(frozen=True)
class ShuntPU:
    """A source seen from its bus: an impedance to the prefault-voltage reference."""

    element: str
    kind: str  # "source"
    bus: str
    z1_pu: complex
    z1_ohm: complex
    base_kv: float


@dataclass(frozen=True)
class PerUnitSystem:
    base_mva: float
    prefault_pu: float
    bus_names: tuple[str, ...]
    bus_kv: tuple[float, ...]
    series: tuple[SeriesPU, ...]
    shunts: tuple[ShuntPU, ...]


def to_per_unit(system: System, base_mva: float | None = None) -> PerUnitSystem:
    """Convert a System to per-unit on ``base_mva`` (default: the study setting)."""
    base_mva = system.settings.base_mva if base_mva is None else base_mva
    prefault = system.settings.prefault_pu
    kv = system.bus_kv()
    shunts = []
    for s in system.sources:
        kv_bus = kv[s.bus]
        z_pu = split_by_xr(prefault * base_mva / s.available_mva(kv_bus), s.xr)
        shunts.append(
            ShuntPU(s.source, "source", s.bus, z_pu, z_pu * z_base_ohm(kv_bus, base_mva), kv_bus)
        )
    series = []
    for t in system.transformers:
        hv_ratio = t.hv_kv / kv[t.hv_bus]
        lv_ratio = t.lv_kv / kv[t.lv_bus]
        z_own_pu = split_by_xr(t.z_pct / 100.0, t.xr)
        z_pu = z_own_pu * (base_mva / (t.kva / 1000.0)) * lv_ratio**2
        z_ohm = z_own_pu * t.lv_kv**2 / (t.kva / 1000.0)
        series.append(
            SeriesPU(
                t.transformer,
                "transformer",
                t.hv_bus,
                t.lv_bus,
                z_pu,
                z_ohm,
                t.lv_bus,
                kv[t.lv_bus],
                tap=hv_ratio / lv_ratio,
            )
        )
    for c in system.cables:
        kv_bus = kv[c.from_bus]
        series.append(
            SeriesPU(
                c.cable,
                "cable",
                c.from_bus,
                c.to_bus,
                c.z_ohm / z_base_ohm(kv_bus, base_mva),
                c.z_ohm,
                c.from_bus,
                kv_bus,
            )
        )
    for e in system.impedances:
        kv_bus = kv[e.from_bus]
        series.append(
            SeriesPU(
                e.element,
                "tie" if e.is_tie else "impedance",
                e.from_bus,
                e.to_bus,
                e.z_ohm / z_base_ohm(kv_bus, base_mva),
                e.z_ohm,
                e.from_bus,
                kv_bus,
            )
        )
    return PerUnitSystem(
        base_mva=base_mva,
        prefault_pu=prefault,
        bus_names=tuple(b.bus for b in system.buses),
        bus_kv=tuple(b.kv for b in system.buses),
        series=tuple(series),
        shunts=tuple(shunts),
    )
