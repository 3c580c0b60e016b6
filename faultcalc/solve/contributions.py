"""Who feeds a fault: the current from every source and machine, and in every branch that meets
the faulted bus, for three-phase and line-to-ground faults.

From the faulted node's column of each sequence impedance matrix (one pair of triangular solves
against the factorization already made), the change of every node voltage is
``dV_s = -Z_s[:, n] I_s`` (superposition, prefault load currents neglected). A source or machine
delivers ``-dV_s y_s``; a branch delivers into the faulted node minus its own nodal injection.
Sequence currents of sources seen through D-Y transformers are turned back by the phase
displacement of their zone (positive sequence by +theta, negative by -theta) before the phase
currents are formed, so magnitudes are those in the real windings.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from .faults import phase_currents, sequence_currents
from .network import Network
from .perunit import PerUnitSystem, i_base_ka


@dataclass(frozen=True)
class Phasors:
    """One element's contribution to one fault: phase currents (a, b, c) and 3I0, complex kA.

    Angles are relative to the prefault phase-a voltage at the faulted bus.
    """

    faulted_bus: str
    fault: str
    element: str
    kind: str
    from_bus: str
    phases_ka: np.ndarray
    residual_ka: complex


CONTRIBUTION_COLUMNS = (
    "faulted_bus",
    "fault",
    "element",
    "kind",
    "from_bus",
    "i_ka",
    "angle_deg",
    "phase",
    "ig_ka",
)
CONTRIBUTION_FAULTS = ("3ph", "slg")
NEGLIGIBLE = 1e-9  # kA below this (relative to 1 kA or the largest phase) reads as zero


def _rotate(i1: complex, i2: complex, i0: complex, theta_deg: float):
    """Sequence currents of one zone seen in a zone displaced by ``theta_deg``."""
    rot = np.exp(1j * np.radians(theta_deg))
    half_turns = theta_deg / 180.0
    i0_rot = i0 * rot if abs(half_turns - round(half_turns)) < 1e-9 else i0
    return i1 * rot, i2 / rot, i0_rot


def contribution_phasors(
    pu: PerUnitSystem,
    network: Network,
    factor1,
    factor0,
    z1_node,
    z0_node,
    buses: list[int],
    zf_pu: np.ndarray,
    angle_deg: np.ndarray,
    inverter_state=None,
) -> list[Phasors]:
    """Contributions to faults at the buses with indices ``buses`` (input order).

    ``inverter_state``: for each (bus, fault) the inverters' part (``InverterState``): the
    fault's sequence currents with them, their injections at their nodes and the columns of
    Z1 there, and each inverter's own currents; a (bus, fault) missing from it (the
    iteration did not converge) has no contributions."""
    rows = []
    prefault = pu.prefault_pu
    i_base = i_base_ka(np.asarray(pu.bus_kv), pu.base_mva)
    bus_index = {name: i for i, name in enumerate(pu.bus_names)}
    nodes = network.node_of_bus[buses]
    unique_nodes = sorted(set(nodes.tolist()))
    col = {n: j for j, n in enumerate(unique_nodes)}
    z1_cols = factor1.columns(unique_nodes)
    z0_cols = factor0.columns(unique_nodes)
    s1, s0 = network.seq1, network.seq0
    incident = (_incident(s1), _incident(s0))
    for b, n in zip(buses, nodes.tolist(), strict=True):
        grounded = bool(network.grounded[n])
        for fault in CONTRIBUTION_FAULTS:
            if fault == "slg" and not grounded:
                continue
            z0 = z0_node[n] if grounded else np.nan
            state = None
            if inverter_state is not None:
                state = inverter_state.get((b, fault))
                if state is None:
                    continue
            if state is None:
                seq = sequence_currents(fault, z1_node[n], z1_node[n], z0, prefault[b], zf_pu[b])
                if1, if2, if0 = complex(seq.i1), complex(seq.i2), complex(seq.i0)
            else:
                if1, if2, if0 = state.fault_pu
            dv1 = -z1_cols[:, col[n]] * if1
            dv2 = -z1_cols[:, col[n]] * if2
            dv0 = -z0_cols[:, col[n]] * if0 if grounded else np.zeros(network.n_nodes, complex)
            if state is not None:  # the inverters' injections, by superposition
                dv1 = dv1 + state.z_columns @ state.injection1
                dv2 = dv2 + state.z_columns @ state.injection2
            per_elem: dict[tuple[str, int], list] = {}

            def add(key, from_bus, base_ka, seq_index, value, table=per_elem):
                entry = table.setdefault(key, [from_bus, base_ka, 0j, 0j, 0j])
                entry[2 + seq_index] += value

            # Sources and machines: their own currents, turned into their zone's frame.
            for h_idx, node, y in zip(
                s1.shunt_source.tolist(), s1.shunt_node.tolist(), s1.shunt_y.tolist(), strict=True
            ):
                h = pu.shunts[h_idx]
                add(("shunt", h_idx), h.bus, i_base[bus_index[h.bus]], 0, -dv1[node] * y)
                add(("shunt", h_idx), h.bus, i_base[bus_index[h.bus]], 1, -dv2[node] * y)
            for e_idx, h_idx, node, y in zip(
                s0.shunt_elem.tolist(),
                s0.shunt_source.tolist(),
                s0.shunt_node.tolist(),
                s0.shunt_y.tolist(),
                strict=True,
            ):
                if e_idx < 0:
                    h = pu.shunts[h_idx]
                    add(("shunt", h_idx), h.bus, i_base[bus_index[h.bus]], 2, -dv0[node] * y)
                elif node == n:  # a transformer's zero-sequence path to ground at this node
                    e = pu.series[e_idx]
                    far = e.from_bus if network.node_of_bus[bus_index[e.to_bus]] == n else e.to_bus
                    add(("series", e_idx), far, i_base[b], 2, -dv0[node] * y)
            # Branches meeting the faulted node: current flowing from the branch into it.
            for stamps, at_node, dvs, seq_indices in (
                (s1, incident[0], (dv1, dv2), (0, 1)),
                (s0, incident[1], (dv0,), (2,)),
            ):
                for j in at_node.get(n, ()):
                    e_idx = int(stamps.series_elem[j])
                    f, t = int(stamps.series_from[j]), int(stamps.series_to[j])
                    y, tap = complex(stamps.series_y[j]), float(stamps.series_tap[j])
                    e = pu.series[e_idx]
                    far = e.to_bus if f == n else e.from_bus
                    for dv, k in zip(dvs, seq_indices, strict=True):
                        if f == n:
                            injected = y / tap**2 * dv[f] - y / tap * dv[t]
                        else:
                            injected = -y / tap * dv[f] + y * dv[t]
                        add(("series", e_idx), far, i_base[b], k, -injected)
            if state is not None:  # each inverter's own current, turned into its zone's frame
                for name, bus, c1, c2 in state.inverters:
                    at = bus_index[bus]
                    theta = angle_deg[network.node_of_bus[at]] - angle_deg[n]
                    c1, c2, _ = _rotate(c1, c2, 0j, theta)
                    rows.append(
                        Phasors(
                            pu.bus_names[b],
                            fault,
                            name,
                            "inverter",
                            bus,
                            phase_currents(c1, c2, 0j) * i_base[at],
                            0j,
                        )
                    )
            for (what, idx), (from_bus, base_ka, c1, c2, c0) in per_elem.items():
                element = pu.shunts[idx] if what == "shunt" else pu.series[idx]
                if what == "shunt":
                    theta = angle_deg[network.node_of_bus[bus_index[element.bus]]] - angle_deg[n]
                    c1, c2, c0 = _rotate(c1, c2, c0, theta)
                phases_ka = phase_currents(c1, c2, c0) * base_ka
                rows.append(
                    Phasors(
                        pu.bus_names[b],
                        fault,
                        element.element,
                        element.kind,
                        from_bus,
                        phases_ka,
                        3 * c0 * base_ka,
                    )
                )
    return rows


@dataclass(frozen=True)
class InverterState:
    """The inverters' part of one fault at one bus: the fault's sequence currents with them
    (per-unit), their injections at the inverter nodes and the columns of Z1 there, and each
    inverter's (name, bus, I1, I2) in per-unit of its bus, network frame."""

    fault_pu: tuple[complex, complex, complex]
    injection1: np.ndarray
    injection2: np.ndarray
    z_columns: np.ndarray
    inverters: tuple[tuple[str, str, complex, complex], ...]


def _incident(stamps) -> dict[int, list[int]]:
    """Node -> positions of the series stamps that end at it (built once per call)."""
    at_node: dict[int, list[int]] = {}
    for j, (f, t) in enumerate(
        zip(stamps.series_from.tolist(), stamps.series_to.tolist(), strict=True)
    ):
        at_node.setdefault(f, []).append(j)
        at_node.setdefault(t, []).append(j)
    return at_node


TEXT_COLUMNS = ("faulted_bus", "fault", "element", "kind", "from_bus", "phase")


def as_table(phasors: list[Phasors]) -> pd.DataFrame:
    """One row per contribution: the largest phase current, its angle and phase letter, and
    the residual (ground) current 3I0. Text columns are categorical, as in
    contribution_table.py (a table of every bus has millions of rows and few names)."""
    rows = []
    for p in phasors:
        size = np.abs(p.phases_ka)
        floor = NEGLIGIBLE * max(1.0, float(size.max()))
        k = int(np.flatnonzero(size >= size.max() * (1 - 1e-9))[0])  # 'a' first on a tie
        if size[k] <= floor:
            i_ka, angle = 0.0, float("nan")
        else:
            i_ka, angle = float(size[k]), float(np.degrees(np.angle(p.phases_ka[k])))
        ig = float(abs(p.residual_ka))
        rows.append(
            (
                p.faulted_bus,
                p.fault,
                p.element,
                p.kind,
                p.from_bus,
                i_ka,
                angle,
                "abc"[k] if i_ka else "",
                ig if ig > floor else 0.0,
            )
        )
    table = pd.DataFrame(rows, columns=list(CONTRIBUTION_COLUMNS))
    return table.astype({c: "category" for c in TEXT_COLUMNS})
