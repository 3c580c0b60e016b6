"""Every element on one MVA base, with each bus's nominal kV as its base kV.

Conventions (stated in the README's method section, with their sources):

* Base impedance of a bus: ``z_base_ohm = kv**2 / base_mva``; base current
  ``i_base_ka = base_mva / (sqrt(3) * kv)``.
* Negative sequence equals positive sequence for every element: static elements are symmetrical,
  and machines use their subtransient impedance in both (common practice).
* Utility source: ``|Z1| = prefault_pu * base_mva / sc_mva``, so that the study reproduces the
  utility's figure at the point of delivery whatever the prefault voltage; R and X split by X/R.
  Zero sequence from the line-to-ground current: ``|2 Z1 + Z0| = 3 prefault_pu / I_slg_pu`` at
  angle ``atan(slg_xr)``, or from r0_ohm/x0_ohm, or Z0 = Z1 (warned).
* Transformer: the leakage impedance sits on the low-voltage side, changed from the nameplate base
  to the common base, ``z_pu = z_pct/100 * base_mva/(kva/1000) * (lv_kv/lv_bus_kv)**2``, behind an
  ideal ratio ``tap = (hv_kv/hv_bus_kv) / (lv_kv/lv_bus_kv)`` on the high-voltage side. Zero
  sequence by winding connection: YN-YN passes it in series (``z0 + 3 Zn_lv + 3 Zn_hv / tap**2``),
  D-YN is a shunt to ground on the YN side (``z0 + 3 Zn``), YN-D the same on the HV side, and any
  Y (ungrounded) or D-D winding pair blocks it.
* Cable and impedance: total ohms divided by the bus's base impedance. Cable zero sequence: given,
  or 3 x the positive sequence (warned).
* Machine: the reactance is X"d, ``x = xd_pct/100`` on the machine's own rating, and
  ``r = x / (X/R)``, as machine data are written in the trade (from memory of IEEE Std
  551-2006; IEC 60909-0 writes a generator as R_G + jX"d), changed to the common base
  ``* base_mva/(kva/1000) * (kv/bus_kv)**2 / count`` behind the prefault voltage; zero
  sequence only when the neutral is grounded: ``(z0 + 3 Zn) / count`` with
  ``x0 = x0_pct/100`` and the same X/R.
"""

from __future__ import annotations

import dataclasses
import itertools
import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputError, Problem
from ..model import (
    CABLE_Z0_FACTOR,
    FT_PER_KFT,
    M_PER_FT,
    Source,
    System,
    Transformer,
    rated_kva_array,
)
from ..model.records import Records

SQRT3 = math.sqrt(3.0)


# Zero-sequence models of a series element.
Z0_SERIES = "series"  # between the two buses, with the element's tap
Z0_SHUNT_FROM = "shunt_from"  # to ground at the from (HV) bus only
Z0_SHUNT_TO = "shunt_to"  # to ground at the to (LV) bus only
Z0_OPEN = "open"  # no zero-sequence path through or to ground
Z0_TIE = "tie"  # the two buses are one node in every sequence


def z_base_ohm(kv: float, base_mva: float) -> float:
    return kv * kv / base_mva


def i_base_ka(kv: float, base_mva: float) -> float:
    return base_mva / (SQRT3 * kv)


def split_by_xr(z_abs, xr):
    """Complex impedance of magnitude ``z_abs`` with reactance/resistance ratio ``xr`` (numbers
    or arrays)."""
    if isinstance(z_abs, np.ndarray) or isinstance(xr, np.ndarray):
        r = z_abs / np.sqrt(1.0 + xr * xr)
        return r + 1j * r * xr
    r = z_abs / math.sqrt(1.0 + xr * xr)
    return complex(r, r * xr)


@dataclass(slots=True)  # not frozen: a study builds one per element, and frozen costs 3x
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
    z0_mode: str = Z0_SERIES
    z0_pu: complex | None = None  # on the base of the bus it sits at (see z0_mode)
    clock: int = 0  # phase displacement, IEC 60076 clock number (to side lags by 30 deg each)
    z0_note: str = ""


@dataclass(slots=True)
class ShuntPU:
    """A source or machine seen from its bus: an impedance to the prefault voltage."""

    element: str
    kind: str  # "source", "induction_motor", "synchronous_motor", "generator"
    bus: str
    z1_pu: complex
    z1_ohm: complex
    base_kv: float
    z0_pu: complex | None = None  # None: no zero-sequence path to ground
    z0_note: str = ""


@dataclass(frozen=True)
class PerUnitSystem:
    base_mva: float
    prefault_pu: tuple[float, ...]  # per bus, input order
    bus_names: tuple[str, ...]
    bus_kv: tuple[float, ...]
    series: Records[SeriesPU]  # transformers, cables, impedances, in input order
    shunts: Records[ShuntPU]  # sources, machines
    series_ends: tuple[np.ndarray, np.ndarray]  # input index of each series element's buses
    shunt_buses: np.ndarray  # input index of each shunt's bus
    warnings: tuple[str, ...] = ()
    # The star points of three-winding transformers: internal nodes after the buses. A series
    # end at index len(bus_names) + k is star point k; an end of -1 is no bus (a delta
    # tertiary not brought out: its zero-sequence path to ground at the star point only).
    star_names: tuple[str, ...] = ()


def _source(s: Source, kv: float, base_mva: float, prefault: float, problems, notes):
    z_base = z_base_ohm(kv, base_mva)
    z1 = split_by_xr(prefault * base_mva / s.available_mva(kv), s.xr)
    if s.slg_ka is not None:
        loop = split_by_xr(3.0 * prefault * i_base_ka(kv, base_mva) / s.slg_ka, s.slg_xr)
        z0 = loop - 2.0 * z1
        note = f"Z0 from {s.slg_ka:g} kA line-to-ground, X/R {s.slg_xr:g}"
        if z0.real < 0 or z0.imag <= 0:
            problems.append(
                Problem(
                    "sources",
                    s.row,
                    "slg_ka",
                    s.slg_ka,
                    "with the three-phase data this implies a zero-sequence impedance "
                    f"R0 = {z0.real * z_base:.4g} ohm, X0 = {z0.imag * z_base:.4g} ohm, which "
                    "is not physical; check slg_ka and slg_xr against sc_mva/sc_ka and xr",
                )
            )
    elif s.r0_ohm is not None:
        z0 = complex(s.r0_ohm, s.x0_ohm) / z_base
        note = "Z0 from r0_ohm, x0_ohm"
        if z0 == 0:
            problems.append(
                Problem(
                    "sources",
                    s.row,
                    "r0_ohm, x0_ohm",
                    0,
                    "a zero-sequence impedance of 0 is an infinite ground source; "
                    "give the utility's values",
                )
            )
    else:
        z0 = z1
        note = "Z0 = Z1 (assumed)"
        notes.append(
            f"source {s.source}: no zero-sequence data (slg_ka, or r0_ohm and x0_ohm); "
            "Z0 taken equal to Z1. Ask the utility for the available line-to-ground "
            "current."
        )
    return ShuntPU(s.source, "source", s.bus, z1, z1 * z_base, kv, z0, note)


def _transformer(t: Transformer, kv: dict[str, float], base_mva: float) -> SeriesPU:
    hv_ratio = t.hv_kv / kv[t.hv_bus]
    lv_ratio = t.lv_kv / kv[t.lv_bus]
    tap = hv_ratio / lv_ratio
    mva = t.kva / 1000.0
    z_own = split_by_xr(t.z_pct / 100.0, t.xr)
    z1_pu = z_own * (base_mva / mva) * lv_ratio**2
    z1_ohm = z_own * t.lv_kv**2 / mva
    z0_own = split_by_xr(t.z0_pct / 100.0, t.xr0)
    zn_hv = t.hv_neutral_ohm / z_base_ohm(kv[t.hv_bus], base_mva)
    zn_lv = t.lv_neutral_ohm / z_base_ohm(kv[t.lv_bus], base_mva)
    pair = (t.hv_winding, t.lv_winding)
    if pair == ("YN", "YN"):
        mode = Z0_SERIES
        z0 = z0_own * (base_mva / mva) * lv_ratio**2 + 3 * zn_lv + 3 * zn_hv / tap**2
        note = "zero sequence passes (YN-YN)"
    elif pair == ("D", "YN"):
        mode = Z0_SHUNT_TO
        z0 = z0_own * (base_mva / mva) * lv_ratio**2 + 3 * zn_lv
        note = "zero sequence: path to ground on the LV side only (D-YN)"
    elif pair == ("YN", "D"):
        mode = Z0_SHUNT_FROM
        z0 = z0_own * (base_mva / mva) * hv_ratio**2 + 3 * zn_hv
        note = "zero sequence: path to ground on the HV side only (YN-D)"
    else:
        mode, z0 = Z0_OPEN, None
        note = f"zero sequence blocked ({t.hv_winding}-{t.lv_winding})"
    return SeriesPU(
        t.transformer,
        "transformer",
        t.hv_bus,
        t.lv_bus,
        z1_pu,
        z1_ohm,
        t.lv_bus,
        kv[t.lv_bus],
        tap,
        mode,
        z0,
        t.phase_shift_clock,
        note,
    )


def _cable_impedances_ohm(system: System) -> tuple[np.ndarray, np.ndarray]:
    """Total Z1 and Z0 of every cable in ohms: model.Cable.z_ohm and z0_ohm on whole arrays
    (per conductor per 1000 ft x length in kft / sets; Z0 as given or CABLE_Z0_FACTOR x Z1).
    The netlist uses the properties, so the circuit-simulator cross-check compares the two."""
    cables = system.cables
    if not cables:
        return np.zeros(0, complex), np.zeros(0, complex)
    km_to_kft = FT_PER_KFT * M_PER_FT / 1000.0

    def per_kft(prefix):
        r, x = cables.array(f"{prefix}_ohm_per_kft"), cables.array(f"x{prefix[1:]}_ohm_per_kft")
        rk = cables.array(f"{prefix}_ohm_per_km") * km_to_kft
        xk = cables.array(f"x{prefix[1:]}_ohm_per_km") * km_to_kft
        return np.where(np.isnan(r), rk, r) + 1j * np.where(np.isnan(x), xk, x)

    z1, z0 = per_kft("r"), per_kft("r0")
    ft, m = cables.array("length_ft"), cables.array("length_m")
    kft = np.where(np.isnan(ft), m / M_PER_FT, ft) / FT_PER_KFT
    sets = cables.array("sets")
    z1_total = z1 * kft / sets
    z0_total = np.where(np.isnan(z0.real), CABLE_Z0_FACTOR * z1_total, z0 * kft / sets)
    return z1_total, z0_total


def _machines(system: System, kv_bus: np.ndarray, base_mva: float) -> dict[str, object]:
    """ShuntPU columns of every machine, on whole arrays: ``x = xd_pct/100``, ``r = x / (X/R)``,
    times ``base_mva / (kva/1000) * (kv/bus_kv)**2 / count``; grounded: ``(z0 + 3 Zn) / count``
    with x0 = x0_pct/100 (xd_pct when blank) and the same X/R."""
    m = system.machines
    kind = m.column("kind")
    rated_kva = rated_kva_array(m)
    count = m.array("count")
    scale = (base_mva / (rated_kva / 1000.0)) * (m.array("kv") / kv_bus) ** 2 / count
    xr = m.array("xr")
    xd = m.array("xd_pct")

    def from_reactance(x):  # X as given, R = X / (X/R)
        return x / xr + 1j * x

    z1 = from_reactance(xd / 100.0) * scale
    neutral = m.array("neutral_ohm")
    grounded = ~np.isnan(neutral)
    x0 = m.array("x0_pct")
    x0 = np.where(np.isnan(x0), xd, x0)
    zn = neutral / z_base_ohm(kv_bus, base_mva) / count
    z0 = np.where(grounded, from_reactance(x0 / 100.0) * scale + 3 * zn, complex(np.nan, np.nan))
    notes = ["ungrounded: no zero-sequence path"] * len(m)
    for i in np.flatnonzero(grounded).tolist():
        notes[i] = f"grounded neutral ({neutral[i]:g} ohm)"
    return dict(
        element=m.column("machine"),
        kind=kind,
        bus=m.column("bus"),
        z1_pu=z1,
        z1_ohm=z1 * z_base_ohm(kv_bus, base_mva),
        base_kv=kv_bus,
        z0_pu=z0,
        z0_note=notes,
    )


def _at(system: System, objects: list, name: str) -> np.ndarray:
    return system.bus_positions([getattr(o, name) for o in objects]).astype(np.int64)


def _joined(cls, parts: list[dict[str, object]]) -> Records:
    """One Records of ``cls`` from column dicts, in order (lists and arrays concatenated)."""
    names = [f.name for f in dataclasses.fields(cls)]
    parts = [p for p in parts if len(next(iter(p.values())))]
    columns: dict[str, object] = {}
    for name in names:
        if not all(name in p for p in parts) or not parts:
            continue
        values = [p[name] for p in parts]
        if all(isinstance(v, np.ndarray) for v in values):
            columns[name] = np.concatenate(values)
        else:
            columns[name] = list(  # chained in C: a Python loop per item cost 13 ms a case
                itertools.chain.from_iterable(
                    v.tolist() if isinstance(v, np.ndarray) else v for v in values
                )
            )
    n = sum(len(next(iter(p.values()))) for p in parts)
    return Records(cls, columns, n)


# A grounding bank's positive- and negative-sequence impedance: its magnetizing impedance,
# taken as open (common practice for short-circuit studies): 1e12 ohm, a physical value so
# that the results do not depend on the MVA base; no current flows.
OPEN_OHM = 1e12


def _grounding(system: System, kv_bus: np.ndarray, base_mva: float) -> dict[str, object]:
    """ShuntPU columns of every grounding bank: no positive-sequence path (OPEN_OHM, no source
    voltage of its own matters behind it), zero sequence ``(Z0 + 3 Zn)`` to ground with
    ``|Z0|`` in ohms as given or ``z0_pct/100 x kv^2 / (kva/1000)`` and R = |Z0| / sqrt(1 +
    (X/R)^2)."""
    g = system.grounding_transformers
    kva, kv_rated = g.array("kva"), g.array("kv")
    z_abs = np.where(
        np.isnan(g.array("z0_ohm")),
        g.array("z0_pct") / 100.0 * kv_rated**2 / (kva / 1000.0),
        g.array("z0_ohm"),
    )
    z0_ohm = split_by_xr(z_abs, g.array("xr")) + 3.0 * g.array("neutral_ohm")
    n = len(g)
    return dict(
        element=g.column("grounding_transformer"),
        kind=["grounding_transformer"] * n,
        bus=g.column("bus"),
        z1_pu=1j * OPEN_OHM / z_base_ohm(kv_bus, base_mva),
        z1_ohm=np.full(n, 1j * OPEN_OHM),
        base_kv=kv_bus,
        z0_pu=z0_ohm / z_base_ohm(kv_bus, base_mva),
        z0_note=[f"grounding bank ({k}): zero-sequence path to ground" for k in g.column("kind")],
    )


def _three_winding(system: System, kv_all: np.ndarray, base_mva: float):
    """The legs of every three-winding transformer (solve/threewinding.py), their ends (bus
    positions; a star point after the buses; -1 for no bus) and the star points' names."""
    from . import threewinding

    legs, ends_from, ends_to, stars = [], [], [], []
    n_bus = len(system.buses)
    index = system.bus_index()
    for t in system.three_winding_transformers:
        at = {bus: index[bus] for bus in t.buses()}
        kv = {bus: float(kv_all[k]) for bus, k in at.items()}
        these, has_star = threewinding.legs(t, kv, base_mva)
        for leg in these:
            legs.append(leg)
            ends_from.append(at[leg.from_bus] if leg.from_bus else -1)
            ends_to.append(n_bus + len(stars) if has_star else at[leg.to_bus])
        if has_star:
            stars.append(threewinding.star_label(t))
    ends = (np.array(ends_from, np.int64), np.array(ends_to, np.int64))
    return legs, ends, stars


def _columns_of(cls, objects: list) -> dict[str, object]:
    """Column dict of a list of dataclass objects: complex, float and int fields as arrays
    (None as NaN), the others as lists."""
    kinds = {"complex": complex, "float": float, "int": np.int64}
    out: dict[str, object] = {}
    for f in dataclasses.fields(cls):
        values = [getattr(o, f.name) for o in objects]
        kind = kinds.get(str(f.type).split("|")[0].strip())
        if kind is None:
            out[f.name] = values
        elif kind is np.int64:
            out[f.name] = np.array(values, dtype=np.int64)
        else:
            nan = complex(np.nan, np.nan) if kind is complex else np.nan
            out[f.name] = np.array([nan if v is None else v for v in values], dtype=kind)
    return out


def _names(items: list[str]) -> str:
    shown = ", ".join(items[:10])
    return shown + (f" and {len(items) - 10} more" if len(items) > 10 else "")


def to_per_unit(
    system: System,
    base_mva: float | None = None,
    prefault_pu: tuple[float, ...] | None = None,
) -> PerUnitSystem:
    """Convert a System to per-unit on ``base_mva`` (default: the study setting).

    ``prefault_pu`` gives each bus's prefault voltage (default: the study setting at every bus);
    a source's impedance uses the value at its own bus.

    Raises InputError when source data imply a non-physical zero-sequence impedance.
    """
    base_mva = system.settings.base_mva if base_mva is None else base_mva
    if prefault_pu is None:
        prefault_pu = (system.settings.prefault_pu,) * len(system.buses)
    kv_all = system.buses.array("kv")
    few = [s.bus for s in system.sources]
    few += [b for t in system.transformers for b in (t.hv_bus, t.lv_bus)]
    few += [b for e in system.impedances for b in (e.from_bus, e.to_bus)]
    few_at = system.bus_positions(few).tolist()
    kv = {name: float(kv_all[i]) for name, i in zip(few, few_at, strict=True)}
    prefault_of = {name: prefault_pu[i] for name, i in zip(few, few_at, strict=True)}
    problems: list[Problem] = []
    notes: list[str] = []
    shunts = [
        _source(s, kv[s.bus], base_mva, prefault_of[s.bus], problems, notes) for s in system.sources
    ]
    machine_at = system.bus_positions(system.machines.column("bus"))
    kv_machines = kv_all[machine_at]
    shunt_parts = [_columns_of(ShuntPU, shunts)]
    if system.machines:
        shunt_parts.append(_machines(system, kv_machines, base_mva))
    grounding_at = system.bus_positions(system.grounding_transformers.column("bus"))
    if system.grounding_transformers:
        shunt_parts.append(_grounding(system, kv_all[grounding_at], base_mva))
    series = [_transformer(t, kv, base_mva) for t in system.transformers]
    series_parts = [_columns_of(SeriesPU, series)]
    cables = system.cables
    cables_assumed: list[str] = []
    empty = np.zeros(0, np.int64)
    cable_at = (empty, empty)
    if cables:
        z1_cables, z0_cables = _cable_impedances_ohm(system)
        names = cables.column("cable")
        from_bus = cables.column("from_bus")
        cable_from = system.bus_positions(from_bus)
        kv_from = kv_all[cable_from]
        z_base = kv_from * kv_from / base_mva
        given = ~np.isnan(cables.array("r0_ohm_per_kft")) | ~np.isnan(cables.array("r0_ohm_per_km"))
        cables_assumed = [names[i] for i in np.flatnonzero(~given).tolist()]
        cable_at = (cable_from, system.bus_positions(cables.column("to_bus")))
        n = len(cables)
        series_parts.append(
            dict(
                element=names,
                kind=["cable"] * n,
                from_bus=from_bus,
                to_bus=cables.column("to_bus"),
                z1_pu=z1_cables / z_base,
                z1_ohm=z1_cables,
                ohm_bus=from_bus,
                base_kv=kv_from,
                tap=np.ones(n),
                z0_mode=[Z0_SERIES] * n,
                z0_pu=z0_cables / z_base,
                clock=np.zeros(n, np.int64),
                z0_note=np.where(
                    given, "zero sequence as given", "zero sequence assumed 3 x Z1"
                ).tolist(),
            )
        )
    impedances = []
    impedances_assumed = []
    for e in system.impedances:
        z_base = z_base_ohm(kv[e.from_bus], base_mva)
        if e.is_tie:
            impedances.append(
                SeriesPU(
                    e.element,
                    "tie",
                    e.from_bus,
                    e.to_bus,
                    0j,
                    0j,
                    e.from_bus,
                    kv[e.from_bus],
                    z0_mode=Z0_TIE,
                    z0_pu=0j,
                )
            )
            continue
        if e.r0_ohm is None:
            impedances_assumed.append(e.element)
        note = "zero sequence as given" if e.r0_ohm is not None else "zero sequence = Z1"
        impedances.append(
            SeriesPU(
                e.element,
                "impedance",
                e.from_bus,
                e.to_bus,
                e.z_ohm / z_base,
                e.z_ohm,
                e.from_bus,
                kv[e.from_bus],
                z0_pu=e.z0_ohm / z_base,
                z0_note=note,
            )
        )
    series_parts.append(_columns_of(SeriesPU, impedances))
    three_legs, three_ends, star_names = _three_winding(system, kv_all, base_mva)
    series_parts.append(_columns_of(SeriesPU, three_legs))
    if cables_assumed:
        notes.append(
            f"cables {_names(cables_assumed)}: no zero-sequence data; Z0 taken as "
            f"{CABLE_Z0_FACTOR:g} x Z1 (common practice, no source). The true value "
            "depends on the return path (conduit, grounding conductor, sheath): enter "
            "r0/x0 for ground-fault currents you rely on."
        )
    if impedances_assumed:
        notes.append(
            f"impedances {_names(impedances_assumed)}: no r0_ohm/x0_ohm; zero sequence "
            "taken equal to positive sequence (true of reactors of three single-phase "
            "coils, not of busway or lines)."
        )
    if problems:
        raise InputError(problems)
    return PerUnitSystem(
        base_mva=base_mva,
        prefault_pu=tuple(prefault_pu),
        bus_names=tuple(system.buses.column("bus")),
        series_ends=(
            np.concatenate(
                [
                    _at(system, series, "from_bus"),
                    cable_at[0],
                    _at(system, impedances, "from_bus"),
                    three_ends[0],
                ]
            ),
            np.concatenate(
                [
                    _at(system, series, "to_bus"),
                    cable_at[1],
                    _at(system, impedances, "to_bus"),
                    three_ends[1],
                ]
            ),
        ),
        shunt_buses=np.concatenate(
            [_at(system, shunts, "bus"), machine_at, np.asarray(grounding_at, np.int64)]
        ),
        bus_kv=tuple(system.buses.array("kv").tolist()),
        series=_joined(SeriesPU, series_parts),
        shunts=_joined(ShuntPU, shunt_parts),
        warnings=tuple(notes),
        star_names=tuple(star_names),
    )
