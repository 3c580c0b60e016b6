"""IEC 60909-0 currents after the first instant at every bus (method iec60909): the symmetrical
breaking current Ib, the DC component at the minimum time delay, the steady-state current Ik
and the thermal equivalent Ith; the formulas are in iec60909.py (from memory of the standard).

Each machine's partial current at a fault at bus k comes from the column of the bus impedance
matrix at the machine's node, solved against the study's own factor (one solve per machine
node, in chunks, never per bus): with the fault current I_f = E / Z_kk, the machine's current
rises by ``Z_k,m I_f / z_m`` (z_m its internal impedance). Its decay is applied to that
partial at the fault, phasor by phasor:

* ``Ib = | I_f - sum over machines w (1 - mu q) I_m |``: mu from the machine's own current
  over its rated current and t_min, q = 1 except for asynchronous motors (q from their active
  power per pair of poles), w = |z_m I_m| / E the drop across the machine's own impedance over
  the source voltage (1 for a machine at the faulted bus; IEC 60909-0 9.1.3 for meshed
  networks, from memory);
* far from generators (every synchronous machine's I"kG / IrG at most 2): Ik = the initial
  current of the network with the asynchronous motors left out (a motor feeds no steady current
  into a balanced fault; one more factorization) and ``Ith = I"k sqrt(m + n)`` with n = 1; near
  a generator Ik and n need the generator's decrement curves and are not computed (said in
  iec_note);
* ``i_DC = sqrt(2) I"k e^(-2 pi f t_min R/X)`` with the bus's R/X.
"""

from __future__ import annotations

import numpy as np

from ..model import rated_kva_array
from . import iec60909, perunit, standards

MACHINE_CHUNK = 32  # machine nodes solved at a time, at most
CHUNK_CELLS = 4_000_000  # and at most this many complex numbers (64 MB) per chunk of columns
KW_PER_HP = 0.746
POWER_FACTOR_OF_MOTOR = 0.85  # a motor rated in kVA only: its active power (common practice)
NEAR_NOTE = (
    'near a generator (its I"kG/IrG above 2): Ik and the heat factor n of Ith need the '
    "generator's decrement curves; not computed"
)
SYNCHRONOUS = ("generator", "synchronous_motor")


def after_first_instant(analysis, rows: dict, z_without_motors=None) -> dict[str, np.ndarray]:
    """The columns ib_ka, idc_ka, ik_ka, ith_ka, iec_note of the bus table (``rows``: its
    columns so far: i3ph_ka, xr_fault, kappa, kv; ``z_without_motors``: Z1 at every bus with
    the asynchronous motors left out, None when there are none)."""
    system = analysis.system
    settings = system.settings
    pu, network = analysis.pu, analysis.network
    kv = np.asarray(rows["kv"], dtype=float)
    i3 = np.asarray(rows["i3ph_ka"], dtype=float)
    n = len(kv)
    t_min, f = settings.min_time_delay_s, settings.frequency_hz
    z_kk = analysis.z1_node[network.node_of_bus]
    zf = settings.fault_ohm / perunit.z_base_ohm(kv, pu.base_mva)
    i_f = np.asarray(pu.prefault_pu) / (z_kk + zf)  # per-unit, bolted or through zf
    i_base = perunit.i_base_ka(kv, pu.base_mva)
    decayed = np.zeros(n, complex)  # sum of (1 - mu q) I_m
    near = np.zeros(n, bool)
    machines = _machines(analysis)
    if machines is not None:
        nodes, z_m, ratio_base, q_of, synchronous, e_m = machines
        unique, which = np.unique(nodes, return_inverse=True)
        step = max(1, min(MACHINE_CHUNK, CHUNK_CELLS // max(1, analysis.factor1.n)))
        for start in range(0, len(unique), step):
            chunk = unique[start : start + step]
            columns = analysis.factor1.columns(chunk)[network.node_of_bus]  # (buses, chunk)
            at = np.flatnonzero((which >= start) & (which < start + len(chunk)))
            partial = columns[:, which[at] - start] / z_m[at] * i_f[:, None]  # (buses, m)
            ratio = np.abs(partial) * ratio_base[at]  # I"k of the machine / its rated current
            mu = iec60909.breaking_current_factor_mu(ratio, t_min)
            # IEC 60909-0 9.1.3 (meshed networks, from memory): each decrement weighted by the
            # drop across the machine's own reactance over the source voltage, 1 at its bus
            weight = np.minimum(1.0, np.abs(z_m[at] * partial) / e_m[at])
            decayed += (weight * (1.0 - mu * q_of[at]) * partial).sum(axis=1)
            near |= (ratio[:, synchronous[at]] > iec60909.FAR_RATIO_LIMIT).any(axis=1)
    far = ~near
    ib = np.abs(i_f - decayed) * i_base
    i_steady = (
        i_f if z_without_motors is None else (np.asarray(pu.prefault_pu) / (z_without_motors + zf))
    )
    ik = np.where(far, np.abs(i_steady) * i_base, np.nan)
    if getattr(analysis, "inverters", None) is not None:
        # full-converter sources do not decay: their I_skPF, added as in I"k (IEC 60909-0:2016
        # 6.9, from memory), is in Ib and Ik too
        from .inverters import iec_open_circuit_pu

        raised = iec_open_circuit_pu(analysis.inverters, network.node_of_bus, 0.0)
        i_pf_ka = raised / np.abs(z_kk + zf) * i_base
        ib = ib + i_pf_ka
        ik = ik + i_pf_ka
    m = iec60909.dc_heat_factor_m(np.asarray(rows["kappa"], float), f, settings.fault_duration_s)
    ith = np.where(far, iec60909.thermal_equivalent_current_ka(i3, m, np.ones(n)), np.nan)
    xr = np.asarray(rows["xr_fault"], dtype=float)
    r_over_x = np.where(np.isfinite(xr) & (xr > 0), 1.0 / np.where(xr > 0, xr, 1.0), 0.0)
    idc = iec60909.dc_component_ka(i3, r_over_x, f, t_min)
    return {
        "ib_ka": ib,
        "idc_ka": idc,
        "ik_ka": ik,
        "ith_ka": ith,
        "iec_note": np.where(far, "", np.array(NEAR_NOTE, dtype=object)),
    }


def _machines(analysis):
    """Per machine: its node, internal impedance (per-unit), the factor from its partial
    current (per-unit at its bus) to its rated current, q, and whether it is synchronous."""
    system = analysis.system
    shunts = analysis.pu.shunts
    kinds = np.array(shunts.column("kind"), dtype=object)
    machine = np.flatnonzero((kinds != "source") & (kinds != "grounding_transformer"))
    if not len(machine):
        return None
    m = system.machines
    if len(m) != len(machine):
        raise RuntimeError("machine shunts and machines disagree")
    bus_at = analysis.pu.shunt_buses[machine]
    nodes = analysis.network.node_of_bus[bus_at]
    z_m = np.asarray(shunts.column("z1_pu"), complex)[machine]
    kv_bus = np.asarray(analysis.pu.bus_kv, float)[bus_at]
    base = perunit.i_base_ka(kv_bus, analysis.pu.base_mva)
    kva, hp, count = m.array("kva"), m.array("hp"), m.array("count")
    rated_kva = rated_kva_array(m)  # as the impedances take it
    rated_ka = perunit.i_base_ka(m.array("kv"), rated_kva / 1000.0) * count  # the group's
    kind = np.array(m.column("kind"), dtype=object)
    synchronous = np.isin(kind, SYNCHRONOUS)
    f = system.settings.frequency_hz
    rpm = m.array("rpm")
    pole_pairs = np.where(np.isnan(rpm), np.nan, standards.pole_pairs(rpm, f))
    p_mw = np.where(np.isnan(hp), kva * POWER_FACTOR_OF_MOTOR, hp * KW_PER_HP) / 1000.0
    q = np.ones(len(m))
    motor = ~synchronous & np.isfinite(pole_pairs)  # without its speed a motor keeps q = 1
    if motor.any():
        q[motor] = iec60909.motor_factor_q(
            p_mw[motor] / pole_pairs[motor], system.settings.min_time_delay_s
        )
    e_m = np.asarray(analysis.pu.prefault_pu, float)[bus_at]
    return nodes, z_m, base / rated_ka, q, synchronous, e_m
