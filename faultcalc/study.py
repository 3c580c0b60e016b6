"""Run a study: System -> per-unit -> network -> Thevenin impedances -> fault currents."""

from __future__ import annotations

import dataclasses
import datetime as _dt
import functools
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from . import floatcolumns, over_cases, textcolumns
from ._version import __version__
from .cautions import CAUTIONS
from .conductors import cablecheck
from .errors import InputError, Problem
from .model import System
from .progress import Progress, reporter, without_gc
from .results import (
    BUS_COLUMNS,
    ELEMENT_COLUMNS,
    NOT_CONVERGED,
    Basis,
    StudyResult,
)
from .solve import (
    asymmetry,
    breaking,
    duty,
    faults,
    inverters,
    methods,
    perunit,
    standards,
    threewinding,
)
from .solve.contribution_table import contribution_table as batched_contributions
from .solve.contributions import (
    CONTRIBUTION_FAULTS,
    InverterState,
    Phasors,
    as_table,
    contribution_phasors,
)
from .solve.lowrank import StudyFactors, factorize
from .solve.network import Network, build_network, positive_matrix_variant, zone_angles_deg
from .solve.thevenin import Orderings, SymmetricFactor

TOOL_NAME = "faultcalc"

METHOD = (
    "Thevenin equivalent at every bus in each sequence: the diagonal of the inverse of the "
    "sparse sequence nodal admittance matrices (per-unit, one MVA base, each bus's nominal kV as "
    "its base kV); {method}; fault impedance {fault_ohm:g} ohm; three-phase, line-to-ground, "
    "line-to-line and double-line-to-ground faults by "
    "symmetrical components; negative sequence equal to positive (machines at subtransient "
    "reactance in both); utility sources as impedances reproducing their stated available fault "
    "current; motors and generators as sources behind their subtransient impedance; "
    "transformers at their rated ratio, zero sequence by winding connection; cable resistances "
    "from the tables at {conductor_temp_c:g} C (typed values as typed); load currents and "
    "capacitance neglected. X/R at the fault for asymmetry and duty from the {xr_method} "
    "reduction; peak current ip = kappa sqrt(2) I3ph with kappa = 1.02 + 0.98 exp(-3 R/X), R/X "
    "by the IEC 60909-0 equivalent-frequency method; half-cycle asymmetrical RMS "
    "I sqrt(1 + 2 exp(-2 pi / (X/R)))."
)

EPS = 1e-6  # relative floor for an element's R (or X) in the R-only (X-only) reduction
MIN_COLUMNS = ("i3ph_min_ka", "islg_min_ka", "ill_min_ka", "illg_min_ka")
MV_DUTY_COLUMNS = (
    "capability_ka",
    "interrupting_ka",
    "interrupting_pct",
    "closing_duty_ka",
    "closing_rating_ka",
    "closing_pct",
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
    for t in system.three_winding_transformers:
        windings = t.h_winding + "".join(
            t.winding_code(x) for x in ("m", "l") if getattr(t, x + "_winding") is not None
        )
        pairs = ", ".join(
            f"Z{p.upper()} {getattr(t, p + '_z_pct'):g} % on {getattr(t, p + '_kva'):g} kVA X/R "
            f"{getattr(t, p + '_xr'):g}"
            for p in ("hm", "hl", "ml")
            if getattr(t, p + "_z_pct") is not None
        )
        kvs = "/".join(f"{k:g}" for k in (t.h_kv, t.m_kv, t.l_kv) if k is not None)
        what = "autotransformer" if t.kind == "auto" else "three-winding transformer"
        tertiary = "; tertiary not brought out" if t.has_tertiary and t.l_bus is None else ""
        text[t.transformer] = f"{what} {kvs} kV {windings}, {pairs}{tertiary}"
    for g in system.grounding_transformers:
        z0 = (
            f"Z0 {g.z0_ohm:g} ohm"
            if g.z0_ohm is not None
            else f"Z0 {g.z0_pct:g} % on {g.kva:g} kVA, {g.kv:g} kV"
        )
        text[g.grounding_transformer] = (
            f"{g.kind.replace('_', '-')} grounding bank, {z0}, X/R {g.xr:g}, neutral "
            f"{g.neutral_ohm:g} ohm"
        )
    for inv in system.inverters:
        count = f"{inv.count} x " if inv.count != 1 else ""
        behaviour = (
            f"{inv.negative_share_pct:g} % of it negative-sequence in unbalanced faults"
            if inv.behaviour == "negative_share"
            else "positive-sequence current only"
        )
        cease = (
            f"; ceases below {inv.cease_below_pu:g} pu" if inv.cease_below_pu is not None else ""
        )
        text[inv.inverter] = (
            f"{count}{inv.kva:g} kVA inverter, {inv.kv:g} kV, limit {inv.current_limit_pu:g} x "
            f"rated current ({inv.limit_ka * 1000:.4g} A), {behaviour}{cease}"
        )
    return text


def _element_table(system: System, pu: perunit.PerUnitSystem, used: set[int]) -> pd.DataFrame:
    text = _input_text(system)
    rows = []

    def z0_parts(z0):
        return (np.nan, np.nan) if z0 is None else (z0.real, z0.imag)

    for s in pu.shunts:
        note = {
            "source": "source behind its impedance",
            "grounding_transformer": "zero-sequence path only",
        }.get(s.kind, "machine at subtransient")
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
    bus_kv = system.bus_kv()
    for inv in system.inverters:
        limit_pu = inv.limit_ka / perunit.i_base_ka(bus_kv[inv.bus], pu.base_mva)
        rows.append(
            (
                inv.inverter,
                "inverter",
                inv.bus,
                "",
                text[inv.inverter],
                inv.bus,
                bus_kv[inv.bus],
                *(np.nan,) * 5,
                f"current source at its limit: {inv.limit_ka * 1000:.5g} A, {limit_pu:.6g} "
                "per-unit; no impedance",
                np.nan,
                np.nan,
                "no zero-sequence current",
            )
        )
    for k, s in enumerate(pu.series):
        note = ""
        if s.kind == "tie":
            note = "buses merged into one node"
        elif s.kind == "three_winding" and not s.from_bus:
            note = "zero sequence only: a delta winding not brought out (star point to ground)"
        elif k not in used:
            note = "left out: both ends share one node"
        elif s.kind == "transformer":
            note = "impedance on the LV side" + (
                f"; off-nominal ratio {s.tap:.4f}" if abs(s.tap - 1) > 1e-12 else ""
            )
        elif s.kind == "three_winding":
            note = (
                "star leg, on the winding's rated kV"
                if s.to_bus.endswith(threewinding.STAR)
                else "impedance on the m side"
            ) + (f"; off-nominal ratio {s.tap:.4f}" if abs(s.tap - 1) > 1e-12 else "")
            if s.z1_pu.imag < 0:
                note += "; a negative leg (legal: only two legs in series are measured)"
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
                s.tap if s.kind in ("transformer", "three_winding") else np.nan,
                note,
                *z0_parts(s.z0_pu if s.kind != "tie" else None),
                s.z0_note,
            )
        )
    return pd.DataFrame(rows, columns=list(ELEMENT_COLUMNS))


def _xr(z: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(z.real > 0, z.imag / np.where(z.real > 0, z.real, 1.0), np.inf)


def _tie_groups(names, node_of_bus: np.ndarray) -> list[str]:
    """Per bus, the other buses sharing its node through closed ties (linear time)."""
    groups = [""] * len(names)
    _, inverse, counts = np.unique(node_of_bus, return_inverse=True, return_counts=True)
    members: dict[int, list[int]] = {}
    for i in np.flatnonzero(counts[inverse] > 1).tolist():
        members.setdefault(int(inverse[i]), []).append(i)
    for group in members.values():
        for i in group:
            groups[i] = ", ".join(names[j] for j in group if j != i)
    return groups


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
    orderings: Orderings  # the study's cache of factor orderings, for the X/R variants
    e_bus: np.ndarray | None = None  # open-circuit voltage magnitude per bus (pu), when used
    inverters: inverters.Inverters | None = None  # with the columns of Z1 at their nodes
    e_phasor: np.ndarray | None = None  # open-circuit voltage per bus (pu, complex), when used


# progress.step calls per analyse + fault_table, for the progress bar's plan.
STEPS_PER_ANALYSIS = 6


def analyse(
    system: System,
    prefault_pu: tuple[float, ...] | None = None,
    *,
    progress: Progress | None = None,
    orderings: Orderings | None = None,
) -> Analysis:
    """Per-unit conversion, sequence networks, one factorization each, all-bus diagonals
    (``progress`` is told each step; ``orderings``, the study's cache of factor orderings,
    is made here when not given)."""
    progress = reporter(progress)
    orderings = Orderings() if orderings is None else orderings
    progress.step("per-unit conversion")
    pu = perunit.to_per_unit(system, prefault_pu=prefault_pu)
    progress.step("admittance matrices")
    network = _network(system, pu, orderings)
    progress.step("Thevenin impedances Z1 = Z2")
    factor1 = factorize(network.y1, orderings)
    z1_node = factor1.diagonal()
    progress.step("Thevenin impedances Z0")
    factor0 = factorize(network.y0, orderings)
    z0_node = np.where(network.grounded, factor0.diagonal(), complex(np.nan, np.nan))
    angles = zone_angles_deg(pu, network, lambda: element_locations(system))
    e_bus = e_phasor = None
    if system.settings.prefault_voltage == "open_circuit":
        e_phasor = open_circuit_phasor_pu(pu, network, factor1)
        e_bus = np.abs(e_phasor)
    inverter_set = inverters.prepare(system, pu, network, factor1)
    return Analysis(
        system,
        pu,
        network,
        factor1,
        factor0,
        z1_node,
        z0_node,
        angles,
        orderings,
        e_bus,
        inverter_set,
        e_phasor if inverter_set is not None else None,
    )


def _network(system: System, pu, orderings: Orderings | None) -> Network:
    """build_network for ``system`` (its bus rows named in a bus-without-source error)."""
    buses = system.buses
    return build_network(
        pu, lambda: dict(zip(buses.column("bus"), buses.column("row"), strict=True)), orderings
    )


def open_circuit_pu(pu, network: Network, factor1: SymmetricFactor) -> np.ndarray:
    """The open-circuit (no-load) voltage magnitude at every bus, per-unit of its nominal kV,
    with every source and machine at its internal voltage (``prefault_pu`` of its bus) behind
    its impedance: one solve, ``V = Y^-1 I`` with the sources' Norton currents ``E / z``."""
    return np.abs(open_circuit_phasor_pu(pu, network, factor1))


def open_circuit_phasor_pu(pu, network: Network, factor1: SymmetricFactor) -> np.ndarray:
    """The open-circuit voltage of ``open_circuit_pu`` as a phasor (the network's frame)."""
    injections = np.zeros(factor1.n, dtype=complex)
    e = np.asarray(pu.prefault_pu, dtype=float)[pu.shunt_buses]
    z = pu.shunts.array("z1_pu", complex)
    np.add.at(injections, network.node_of_bus[pu.shunt_buses], e / z)
    return factor1.solve(injections)[network.node_of_bus]


def element_locations(system: System) -> dict[str, tuple[str, int | None]]:
    """Element name -> (sheet, spreadsheet row), for locating problems found after reading."""
    where = {}
    for sheet in (
        "sources",
        "transformers",
        "cables",
        "impedances",
        "machines",
        "grounding_transformers",
        "three_winding_transformers",
    ):
        for e in getattr(system, sheet):
            where[e.name] = (sheet, e.row)
    return where


def contributions_table_of(a: Analysis, buses: list[int]) -> pd.DataFrame:
    """The contributions table (CONTRIBUTION_COLUMNS) of faults at these input indices: in
    whole arrays (solve/contribution_table.py), or fault by fault where inverters make each
    fault an iteration of its own."""
    if a.inverters is not None:
        return as_table(contributions_of(a, buses))
    pu, zf_pu = _contribution_basis(a)
    return batched_contributions(
        pu, a.network, a.factor1, a.factor0, a.z1_node, a.z0_node, buses, zf_pu, a.angle_deg
    )


def _contribution_basis(a: Analysis):
    """The per-unit system the contributions take (with the open-circuit prefault voltages
    when the study uses them) and the fault impedance per bus, per-unit."""
    zf_pu = a.system.settings.fault_ohm / perunit.z_base_ohm(np.array(a.pu.bus_kv), a.pu.base_mva)
    pu = a.pu if a.e_bus is None else dataclasses.replace(a.pu, prefault_pu=tuple(a.e_bus))
    return pu, zf_pu


def contributions_of(a: Analysis, buses: list[int]) -> list[Phasors]:
    """Complex contributions to faults at the buses with these input indices."""
    pu, zf_pu = _contribution_basis(a)
    state = None
    if a.inverters is not None:
        state = (
            _inverter_states(a, buses)
            if a.system.settings.method != "iec60909"
            else _iec_inverter_states(a, buses, zf_pu)
        )
    return contribution_phasors(
        pu,
        a.network,
        a.factor1,
        a.factor0,
        a.z1_node,
        a.z0_node,
        buses,
        zf_pu,
        a.angle_deg,
        inverter_state=state,
    )


def _inverter_states(a: Analysis, buses: list[int]) -> dict:
    """The converged inverter iteration of the faults the contributions show, per (bus, fault),
    every current turned to the faulted bus's prefault voltage (the angle reference)."""
    inv = a.inverters
    at = np.asarray(buses, np.int64)
    solved = inverter_solutions(a, at, CONTRIBUTION_FAULTS, keep=True)
    e_all = np.asarray(a.pu.prefault_pu, complex) if a.e_phasor is None else a.e_phasor
    out = {}
    for fault, s in solved.items():
        for row, b in enumerate(buses):
            if not s.converged[row] or np.isnan(s.i1[row]):
                continue
            # contributions.py's frame: the faulted bus's real currents, and every phasor,
            # against its prefault phase-a voltage; the negative sequence of the network's
            # frame turned by twice its zone's displacement (see inverters.solve)
            zone = np.exp(1j * np.radians(a.angle_deg[a.network.node_of_bus[b]]))
            turn = np.conj(e_all[b]) / abs(e_all[b])
            own1, own2 = s.inverter_currents(inv, row)
            own2 = own2 / zone**2
            out[(b, fault)] = InverterState(
                (s.i1[row] * turn / zone, s.i2[row] * turn / zone, s.i0[row] * turn / zone),
                s.injection1[row] * turn,
                s.injection2[row] * turn / zone**2,
                inv.z_columns,
                tuple(
                    zip(
                        inv.names,
                        inv.buses,
                        (own1 * turn).tolist(),
                        (own2 * turn).tolist(),
                        strict=True,
                    )
                ),
            )
    return out


def _iec_inverter_states(a: Analysis, buses: list[int], zf_pu) -> dict:
    """Method iec60909: the network's own contributions (the standard adds the inverters'
    currents in magnitude, which gives no phasors) and each inverter at its I_skPF lagging its
    prefault voltage by 90 degrees, listed beside them."""
    inv = a.inverters
    nodes = a.network.node_of_bus
    out = {}
    for b in buses:
        n = nodes[b]
        z0 = a.z0_node[n] if a.network.grounded[n] else np.nan
        e = a.pu.prefault_pu[b]
        for fault in CONTRIBUTION_FAULTS:
            if fault == "slg" and np.isnan(z0):
                continue
            seq = faults.sequence_currents(fault, a.z1_node[n], a.z1_node[n], z0, e, zf_pu[b])
            out[(b, fault)] = InverterState(
                (complex(seq.i1), complex(seq.i2), complex(seq.i0)),
                np.zeros(len(inv.nodes), complex),
                np.zeros(len(inv.nodes), complex),
                inv.z_columns,
                tuple(
                    (name, bus, -1j * lim, 0j)
                    for name, bus, lim in zip(
                        inv.names, inv.buses, inv.limit_pu.tolist(), strict=True
                    )
                ),
            )
    return out


def inverter_phase_currents(system: System, bus: str, fault: str) -> dict[str, np.ndarray]:
    """Each inverter's phase currents (a, b, c), amperes, delivered into its bus for a fault
    of type ``fault`` at ``bus``: the converged iteration of the network as entered (method
    thevenin, the network the netlist writes), each phasor in the frame of its zone (its
    angle against the prefault phase-a voltage of the network's first bus: positive
    sequence turned by the zone's displacement, negative sequence the other way).

    Raises ValueError when the iteration did not converge for that fault (there is no
    current to write)."""
    plain = dataclasses.replace(
        system, settings=dataclasses.replace(system.settings, method="thevenin"), cases=()
    )
    a = analyse(plain)
    at = plain.bus_positions([bus])
    (s,) = inverter_solutions(a, np.asarray(at, np.int64), (fault,), keep=True).values()
    if not s.converged[0] or np.isnan(s.i1[0]):
        raise ValueError(
            f"the inverter iteration did not converge for a {fault} fault at {bus}: no "
            "current to write"
        )
    inv = a.inverters
    own1, own2 = s.inverter_currents(inv, 0)
    theta = np.radians(a.angle_deg[a.network.node_of_bus[inv.bus_index]])
    amps = perunit.i_base_ka(np.array(a.pu.bus_kv)[inv.bus_index], a.pu.base_mva) * 1000.0
    c1 = own1 * np.exp(1j * theta) * amps
    c2 = own2 * np.exp(-1j * theta) * amps
    phases = faults.phase_currents(c1, c2, np.zeros_like(c1))  # (3, inverters)
    return {name: phases[:, k] for k, name in enumerate(inv.names)}


def _diagonal_variant(a: Analysis, transform) -> np.ndarray:
    y = positive_matrix_variant(a.pu, a.network, transform, a.orderings)
    return factorize(y, a.orderings).diagonal()[a.network.node_of_bus]


def _r_only(z: np.ndarray) -> np.ndarray:
    return np.maximum(z.real, EPS * np.abs(z)) + 0j


def _x_only(z: np.ndarray) -> np.ndarray:
    return 1j * np.maximum(z.imag, EPS * np.abs(z))


def fault_table(a: Analysis, progress: Progress | None = None, interrupting=None) -> pd.DataFrame:
    """Every fault type, asymmetry and duty at every bus of one analysed system;
    ``interrupting``: (E/X kA, X/R) of the IEEE interrupting network per bus, or None."""
    progress = reporter(progress)
    settings = a.system.settings
    pu, network = a.pu, a.network
    z1 = a.z1_node[network.node_of_bus]
    z0 = a.z0_node[network.node_of_bus]
    kv_column = _with_buses(
        a.system, "kv", lambda: floatcolumns.column(floatcolumns.read_only(np.array(pu.bus_kv)))
    )
    kv = kv_column.to_numpy()
    e = np.array(pu.prefault_pu) if a.e_bus is None else a.e_bus
    z_base = perunit.z_base_ohm(kv, pu.base_mva)
    i_base = perunit.i_base_ka(kv, pu.base_mva)
    zf_pu = settings.fault_ohm / z_base
    iterated = None
    if a.inverters is not None and settings.method == "iec60909":
        # IEC 60909-0:2016 6.9 (from memory): c + sum_j |Z_kj| I_skPFj behind the fault
        e_raised = inverters.iec_open_circuit_pu(a.inverters, network.node_of_bus, e)
        f = faults.all_faults(z1, z1, z0, e_raised, zf_pu)
    elif a.inverters is not None:
        iterated = inverter_solutions(a, np.arange(len(kv)))
        f = inverters.bus_faults(iterated, ~np.isnan(z0))
    else:
        f = faults.all_faults(z1, z1, z0, e, zf_pu)
    texts = _texts(a.system)
    table = np.vstack([f.i3ph, f.islg, f.ill, f.illg])
    largest = np.argmax(np.where(np.isnan(table), -np.inf, table), axis=0)
    grounded = ~np.isnan(z0)
    i3_ka = f.i3ph * i_base
    islg_ka = f.islg * i_base
    # X/R at the fault by the chosen convention, and the IEC 60909-0 peak factor by the
    # equivalent-frequency method (4.3.1.2 c).
    progress.step("X/R and peak factor")
    xr_complex = _xr(z1 + zf_pu)
    if settings.xr_method == "separate":
        r_sep = _diagonal_variant(a, _r_only).real
        x_sep = _diagonal_variant(a, _x_only).imag
        xr_fault = np.where(r_sep > 0, x_sep / np.where(r_sep > 0, r_sep, 1.0), np.inf)
    else:
        xr_fault = xr_complex
    fc = standards.EQUIVALENT_FREQUENCY_HZ[settings.frequency_hz]
    ratio = fc / settings.frequency_hz
    zc = _diagonal_variant(a, lambda z: z.real + 1j * (z.imag * ratio)) + zf_pu
    r_over_x = zc.real / zc.imag * ratio
    kappa = asymmetry.kappa(r_over_x)
    loop = 2 * z1 + z0 + 3 * zf_pu
    xr_slg = np.where(grounded, _xr(np.where(grounded, loop, 1.0)), np.nan)
    # Z2 = Z1: the same read-only columns, shared (floatcolumns.frame)
    r1_ohm = floatcolumns.read_only(z1.real * z_base, copy=False)
    x1_ohm = floatcolumns.read_only(z1.imag * z_base, copy=False)
    rows = dict(
        bus=_bus_column(a.system),
        kv=kv,
        r1_ohm=r1_ohm,
        x1_ohm=x1_ohm,
        z1_pu=np.abs(z1),
        xr=_xr(z1),
        i3ph_ka=i3_ka,
        s3ph_mva=np.sqrt(3.0) * kv * i3_ka,
        r2_ohm=r1_ohm,
        x2_ohm=x1_ohm,
        r0_ohm=z0.real * z_base,
        x0_ohm=z0.imag * z_base,
        islg_ka=islg_ka,
        ill_ka=f.ill * i_base,
        illg_ka=f.illg * i_base,
        ig_llg_ka=f.ig_llg * i_base,
        max_fault=textcolumns.coded(faults.FAULT_TYPES, largest, (texts, "max_fault")),
        ground_note=textcolumns.coded(("", GROUND_NOTE), ~grounded, (texts, "ground_note")),
        prefault_pu=floatcolumns.copy_or_kept(e),
        xr_fault=xr_fault,
        kappa=kappa,
        ip_ka=kappa * np.sqrt(2.0) * i3_ka,
        iasym_ka=i3_ka * asymmetry.half_cycle_factor(xr_fault),
        tau_dc_ms=asymmetry.dc_time_constant_ms(xr_fault, settings.frequency_hz),
        xr_slg=xr_slg,
    )
    n = len(kv)
    if interrupting is not None:
        i_int, xr_int = (np.array(v, dtype=float) for v in interrupting)
    else:
        i_int = xr_int = floatcolumns.blank(n)
    rows.update(i_int_ka=i_int, xr_int=xr_int)
    blank = ("ib_ka", "idc_ka", "ik_ka", "ith_ka", *MIN_COLUMNS)  # iec60909: filled by _solve
    rows.update({c: floatcolumns.blank(n) for c in blank})
    rows.update(iec_note=textcolumns.repeated("", n, (texts, "iec_note")))  # iec60909: _solve
    rows.update(_inverter_columns(a, iterated, n, texts))
    progress.step("equipment duty")
    rows.update(_duty(a.system, rows, interrupting is not None))
    # every column its own array, none shared with another column or with the input, or a
    # shared read-only one (floatcolumns): so the frame takes them as they are (no copy into
    # one block; 100,000 buses: 6 ms a table)
    return floatcolumns.frame({**rows, "kv": kv_column}, BUS_COLUMNS)


def _with_buses(system: System, key: str, make):
    """``make()``, made once and kept with the buses (Records.memo), which every case that
    changes no bus shares."""
    memo = system.buses.memo()
    if key not in memo:
        memo[key] = make()
    return memo[key]


def _texts(system: System) -> dict:
    """Where the bus table's text columns are kept for the next table of the same buses (see
    textcolumns.coded)."""
    return _with_buses(system, "text columns", dict)


def _bus_column(system: System):
    """The bus names as a text column (its own array object; the Arrow data are shared)."""
    names = _with_buses(system, "bus text", lambda: textcolumns.of_list(system.buses.column("bus")))
    return names.copy()


INVERTER_NAMES_SHOWN = 5  # inverters named in a bus's note, at most, per fault type


def inverter_solutions(
    a: Analysis, buses: np.ndarray, faults_wanted=inverters.FAULTS, keep: bool = False
) -> dict[str, inverters.Solution]:
    """The inverter iteration for faults at the buses (input positions) ``buses`` of one
    analysed system, each fault type solved for all of them at once."""
    network, pu = a.network, a.pu
    inv = a.inverters
    nodes = network.node_of_bus[buses]
    kv = np.array(pu.bus_kv)[buses]
    zf_pu = a.system.settings.fault_ohm / perunit.z_base_ohm(kv, pu.base_mva)
    e_all = np.asarray(pu.prefault_pu, complex) if a.e_phasor is None else a.e_phasor
    e_nodes = np.empty(len(inv.nodes), complex)
    e_nodes[inv.slot] = e_all[inv.bus_index]
    z1, z0 = a.z1_node[nodes], a.z0_node[nodes]
    angle = np.radians(a.angle_deg[nodes])
    return {
        fault: inverters.solve(
            inv, fault, nodes, z1, z0, zf_pu, e_all[buses], e_nodes, angle_f=angle, keep=keep
        )
        for fault in faults_wanted
    }


def _inverter_columns(a: Analysis, solutions, n: int, texts: dict) -> dict[str, object]:
    """The bus table's inverter columns: the iteration's sweeps and residual (the largest over
    the four fault types) and a note of what did not converge, ceased or held its angle."""
    if solutions is None:
        note = (
            "IEC 60909-0 6.9: inverters as current sources, magnitudes added"
            if a.inverters is not None
            else ""
        )
        return {
            "inverter_sweeps": floatcolumns.blank(n),
            "inverter_residual_pu": floatcolumns.blank(n),
            "inverter_note": textcolumns.repeated(note, n, (texts, "inverter_note")),
        }
    names = np.array(a.inverters.names, dtype=object)
    parts: list[list[str]] = [[] for _ in range(n)]

    def named(flags: np.ndarray) -> str:
        found = names[flags]
        shown = ", ".join(found[:INVERTER_NAMES_SHOWN])
        more = len(found) - INVERTER_NAMES_SHOWN
        return shown + (f" and {more} more" if more > 0 else "")

    for fault, s in solutions.items():
        for k in np.flatnonzero(~s.converged).tolist():
            parts[k].append(
                f"{fault}: not converged after {s.sweeps[k]} sweeps (residual "
                f"{s.residual[k]:.1e}): current not reported"
            )
        for k in np.flatnonzero(s.ceased.any(axis=1) & s.converged).tolist():
            parts[k].append(f"{fault}: ceased {named(s.ceased[k])}")
        for k in np.flatnonzero(s.held.any(axis=1) & s.converged).tolist():
            parts[k].append(f"{fault}: angle held at prefault {named(s.held[k])}")
    sweeps = np.max([s.sweeps for s in solutions.values()], axis=0)
    residual = np.max([s.residual for s in solutions.values()], axis=0)
    return {
        "inverter_sweeps": sweeps.astype(float),
        "inverter_residual_pu": residual,
        "inverter_note": textcolumns.of_list(["; ".join(p) for p in parts]),
    }


def _duty(system: System, rows: dict, interrupting: bool) -> dict[str, object]:
    """Each rated device's duty against its rating (``rows``: the bus table's columns so far;
    ``interrupting``: whether rows hold the IEEE interrupting network's currents)."""
    i3_ka, islg_ka = rows["i3ph_ka"], rows["islg_ka"]
    xr_fault, xr_slg = rows["xr_fault"], rows["xr_slg"]
    n = len(system.buses)
    device_text, rated = _devices(system)
    numbers = ("test_xr", "mf", "duty_ka", "duty_pct", *MV_DUTY_COLUMNS)
    out: dict[str, object] = {
        "rating_ka": _with_buses(
            system,
            "rating_ka",
            lambda: floatcolumns.column(floatcolumns.read_only(system.buses.array("rating_ka"))),
        ),
        **{k: {} for k in numbers},  # row -> value, set at the rated buses only
        "duty_status": [duty.STATUS_NONE] * n,  # text, set at the rated buses only
        "duty_fault": [""] * n,
        "duty_basis": [""] * n,
    }
    notes = dict(zip(rated, rows["inverter_note"].take(np.asarray(rated, np.int64)), strict=True))
    for k, b in zip(rated, system.buses.take(rated), strict=True):
        if NOT_CONVERGED in (notes[k] or ""):  # a current not converged on has no duty:
            out["duty_status"][k] = duty.STATUS_NOT_COMPUTED  # said, never "below rating"
            continue
        if b.device in duty.MV_DEVICES:
            _mv_duty(out, k, b, rows, interrupting, system.settings.frequency_hz)
            continue
        xr_test = b.rating_xr if b.rating_xr is not None else duty.test_xr(b.device, b.rating_ka)
        mf3 = duty.multiplying_factor(b.device, float(xr_fault[k]), xr_test)
        candidates = [(mf3 * i3_ka[k], mf3, "3ph")]
        if not np.isnan(islg_ka[k]):
            mfg = duty.multiplying_factor(b.device, float(xr_slg[k]), xr_test)
            candidates.append((mfg * islg_ka[k], mfg, "slg"))
        duty_ka, mf, fault = max(candidates)
        pct = 100.0 * duty_ka / b.rating_ka
        out["test_xr"][k] = xr_test
        out["mf"][k] = mf
        out["duty_ka"][k] = duty_ka
        out["duty_pct"][k] = pct
        out["duty_status"][k] = duty.status(pct)
        out["duty_fault"][k] = fault
        out["duty_basis"][k] = duty.BASIS_INTERRUPTING
        out["capability_ka"][k] = b.rating_ka
        out["interrupting_pct"][k] = pct
    for column in numbers:
        out[column] = floatcolumns.at_rows(n, out[column])
    texts = (("duty_status", duty.STATUS_NONE), ("duty_fault", ""), ("duty_basis", ""))
    for column, blank in texts:
        at_rated = [out[column][k] for k in rated]
        out[column] = textcolumns.sparse(n, blank, rated, at_rated, (_texts(system), column))
    return {"device": device_text.copy(), **out}


def _devices(system: System):
    """The buses' devices as a text column ("" where none) and the rows that have one: made
    once for the bus table every case shares."""

    def make():
        device = system.buses.column("device")
        return textcolumns.of_list(device), [k for k, d in enumerate(device) if d is not None]

    return _with_buses(system, "devices", make)


def _mv_duty(out: dict, k: int, b, rows: dict, interrupting: bool, frequency_hz: int) -> None:
    """An MV breaker's interrupting and closing-and-latching duty (see solve/duty.py)."""
    cycles = int(b.interrupting_cycles or duty.DEFAULT_INTERRUPTING_CYCLES)
    parting = duty.PARTING_CYCLES[cycles]
    # the interrupting network's E/X and X/R with method ieee; otherwise the first-cycle
    # current, which does not decay (conservative; said in the study's warnings)
    i_int = float(rows["i_int_ka"][k]) if interrupting else float(rows["i3ph_ka"][k])
    xr_int = float(rows["xr_int"][k]) if interrupting else float(rows["xr_fault"][k])
    mf3 = duty.mv_multiplying_factor(xr_int, parting, frequency_hz)
    candidates = [(mf3 * i_int, mf3, "3ph")]
    islg = float(rows["islg_ka"][k])
    if not np.isnan(islg):
        mfg = duty.mv_multiplying_factor(float(rows["xr_slg"][k]), parting, frequency_hz)
        candidates.append((mfg * islg, mfg, "slg"))
    interrupting_ka, mf, fault = max(candidates)
    k_factor = b.k_factor if b.k_factor is not None else 1.0
    capability = duty.mv_capability_ka(
        b.device, b.rating_ka, b.rated_max_kv, k_factor, float(rows["kv"][k])
    )
    interrupting_pct = 100.0 * interrupting_ka / capability
    closing_rating = (
        b.closing_ka
        if b.closing_ka is not None
        else duty.closing_rating_ka(b.device, b.rating_ka, k_factor, frequency_hz)
    )
    closing = duty.closing_duty_ka(
        b.device,
        float(rows["i3ph_ka"][k]),
        float(rows["ip_ka"][k]),
        float(rows["iasym_ka"][k]),
        float(rows["xr_fault"][k]),
    )
    closing_pct = 100.0 * closing / closing_rating
    closing_governs = closing_pct > interrupting_pct
    out["test_xr"][k] = duty.MV_TEST_XR_BY_HZ[frequency_hz]
    out["mf"][k] = mf
    out["duty_ka"][k] = closing if closing_governs else interrupting_ka
    out["duty_pct"][k] = max(interrupting_pct, closing_pct)
    out["duty_status"][k] = duty.status(max(interrupting_pct, closing_pct))
    out["duty_fault"][k] = "3ph" if closing_governs else fault
    out["duty_basis"][k] = duty.BASIS_CLOSING if closing_governs else duty.BASIS_INTERRUPTING
    out["capability_ka"][k] = capability
    out["interrupting_ka"][k] = interrupting_ka
    out["interrupting_pct"][k] = interrupting_pct
    out["closing_duty_ka"][k] = closing
    out["closing_rating_ka"][k] = closing_rating
    out["closing_pct"][k] = closing_pct


def _cable_checks(system: System, progress: Progress) -> pd.DataFrame:
    progress.step("cable check")
    return cablecheck.check_table(system)[list(cablecheck.CHECK_COLUMNS)]


def contribution_buses(system: System, contributions) -> list[int]:
    """Input indices of the buses named by ``contributions`` ("all", "A,B" or a list of names).

    Raises ValueError naming every bus that does not exist.
    """
    names = system.buses.column("bus")
    if contributions is None:
        return []
    if isinstance(contributions, str):
        contributions = [c for c in contributions.split(",") if c.strip()]
    if any(c.strip().lower() == "all" for c in contributions):
        return list(range(len(names)))
    index = {n: i for i, n in enumerate(names)}
    unknown = [c for c in contributions if c.strip() not in index]
    if unknown:
        raise ValueError(
            f"no bus named {', '.join(repr(u) for u in unknown)}; buses are "
            + ", ".join(names[:20])
            + (" ..." if len(names) > 20 else "")
        )
    return [index[c.strip()] for c in contributions]


def contribution_bus_names(system: System, contributions: str | Iterable[str]) -> list[str]:
    """The buses whose contributions ``run_study(system, contributions=...)`` reports.

    Parameters
    ----------
    system : System
        As returned by :func:`faultcalc.read_system`.
    contributions : "all", "A,B" (names separated by commas), or a list of names
        Spaces around each name are ignored.

    Returns
    -------
    list of str
        The bus names, in the order given ("all": every bus in input order); empty when
        ``contributions`` names none (for example ``","``).

    Raises
    ------
    ValueError
        Naming every bus that does not exist.

    Examples
    --------
    >>> from faultcalc import read_system, sample_path
    >>> system = read_system(sample_path("plant_480v"))
    >>> contribution_bus_names(system, " SWBD-1, MCC-1")
    ['SWBD-1', 'MCC-1']
    """
    names = system.buses.column("bus")
    return [names[k] for k in contribution_buses(system, contributions)]


def _solve(
    system: System, progress: Progress, orderings: Orderings
) -> tuple[Analysis, pd.DataFrame]:
    """The study's method on one system: the maximum analysis and its table, with the minimum
    currents of iec60909 added as *_min_ka columns."""
    found = methods.variants(system)
    first = analyse(found[0].system, found[0].prefault_pu, progress=progress, orderings=orderings)
    interrupting = None
    if system.settings.method == "ieee":
        progress.step("interrupting network")
        interrupting = _interrupting(system, found[0].prefault_pu, orderings, first.e_bus)
    table = fault_table(first, progress, interrupting)
    if system.settings.method == "iec60909":
        progress.step("breaking, steady-state and thermal currents")
        no_motors = _without_motors(found[0].system, found[0].prefault_pu, orderings)
        for column, values in breaking.after_first_instant(first, table, no_motors).items():
            table[column] = values
    if len(found) > 1:
        low_analysis = analyse(
            found[1].system, found[1].prefault_pu, progress=progress, orderings=orderings
        )
        low = fault_table(low_analysis, progress)
        for column in MIN_COLUMNS:
            table[column] = low[column.replace("_min", "")].to_numpy()
    return first, table


def _iec_notes(system: System) -> tuple[str, ...]:
    """Method iec60909: the generators left without K_G and what a unit's correction does not
    cover, said once."""
    if system.settings.method != "iec60909" or not len(system.machines):
        return ()
    m = system.machines
    units = [u for u in m.column("unit_transformer") if u]
    unit_note = (
        (
            "generating units ("
            + ", ".join(units[:10])
            + "): corrected by K_S or K_SO for every fault, also between a generator and its unit "
            "transformer, where IEC 60909-0 6.7 corrects the generator's share by K_G,S and the "
            "transformer's by K_T,S instead (not done): there the total is a little high but the "
            "generator's own share, which sets its breaker's duty, may be a few per cent low",
        )
        if units
        else ()
    )
    pf = m.array("power_factor")
    left = [
        n
        for n, k, p in zip(m.column("machine"), m.column("kind"), pf.tolist(), strict=True)
        if k == "generator" and p != p
    ]
    if not left:
        return unit_note
    return unit_note + (
        "generators without power_factor ("
        + ", ".join(left[:10])
        + (" ..." if len(left) > 10 else "")
        + "): the IEC 60909-0 correction K_G is not applied to them; their rated current for "
        "Ib is taken from kva and kv",
    )


def _inverter_notes(system: System, tables: dict[str, pd.DataFrame]) -> tuple[str, ...]:
    """What the inverters did, said once: how they were modelled, the iteration's convergence
    over every bus and case (the most sweeps, the largest residual), and where it did not
    converge (those currents are not reported), ceased or held its angle."""
    if not any(len(s.inverters) for s in [system, *(c for _, c in system.cases)]):
        return ()
    if system.settings.method == "iec60909":
        return (
            "inverters (method iec60909): current sources at their limit current I_skPF, added "
            "to c Un / sqrt(3) with the magnitudes |Z_kj| I_skPFj (IEC 60909-0:2016 6.9, from "
            "memory); left out of the minimum currents; no momentary cessation",
        )
    notes = []

    def most(column: str) -> float:  # NaN (a case without inverters) counts as none
        return max(
            float(np.fmax.reduce(np.append(t[column].to_numpy(dtype=float), 0.0)))
            for t in tables.values()
        )

    sweeps, residual = most("inverter_sweeps"), most("inverter_residual_pu")
    failed, ceased, held = [], [], []
    for name, t in tables.items():
        where = "" if name == "base" else f" (case '{name}')"
        note = t.inverter_note.fillna("").astype(str)
        failed += [f"{b}{where}" for b in t.bus[note.str.contains("not converged")]]
        ceased += [f"{b}{where}" for b in t.bus[note.str.contains("ceased")]]
        held += [f"{b}{where}" for b in t.bus[note.str.contains("angle held")]]

    def some(buses: list[str]) -> str:
        return ", ".join(buses[:10]) + (f" and {len(buses) - 10} more" if len(buses) > 10 else "")

    notes.append(
        "inverters: each at its limit current lagging its positive-sequence terminal voltage by "
        "90 degrees, or less where its voltage would rise above prefault, found by iteration "
        f"for every bus and fault type: at most {sweeps:.0f} sweeps, largest final residual "
        f"{residual:.1e} of a limit current (see the inverter_* columns)"
    )
    if failed:
        notes.append(
            f"inverters: the iteration did not converge for some fault types at {some(failed)}: "
            "those currents are not reported (blank), see inverter_note; strong inverters "
            "close together in a weak part of the network may have no steady state"
        )
    if ceased:
        notes.append(
            "inverters below their cease_below_pu (momentary cessation) inject nothing in "
            f"faults at {some(ceased)} (see inverter_note)"
        )
    if held:
        notes.append(
            f"inverters cut off from every source by faults at {some(held)}: their current lags "
            "the prefault voltage by 90 degrees (no terminal voltage to lock to; see "
            "inverter_note)"
        )
    return tuple(notes)


def _mv_notes(system: System) -> tuple[str, ...]:
    """What the MV breaker duty assumed, said once per study that has an MV breaker."""
    mv: set[str] = set()
    for buses in over_cases.bus_tables(system):
        devices = buses.column("device")
        names = buses.column("bus")
        mv |= {n for n, d in zip(names, devices, strict=True) if d in duty.MV_DEVICES}
    mv = sorted(mv)
    if not mv:
        return ()
    notes = [
        "MV breakers (" + ", ".join(mv[:10]) + (" ..." if len(mv) > 10 else "") + "): the "
        "interrupting duty's multiplying factor is the remote-source (DC decrement) one of IEEE "
        "C37.010 for every source, the conservative choice (the local-source AC decrement "
        "curves are not applied); the line-to-ground duty uses the first-cycle current"
    ]
    if system.settings.method != "ieee":
        notes.append(
            f"MV breakers checked with method {system.settings.method}: their interrupting duty "
            "uses the first-cycle (subtransient) current, which overstates it; method ieee "
            "gives the interrupting (1.5 to 4 cycle) network the breakers are rated against"
        )
    return tuple(notes)


def _diagonals(system: System, prefault_pu, orderings: Orderings, *transforms):
    """The positive-sequence Thevenin impedance at every bus (per-unit) of ``system``, once per
    transform of the element impedances (a variant network solved against the study's
    orderings), and the per-unit system."""
    pu = perunit.to_per_unit(system, prefault_pu=prefault_pu)
    network = _network(system, pu, orderings)
    out = []
    for transform in transforms:
        y = positive_matrix_variant(pu, network, transform, orderings)
        out.append(factorize(y, orderings).diagonal()[network.node_of_bus])
    return pu, out


def _without_motors(variant: System, prefault_pu, orderings: Orderings) -> np.ndarray | None:
    """Method iec60909: Z1 at every bus with the asynchronous motors left out (they feed no
    steady current into a balanced fault), for Ik."""
    m = variant.machines
    kept = [k for k, kind in enumerate(m.column("kind")) if kind != "induction_motor"]
    if len(kept) == len(m):
        return None
    system = dataclasses.replace(variant, machines=m.subset(kept))
    return _diagonals(system, prefault_pu, orderings, lambda z: z)[1][0]


def _interrupting(system: System, prefault_pu, orderings: Orderings, e_bus=None):
    """The IEEE interrupting network's E/X current (kA) and X/R at every bus above 1 kV (NaN
    at the others): X from the X-only reduction, X/R from separate R and X reductions (IEEE
    C37.010); E the open-circuit voltage ``e_bus`` when the study uses it, else the
    prefault voltage."""
    kv = system.buses.array("kv")
    if not (kv > standards.LV_LIMIT_KV).any():  # nothing to compute: no bus above 1 kV
        return np.full(len(kv), np.nan), np.full(len(kv), np.nan)
    pu, (z_x, z_r) = _diagonals(
        methods.interrupting_system(system), prefault_pu, orderings, _x_only, _r_only
    )
    x, r = z_x.imag, z_r.real
    kv = np.array(pu.bus_kv)
    e = np.array(pu.prefault_pu) if e_bus is None else e_bus
    i_ka = e / x * perunit.i_base_ka(kv, pu.base_mva)
    if len(system.inverters):
        i_ka = i_ka + _inverters_interrupting_ka(system, prefault_pu, orderings, x)
    xr = np.where(r > 0, x / np.where(r > 0, r, 1.0), np.inf)
    # only above 1 kV: LV devices are rated on first-cycle currents, and E/X, which leaves R
    # out, overstates a cable-fed LV bus badly
    mv = kv > standards.LV_LIMIT_KV
    return np.where(mv, i_ka, np.nan), np.where(mv, xr, np.nan)


def _inverters_interrupting_ka(system: System, prefault_pu, orderings: Orderings, x):
    """The inverters' share of the IEEE interrupting network's current at every bus: their
    limit currents, which do not decay, with the X-only reduction's transfer reactances added
    in magnitude, ``sum_j |X_kj| I_j / X_kk`` (the conservative way of IEC 60909-0 6.9); one
    solve with a column per inverter node against the X-only network's factor."""
    variant = methods.interrupting_system(system)
    pu = perunit.to_per_unit(variant, prefault_pu=prefault_pu)
    network = _network(system, pu, orderings)
    factor = factorize(positive_matrix_variant(pu, network, _x_only), orderings)
    inv = inverters.prepare(variant, pu, network, factor)
    raised = inverters.iec_open_circuit_pu(inv, network.node_of_bus, 0.0)
    return raised / x * perunit.i_base_ka(np.array(pu.bus_kv), pu.base_mva)


def _keeping_warnings(study):
    """An InputError found while studying carries the input's warnings too (the CLI prints
    every warning, also when the study cannot go on)."""

    @functools.wraps(study)
    def run(system: System, **options) -> StudyResult:
        try:
            return study(system, **options)
        except InputError as exc:
            if exc.warnings:
                raise
            raise InputError(exc.problems, system.warnings) from None

    return run


@_keeping_warnings
def run_study(
    system: System,
    *,
    contributions: str | Iterable[str] | None = None,
    calculated_at: _dt.datetime | None = None,
    progress: Progress | None = None,
) -> StudyResult:
    """Sequence Thevenin impedances, all four fault types, asymmetry and duty at every bus.

    Parameters
    ----------
    system : System
        As returned by :func:`faultcalc.read_system`.
    contributions : "all", bus names, or None
        Buses whose fault contributions (per source, machine and branch at the bus) to report.
    calculated_at : datetime, optional
        Time stamp to record (default: now, local time).
    progress : Progress, optional
        Told the phase "solving" and its steps (default: nothing is reported); the command line
        passes a :class:`faultcalc.TerminalProgress`. Python's cyclic garbage collector is
        paused while the study runs, as in :func:`faultcalc.read_system`.

    Returns
    -------
    StudyResult
        ``.buses`` holds one row per bus in input order with the columns of
        ``faultcalc.results.BUS_COLUMNS``; NaN where a value does not exist (no ground path).
        ``.cases`` and ``.envelope`` when the input has a cases sheet. ``.duty``: each rated
        bus's worst duty over the base case and every case, with the case and fault type that
        gave it; ``.labels``: each service bus's label figure over the base case and the cases
        not left out of labels (``label`` = no on the cases sheet), with its fault type and case.

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
    progress = reporter(progress)
    with progress.phase("solving"), without_gc():
        return _study(system, contributions, calculated_at, progress)


def _study(system: System, contributions, calculated_at, progress: Progress) -> StudyResult:
    settings = system.settings
    wanted = contribution_buses(system, contributions)
    per_system = STEPS_PER_ANALYSIS * methods.variant_count(settings.method) + (
        settings.method in ("ieee", "iec60909")  # the interrupting or the breaking currents
    )
    progress.plan(per_system * (1 + len(system.cases)) + 1 + bool(wanted))
    # One per study: the base case's orderings and factorizations, which its cases update.
    orderings = StudyFactors()
    with orderings.base(keep=bool(system.cases)):
        a, buses = _solve(system, progress, orderings)
    pu, network = a.pu, a.network
    groups = _tie_groups(pu.bus_names, network.node_of_bus)

    contribution_table = None
    if wanted:
        progress.step("contributions")
        contribution_table = contributions_table_of(a, wanted)

    case_tables: dict[str, pd.DataFrame] = {}
    base_warnings = set(pu.warnings + network.warnings)
    case_warnings: list[str] = []
    bus_names = {"base": pu.bus_names}  # per table, the buses it holds in order
    for name, case_system in system.cases:
        try:
            solved, case_tables[name] = _solve(case_system, progress, orderings)
            bus_names[name] = solved.pu.bus_names
            case_warnings += [
                f"in case '{name}': {w}"
                for w in solved.pu.warnings + solved.network.warnings
                if w not in base_warnings
            ]
        except InputError as exc:
            raise InputError(
                [
                    Problem(p.sheet, p.row, p.column, p.value, f"in case '{name}': {p.message}")
                    for p in exc.problems
                ]
            ) from None
    order, descriptions, service = over_cases.all_buses(system)
    same = tuple(order) == pu.bus_names  # then so is every case with the base's bus names
    tables = over_cases.CaseTables(
        {"base": buses, **case_tables},
        order,
        aligned=[n for n, names in bus_names.items() if same and names == pu.bus_names],
    )
    envelope = over_cases.envelope(tables) if case_tables else None
    left_out = tuple(name for name, case_system in system.cases if not case_system.in_labels)
    labels = over_cases.labels(tables.without(left_out), service, descriptions)

    worst_duty = over_cases.worst_duty(tables, descriptions)
    stamp = (calculated_at or _dt.datetime.now().astimezone()).isoformat(timespec="seconds")
    method = METHOD.format(
        method=methods.describe(system),
        fault_ohm=settings.fault_ohm,
        conductor_temp_c=settings.conductor_temp_c,
        xr_method=settings.xr_method,
    )
    basis = Basis(
        settings, method, system.input_name, system.input_sha256, stamp, TOOL_NAME, __version__
    )
    return StudyResult(
        buses=buses,
        element_table=functools.partial(_element_table, system, pu, set(network.series_used)),
        descriptions=tuple(system.buses.column("description")),
        node_groups=tuple(groups),
        warnings=tuple(system.warnings)
        + pu.warnings
        + network.warnings
        + tuple(case_warnings)
        + _mv_notes(system)
        + _iec_notes(system)
        + _inverter_notes(system, {"base": buses, **case_tables}),
        cautions=CAUTIONS,
        basis=basis,
        contributions=contribution_table,
        cable_checks=_cable_checks(system, progress),
        cases=case_tables,
        envelope=envelope,
        service_buses=tuple(service),
        duty=worst_duty,
        labels=labels,
        maximum=over_cases.maximum(tables, descriptions, worst_duty),
        case_changes={name: case_system.changes for name, case_system in system.cases},
        label_cases_left_out=left_out,
    )
