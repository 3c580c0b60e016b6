"""Inverter-based sources in a fault: currents held at their control's limit, not impedances.

An inverter (or a group of ``count`` alike) delivers at most its limit current
``I_lim = current_limit_pu x count x kva / (sqrt(3) kv)``, in per-unit of its bus's base
current. It has no path in any sequence network (a current source) and delivers no
zero-sequence current; its prefault current is neglected like every load current.

Method iec60909 (IEC 60909-0:2016 6.9, power station units with full size converter, from
memory of the standard, not read from its text): each is a current source I_skPF (here its
limit current) and the initial current at bus k is

    I"k = (1 / |Z_kk|) (c U_n / sqrt(3) + sum_j |Z_kj| I_skPFj)

with Z_kj the positive-sequence impedance between bus k and the bus of source j: the
sources' currents added to the open-circuit voltage with their magnitudes (the worst
alignment). The unbalanced faults take the same raised voltage, ``E = c + sum_j |Z_kj|
I_skPFj`` per-unit, into their formulas (``iec_open_circuit_pu``); every fault formula being
linear in E, that is the standard's way for the line-to-line and line-to-ground faults as far
as we remember it (stated in the README).

Other methods: each source delivers its limit current at the angle its control sets
(reactive-current priority: lagging its positive-sequence terminal voltage V1 by 90 degrees),
or less if its terminal voltage would otherwise rise above its prefault value; with behaviour
negative_share, in unbalanced faults the share s of the limit goes to negative-sequence
current leading the terminal V2 by 90 degrees (as a machine's negative-sequence reactance
draws it; the direction IEEE 2800-2022 asks for, from memory), and (1 - s) of it to positive
sequence. Below ``cease_below_pu`` (|V1|, per-unit of the bus's nominal kV) a source injects
nothing (momentary cessation).

By superposition on the study's own factor (prefault load currents neglected), for a fault
at bus f with inverter injections I at the inverter nodes:

    V1 = V_pre + Z[:, inv] I1 - Z[:, f] I1f,   V2 = Z[:, inv] I2 - Z[:, f] I2f

and the fault sees the open-circuit sequence voltages ``E1f = V_pre,f + Z[f, inv] I1`` and
``E2f = Z[f, inv] I2``; its sequence currents are linear in them (``_coefficients``, the
formulas of faults.py with a negative-sequence source added). Only the columns of Z at the
inverters' nodes are used (one solve with a column per inverter node against the study's
factor; arrays of shape (buses, inverter nodes)): the cost grows with the inverter nodes, not
with the buses.

The iteration (vectorized over all faulted buses): sweeps in which every inverter node's
currents are solved exactly given the others' from the sweep before (``_positive`` and
``_negative``: its terminal voltage is ``c + B I``, B its driving-point impedance with the
fault applied, so ``V1 = r u`` with ``r = m X + sqrt(|c|^2 - (m R)^2)`` and u at
``arg c - asin(m R / |c|)``; all nodes at once, so the answer does not depend on the order of
the input's rows), accelerated by Anderson mixing of the last sweeps; the buses still
unsettled after NEWTON_AFTER sweeps get Newton's method on the same map (its Jacobian by
finite differences), then sweep again. Two cases have no such operating point:

* a node cut off from every source by the fault (behind a bolted fault: the grid alone leaves
  it no voltage): its inverters would have only each other's voltages to lock to, and their
  angles would chase each other; they hold their prefault angle (the current lags the
  prefault voltage by 90 degrees: the phase-locked loop held, common practice, no source);
* where |c| < m R (the inverter's own current in the resistance of its path makes more
  voltage than the rest of the network does), no terminal voltage can be lagged by 90
  degrees; the current takes the angle ``arg c - 90`` degrees, the nearest to it, which
  joins the 90-degree solution continuously at |c| = m R.

Converged when one more sweep changes no node's currents by more than TOLERANCE of its limit
(that change is the residual reported); a bus not converged in MAX_SWEEPS sweeps has no
current (NaN, said in the note): strong inverters close together in a weak part of the
network may have no steady state at all (their phase-locked loops would not settle).
Cessation is decided on the converged voltages and the iteration run again without the
sources that ceased, until no other ceases (a source that ceased stays off for that fault).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .perunit import i_base_ka

TOLERANCE = 1e-11  # largest change of a node's currents per unit of its limit, converged
MAX_SWEEPS = 60  # sweeps per round of cessation, at most
ANDERSON_DEPTH = 5  # sweeps mixed by the acceleration
ANDERSON_FROM = 3  # the first sweep mixed (the plain ones before it settle many buses alone)
NO_VOLTAGE_PU = 1e-9  # below this terminal voltage there is no angle to lock to
# A node where the grid alone (every inverter at zero) leaves less than this fraction of its
# prefault voltage is cut off from every source by the fault (behind a bolted fault): its
# inverters have only each other's voltages to lock to, and no steady state (their angles
# would chase each other): they hold their prefault angle.
CUT_OFF = 1e-6
FAULTS = ("3ph", "slg", "ll", "llg")
UNBALANCED = ("slg", "ll", "llg")


@dataclass(frozen=True)
class Inverters:
    """The inverters of one analysed system on its per-unit bases, with the columns of the
    positive-sequence bus impedance matrix at their nodes."""

    names: tuple[str, ...]
    buses: tuple[str, ...]
    bus_index: np.ndarray  # input position of each inverter's bus
    slot: np.ndarray  # each inverter's position among ``nodes``
    nodes: np.ndarray  # the network nodes with an inverter, increasing
    limit_pu: np.ndarray  # each inverter's limit current, per-unit of its bus's base current
    limit_ka: np.ndarray
    share: np.ndarray  # negative-sequence share of the limit in unbalanced faults, 0 to 1
    cease_pu: np.ndarray  # momentary cessation below this |V1|, NaN = never
    z_columns: np.ndarray  # (network nodes, len(nodes)): Z1[:, nodes]

    @property
    def z_nodes(self) -> np.ndarray:
        """Z1 between the inverter nodes, (len(nodes), len(nodes))."""
        return self.z_columns[self.nodes]

    def node_limit_pu(self) -> np.ndarray:
        """Each inverter node's limit current (all its inverters), for IEC 60909-0 6.9."""
        return np.bincount(self.slot, self.limit_pu, len(self.nodes))


def prepare(system, pu, network, factor1) -> Inverters | None:
    """The inverters of ``system`` (None when it has none): per-unit limits on the bases of
    ``pu`` and the columns of Z1 at their nodes from ``factor1`` (one solve for all)."""
    inv = system.inverters
    if not len(inv):
        return None
    at = system.bus_positions(inv.column("bus"))
    kv = np.asarray(pu.bus_kv, float)[at]
    limit_ka = (
        inv.array("current_limit_pu")
        * inv.array("count")
        * inv.array("kva")
        / (np.sqrt(3.0) * inv.array("kv"))
        / 1000.0
    )
    behaviour = np.array(inv.column("behaviour"), dtype=object)
    share = np.where(behaviour == "negative_share", inv.array("negative_share_pct") / 100.0, 0.0)
    node = network.node_of_bus[at]
    nodes, slot = np.unique(node, return_inverse=True)
    return Inverters(
        names=tuple(inv.column("inverter")),
        buses=tuple(inv.column("bus")),
        bus_index=np.asarray(at, np.int64),
        slot=slot.astype(np.int64),
        nodes=nodes.astype(np.int64),
        limit_pu=limit_ka / i_base_ka(kv, pu.base_mva),
        limit_ka=limit_ka,
        share=np.nan_to_num(share, nan=0.0),
        cease_pu=inv.array("cease_below_pu"),
        z_columns=factor1.columns(nodes),
    )


def iec_open_circuit_pu(inv: Inverters, fault_nodes: np.ndarray, e_pu) -> np.ndarray:
    """IEC 60909-0:2016 6.9 (from memory): the equivalent voltage c at each faulted node raised
    by the full-converter sources, ``c + sum_j |Z_kj| I_skPFj`` per-unit."""
    z = np.abs(inv.z_columns[fault_nodes])
    return np.asarray(e_pu, float) + z @ inv.node_limit_pu()


def _coefficients(fault: str, z1, z2, z0, zf):
    """The fault's sequence currents as linear functions of the open-circuit sequence voltages
    E1, E2 at the faulted bus (E0 = 0): ``I1 = a11 E1 + a12 E2``, ``I2 = a21 E1 + a22 E2``,
    ``I0 = b1 E1 + b2 E2``; and where the fault is defined (a line-to-ground fault needs a
    zero-sequence path). The formulas of faults.py with E2 added (symmetrical components):
    3ph ``I1 = E1 / (Z1 + Zf)``, ``I2 = E2 / (Z2 + Zf)``; slg ``I1 = I2 = I0 = (E1 + E2) /
    (Z1 + Z2 + Z0 + 3 Zf)``; ll ``I1 = -I2 = (E1 - E2) / (Z1 + Z2 + Zf)``; llg, with Y1 =
    1/Z1, Y2 = 1/Z2, Yg = 1/(Z0 + 3 Zf), S = Y1 + Y2 + Yg and ``Vx = (Y1 E1 + Y2 E2) / S``:
    ``I1 = Y1 (E1 - Vx)``, ``I2 = Y2 (E2 - Vx)``, ``I0 = -Yg Vx`` (without a zero-sequence
    path the line-to-line fault with Zf = 0, as faults.py has it)."""
    z1, z2, z0, zf = (np.asarray(z, dtype=complex) for z in (z1, z2, z0, zf))
    zf = np.broadcast_to(zf, z1.shape)
    grounded = ~np.isnan(z0)
    z0g = np.where(grounded, z0, 1.0)
    zero = np.zeros_like(z1)
    defined = np.ones(z1.shape, bool)
    if fault == "3ph":
        return (1 / (z1 + zf), zero, zero, 1 / (z2 + zf), zero, zero), defined
    if fault == "slg":
        a = np.where(grounded, 1 / (z1 + z2 + z0g + 3 * zf), 0)
        return (a, a, a, a, a, a), grounded
    if fault == "ll":
        a = 1 / (z1 + z2 + zf)
        return (a, -a, -a, a, zero, zero), defined
    if fault == "llg":
        y1, y2 = 1 / z1, 1 / z2
        yg = np.where(grounded, 1 / (z0g + 3 * zf), 0)
        s = y1 + y2 + yg
        a11, a12 = y1 * (y2 + yg) / s, -y1 * y2 / s
        a22 = y2 * (y1 + yg) / s
        return (a11, a12, a12, a22, -yg * y1 / s, -yg * y2 / s), defined
    raise ValueError(f"unknown fault type {fault!r}")


def _positive(c, b, m, v_pre, dead=False):
    """A node's positive-sequence current, the others' held: its terminal voltage is
    ``V = c + b I`` and ``I = -j m' V / |V|`` with m' = m, or less where |V| would exceed
    |v_pre|. Returns (I, held): ``held`` marks the nodes cut off (``dead``) or without any
    voltage, whose current lags the prefault voltage by 90 degrees instead.

    With V = r u (|u| = 1): ``u (r + j m b) = c``, so ``|r - m X + j m R| = |c|`` and the
    voltage that grows from |c| as m grows is ``r = m X + sqrt(|c|^2 - (m R)^2)``; where
    |c| < m R the square root is taken as 0 (u at ``arg c - 90`` degrees, the nearest). The
    cap and the held angle are worked out only where they apply."""
    c, b, m = np.broadcast_arrays(np.asarray(c, complex), np.asarray(b, complex), m)
    v_pre = np.broadcast_to(np.asarray(v_pre, complex), c.shape)
    r_b, x_b = b.real, b.imag
    c2 = c.real * c.real + c.imag * c.imag
    v_max = np.abs(v_pre)
    root = np.sqrt(np.maximum(c2 - (m * r_b) ** 2, 0.0))
    held = np.broadcast_to(dead, c.shape) | (c2 <= NO_VOLTAGE_PU * NO_VOLTAGE_PU)
    over = ~held & (m * x_b + root > v_max)
    m_used = np.array(m, dtype=float)
    if over.any():
        m_used[over] = _capped(c2[over], r_b[over], x_b[over], v_max[over], m[over])
        root[over] = np.sqrt(np.maximum(c2[over] - (m_used[over] * r_b[over]) ** 2, 0.0))
    den = root + 1j * m_used * r_b
    with np.errstate(divide="ignore", invalid="ignore"):
        w = c / den
    size = np.abs(w)
    u_pre = v_pre / np.where(v_max > 0, v_max, 1.0)
    u = np.where(size > 0, w / np.where(size > 0, size, 1.0), u_pre)
    current = -1j * m_used * u
    if held.any():  # I = -j m' u_pre, m' at most what keeps |V| at |v_pre|
        current[held] = _held(c[held], b[held], m[held], v_pre[held], v_max[held])
    return current, held & (m > 0)


def _capped(c2, r_b, x_b, v_max, m):
    """The current magnitude that holds |V| at |v_pre|: the smaller root of ``|b|^2 m^2 -
    2 |v_pre| X m + |v_pre|^2 - |c|^2 = 0``; without a real root |V| reaches |v_pre| where
    the square root is 0, ``m X = |v_pre|``; none at all where |c| is already at |v_pre|."""
    b2 = r_b * r_b + x_b * x_b
    disc = c2 * b2 - v_max * v_max * r_b * r_b
    with np.errstate(divide="ignore", invalid="ignore"):
        m_cap = np.where(b2 > 0, (v_max * x_b - np.sqrt(np.maximum(disc, 0.0))) / b2, 0.0)
        m_cap = np.where(disc < 0, v_max / np.where(x_b > 0, x_b, np.inf), m_cap)
    return np.where(c2 >= v_max * v_max, 0.0, np.clip(m_cap, 0.0, m))


def _held(c, b, m, v_pre, v_max):
    """The held current ``-j m' u_pre`` (u_pre the prefault voltage's direction), m' the
    smaller of m and what keeps |c + b I| at |v_pre|."""
    u_pre = v_pre / np.where(v_max > 0, v_max, 1.0)
    step = -1j * b * u_pre  # dV per unit of m'
    s2 = np.abs(step) ** 2
    cross = (np.conj(c) * step).real
    c2 = np.abs(c) ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        m_rise = np.where(
            s2 > 0,
            (-cross + np.sqrt(np.maximum(cross * cross - s2 * (c2 - v_max**2), 0.0))) / s2,
            np.inf,
        )
    return -1j * np.clip(np.where(c2 >= v_max * v_max, 0.0, m_rise), 0.0, m) * u_pre


def _negative(c, b, m):
    """A node's negative-sequence current, the others' held: ``I = j m' V2 / |V2|`` with
    ``V2 = c + b I``, m' = m or, where that would drive V2 through zero, |c| / |b| (then
    V2 = 0 and I = -c / b).

    With V2 = rho u: ``u (rho + m X - j m R) = c``, so ``rho = -m X + sqrt(|c|^2 - (m R)^2)``,
    not negative while ``m <= |c| / |b|``."""
    r_b, x_b = b.real, b.imag
    c_abs = np.abs(c)
    b_abs = np.abs(b)
    with np.errstate(divide="ignore", invalid="ignore"):
        m_used = np.minimum(m, np.where(b_abs > 0, c_abs / np.where(b_abs > 0, b_abs, 1.0), m))
    rho = -m_used * x_b + np.sqrt(np.maximum(c_abs * c_abs - (m_used * r_b) ** 2, 0.0))
    rho = np.maximum(rho, 0.0)
    den = rho + m_used * x_b - 1j * m_used * r_b
    with np.errstate(divide="ignore", invalid="ignore"):
        w = c / den
        u = np.where(np.abs(w) > 0, w / np.abs(w), 0.0)
    return 1j * m_used * u


@dataclass(frozen=True)
class Solution:
    """One fault type at the faulted buses given: sequence currents into the fault (per-unit;
    NaN where the iteration did not converge) and the iteration's outcome."""

    i1: np.ndarray
    i2: np.ndarray
    i0: np.ndarray
    converged: np.ndarray  # bool per faulted bus (True where the fault is not defined)
    sweeps: np.ndarray  # sweeps taken (over every round of cessation)
    residual: np.ndarray  # the last sweep's largest change per unit of a node's limit
    ceased: np.ndarray  # (faulted buses, inverters): momentary cessation
    held: np.ndarray  # (faulted buses, inverters): current lagging the prefault voltage
    injection1: np.ndarray | None = None  # (faulted buses, inverter nodes), when kept
    injection2: np.ndarray | None = None
    m1: np.ndarray | None = None  # each node's positive-sequence limit in that fault
    m2: np.ndarray | None = None
    active: np.ndarray | None = None  # (faulted buses, inverters): not ceased
    share: np.ndarray | None = None  # each inverter's negative-sequence share in this fault

    def inverter_currents(self, inv: Inverters, row: int) -> tuple[np.ndarray, np.ndarray]:
        """Each inverter's positive- and negative-sequence current (per-unit of its bus, in
        the network's frame) for the faulted bus at ``row``: its node's currents shared in
        proportion to its limit (needs the injections kept)."""
        on = self.active[row]
        own1 = inv.limit_pu * (1.0 - self.share) * on
        own2 = inv.limit_pu * self.share * on
        node1, node2 = self.m1[row][inv.slot], self.m2[row][inv.slot]
        with np.errstate(divide="ignore", invalid="ignore"):
            f1 = np.where(node1 > 0, own1 / np.where(node1 > 0, node1, 1.0), 0.0)
            f2 = np.where(node2 > 0, own2 / np.where(node2 > 0, node2, 1.0), 0.0)
        return self.injection1[row][inv.slot] * f1, self.injection2[row][inv.slot] * f2


def solve(
    inv: Inverters,
    fault: str,
    fault_nodes: np.ndarray,
    z1_f,
    z0_f,
    zf,
    e_f,
    e_nodes,
    *,
    angle_f=0.0,
    keep: bool = False,
    max_sweeps: int | None = None,
) -> Solution:
    """The converged inverter currents and the fault's sequence currents for a fault of type
    ``fault`` at each of ``fault_nodes`` (network nodes), all at once.

    ``z1_f``, ``z0_f``: the Thevenin impedances there (Z0 NaN without a path); ``zf``: the
    fault impedance; ``e_f``: the prefault voltage there and ``e_nodes`` at the inverter nodes
    (per-unit, complex, in the network's frame); ``angle_f``: the phase displacement of the
    faulted bus's zone, radians (the fault is on its real phase a, so a negative-sequence
    source meets it turned by twice that against the positive sequence). ``keep``: return
    every node's injections.

    The network's frame has no phase displacement: a zone at angle theta holds positive-
    sequence phasors turned by theta and negative-sequence ones by -theta. The currents into
    the fault returned are the real ones at the faulted bus (its zone's turn applied).

    The faulted buses are solved CHUNK_CELLS / (inverter nodes) at a time (each is its own
    problem), so the memory stays bounded however many buses there are.
    """
    n_f, n_s = len(fault_nodes), len(inv.nodes)
    step = max(256, CHUNK_CELLS // max(1, 4 * n_s * max(ANDERSON_DEPTH, 1)))
    if n_f <= step:
        return _solve_chunk(
            inv, fault, fault_nodes, z1_f, z0_f, zf, e_f, e_nodes, angle_f, keep, max_sweeps
        )
    parts = []
    for start in range(0, n_f, step):
        cut = slice(start, start + step)

        def part(values, cut=cut):
            values = np.asarray(values)
            return values[cut] if values.ndim and len(values) == n_f else values

        parts.append(
            _solve_chunk(
                inv,
                fault,
                fault_nodes[cut],
                *(part(v) for v in (z1_f, z0_f, zf, e_f)),
                e_nodes,
                part(angle_f),
                keep,
                max_sweeps,
            )
        )
    fields = {}
    for name in Solution.__dataclass_fields__:
        values = [getattr(p, name) for p in parts]
        if name == "share":
            fields[name] = values[0]
        elif values[0] is None:
            fields[name] = None
        else:
            fields[name] = np.concatenate(values)
    return Solution(**fields)


# Entries of the sweeps' history (residuals and sweeps, real parts) per chunk of faulted
# buses, at most: 4 M floats, 32 MB each.
CHUNK_CELLS = 4_000_000


def _solve_chunk(inv, fault, fault_nodes, z1_f, z0_f, zf, e_f, e_nodes, angle_f, keep, max_sweeps):
    """``solve`` for one chunk of faulted buses."""
    max_sweeps = MAX_SWEEPS if max_sweeps is None else max_sweeps
    n_f, n_s = len(fault_nodes), len(inv.nodes)
    z1_f = np.asarray(z1_f, complex)
    (a11, a12, a21, a22, b1, b2), defined = _coefficients(fault, z1_f, z1_f, z0_f, zf)
    # in the network's frame: E1 = E1' e^(-j theta), E2 = E2' e^(j theta) of the real ones
    turn = np.broadcast_to(np.exp(1j * np.asarray(angle_f, float)), z1_f.shape)
    a12, a21 = a12 / turn**2, a21 * turn**2
    b1, b2 = b1 * turn, b2 / turn
    zc = inv.z_columns[fault_nodes]  # Z[f, j] = Z[j, f]
    z_ss = inv.z_nodes
    diag = np.diagonal(z_ss)
    b_pos = diag[None, :] - zc * zc * a11[:, None]  # driving point of each node, fault on
    e_f = np.broadcast_to(np.asarray(e_f, complex), (n_f,))
    e_nodes = np.asarray(e_nodes, complex)
    grid = e_nodes[None, :] - zc * (a11 * e_f)[:, None]  # V1 with every inverter at zero
    cut_off = np.abs(grid) <= CUT_OFF * np.abs(e_nodes)[None, :]
    unbalanced = fault in UNBALANCED
    share = inv.share if unbalanced else np.zeros(len(inv.names))
    has_cease = ~np.isnan(inv.cease_pu)
    active = np.ones((n_f, len(inv.names)), bool)
    i1 = np.zeros((n_f, n_s), complex)
    i2 = np.zeros((n_f, n_s), complex)
    sweeps = np.zeros(n_f, np.int64)
    residual = np.zeros(n_f)
    converged = ~defined
    held = np.zeros((n_f, len(inv.names)), bool)
    m1 = np.zeros((n_f, n_s))
    m2 = np.zeros((n_f, n_s))
    todo = np.flatnonzero(defined)

    to_node = np.zeros((len(inv.names), n_s))  # inverter -> its node
    to_node[np.arange(len(inv.names)), inv.slot] = 1.0

    def limits(rows):
        on = active[rows].astype(float)
        return (on * (inv.limit_pu * (1.0 - share))) @ to_node, (
            on * (inv.limit_pu * share)
        ) @ to_node

    first = True
    while len(todo):
        m1[todo], m2[todo] = limits(todo)
        if first:  # start at the limit, lagging the prefault voltage
            u_pre = e_nodes / np.abs(e_nodes)
            i1[todo] = -1j * m1[todo] * u_pre[None, :]
            first = False
        else:  # again after cessation: the currents of what ceased start within their limits
            for cur, lim in ((i1, m1), (i2, m2)):
                size = np.abs(cur[todo])
                cur[todo] *= np.where(size > lim[todo], lim[todo] / np.where(size > 0, size, 1), 1)
        done, swept, left = _iterate(
            todo, i1, i2, m1, m2, zc, z_ss, (a11, a12, a21, a22), e_f, e_nodes, max_sweeps, cut_off
        )
        sweeps[todo] += swept
        residual[todo] = left
        converged[todo] = done
        rows = todo[done]
        v1 = _voltages(rows, i1, i2, zc, z_ss, (a11, a12, a21, a22), e_f, e_nodes)[0]
        c1 = v1 - b_pos[rows] * i1[rows]
        _, held_nodes = _positive(c1, b_pos[rows], m1[rows], e_nodes[None, :], cut_off[rows])
        held[rows] = held_nodes[:, inv.slot] & active[rows]
        v_at = np.abs(v1)[:, inv.slot]
        cease = active[rows] & has_cease[None, :] & (v_at < inv.cease_pu[None, :])
        again = np.flatnonzero(cease.any(axis=1))
        active[rows[again]] &= ~cease[again]
        todo = rows[again]
    ok = converged & defined
    e1, e2 = _open_circuit(np.arange(n_f), i1, i2, zc, e_f)
    nan = complex(np.nan, np.nan)
    i1f = np.where(ok, (a11 * e1 + a12 * e2) * turn, np.where(defined, nan, 0))
    i2f = np.where(ok, (a21 * e1 + a22 * e2) / turn, np.where(defined, nan, 0))
    i0f = np.where(ok, b1 * e1 + b2 * e2, np.where(defined, nan, 0))
    return Solution(
        i1f,
        i2f,
        i0f,
        converged,
        sweeps,
        np.where(defined, residual, 0.0),
        ~active,
        held,
        i1 if keep else None,
        i2 if keep else None,
        m1 if keep else None,
        m2 if keep else None,
        active if keep else None,
        share,
    )


def _open_circuit(rows, i1, i2, zc, e_f):
    """E1f, E2f: the open-circuit sequence voltages at the faulted bus with the injections."""
    z = zc[rows]
    return e_f[rows] + (z * i1[rows]).sum(axis=1), (z * i2[rows]).sum(axis=1)


def _voltages(rows, i1, i2, zc, z_ss, a, e_f, e_nodes):
    """V1, V2 at the inverter nodes for the faulted buses ``rows``, from the injections."""
    a11, a12, a21, a22 = a
    e1, e2 = _open_circuit(rows, i1, i2, zc, e_f)
    f1 = a11[rows] * e1 + a12[rows] * e2
    f2 = a21[rows] * e1 + a22[rows] * e2
    z = zc[rows]
    v1 = e_nodes[None, :] + i1[rows] @ z_ss - z * f1[:, None]
    v2 = i2[rows] @ z_ss - z * f2[:, None]
    return v1, v2


class _Rows:
    """What the sweeps need of the faulted buses being iterated, row by row (taken once, cut
    as buses converge): their columns of Z1 at the inverter nodes, the fault's coefficients,
    each node's driving point with the fault on, limits and prefault voltages."""

    def __init__(self, rows, m1, m2, zc, z_ss, a, e_f, e_nodes, cut_off):
        self.rows = rows
        self.z = zc[rows]
        self.a11, self.a12, self.a21, self.a22 = (x[rows] for x in a)
        self.e_f = e_f[rows]
        self.m1, self.m2 = m1[rows], m2[rows]
        self.cut = cut_off[rows]
        diag = np.diagonal(z_ss)[None, :]
        self.b_pos = diag - self.z * self.z * self.a11[:, None]
        self.b_neg = diag - self.z * self.z * self.a22[:, None]
        self.z_ss, self.e_nodes = z_ss, e_nodes
        self.negative = bool((self.m2 > 0).any())

    def take(self, keep) -> _Rows:
        out = object.__new__(_Rows)
        for name, value in vars(self).items():
            is_row = isinstance(value, np.ndarray) and value.shape[:1] == (len(self.rows),)
            setattr(out, name, value[keep] if is_row and name not in ("z_ss", "e_nodes") else value)
        out.negative = bool((out.m2 > 0).any())
        return out

    def sweep(self, cur1, cur2):
        """Every node's exact solve at once, the others' currents ``cur1``, ``cur2``."""
        z = self.z
        e1 = self.e_f + (z * cur1).sum(axis=1)
        e2 = (z * cur2).sum(axis=1) if self.negative else 0.0
        f1 = self.a11 * e1 + self.a12 * e2
        v1 = self.e_nodes[None, :] + cur1 @ self.z_ss - z * f1[:, None]
        new1, _ = _positive(
            v1 - self.b_pos * cur1, self.b_pos, self.m1, self.e_nodes[None, :], self.cut
        )
        if not self.negative:
            return new1, np.zeros_like(cur2)
        f2 = self.a21 * e1 + self.a22 * e2
        v2 = cur2 @ self.z_ss - z * f2[:, None]
        return new1, _negative(v2 - self.b_neg * cur2, self.b_neg, self.m2)


def _iterate(todo, i1, i2, m1, m2, zc, z_ss, a, e_f, e_nodes, max_sweeps, cut_off):
    """Sweeps for the faulted buses ``todo`` (their currents in ``i1``, ``i2`` updated in
    place) until converged or ``max_sweeps``, accelerated by Anderson mixing of the last
    ANDERSON_DEPTH sweeps (Walker and Ni, 2011: the sweep is a fixed-point map; its slow
    modes, inverters close together, settle in a few sweeps instead of hundreds; a bus whose
    residual grows takes the plain sweep and forgets its history). Returns (converged,
    sweeps, residual) for the rows of ``todo``."""
    n_s = z_ss.shape[0]
    depth = max(ANDERSON_DEPTH, 1)
    done = np.zeros(len(todo), bool)
    swept = np.zeros(len(todo), np.int64)
    left = np.full(len(todo), np.inf)
    live = np.arange(len(todo))
    ctx = _Rows(todo, m1, m2, zc, z_ss, a, e_f, e_nodes, cut_off)
    scale = np.concatenate([ctx.m1 + ctx.m2] * 2, axis=1)
    # a node without current (all ceased) is measured against the largest of its bus
    scale = np.where(scale > 0, scale, scale.max(axis=1, initial=0.0)[:, None])
    scale = np.where(scale > 0, scale, 1.0)
    x = np.concatenate([i1[todo], i2[todo]], axis=1)
    # the last ``depth`` differences of residual and sweep, a ring (their order does not
    # matter to the least squares), with the sweep each slot was written in
    d_f = np.zeros((len(todo), 4 * n_s, depth))
    d_g = np.zeros((len(todo), 4 * n_s, depth))
    written = np.full(depth, -1)
    f_last = g_last = None
    restart = np.zeros(len(todo), np.int64)  # history before this sweep is not used
    before = np.full(len(todo), np.inf)
    for sweep in range(max_sweeps):
        if not len(live):
            break
        if sweep == NEWTON_AFTER:  # what is left goes to Newton's method, then sweeps again
            rows = todo[live]
            i1[rows], i2[rows] = x[:, :n_s], x[:, n_s:]
            _newton(rows, i1, i2, m1, m2, zc, z_ss, a, e_f, e_nodes, cut_off)
            x = np.concatenate([i1[rows], i2[rows]], axis=1)
            f_last = None
        g = np.concatenate(ctx.sweep(x[:, :n_s], x[:, n_s:]), axis=1)
        f = g - x
        change = (np.abs(f) / scale).max(axis=1, initial=0.0)
        swept[live] += 1
        left[live] = change
        grew = change > before[live]
        before[live] = change
        finished = change <= TOLERANCE
        if finished.any():
            done[live[finished]] = True
            rows = todo[live[finished]]
            i1[rows], i2[rows] = g[finished, :n_s], g[finished, n_s:]
            keep = ~finished
            live, x, g, f, grew = live[keep], x[keep], g[keep], f[keep], grew[keep]
            ctx, scale, restart = ctx.take(keep), scale[keep], restart[keep]
            d_f, d_g = d_f[keep], d_g[keep]
            if f_last is not None:
                f_last, g_last = f_last[keep], g_last[keep]
            if not len(live):
                break
        restart = np.where(grew, sweep + 1, restart)
        x = g
        if f_last is not None and ANDERSON_DEPTH and sweep >= ANDERSON_FROM:
            slot = sweep % depth
            d_f[:, :, slot] = (f - f_last).view(float)
            d_g[:, :, slot] = (g - g_last).view(float)
            written[slot] = sweep
            usable = (written[None, :] >= restart[:, None]) & (written[None, :] >= 0)
            df = d_f * usable[:, None, :]
            gram = np.matmul(df.transpose(0, 2, 1), df)
            trace = np.trace(gram, axis1=1, axis2=2)
            gram += np.eye(depth)[None] * (1e-12 * trace[:, None, None] + ~usable[:, :, None])
            rhs = np.matmul(df.transpose(0, 2, 1), f.view(float)[:, :, None])
            gamma = np.linalg.solve(gram, rhs) * usable[:, :, None]
            mixed = (g.view(float) - np.matmul(d_g, gamma)[:, :, 0]).view(complex)
            x = np.where(grew[:, None], g, mixed)
        f_last, g_last = f, g
    rows = todo[live]
    i1[rows], i2[rows] = x[:, :n_s], x[:, n_s:]
    return done, swept, left


def bus_faults(solutions: dict[str, Solution], grounded: np.ndarray):
    """Magnitudes per faulted bus (faults.BusFaults) from the sequence currents of each fault
    type: three-phase the largest phase, line-to-ground phase a, line-to-line phase b,
    double-line-to-ground the larger of b and c and 3 |I0|; NaN where not converged or, for the
    ground currents, where there is no zero-sequence path."""
    from .faults import BusFaults, phase_currents

    def phases(fault):
        s = solutions[fault]
        return np.abs(phase_currents(s.i1, s.i2, s.i0))

    p3, pg, pl, pd = (phases(f) for f in FAULTS)
    nan = np.full(len(grounded), np.nan)
    s_llg = solutions["llg"]
    return BusFaults(
        i3ph=p3.max(axis=0),
        islg=np.where(grounded, pg[0], nan),
        ill=pl[1],
        illg=np.maximum(pd[1], pd[2]),
        ig_llg=np.where(grounded, np.abs(3 * s_llg.i0), nan),
    )


# Newton's method for the buses the sweeps leave (a cluster of strong inverters close
# together, which the sweeps pass between without settling).
NEWTON_AFTER = 20  # sweeps before the buses still unconverged go to Newton's method
NEWTON_STEPS = 40  # Newton steps, at most
NEWTON_CELLS = 2_000_000  # entries of the Jacobians per chunk of buses (16 MB), at most
FD_STEP = 1e-7  # finite-difference step, per unit of a node's limit


def _newton(rows, i1, i2, m1, m2, zc, z_ss, a, e_f, e_nodes, cut_off):
    """Newton's method on ``G(x) - x = 0`` for the faulted buses ``rows`` (their currents in
    ``i1``, ``i2`` updated in place), G every node's exact solve with the others' currents as
    they are (the sweep's map, applied to all nodes at once), its Jacobian by finite
    differences (the map is smooth but for the kinks of the cap), the step halved while the
    residual does not fall and, where that fails, a Levenberg-Marquardt step."""
    n_s = z_ss.shape[0]
    size = 4 * n_s
    step = max(1, NEWTON_CELLS // (size * size + 8 * n_s * n_s))
    for start in range(0, len(rows), step):
        chunk = rows[start : start + step]
        x = _as_real(i1[chunk], i2[chunk])
        x = _newton_chunk(x, chunk, m1, m2, zc, z_ss, a, e_f, e_nodes, cut_off)
        i1[chunk], i2[chunk] = _as_complex(x, n_s)


def _as_real(c1, c2):
    c = np.concatenate([c1, c2], axis=1)
    return np.concatenate([c.real, c.imag], axis=1)


def _as_complex(x, n_s):
    c = x[:, : 2 * n_s] + 1j * x[:, 2 * n_s :]
    return c[:, :n_s], c[:, n_s:]


def _jacobi(x, rows, m1, m2, zc, z_ss, a, e_f, e_nodes, cut_off):
    """Every node's exact solve at once with the others' currents ``x`` (real form)."""
    n_s = z_ss.shape[0]
    ctx = _Rows(rows, m1, m2, zc, z_ss, a, e_f, e_nodes, cut_off)
    ctx.negative = True  # the Jacobian's columns of I2 must see V2 move
    return _as_real(*ctx.sweep(*_as_complex(x, n_s)))


def _newton_chunk(x, rows, m1, m2, zc, z_ss, a, e_f, e_nodes, cut_off):
    n, size = x.shape
    n_s = z_ss.shape[0]
    scale = np.concatenate([m1[rows] + m2[rows]] * 4, axis=1)
    h = FD_STEP * np.where(scale > 0, scale, 1.0)

    def residual(xx, at):
        return _jacobi(xx, rows[at], m1, m2, zc, z_ss, a, e_f, e_nodes, cut_off) - xx

    live = np.arange(n)
    f = residual(x, live)
    for _ in range(NEWTON_STEPS):
        norm = np.abs(f / np.where(scale > 0, scale, 1.0)).max(axis=1)
        keep = norm > TOLERANCE * 1e-2
        live = np.arange(n)[keep]
        if not len(live):
            break
        xl, fl, hl = x[live], f[live], h[live]
        jac = np.empty((len(live), size, size))
        for k in range(size):  # a column per unknown, every bus at once
            bumped = xl.copy()
            bumped[:, k] += hl[:, k]
            jac[:, :, k] = (residual(bumped, live) - fl) / hl[:, k : k + 1]
        try:
            dx = np.linalg.solve(jac, -fl[:, :, None])[:, :, 0]
        except np.linalg.LinAlgError:
            dx = np.zeros_like(xl)
        ok = np.isfinite(dx).all(axis=1)
        dx[~ok] = 0.0
        norm_l = np.linalg.norm(fl, axis=1)
        alpha = np.ones(len(live))
        accepted = np.zeros(len(live), bool)
        trial_f = fl.copy()
        for _ in range(8):
            trial = xl + alpha[:, None] * dx
            tf = residual(trial, live)
            better = ~accepted & ok & (np.linalg.norm(tf, axis=1) < (1 - 1e-4 * alpha) * norm_l)
            xl = np.where(better[:, None], trial, xl)
            trial_f = np.where(better[:, None], tf, trial_f)
            accepted |= better
            if accepted.all():
                break
            alpha = np.where(accepted, alpha, alpha / 2)
        stuck = ~accepted
        if stuck.any():  # Levenberg-Marquardt where Newton's direction did not help
            jt = jac[stuck]
            gram = np.einsum("nki,nkj->nij", jt, jt)
            lam = 1e-3 * np.trace(gram, axis1=1, axis2=2) / size + 1e-30
            gram = gram + lam[:, None, None] * np.eye(size)[None]
            rhs = -np.einsum("nki,nk->ni", jt, fl[stuck])
            step = np.linalg.solve(gram, rhs[:, :, None])[:, :, 0]
            trial = xl[stuck] + step
            tf = residual(trial, live[stuck])
            better = np.linalg.norm(tf, axis=1) < norm_l[stuck]
            sub = np.flatnonzero(stuck)[better]
            xl[sub], trial_f[sub] = trial[better], tf[better]
        x[live], f[live] = xl, trial_f
    del n_s
    return x
