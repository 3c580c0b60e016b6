"""Run a study: System -> per-unit -> network -> Thevenin impedances -> fault currents."""

from __future__ import annotations

import datetime as _dt
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from . import cablecheck, faults, perunit
from ._version import __version__
from .cautions import CAUTIONS
from .contributions import Phasors, as_table, contribution_phasors
from .model import System
from .network import Network, build_network, zone_angles_deg
from .results import BUS_COLUMNS, ELEMENT_COLUMNS, Basis, StudyResult
from .thevenin import SymmetricFactor

TOOL_NAME = "faultcalc"

METHOD = (
    "Thevenin equivalent at every bus in each sequence: the diagonal of the inverse of the "
    "sparse sequence nodal admittance matrices (per-unit, one MVA base, each bus's nominal kV as "
    "its base kV); prefault voltage {prefault:g} pu behind it; fault impedance {fault_ohm:g} "
    "ohm; three-phase, line-to-ground, line-to-line and double-line-to-ground faults by "
    "symmetrical components; negative sequence equal to positive (machines at subtransient "
    "reactance in both); utility sources as impedances reproducing their stated available fault "
    "current; motors and generators as sources behind their subtransient impedance; "
    "transformers at their rated ratio, zero sequence by winding connection; cable resistances "
    "from the tables at {conductor_temp_c:g} C (typed values as typed); load currents and "
    "capacitance neglected."
)

GROUND_NOTE = (
    "no zero-sequence path to ground here (ungrounded or delta-fed without grounding): the "
    "ground-fault current is set by system capacitance, outside this method"
)


def _input_text(system: System) -> dict[str, str]:
    """One line per element restating what the engineer typed."""
    text = {}
    kv = system.bus_kv()
    for s in system.sources:
        given = f"{s.sc_mva:g} MVA" if s.sc_mva is not None else f"{s.sc_ka:g} kA"
        extra = ""
        if s.slg_ka is not None:
            extra = f"; line-to-ground {s.slg_ka:g} kA, X/R {s.slg_xr:g}"
        elif s.r0_ohm is not None:
            extra = f"; Z0 {s.r0_ohm:g} + j{s.x0_ohm:g} ohm"
        text[s.source] = (
            f"available {given} at {kv[s.bus]:g} kV "
            f"({s.available_mva(kv[s.bus]):.4g} MVA), X/R {s.xr:g}{extra}"
        )
    for t in system.transformers:
        neutrals = "".join(
            f", {side} neutral {ohm:g} ohm"
            for side, ohm in (("HV", t.hv_neutral_ohm), ("LV", t.lv_neutral_ohm))
            if ohm
        )
        z0 = f", Z0 {t.z0_pct:g} % X/R {t.xr0:g}" if (t.z0_pct, t.xr0) != (t.z_pct, t.xr) else ""
        text[t.transformer] = (
            f"{t.kva:g} kVA, {t.hv_kv:g}/{t.lv_kv:g} kV, {t.z_pct:g} %Z, X/R {t.xr:g}, "
            f"{t.hv_winding}{t.lv_winding.lower()}{t.phase_shift_clock}{z0}{neutrals}"
        )
    for c in system.cables:
        length = f"{c.length_ft:g} ft" if c.length_ft is not None else f"{c.length_m:g} m"
        if c.r_ohm_per_kft is not None:
            z = f"{c.r_ohm_per_kft:.4g} + j{c.x_ohm_per_kft:.4g} ohm/1000 ft"
        else:
            z = f"{c.r_ohm_per_km:g} + j{c.x_ohm_per_km:g} ohm/km"
        what = " ".join(
            x for x in (c.size, c.material or "", "in " + c.raceway if c.raceway else "") if x
        )
        origin = f" (from {c.impedance_source})" if c.impedance_source else " (as typed)"
        text[c.cable] = f"{length}, {c.sets} set(s), {z} per conductor{origin}" + (
            f", {what}" if what else ""
        )
    for e in system.impedances:
        text[e.element] = "closed tie (0 ohm)" if e.is_tie else f"{e.r_ohm:g} + j{e.x_ohm:g} ohm"
    for m in system.machines:
        rating = (
            f"{m.kva:g} kVA" if m.kva is not None else f"{m.hp:g} hp (taken as {m.rated_kva:g} kVA)"
        )
        count = f"{m.count} x " if m.count != 1 else ""
        text[m.machine] = (
            f'{count}{m.kind.replace("_", " ")} {rating}, {m.kv:g} kV, X"d {m.xd_pct:g} %, '
            f"X/R {m.xr:g}"
        )
    return text


def _element_table(system: System, pu: perunit.PerUnitSystem, used: set[int]) -> pd.DataFrame:
    text = _input_text(system)
    rows = []

    def z0_parts(z0):
        return (np.nan, np.nan) if z0 is None else (z0.real, z0.imag)

    for s in pu.shunts:
        note = "source behind its impedance" if s.kind == "source" else "machine at subtransient"
        rows.append(
            (
                s.element,
                s.kind,
                s.bus,
                "",
                text[s.element],
                s.bus,
                s.base_kv,
                s.z1_ohm.real,
                s.z1_ohm.imag,
                s.z1_pu.real,
                s.z1_pu.imag,
                np.nan,
                note,
                *z0_parts(s.z0_pu),
                s.z0_note,
            )
        )
    for k, s in enumerate(pu.series):
        note = ""
        if s.kind == "tie":
            note = "buses merged into one node"
        elif k not in used:
            note = "left out: both ends share one node"
        elif s.kind == "transformer":
            note = "impedance on the LV side" + (
                f"; off-nominal ratio {s.tap:.4f}" if abs(s.tap - 1) > 1e-12 else ""
            )
        rows.append(
            (
                s.element,
                s.kind,
                s.from_bus,
                s.to_bus,
                text[s.element],
                s.ohm_bus,
                s.base_kv,
                s.z1_ohm.real,
                s.z1_ohm.imag,
                s.z1_pu.real,
                s.z1_pu.imag,
                s.tap if s.kind == "transformer" else np.nan,
                note,
                *z0_parts(s.z0_pu if s.kind != "tie" else None),
                s.z0_note,
            )
        )
    return pd.DataFrame(rows, columns=list(ELEMENT_COLUMNS))


def _xr(z: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(z.real > 0, z.imag / np.where(z.real > 0, z.real, 1.0), np.inf)


def _bus_indices(system: System, contributions) -> list[int]:
    names = [b.bus for b in system.buses]
    if contributions is None:
        return []
    if isinstance(contributions, str):
        if contributions.strip().lower() == "all":
            return list(range(len(names)))
        contributions = [c for c in contributions.split(",") if c.strip()]
    index = {n: i for i, n in enumerate(names)}
    unknown = [c for c in contributions if c.strip() not in index]
    if unknown:
        raise ValueError(
            f"no bus named {', '.join(repr(u) for u in unknown)}; buses are "
            + ", ".join(names[:20])
            + (" ..." if len(names) > 20 else "")
        )
    return [index[c.strip()] for c in contributions]


@dataclass(frozen=True)
class Analysis:
    """The reduced network of one system: what every result is computed from."""

    system: System
    pu: perunit.PerUnitSystem
    network: Network
    factor1: SymmetricFactor
    factor0: SymmetricFactor
    z1_node: np.ndarray  # positive- (= negative-) sequence Thevenin impedance per node, pu
    z0_node: np.ndarray  # zero-sequence, NaN where no path to ground
    angle_deg: np.ndarray  # phase displacement of each node's zone (positive sequence)


def analyse(system: System) -> Analysis:
    """Per-unit conversion, sequence networks, one factorization each, all-bus diagonals."""
    pu = perunit.to_per_unit(system)
    network = build_network(pu, {b.bus: b.row for b in system.buses})
    factor1 = SymmetricFactor(network.y1)
    factor0 = SymmetricFactor(network.y0)
    z1_node = factor1.diagonal()
    z0_node = np.where(network.grounded, factor0.diagonal(), complex(np.nan, np.nan))
    angles = zone_angles_deg(pu, network, element_locations(system))
    return Analysis(system, pu, network, factor1, factor0, z1_node, z0_node, angles)


def element_locations(system: System) -> dict[str, tuple[str, int | None]]:
    """Element name -> (sheet, spreadsheet row), for locating problems found after reading."""
    where = {}
    for sheet in ("sources", "transformers", "cables", "impedances", "machines"):
        for e in getattr(system, sheet):
            where[e.name] = (sheet, e.row)
    return where


def contributions_of(a: Analysis, buses: list[int]) -> list[Phasors]:
    """Complex contributions to faults at the buses with these input indices."""
    kv = np.array(a.pu.bus_kv)
    zf_pu = a.system.settings.fault_ohm / (kv**2 / a.pu.base_mva)
    return contribution_phasors(
        a.pu, a.network, a.factor1, a.factor0, a.z1_node, a.z0_node, buses, zf_pu, a.angle_deg
    )


def run_study(
    system: System,
    *,
    contributions: str | Iterable[str] | None = None,
    calculated_at: _dt.datetime | None = None,
) -> StudyResult:
    """Sequence Thevenin impedances and all four fault types at every bus.

    Parameters
    ----------
    system : System
        As returned by :func:`faultcalc.read_system`.
    contributions : "all", bus names, or None
        Buses whose fault contributions (per source, machine and branch at the bus) to report.
    calculated_at : datetime, optional
        Time stamp to record (default: now, local time).

    Returns
    -------
    StudyResult
        ``.buses`` holds one row per bus in input order with the columns of
        ``faultcalc.results.BUS_COLUMNS``; NaN where a value does not exist (no ground path).

    Raises
    ------
    InputError
        When a bus has no path to any source, or the data are inconsistent.
    ValueError
        When ``contributions`` names a bus that does not exist.

    Examples
    --------
    >>> from faultcalc import read_system, run_study, sample_path
    >>> result = run_study(read_system(sample_path("plant_480v")))
    >>> float(result.buses.set_index("bus").loc["SWBD-1", "i3ph_ka"]) > 20
    True
    """
    settings = system.settings
    wanted = _bus_indices(system, contributions)
    a = analyse(system)
    pu, network, z1_node, z0_node = a.pu, a.network, a.z1_node, a.z0_node
    z1 = z1_node[network.node_of_bus]
    z0 = z0_node[network.node_of_bus]
    kv = np.array(pu.bus_kv)
    z_base = kv**2 / pu.base_mva
    i_base = pu.base_mva / (np.sqrt(3.0) * kv)
    zf_pu = settings.fault_ohm / z_base
    f = faults.all_faults(z1, z1, z0, settings.prefault_pu, zf_pu)
    table = np.vstack([f.i3ph, f.islg, f.ill, f.illg])
    largest = np.argmax(np.where(np.isnan(table), -np.inf, table), axis=0)
    grounded = ~np.isnan(z0)
    buses = pd.DataFrame(
        {
            "bus": list(pu.bus_names),
            "kv": kv,
            "r1_ohm": z1.real * z_base,
            "x1_ohm": z1.imag * z_base,
            "z1_pu": np.abs(z1),
            "xr": _xr(z1),
            "i3ph_ka": f.i3ph * i_base,
            "s3ph_mva": np.sqrt(3.0) * kv * f.i3ph * i_base,
            "r2_ohm": z1.real * z_base,
            "x2_ohm": z1.imag * z_base,
            "r0_ohm": z0.real * z_base,
            "x0_ohm": z0.imag * z_base,
            "islg_ka": f.islg * i_base,
            "ill_ka": f.ill * i_base,
            "illg_ka": f.illg * i_base,
            "ig_llg_ka": f.ig_llg * i_base,
            "max_fault": [faults.FAULT_TYPES[k] for k in largest],
            "ground_note": np.where(grounded, "", GROUND_NOTE),
        },
        columns=list(BUS_COLUMNS),
    )

    groups = []
    node = network.node_of_bus
    for i in range(len(pu.bus_names)):
        mates = [pu.bus_names[j] for j in np.flatnonzero(node == node[i]) if j != i]
        groups.append(", ".join(mates))

    contribution_table = None
    if wanted:
        contribution_table = as_table(contributions_of(a, wanted))

    stamp = (calculated_at or _dt.datetime.now().astimezone()).isoformat(timespec="seconds")
    method = METHOD.format(
        prefault=settings.prefault_pu,
        fault_ohm=settings.fault_ohm,
        conductor_temp_c=settings.conductor_temp_c,
    )
    basis = Basis(
        settings, method, system.input_name, system.input_sha256, stamp, TOOL_NAME, __version__
    )
    return StudyResult(
        buses=buses,
        elements=_element_table(system, pu, set(network.series_used)),
        descriptions=tuple(b.description for b in system.buses),
        node_groups=tuple(groups),
        warnings=tuple(system.warnings) + pu.warnings + network.warnings,
        cautions=CAUTIONS,
        basis=basis,
        contributions=contribution_table,
        cable_checks=cablecheck.as_table(cablecheck.check_cables(system)),
    )
