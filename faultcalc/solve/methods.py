"""Calculation methods: how a System is turned into what the engine solves.

Each method gives one or two variants, each a System (possibly with changed element data) and
the prefault voltage of every bus:

* ``thevenin``: the system as entered, ``prefault_pu`` at every bus.
* ``ieee``: first-cycle currents; machine subtransient reactances times the multipliers of
  IEEE Std 551-2006 Table 9-1 (see ``standards``); ``prefault_pu`` at every bus.
* ``iec60909``: maximum currents with c = cmax of each bus's voltage level (IEC 60909-0 Table 1)
  as the equivalent source, network transformers corrected by K_T, conductor resistances at
  20 C; minimum currents with c = cmin, motors left out, conductors at the end-of-fault
  temperature (IEC 60909-0 eq. 34). Network feeders take the c of their own bus, as in
  ``Z_Q = c U_nQ^2 / S"_kQ`` (IEC 60909-0 eq. 1). Cable resistances, from the tables or typed, are
  taken as given at ``conductor_temp_c``. Generators with a rated power factor are corrected by
  K_G (IEC 60909-0 6.6.1), generating units (a generator naming its unit transformer) by
  K_S or K_SO (6.7) instead of K_G and K_T.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from ..model import Cable, System, rated_kva_array
from ..model.records import Records
from . import standards

MOTOR_KINDS = ("induction_motor", "synchronous_motor")


@dataclass(frozen=True)
class Variant:
    label: str  # "max" or "min"
    system: System
    prefault_pu: tuple[float, ...]  # per bus, input order


def _scale_cable_r(cables: Records[Cable], factor: float) -> Records[Cable]:
    """Every typed or looked-up resistance times ``factor`` (blank stays blank)."""
    names = ("r_ohm_per_kft", "r_ohm_per_km", "r0_ohm_per_kft", "r0_ohm_per_km")
    return cables.replace(**{name: cables.array(name) * factor for name in names})


def _per_bus(kv: np.ndarray, value) -> tuple[float, ...]:
    """``value(kv)`` for every bus, computed once per voltage level."""
    levels, where = np.unique(kv, return_inverse=True)
    return tuple(np.array([value(float(v)) for v in levels])[where].tolist())


def _iec_transformers(system: System, units=frozenset()):
    """Network transformers corrected by K_T; those of generating units (``units``, by
    name) are corrected with their generator by K_S / K_SO instead."""
    kv = system.bus_kv()
    tol = system.settings.lv_tolerance_pct
    out = []
    for t in system.transformers:
        if t.transformer in units:
            out.append(t)
            continue
        kt = standards.k_t(
            standards.transformer_x_pu(t.z_pct, t.xr), standards.c_max(kv[t.lv_bus], tol)
        )
        out.append(dataclasses.replace(t, z_pct=t.z_pct * kt, z0_pct=t.z0_pct * kt))
    return tuple(out)


def _iec_three_winding(system: System):
    """Three-winding transformers with each pair impedance corrected by its own K_T (IEC
    60909-0:2016 6.3.3, eq. 13, from memory): ``K_Tab = 0.95 cmax / (1 + 0.6 x_Tab)``, x_Tab
    the pair's reactance in per-unit of the pair's kVA, cmax of the lowest nominal voltage among
    the pair's buses (a tertiary not brought out: the other winding's)."""
    kv = system.bus_kv()
    tol = system.settings.lv_tolerance_pct
    out = []
    for t in system.three_winding_transformers:
        changes = {}
        for pair in ("hm", "hl", "ml"):
            if getattr(t, f"{pair}_z_pct") is None:
                continue
            buses = [getattr(t, f"{x}_bus") for x in pair]
            low = min(kv[b] for b in buses if b is not None)
            z, z0 = getattr(t, f"{pair}_z_pct"), getattr(t, f"{pair}_z0_pct")
            x_t = standards.transformer_x_pu(z, getattr(t, f"{pair}_xr"))  # on the pair's kVA
            kt = standards.k_t(x_t, standards.c_max(low, tol))
            changes[f"{pair}_z_pct"] = z * kt
            changes[f"{pair}_z0_pct"] = (z if z0 is None else z0) * kt
        out.append(dataclasses.replace(t, **changes))
    return tuple(out)


def interrupting_system(system: System) -> System:
    """The IEEE interrupting (1.5 to 4 cycle) network of ``system``: machine subtransient
    reactances times the multipliers of IEEE Std 551-2006 Table 9-1, induction motors below
    50 hp left out."""
    m = system.machines
    if not len(m):
        return system
    rpm = m.array("rpm")
    factor = np.array(
        [
            standards.ieee_interrupting_multiplier(
                k, h, None if r != r else r, system.settings.frequency_hz
            )
            for k, h, r in zip(
                m.column("kind"), rated_kva_array(m).tolist(), rpm.tolist(), strict=True
            )
        ],
        dtype=float,
    )
    kept = np.flatnonzero(np.isfinite(factor))
    machines = m.replace(xd_pct=m.array("xd_pct") * np.where(np.isfinite(factor), factor, 1.0))
    return dataclasses.replace(system, machines=machines.subset(kept.tolist()))


def _iec_generators(system: System):
    """Generators with a rated power factor corrected by K_G (IEC 60909-0 6.6.1, from memory):
    ``Z_GK = K_G Z_G``, ``K_G = (U_n / U_rG) cmax / (1 + x"d sin phi_rG)``, U_n the bus's
    nominal kV; generators without a power factor left as entered (warned by the study)."""
    from . import iec60909

    m = system.machines
    if not len(m):
        return m
    kind = np.array(m.column("kind"), dtype=object)
    pf = m.array("power_factor")
    alone = np.array([u is None for u in m.column("unit_transformer")], bool)
    corrected = (kind == "generator") & np.isfinite(pf) & alone
    if not corrected.any():
        return m
    bus_kv = system.bus_kv()
    u_n = np.array([bus_kv[b] for b in m.column("bus")], dtype=float)
    tol = system.settings.lv_tolerance_pct
    cmax = np.array([standards.c_max(v, tol) for v in u_n.tolist()])
    xd = m.array("xd_pct")
    kg = np.ones(len(m))
    kg[corrected] = iec60909.generator_correction_factor_kg(
        u_n[corrected],
        m.array("kv")[corrected],
        xd[corrected] / 100.0,
        pf[corrected],
        cmax[corrected],
    )
    return m.replace(xd_pct=xd * kg)


def _iec_units(system: System) -> System:
    """Generating units (a generator and its unit transformer) corrected together by K_S
    (on-load tap changer) or K_SO (IEC 60909-0 6.7, from memory; K_SO at the main tap with the
    generator at its rated voltage): the generator's and the transformer's impedances both
    times the factor, as ``Z_S = K_S (t_r^2 Z_G + Z_THV)``."""
    from ..errors import InputError, Problem
    from . import iec60909

    m = system.machines
    units = m.column("unit_transformer") if len(m) else []
    if not any(u is not None for u in units):
        return system
    index = {t.transformer: k for k, t in enumerate(system.transformers)}
    bus_kv = system.bus_kv()
    tol = system.settings.lv_tolerance_pct
    xd = m.array("xd_pct").copy()
    z = system.transformers.array("z_pct").copy()
    z0 = system.transformers.array("z0_pct").copy()
    problems = []
    taken: dict[str, str] = {}
    for k, (name, g) in enumerate(zip(units, m, strict=True)):
        if name is None:
            continue

        def refuse(message, g=g, name=name):
            problems.append(Problem("machines", g.row, "unit_transformer", name, message))

        t = system.transformers[index[name]] if name in index else None
        before = len(problems)
        if name in taken:
            refuse(
                f"transformer {name} already forms a unit with generator {taken[name]}; a "
                "unit is one generator and its transformer (correcting it twice would "
                "understate the current)"
            )
        taken.setdefault(name, g.machine)
        if len(problems) > before:
            continue
        if g.kind != "generator":
            refuse("only a generator forms a generating unit with a transformer")
        elif t is None:
            refuse(f"no transformer named {name!r} on the transformers sheet")
        elif t.lv_bus != g.bus:
            refuse(
                f"transformer {name}'s LV winding is on bus {t.lv_bus}, not on the "
                f"generator's bus {g.bus}"
            )
        elif g.power_factor is None:
            refuse("a generating unit's correction needs the generator's power_factor")
        if len(problems) > before:
            continue
        u_nq = bus_kv[t.hv_bus]
        x_d = g.xd_pct / 100.0
        c = standards.c_max(u_nq, tol)
        t_r = t.hv_kv / t.lv_kv
        if g.unit_tap_changer == "yes":
            x_t = standards.transformer_x_pu(t.z_pct, t.xr)
            factor = iec60909.generating_unit_factor_ks(
                u_nq, g.kv, t_r, x_d, x_t, g.power_factor, c
            )
        else:
            factor = iec60909.generating_unit_factor_kso(u_nq, g.kv, t_r, x_d, g.power_factor, c)
        xd[k] *= float(factor)
        z[index[name]] *= float(factor)
        z0[index[name]] *= float(factor)
    if problems:
        raise InputError(problems)
    return dataclasses.replace(
        system,
        machines=m.replace(xd_pct=xd),
        transformers=system.transformers.replace(z_pct=z, z0_pct=z0),
    )


def unit_transformers(system: System) -> frozenset[str]:
    m = system.machines
    return frozenset(u for u in (m.column("unit_transformer") if len(m) else []) if u)


def variant_count(method: str) -> int:
    """How many systems ``variants`` gives for this method."""
    return 2 if method == "iec60909" else 1


def variants(system: System) -> list[Variant]:
    """The systems to solve for the study's method, maximum first."""
    s = system.settings
    prefault = (s.prefault_pu,) * len(system.buses)
    if s.method == "thevenin":
        return [Variant("max", system, prefault)]
    if s.method == "ieee":
        m = system.machines
        rated = rated_kva_array(m)
        rpm = m.array("rpm")
        factor = np.array(
            [
                standards.ieee_first_cycle_multiplier(k, h, None if r != r else r, s.frequency_hz)
                for k, h, r in zip(m.column("kind"), rated.tolist(), rpm.tolist(), strict=True)
            ],
            dtype=float,
        )
        changed = dataclasses.replace(
            system, machines=m.replace(xd_pct=m.array("xd_pct") * factor) if len(m) else m
        )
        return [Variant("max", changed, prefault)]
    if s.method == "iec60909":
        kv = system.buses.array("kv")
        transformers = _iec_transformers(system, unit_transformers(system))
        system = dataclasses.replace(
            system,
            transformers=transformers,
            three_winding_transformers=_iec_three_winding(system),
        )
        system = dataclasses.replace(system, machines=_iec_generators(system))
        system = _iec_units(system)
        transformers = system.transformers
        to_20 = standards.end_of_fault_factor(s.conductor_temp_c, 20.0)
        to_end = standards.end_of_fault_factor(s.conductor_temp_c, s.end_of_fault_temp_c)
        maximum = dataclasses.replace(
            system,
            transformers=transformers,
            cables=_scale_cable_r(system.cables, to_20),
        )
        minimum = dataclasses.replace(
            system,
            transformers=transformers,
            cables=_scale_cable_r(system.cables, to_end),
            machines=system.machines.subset(
                [
                    k
                    for k, kind in enumerate(system.machines.column("kind"))
                    if kind not in MOTOR_KINDS
                ]
            ),
            inverters=(),  # not relied on for minimum currents (the README's method)
        )
        return [
            Variant(
                "max",
                maximum,
                _per_bus(kv, lambda v: standards.c_max(v, s.lv_tolerance_pct)),
            ),
            Variant("min", minimum, _per_bus(kv, standards.c_min)),
        ]
    raise ValueError(f"unknown method {s.method!r}")


def describe(system: System) -> str:
    s = system.settings
    if s.method == "ieee":
        return (
            "IEEE first-cycle: machine subtransient reactances times the multipliers of "
            "IEEE Std 551-2006 Table 9-1; prefault "
            + (
                f"{s.prefault_pu:g} pu"
                if s.prefault_voltage == "nominal"
                else f"the open-circuit voltage (sources at {s.prefault_pu:g} pu)"
            )
            + f"; X/R from {s.xr_method} reduction; interrupting (1.5 to 4 "
            "cycle) network for medium-voltage breakers by the same table's interrupting "
            "multipliers (motors below 50 hp left out), E/X with X from the X-only reduction "
            "and X/R from separate R and X reductions (IEEE C37.010)"
        )
    if s.method == "iec60909":
        return (
            "IEC 60909-0:2016 equivalent voltage source: maximum currents with cmax "
            f"(LV {standards.c_max(0.4, s.lv_tolerance_pct):g}, above 1 kV 1.1), network "
            "transformers corrected by K_T = 0.95 cmax / (1 + 0.6 xT), conductors at 20 C; "
            "minimum currents with cmin (LV 0.95, above 1 kV 1.0), motors excluded, "
            f"conductors at {s.end_of_fault_temp_c:g} C; generators with a rated power factor "
            "corrected by K_G, generating units by K_S or K_SO; breaking current Ib "
            f"at t_min {s.min_time_delay_s:g} s, DC component, steady-state Ik far from "
            f"generators and Ith for {s.fault_duration_s:g} s (IEC 60909-0:2016 clauses 9 to 14, "
            "from memory)"
        )
    if s.prefault_voltage == "open_circuit":
        return (
            "the open-circuit voltage of the network (every source at "
            f"{s.prefault_pu:g} pu behind its impedance, no load) behind the Thevenin impedance"
        )
    return f"prefault voltage {s.prefault_pu:g} pu behind the Thevenin impedance"
