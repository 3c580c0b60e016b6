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

import numpy as np
import pandas as pd

from .faults import phase_currents, sequence_currents
from .network import Network
from .perunit import PerUnitSystem

CONTRIBUTION_COLUMNS = (
    "faulted_bus",
    "fault",
    "element",
    "kind",
    "from_bus",
    "i_ka",
    "angle_deg",
    "phase",
)
CONTRIBUTION_FAULTS = ("3ph", "slg")


def _largest_phase(i1: complex, i2: complex, i0: complex) -> tuple[float, float, str]:
    phases = phase_currents(i1, i2, i0)
    k = int(np.argmax(np.abs(phases)))
    return float(np.abs(phases[k])), float(np.degrees(np.angle(phases[k]))), "abc"[k]


def _rotate(i1: complex, i2: complex, i0: complex, theta_deg: float):
    """Sequence currents of one zone seen in a zone displaced by ``theta_deg``."""
    rot = np.exp(1j * np.radians(theta_deg))
    half_turns = theta_deg / 180.0
    i0_rot = i0 * rot if abs(half_turns - round(half_turns)) < 1e-9 else i0
    return i1 * rot, i2 / rot, i0_rot


def contributions(
    pu: PerUnitSystem,
    network: Network,
    factor1,
    factor0,
    z1_node,
    z0_node,
    buses: list[int],
    zf_pu: np.ndarray,
    angle_deg: np.ndarray,
) -> pd.DataFrame:
    """Contributions to faults at the buses with indices ``buses`` (input order)."""
    rows = []
    prefault = pu.prefault_pu
    kv = np.asarray(pu.bus_kv)
    i_base = pu.base_mva / (np.sqrt(3.0) * kv)
    bus_index = {name: i for i, name in enumerate(pu.bus_names)}
    nodes = network.node_of_bus[buses]
    unique_nodes = sorted(set(nodes.tolist()))
    col = {n: j for j, n in enumerate(unique_nodes)}
    z1_cols = factor1.columns(unique_nodes)
    z0_cols = factor0.columns(unique_nodes)
    s1, s0 = network.seq1, network.seq0
    for b, n in zip(buses, nodes.tolist(), strict=True):
        grounded = bool(network.grounded[n])
        for fault in CONTRIBUTION_FAULTS:
            if fault == "slg" and not grounded:
                continue
            z0 = z0_node[n] if grounded else np.nan
            seq = sequence_currents(fault, z1_node[n], z1_node[n], z0, prefault, zf_pu[b])
            if1, if2, if0 = complex(seq.i1), complex(seq.i2), complex(seq.i0)
            dv1 = -z1_cols[:, col[n]] * if1
            dv2 = -z1_cols[:, col[n]] * if2
            dv0 = -z0_cols[:, col[n]] * if0 if grounded else np.zeros(network.n_nodes, complex)
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
            for stamps, dvs, seq_indices in ((s1, (dv1, dv2), (0, 1)), (s0, (dv0,), (2,))):
                for e_idx, f, t, y, tap in zip(
                    stamps.series_elem.tolist(),
                    stamps.series_from.tolist(),
                    stamps.series_to.tolist(),
                    stamps.series_y.tolist(),
                    stamps.series_tap.tolist(),
                    strict=True,
                ):
                    if n not in (f, t):
                        continue
                    e = pu.series[e_idx]
                    far = e.to_bus if f == n else e.from_bus
                    for dv, k in zip(dvs, seq_indices, strict=True):
                        if f == n:
                            injected = y / tap**2 * dv[f] - y / tap * dv[t]
                        else:
                            injected = -y / tap * dv[f] + y * dv[t]
                        add(("series", e_idx), far, i_base[b], k, -injected)
            for (what, idx), (from_bus, base_ka, c1, c2, c0) in per_elem.items():
                element = pu.shunts[idx] if what == "shunt" else pu.series[idx]
                if what == "shunt":
                    theta = angle_deg[network.node_of_bus[bus_index[element.bus]]] - angle_deg[n]
                    c1, c2, c0 = _rotate(c1, c2, c0, theta)
                magnitude, angle, phase = _largest_phase(c1, c2, c0)
                rows.append(
                    (
                        pu.bus_names[b],
                        fault,
                        element.element,
                        element.kind,
                        from_bus,
                        magnitude * base_ka,
                        angle,
                        phase,
                    )
                )
    return pd.DataFrame(rows, columns=list(CONTRIBUTION_COLUMNS))
