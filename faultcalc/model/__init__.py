"""The system as the engineer described it, in physical units.

Frozen dataclasses, one per element type. Every element remembers the spreadsheet row it came
from (``row``) so that later checks can point back at it. No per-unit values live here: see
``faultcalc.solve.perunit``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .records import Records

FT_PER_KFT = 1000.0
M_PER_FT = 0.3048
# Cable zero-sequence impedance when not given: 3 x Z1 (common practice, no source; the true
# value depends on the return path: conduit, grounding conductor, sheath, earth).
CABLE_Z0_FACTOR = 3.0


@dataclass(frozen=True)
class Settings:
    title: str = ""
    base_mva: float = 100.0
    frequency_hz: int = 60
    prefault_pu: float = 1.0
    conductor_temp_c: float = 75.0
    method: str = "thevenin"
    xr_method: str = "complex"
    lv_tolerance_pct: int = 10
    end_of_fault_temp_c: float = 160.0
    fault_ohm: float = 0.0
    min_time_delay_s: float = 0.02  # iec60909: t_min for Ib and the DC component
    fault_duration_s: float = 1.0  # iec60909: T_k for Ith
    prefault_voltage: str = "nominal"  # the voltage behind each Thevenin impedance


@dataclass(frozen=True)
class Bus:
    bus: str
    kv: float
    description: str = ""
    device: str | None = None
    rating_ka: float | None = None
    rating_xr: float | None = None
    rated_max_kv: float | None = None  # MV breakers: rated maximum voltage
    k_factor: float | None = None  # mvcb_mva: voltage range factor K
    interrupting_cycles: str | None = None  # MV breakers: 2, 3, 5 or 8
    closing_ka: float | None = None  # MV breakers: closing and latching (mvcb peak, else RMS)
    service: str = "no"
    in_service: str = "yes"  # the System holds only buses in service
    row: int | None = None

    @property
    def name(self) -> str:
        return self.bus


@dataclass(frozen=True)
class Source:
    """A utility supply point: available three-phase short circuit, given as MVA or kA."""

    source: str
    bus: str
    xr: float
    sc_mva: float | None = None
    sc_ka: float | None = None
    slg_ka: float | None = None
    slg_xr: float | None = None
    r0_ohm: float | None = None
    x0_ohm: float | None = None
    in_service: str = "yes"  # the System holds only elements in service
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
    hv_neutral_ohm: float = 0.0
    z0_pct: float | None = None
    xr0: float | None = None
    clock_number: int | None = None
    in_service: str = "yes"  # the System holds only elements in service
    row: int | None = None

    @property
    def name(self) -> str:
        return self.transformer

    @property
    def phase_shift_clock(self) -> int:
        """IEC 60076 clock number; blank means 1 for D-Y and Y-D, 0 for D-D and Y-Y."""
        if self.clock_number is not None:
            return self.clock_number
        return 1 if (self.hv_winding == "D") != (self.lv_winding == "D") else 0


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
    r0_ohm_per_kft: float | None = None
    x0_ohm_per_kft: float | None = None
    r0_ohm_per_km: float | None = None
    x0_ohm_per_km: float | None = None
    impedance_source: str = ""  # "" = R and X typed by the user; else the table row used
    in_service: str = "yes"  # the System holds only elements in service
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

    @property
    def z0_given(self) -> bool:
        return self.r0_ohm_per_kft is not None or self.r0_ohm_per_km is not None

    @property
    def z0_ohm_per_kft(self) -> complex | None:
        """Zero-sequence impedance of one set per 1000 ft, or None when not given."""
        if self.r0_ohm_per_kft is not None:
            return complex(self.r0_ohm_per_kft, self.x0_ohm_per_kft)
        if self.r0_ohm_per_km is not None:
            return complex(self.r0_ohm_per_km, self.x0_ohm_per_km) * (FT_PER_KFT * M_PER_FT / 1000)
        return None

    @property
    def z0_ohm(self) -> complex:
        """Total zero-sequence impedance: as given per set, or CABLE_Z0_FACTOR x Z1."""
        if self.z0_given:
            return self.z0_ohm_per_kft * self.length_kft / self.sets
        return CABLE_Z0_FACTOR * self.z_ohm


@dataclass(frozen=True)
class Impedance:
    """A series element in total ohms per phase: reactor, busway, line; 0 + j0 is a closed tie."""

    element: str
    from_bus: str
    to_bus: str
    r_ohm: float
    x_ohm: float
    r0_ohm: float | None = None
    x0_ohm: float | None = None
    in_service: str = "yes"  # the System holds only elements in service
    row: int | None = None

    @property
    def name(self) -> str:
        return self.element

    @property
    def z_ohm(self) -> complex:
        return complex(self.r_ohm, self.x_ohm)

    @property
    def z0_ohm(self) -> complex:
        """Zero-sequence impedance; blank r0/x0 means equal to the positive sequence."""
        if self.r0_ohm is None:
            return self.z_ohm
        return complex(self.r0_ohm, self.x0_ohm)

    @property
    def is_tie(self) -> bool:
        return self.r_ohm == 0.0 and self.x_ohm == 0.0


# kVA per hp for motors rated in hp: 1 kVA per hp for induction motors and for synchronous
# motors at 0.8 power factor (value from memory of the IEEE Std 141 short-circuit chapter's
# approximations; a 1.0 power-factor synchronous motor is nearer 0.8 kVA per hp: enter kva).
KVA_PER_HP = {"induction_motor": 1.0, "synchronous_motor": 1.0}


def rated_kva_array(machines) -> np.ndarray:
    """``Machine.rated_kva`` for every machine of a Records, on whole arrays."""
    per_hp = np.array([KVA_PER_HP.get(k, np.nan) for k in machines.column("kind")], dtype=float)
    kva = machines.array("kva")
    return np.where(np.isnan(kva), machines.array("hp") * per_hp, kva)


@dataclass(frozen=True)
class Machine:
    """A motor or generator feeding the fault through its subtransient impedance."""

    machine: str
    bus: str
    kind: str
    kv: float
    xd_pct: float
    xr: float
    kva: float | None = None
    hp: float | None = None
    count: int = 1
    neutral_ohm: float | None = None
    rpm: float | None = None
    x0_pct: float | None = None
    power_factor: float | None = None  # generators: rated cos phi, for IEC 60909 K_G
    unit_transformer: str | None = None  # generators: the transformer of a generating unit
    unit_tap_changer: str = "no"  # that transformer has an on-load tap changer (K_S, else K_SO)
    in_service: str = "yes"  # the System holds only elements in service
    row: int | None = None

    @property
    def name(self) -> str:
        return self.machine

    @property
    def rated_kva(self) -> float:
        """Rated kVA of one machine (from hp at KVA_PER_HP when given in hp)."""
        if self.kva is not None:
            return self.kva
        return self.hp * KVA_PER_HP[self.kind]

    @property
    def grounded(self) -> bool:
        return self.neutral_ohm is not None


@dataclass(frozen=True)
class OpenBranch:
    """A series element out of service (``in_service`` = no) whose two buses are both in
    service: no part of any study, kept only so that the one-line can draw it open (a
    normally-open tie)."""

    sheet: str  # transformers, cables or impedances
    name: str
    from_bus: str  # a transformer's hv_bus
    to_bus: str  # a transformer's lv_bus
    kind: str  # transformer, cable or impedance
    row: int = 0


@dataclass(frozen=True)
class GroundingTransformer:
    """A zig-zag or wye-delta grounding bank: a zero-sequence path to ground at its bus, none in
    the positive and negative sequences."""

    grounding_transformer: str
    bus: str
    kind: str
    xr: float
    z0_ohm: float | None = None
    z0_pct: float | None = None
    kva: float | None = None
    kv: float | None = None
    neutral_ohm: float = 0.0
    in_service: str = "yes"  # the System holds only elements in service
    row: int | None = None

    @property
    def name(self) -> str:
        return self.grounding_transformer


WINDING_LETTERS = ("h", "m", "l")


@dataclass(frozen=True)
class ThreeWindingTransformer:
    """A three-winding transformer or an autotransformer (kind ``auto``: h and m share their
    neutral, l is the tertiary). The l winding may be absent (an autotransformer without a
    tertiary) or have no bus (a delta tertiary not brought out)."""

    transformer: str
    h_bus: str
    h_kva: float
    h_kv: float
    h_winding: str
    m_bus: str
    m_kva: float
    m_kv: float
    m_winding: str
    hm_z_pct: float
    hm_kva: float
    hm_xr: float
    kind: str = "separate"
    h_neutral_ohm: float = 0.0
    m_neutral_ohm: float = 0.0
    l_bus: str | None = None
    l_kva: float | None = None
    l_kv: float | None = None
    l_winding: str | None = None
    l_neutral_ohm: float = 0.0
    hm_z0_pct: float | None = None
    hl_z_pct: float | None = None
    hl_kva: float | None = None
    hl_xr: float | None = None
    hl_z0_pct: float | None = None
    ml_z_pct: float | None = None
    ml_kva: float | None = None
    ml_xr: float | None = None
    ml_z0_pct: float | None = None
    m_clock: int | None = None
    l_clock: int | None = None
    in_service: str = "yes"  # the System holds only elements in service
    row: int | None = None

    @property
    def name(self) -> str:
        return self.transformer

    @property
    def has_tertiary(self) -> bool:
        return self.l_winding is not None

    def buses(self) -> tuple[str, ...]:
        """The buses of its windings (h, m, and l when brought out)."""
        return (self.h_bus, self.m_bus) + ((self.l_bus,) if self.l_bus is not None else ())

    def winding_code(self, letter: str) -> str:
        """Winding m or l as IEC 60076 writes it after h: connection in lower case and clock
        number ("yn0", "d1"); an autotransformer's m is "a0"."""
        if self.kind == "auto" and letter == "m":
            return "a0"
        return f"{getattr(self, letter + '_winding').lower()}{self.clock(letter)}"

    def clock(self, letter: str) -> int:
        """IEC 60076 clock number of winding m or l against h; blank means 1 where one of the
        two windings is D and the other not, 0 otherwise."""
        given = self.m_clock if letter == "m" else self.l_clock
        if given is not None:
            return given
        other = self.m_winding if letter == "m" else self.l_winding
        return 1 if (self.h_winding == "D") != (other == "D") else 0


@dataclass(frozen=True)
class Inverter:
    """An inverter-based source (solar PV, battery): a current held at its control's limit,
    ``current_limit_pu`` x its rated current, at the angle its control sets (see
    ``faultcalc.solve.inverters``)."""

    inverter: str
    bus: str
    kva: float
    kv: float
    current_limit_pu: float
    count: int = 1
    behaviour: str = "positive"  # or "negative_share"
    negative_share_pct: float | None = None
    cease_below_pu: float | None = None
    in_service: str = "yes"  # the System holds only elements in service
    row: int | None = None

    @property
    def name(self) -> str:
        return self.inverter

    @property
    def limit_ka(self) -> float:
        """The group's limit current, kA: current_limit_pu x count x kva / (sqrt(3) kv)."""
        return self.current_limit_pu * self.count * self.kva / (math.sqrt(3.0) * self.kv) / 1000


@dataclass(frozen=True)
class System:
    """Everything read from one input: settings, buses and elements, plus reader warnings.

    Element collections may be given as tuples of objects or as column ``Records``; they are
    always held as Records (a read-only sequence of the objects, with ``column``/``array``).
    """

    settings: Settings
    buses: Records[Bus]
    sources: Records[Source] = ()
    transformers: Records[Transformer] = ()
    cables: Records[Cable] = ()
    impedances: Records[Impedance] = ()
    machines: Records[Machine] = ()
    grounding_transformers: Records[GroundingTransformer] = ()
    three_winding_transformers: Records[ThreeWindingTransformer] = ()
    inverters: Records[Inverter] = ()
    cases: tuple[tuple[str, System], ...] = ()  # named variations, each a whole System
    input_name: str = ""
    input_sha256: str = ""
    warnings: tuple[str, ...] = field(default=())
    in_labels: bool = True  # a case: False when its cases rows say label = no
    # A case: each cell its rows set, "XF-1 (transformers): z_pct = 5.3".
    changes: tuple[str, ...] = ()
    # Series elements left out as out of service between two buses in service (read/service.py):
    # drawn open on the one-line, never seen by a study.
    open_branches: tuple[OpenBranch, ...] = ()

    def __post_init__(self) -> None:
        for name, kind in ELEMENT_KINDS.items():
            object.__setattr__(self, name, Records.of(kind, getattr(self, name)))

    def bus_positions(self, names) -> np.ndarray:
        """Position of each named bus on the buses sheet (-1 where there is none).

        Answers for one list object are kept with the buses (``Records.memo``): every System
        that has these very buses (a case that leaves them as they are, a System with some
        elements left out) shares them, since a column is looked up by several steps."""
        memo = self.buses.memo()
        kept = memo.get(id(names))
        if kept is not None and kept[0] is names:
            return kept[1]
        positions = _positions(self.bus_index(), names)
        self.remember_positions(names, positions)
        return positions

    def bus_index(self) -> dict[str, int]:
        """The map from bus name to position on the buses sheet."""
        memo = self.buses.memo()
        index = memo.get("bus index")
        if index is None:  # the last row of a name wins (only a hand-built System repeats)
            bus_names = self.buses.column("bus")
            index = dict(zip(bus_names, range(len(bus_names)), strict=True))
            memo["bus index"] = index
        return index

    def remember_bus_index(self, index: dict[str, int]) -> None:
        """Record the map from bus name to position already built (by the reader)."""
        self.buses.memo()["bus index"] = index

    def remember_positions(self, names, positions: np.ndarray) -> None:
        """Record the bus positions of a list of names already looked up (by the reader)."""
        self.buses.memo()[id(names)] = (names, positions)

    def bus_kv(self) -> dict[str, float]:
        return dict(zip(self.buses.column("bus"), self.buses.column("kv"), strict=True))


def _positions(index: dict[str, int], names) -> np.ndarray:
    """Position of each of ``names`` in ``index`` (-1 where absent), by a hash join (pandas)
    for long lists."""
    if len(names) < 1000:
        get = index.get
        return np.fromiter((get(n, -1) for n in names), np.int64, len(names))
    import pandas as pd

    keys = pd.Index(list(index), dtype=object)
    rows = np.fromiter(index.values(), np.int64, len(index))
    found = keys.get_indexer(pd.Index(list(names), dtype=object))
    return np.where(found >= 0, rows[found], -1)


ELEMENT_KINDS = {
    "buses": Bus,
    "sources": Source,
    "transformers": Transformer,
    "cables": Cable,
    "impedances": Impedance,
    "machines": Machine,
    "grounding_transformers": GroundingTransformer,
    "three_winding_transformers": ThreeWindingTransformer,
    "inverters": Inverter,
}
