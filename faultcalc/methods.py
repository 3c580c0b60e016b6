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
  taken as given at ``conductor_temp_c``. The generator and power-station-unit corrections (K_G,
  K_S) are not applied.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

from . import standards
from .model import Cable, System

MOTOR_KINDS = ("induction_motor", "synchronous_motor")


@dataclass(frozen=True)
class Variant:
    label: str  # "max" or "min"
    system: System
    prefault_pu: tuple[float, ...]  # per bus, input order


def _scale_cable_r(c: Cable, factor: float) -> Cable:
    changes = {}
    for name in ("r_ohm_per_kft", "r_ohm_per_km", "r0_ohm_per_kft", "r0_ohm_per_km"):
        value = getattr(c, name)
        if value is not None:
            changes[name] = value * factor
    return dataclasses.replace(c, **changes)


def _iec_transformers(system: System):
    kv = system.bus_kv()
    tol = system.settings.lv_tolerance_pct
    out = []
    for t in system.transformers:
        kt = standards.k_t(
            standards.transformer_x_pu(t.z_pct, t.xr), standards.c_max(kv[t.lv_bus], tol)
        )
        out.append(dataclasses.replace(t, z_pct=t.z_pct * kt, z0_pct=t.z0_pct * kt))
    return tuple(out)


def variants(system: System) -> list[Variant]:
    """The systems to solve for the study's method, maximum first."""
    s = system.settings
    if s.method == "thevenin":
        return [Variant("max", system, tuple(s.prefault_pu for _ in system.buses))]
    if s.method == "ieee":
        machines = []
        for m in system.machines:
            hp = m.hp if m.hp is not None else m.rated_kva  # 1 kVA per hp
            factor = standards.ieee_first_cycle_multiplier(m.kind, hp, m.rpm)
            machines.append(dataclasses.replace(m, xd_pct=m.xd_pct * factor))
        changed = dataclasses.replace(system, machines=tuple(machines))
        return [Variant("max", changed, tuple(s.prefault_pu for _ in system.buses))]
    if s.method == "iec60909":
        transformers = _iec_transformers(system)
        to_20 = standards.end_of_fault_factor(s.conductor_temp_c, 20.0)
        to_end = standards.end_of_fault_factor(s.conductor_temp_c, s.end_of_fault_temp_c)
        maximum = dataclasses.replace(
            system,
            transformers=transformers,
            cables=tuple(_scale_cable_r(c, to_20) for c in system.cables),
        )
        minimum = dataclasses.replace(
            system,
            transformers=transformers,
            cables=tuple(_scale_cable_r(c, to_end) for c in system.cables),
            machines=tuple(m for m in system.machines if m.kind not in MOTOR_KINDS),
        )
        return [
            Variant(
                "max",
                maximum,
                tuple(standards.c_max(b.kv, s.lv_tolerance_pct) for b in system.buses),
            ),
            Variant("min", minimum, tuple(standards.c_min(b.kv) for b in system.buses)),
        ]
    raise ValueError(f"unknown method {s.method!r}")


def describe(system: System) -> str:
    s = system.settings
    if s.method == "ieee":
        return (
            "IEEE first-cycle: machine subtransient reactances times the multipliers of "
            "IEEE Std 551-2006 Table 9-1; prefault "
            f"{s.prefault_pu:g} pu; X/R from {s.xr_method} reduction"
        )
    if s.method == "iec60909":
        return (
            "IEC 60909-0:2016 equivalent voltage source: maximum currents with cmax "
            f"(LV {standards.c_max(0.4, s.lv_tolerance_pct):g}, above 1 kV 1.1), network "
            "transformers corrected by K_T = 0.95 cmax / (1 + 0.6 xT), conductors at 20 C; "
            "minimum currents with cmin (LV 0.95, above 1 kV 1.0), motors excluded, "
            f"conductors at {s.end_of_fault_temp_c:g} C; generator corrections K_G, K_S "
            "not applied"
        )
    return f"prefault voltage {s.prefault_pu:g} pu behind the Thevenin impedance"
