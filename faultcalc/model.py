"""The system as the engineer described it, in physical units.

Frozen dataclasses, one per element type. Every element remembers the spreadsheet row it came
from (``row``) so that later checks can point back at it. No per-unit values live here: see
``faultcalc.perunit``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

FT_PER_KFT = 1000.0
M_PER_FT = 0.3048


@dataclass(frozen=True)
class Settings:
    title: str = ""
    base_mva: float = 100.0
    frequency_hz: int = 60
    prefault_pu: float = 1.0


@dataclass(frozen=True)
class Bus:
    bus: str
    kv: float
    description: str = ""
    row: int | None = None


@dataclass(frozen=True)
class Source:
    """A utility supply point: available three-phase short circuit, given as MVA or kA."""

    source: str
    bus: str
    xr: float
    sc_mva: float | None = None
    sc_ka: float | None = None
    row: int | None = None

    @property
    def name(self) -> str:
        return self.source

    def available_mva(self, bus_kv: float) -> float:
        if self.sc_mva is not None:
            return self.sc_mva
        return math.sqrt(3.0) * bus_kv * self.sc_ka


@dataclass(frozen=True)
class Transformer:
    transformer: str
    hv_bus: str
    lv_bus: str
    kva: float
    hv_kv: float
    lv_kv: float
    z_pct: float
    xr: float
    hv_winding: str
    lv_winding: str
    lv_neutral_ohm: float = 0.0
    row: int | None = None

    @property
    def name(self) -> str:
        return self.transformer


@dataclass(frozen=True)
class Cable:
    """A cable; lengths and impedances stored as typed, with totals derived on demand."""

    cable: str
    from_bus: str
    to_bus: str
    length_ft: float | None = None
    length_m: float | None = None
    sets: int = 1
    size: str = ""
    material: str | None = None
    raceway: str | None = None
    r_ohm_per_kft: float | None = None
    x_ohm_per_kft: float | None = None
    r_ohm_per_km: float | None = None
    x_ohm_per_km: float | None = None
    row: int | None = None

    @property
    def name(self) -> str:
        return self.cable

    @property
    def length_kft(self) -> float:
        if self.length_ft is not None:
            return self.length_ft / FT_PER_KFT
        return self.length_m / M_PER_FT / FT_PER_KFT

    @property
    def z_ohm_per_kft(self) -> complex:
        """Impedance of one conductor per 1000 ft."""
        if self.r_ohm_per_kft is not None:
            return complex(self.r_ohm_per_kft, self.x_ohm_per_kft)
        # ohm/km -> ohm/kft: one kft is 0.3048 km.
        return complex(self.r_ohm_per_km, self.x_ohm_per_km) * (FT_PER_KFT * M_PER_FT / 1000.0)

    @property
    def z_ohm(self) -> complex:
        """Total positive-sequence impedance per phase, parallel sets included."""
        return self.z_ohm_per_kft * self.length_kft / self.sets


@dataclass(frozen=True)
class Impedance:
    """A series element in total ohms per phase: reactor, busway, line; 0 + j0 is a closed tie."""

    element: str
    from_bus: str
    to_bus: str
    r_ohm: float
    x_ohm: float
    row: int | None = None

    @property
    def name(self) -> str:
        return self.element

    @property
    def z_ohm(self) -> complex:
        return complex(self.r_ohm, self.x_ohm)

    @property
    def is_tie(self) -> bool:
        return self.r_ohm == 0.0 and self.x_ohm == 0.0


@dataclass(frozen=True)
class System:
    """Everything read from one input: settings, buses and elements, plus reader warnings."""

    settings: Settings
    buses: tuple[Bus, ...]
    sources: tuple[Source, ...] = ()
    transformers: tuple[Transformer, ...] = ()
    cables: tuple[Cable, ...] = ()
    impedances: tuple[Impedance, ...] = ()
    input_name: str = ""
    input_sha256: str = ""
    warnings: tuple[str, ...] = field(default=())

    def bus_kv(self) -> dict[str, float]:
        return {b.bus: b.kv for b in self.buses}
