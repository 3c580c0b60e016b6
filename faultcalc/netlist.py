"""A SPICE netlist of the whole network in the phase domain, for an independent cross-check.

Three phase nodes per bus, ground (node 0) as the return path, in volts, amperes and ohms:

* Utility sources and machines: a star of three voltage sources (the prefault phase voltage, at
  the phase displacement of their zone) behind the positive-sequence impedance in each phase;
  the star point reaches ground through ``(Z0 - Z1) / 3`` (and the neutral impedance), so the
  zero-sequence impedance is honoured; an ungrounded machine's star floats.
* Cables and impedances: ``Z1`` in each phase plus a common drop ``(Z0 - Z1) / 3 x (Ia + Ib +
  Ic)`` in each phase, from controlled sources: the exact phase-domain form of a symmetrical
  element with self impedance ``(Z0 + 2 Z1) / 3`` and mutual impedance ``(Z0 - Z1) / 3``, which
  holds in meshed networks too.
* Transformers: three single-phase ideal transformers (a voltage-controlled voltage source and a
  current-controlled current source each) connected as the real windings (D, Y, YN, with the
  phase displacement of the clock number), the leakage impedance in series with each
  low-voltage winding, neutral impedances from YN star points to ground, and the zero-sequence
  impedance beyond Z1 in the grounded neutral.
* The fault: zero-volt sources (current meters ``vf_a`` ...) from the faulted phases to ground
  (or between phases), through ``fault_ohm`` where it is not zero.

Impedances are realised at the system frequency: a negative resistance where ``Z0 < Z1`` makes
``(Z0 - Z1) / 3`` negative, and a capacitor for a negative reactance. That is exact for an AC
analysis; transient netlists refuse them. Every node gets 1e12 ohm to ground (``rshunt``) so
that floating stars and deltas have a DC path; it changes currents by about 1e-12.

Text from the input (the title, bus and element names) appears only in comment lines, each
beginning '* ' and each on one line: control characters and line breaks in it are written as
escapes (``\\n``), so no name can start a line of its own (a ``.control`` block or a ``*#``
line, which the simulator would run). Element names in statements are a running number and the
name cut to ASCII letters, digits and underscores (``_safe``); nodes are numbered.
"""

from __future__ import annotations

import math
import re
from collections import deque
from dataclasses import dataclass, field

from .choices import FAULT_TYPES
from .model import System

PHASES = "abc"
FAULTS = FAULT_TYPES
SQRT3 = math.sqrt(3.0)


class NetlistError(ValueError):
    """The system or request cannot be written as a netlist."""


@dataclass
class _Writer:
    omega: float
    transient: bool
    reactance_only: bool = False  # every resistance left out (the IEEE E/X network)
    lines: list[str] = field(default_factory=list)
    count: int = 0

    def name(self, prefix: str) -> str:
        self.count += 1
        return f"{prefix}{self.count}"

    def add(self, line: str) -> None:
        self.lines.append(line)

    def comment(self, text: str) -> None:
        """A comment line: '* ' and ``text`` with every control character and line break
        written as its escape, so that no text from the input starts a line of its own."""
        self.lines.append("* " + _one_line(text))

    def impedance(self, a: str, b: str, z: complex, label: str) -> None:
        """R + jX between nodes a and b (a zero-volt link when z is 0); only jX when the
        writer is for the reactance-only network."""
        r, x = z.real, z.imag
        if self.reactance_only:  # a trace of R (1e-9 of X) keeps the DC operating point solvable
            r = 1e-9 * abs(x)
        if self.transient and (r < 0 or x < 0):
            raise NetlistError(
                f"{label}: negative R or X ({z:.6g} ohm) has no transient "
                "model; give zero-sequence data with Z0 >= Z1"
            )
        if abs(r) < 1e-15 and abs(x) < 1e-15:
            self.add(f"{self.name('VZ')} {a} {b} 0")
            return
        mid = a
        if abs(r) >= 1e-15:
            mid = f"{a}_{self.count + 1}m" if abs(x) >= 1e-15 else b
            self.add(f"{self.name('R')} {a} {mid} {r:.12g}")
        if abs(x) >= 1e-15:
            if x > 0:
                self.add(f"{self.name('L')} {mid} {b} {x / self.omega:.12g}")
            else:
                self.add(f"{self.name('C')} {mid} {b} {-1.0 / (self.omega * x):.12g}")


# What may break a line or change how the text after it is shown: C0 and C1 controls, DEL,
# the line and paragraph separators, bidirectional controls, lone surrogates.
_NOT_IN_A_LINE = re.compile(
    "[\x00-\x1f\x7f-\x9f\u2028\u2029\u202a-\u202e\u2066-\u2069\ud800-\udfff]"
)


def _one_line(text: str) -> str:
    r"""``text`` with the characters of _NOT_IN_A_LINE written as escapes.

    >>> _one_line("bus\n.control")
    'bus\\n.control'
    """
    return _NOT_IN_A_LINE.sub(
        lambda m: m.group().encode("unicode_escape", "backslashreplace").decode("ascii"), text
    )


def _safe(name: str) -> str:
    """A SPICE-safe form of a name: ASCII letters, digits and underscores only."""
    return re.sub(r"[^A-Za-z0-9_]", "_", name)


def _split(z_abs: float, xr: float) -> complex:
    r = z_abs / math.sqrt(1.0 + xr * xr)
    return complex(r, r * xr)


def _from_reactance(x: float, xr: float) -> complex:
    """A machine's impedance from its reactance (X"d as given) and X/R: R = X / (X/R).

    Written again here on purpose (solve/perunit.py has the same formula): the netlist shares
    no code with the engine, so that the simulator checks the engine's conventions too."""
    return complex(x / xr, x)


def _groups(system: System) -> dict[str, str]:
    """Bus -> representative bus: closed ties make one node of several buses."""
    parent = {b.bus: b.bus for b in system.buses}

    def root(n):
        while parent[n] != n:
            parent[n] = parent[parent[n]]
            n = parent[n]
        return n

    for e in system.impedances:
        if e.is_tie:
            parent[root(e.to_bus)] = root(e.from_bus)
    return {b: root(b) for b in parent}


def _zone_angles(system: System, group: dict[str, str]) -> dict[str, float]:
    """Phase displacement of each bus group, degrees (LV lags HV by 30 per clock hour)."""
    links: dict[str, list[tuple[str, float]]] = {g: [] for g in set(group.values())}
    for t in system.transformers:
        a, b = group[t.hv_bus], group[t.lv_bus]
        links[a].append((b, -30.0 * t.phase_shift_clock))
        links[b].append((a, 30.0 * t.phase_shift_clock))
    for t in system.three_winding_transformers:
        for x in ("m", "l"):
            other = getattr(t, f"{x}_bus")
            if other is not None:
                a, b = group[t.h_bus], group[other]
                links[a].append((b, -30.0 * t.clock(x)))
                links[b].append((a, 30.0 * t.clock(x)))
    for e in (*system.cables, *[i for i in system.impedances if not i.is_tie]):
        a, b = group[e.from_bus], group[e.to_bus]
        links[a].append((b, 0.0))
        links[b].append((a, 0.0))
    angle: dict[str, float] = {}
    order = list(dict.fromkeys(group[b.bus] for b in system.buses))
    for start in order:
        if start in angle:
            continue
        angle[start] = 0.0
        queue = deque([start])
        while queue:
            a = queue.popleft()
            for b, shift in links[a]:
                if b not in angle:
                    angle[b] = angle[a] + shift
                    queue.append(b)
    return angle


def _connection(clock: int, hv: str, lv: str) -> tuple[int, bool]:
    """Phase relabelling r and polarity reversal giving this clock number.

    Base connections give clock 1 for mixed D/Y pairs and 0 otherwise; reversing the LV winding
    adds 6 hours, coupling HV winding k with LV phase k + r adds 8 r hours (mod 12).
    """
    base = 1 if (hv == "D") != (lv == "D") else 0
    for r in range(3):
        for reverse in (False, True):
            if (base + 8 * r + 6 * reverse) % 12 == clock % 12:
                return r, reverse
    raise NetlistError(f"no winding arrangement gives clock number {clock} for {hv}-{lv}")


def build_netlist(
    system: System,
    bus: str | None,
    fault: str | None,
    *,
    transient: bool = False,
    close_s: float = 0.0,
    stop_s: float = 0.05,
    step_s: float = 1e-5,
    reactance_only: bool = False,
    inverter_currents: dict | None = None,
) -> str:
    """The netlist text; ``fault`` None writes the unfaulted network (open-circuit voltages).
    ``reactance_only`` leaves every resistance out (the X-only network of IEEE C37.010's E/X).

    With ``transient`` the fault closes at ``close_s`` (a switch, 1 micro-ohm closed) and the
    analysis runs to ``stop_s``; otherwise it is an AC analysis at the system frequency.

    Inverters are fixed-phasor current sources (``inverter_currents``: name -> phase currents
    a, b, c in amperes; by default the tool's converged iteration for this fault, from
    ``study.inverter_phasors``): the simulator checks the network's answer to those currents,
    and the voltages it prints let a reader check each inverter's angle against its terminal
    voltage. Without a fault (the open-circuit network) they inject nothing.
    """
    if fault is not None and fault not in FAULTS:
        raise NetlistError(f"fault must be one of {', '.join(FAULTS)}")
    settings = system.settings
    f_hz = float(settings.frequency_hz)
    w = _Writer(2 * math.pi * f_hz, transient, reactance_only)
    kv = system.bus_kv()
    group = _groups(system)
    names = sorted(set(group.values()), key=[b.bus for b in system.buses].index)
    node_id = {g: f"b{i + 1}" for i, g in enumerate(names)}
    angle = _zone_angles(system, group)
    if bus is not None and bus not in kv:
        raise NetlistError(f"no bus named {bus!r}")

    def ph(b: str, k: int) -> str:
        return f"{node_id[group[b]]}{PHASES[k % 3]}"

    def ret(b: str) -> str:
        return "0"  # the return path is ideal ground; series Z0 sits in the phases

    title = settings.title or "faultcalc network"
    w.comment(title)
    w.comment(
        "Phase-domain netlist written by faultcalc for an independent check; volts, "
        "amperes, ohms, henries, farads."
    )
    w.comment(
        f"Frequency {f_hz:g} Hz; prefault {settings.prefault_pu:g} pu; fault "
        f"{fault or 'none'} at {bus or '-'}; fault impedance {settings.fault_ohm:g} ohm."
    )
    w.comment(
        "Nodes: <bus>a, <bus>b, <bus>c are the phases of each bus; 0 is ground, the return "
        "path. A series element's zero-sequence impedance is in its phases: Z1 in each phase "
        "plus a common drop (Z0 - Z1)/3 x (Ia + Ib + Ic) from controlled sources."
    )
    for g in names:
        members = [b for b in group if group[b] == g]
        w.comment(
            f"  {node_id[g]} = bus {', '.join(members)} ({kv[g]:g} kV nominal, zone "
            f"angle {angle[g]:g} deg)"
        )

    source_labels: list[str] = []  # each source's and machine's currents are printed

    def star_source(label, b, e_kv_ln, z1, z0):
        star = f"s_{label}"
        theta = angle[group[b]]
        w.comment(f"{label}: source behind its impedance at bus {b}")
        for k in range(3):
            phase_deg = theta - 120.0 * k
            internal = f"{star}{PHASES[k]}"
            volts = e_kv_ln * 1000.0
            if transient:
                # v(t) = sqrt(2) V sin(w t + phase): the AC phasor V at that phase (sine ref).
                w.add(
                    f"V_{label}_{PHASES[k]} {internal} {star} SIN(0 {volts * math.sqrt(2):.12g} "
                    f"{f_hz:g} 0 0 {phase_deg:.12g})"
                )
            else:
                w.add(f"V_{label}_{PHASES[k]} {internal} {star} AC {volts:.12g} {phase_deg:.12g}")
            w.impedance(internal, ph(b, k), z1, label)
        source_labels.append(label)
        if z0 is not None:
            w.impedance(star, ret(b), (z0 - z1) / 3.0, label)

    for i, s in enumerate(system.sources):
        v_ln = kv[s.bus] / SQRT3
        z1 = _split(settings.prefault_pu * kv[s.bus] ** 2 / s.available_mva(kv[s.bus]), s.xr)
        if s.slg_ka is not None:
            loop = _split(3 * settings.prefault_pu * v_ln / s.slg_ka, s.slg_xr)
            z0 = loop - 2 * z1
        elif s.r0_ohm is not None:
            z0 = complex(s.r0_ohm, s.x0_ohm)
        else:
            z0 = z1
        label = f"src{i + 1}_{_safe(s.source)}"
        star_source(label, s.bus, settings.prefault_pu * v_ln, z1, z0)
    for i, m in enumerate(system.machines):
        scale = m.kv**2 / (m.rated_kva / 1000.0) / m.count
        z1 = _from_reactance(m.xd_pct / 100.0, m.xr) * scale
        z0 = None
        if m.grounded:
            x0 = m.x0_pct if m.x0_pct is not None else m.xd_pct
            z0 = _from_reactance(x0 / 100.0, m.xr) * scale + 3 * m.neutral_ohm / m.count
        label = f"mach{i + 1}_{_safe(m.machine)}"
        star_source(label, m.bus, settings.prefault_pu * kv[m.bus] / SQRT3, z1, z0)
    for i, g in enumerate(system.grounding_transformers):
        _grounding_bank(w, g, f"gnd{i + 1}_{_safe(g.grounding_transformer)}", ph)
    if len(system.inverters):
        if transient:
            raise NetlistError("the transient netlist does not write inverters")
        if fault is not None and inverter_currents is None:
            from .study import inverter_phase_currents

            try:
                inverter_currents = inverter_phase_currents(system, bus, fault)
            except ValueError as exc:
                raise NetlistError(str(exc)) from None
        _inverters(w, system, inverter_currents if fault is not None else None, ph)
    for c in system.cables:
        z1, z0 = c.z_ohm, c.z0_ohm
        w.comment(f"cable {c.cable}: {c.from_bus} - {c.to_bus}")
        _series(
            w,
            [ph(c.from_bus, k) for k in range(3)],
            [ph(c.to_bus, k) for k in range(3)],
            z1,
            z0,
            c.cable,
        )
    for e in system.impedances:
        if e.is_tie:
            w.comment(f"closed tie {e.element}: {e.from_bus} and {e.to_bus} share their nodes")
            continue
        w.comment(f"impedance {e.element}: {e.from_bus} - {e.to_bus}")
        _series(
            w,
            [ph(e.from_bus, k) for k in range(3)],
            [ph(e.to_bus, k) for k in range(3)],
            e.z_ohm,
            e.z0_ohm,
            e.element,
        )
    for t in system.transformers:
        _transformer(w, t, ph, ret)
    for t in system.three_winding_transformers:
        _three_winding(w, t, ph)
    if fault is not None:
        _fault(w, bus, fault, settings.fault_ohm, ph, ret, transient, close_s)
    w.add(".options rshunt=1e12")
    w.add(".control")
    w.add("set numdgt=12")
    if transient:
        w.add(f"tran {step_s:g} {stop_s:g} 0 {step_s:g} uic")
        w.add(f"meas tran ipeak_a max i(vf_a) from={close_s:g} to={stop_s:g}")
        w.add(f"meas tran imin_a min i(vf_a) from={close_s:g} to={stop_s:g}")
    else:
        w.add(f"ac lin 1 {f_hz:g} {f_hz:g}")
        if fault is not None:
            for meter in _meters(fault):
                w.add(f"let {meter} = i({meter})")
                w.add(f"print {meter}")
            for label in source_labels:  # current delivered = -i(source), per phase
                for k in PHASES:
                    w.add(f"let is_{label}_{k} = -i(V_{label}_{k})")
                    w.add(f"print is_{label}_{k}")
        for g in names:
            for k in PHASES:
                w.add(f"let u_{node_id[g]}{k} = v({node_id[g]}{k})")
                w.add(f"print u_{node_id[g]}{k}")
    w.add(".endc")
    w.add(".end")
    return "\n".join(w.lines) + "\n"


def _grounding_bank(w: _Writer, g, label: str, ph) -> None:
    """A grounding bank as its zero-sequence equivalent (the choice, stated in the netlist): no
    current for positive- and negative-sequence voltages; each phase draws ``V0 / (Z0 + 3 Zn)``
    with ``V0 = (Va + Vb + Vc) / 3``, made by voltage-controlled sources in series and mirrored
    into every phase by current-controlled sources (all linear)."""
    z_abs = g.z0_ohm if g.z0_ohm is not None else g.z0_pct / 100.0 * g.kv**2 / (g.kva / 1000.0)
    z0 = _split(z_abs, g.xr) + 3.0 * g.neutral_ohm
    w.comment(
        f"grounding bank {g.grounding_transformer} ({g.kind}) at {g.bus}: zero-sequence "
        f"equivalent, Z0 + 3 Zn = {z0.real:.6g} + j{z0.imag:.6g} ohm per phase"
    )
    phases = [ph(g.bus, k) for k in range(3)]
    previous = "0"
    for k, node in enumerate(phases):
        out = f"{label}_v{k}"
        w.add(f"E{label}_{k} {out} {previous} {node} 0 {1.0 / 3.0:.15g}")
        previous = out
    w.add(f"V{label}_s {previous} {label}_z 0")
    w.impedance(f"{label}_z", "0", z0, label)
    for k, node in enumerate(phases):
        w.add(f"F{label}_{k} {node} 0 V{label}_s 1")


def _inverters(w: _Writer, system: System, currents: dict | None, ph) -> None:
    """Each inverter as three current sources from ground into its bus's phases, at the fixed
    phasors ``currents`` (None: no fault, no current)."""
    if currents is None:
        w.comment("inverters: no fault, no current (prefault load currents neglected)")
        return
    for i, inv in enumerate(system.inverters):
        label = f"inv{i + 1}_{_safe(inv.inverter)}"
        phases = currents[inv.inverter]
        w.comment(
            f"inverter {inv.inverter} at {inv.bus}: fixed current sources at the tool's "
            f"converged solution for this fault (limit {inv.limit_ka * 1000:.6g} A)"
        )
        for k in range(3):
            amps = complex(phases[k])
            w.add(
                f"I{label}_{PHASES[k]} 0 {ph(inv.bus, k)} AC {abs(amps):.12g} "
                f"{math.degrees(math.atan2(amps.imag, amps.real)):.12g}"
            )


def _series(w: _Writer, a: list[str], b: list[str], z1: complex, z0: complex, label: str):
    """Z1 in each phase; when Z0 differs, each phase also drops (Z0 - Z1)/3 x (Ia + Ib + Ic):
    a zero-volt meter per phase, current sources summing the three currents into the
    impedance (Z0 - Z1)/3 at a node of its own, and a voltage source copying that node's
    voltage into each phase."""
    coupled = abs(z0 - z1) > 1e-12 * max(abs(z1), 1e-30)
    tag = w.name("zs")
    for k in range(3):
        if not coupled:
            w.impedance(a[k], b[k], z1, label)
            continue
        meter, drop = f"{tag}_{PHASES[k]}i", f"{tag}_{PHASES[k]}d"
        w.add(f"V{tag}{PHASES[k]} {a[k]} {meter} 0")
        w.add(f"F{tag}{PHASES[k]} 0 {tag} V{tag}{PHASES[k]} 1")
        w.add(f"E{tag}{PHASES[k]} {meter} {drop} {tag} 0 1")
        w.impedance(drop, b[k], z1, label)
    if coupled:
        w.impedance(tag, "0", (z0 - z1) / 3.0, label)


def _meters(fault: str) -> list[str]:
    return {
        "3ph": ["vf_a", "vf_b", "vf_c"],
        "slg": ["vf_a"],
        "ll": ["vf_b"],
        "llg": ["vf_b", "vf_c", "vf_g"],
    }[fault]


def _fault(w, bus, fault, fault_ohm, ph, ret, transient, close_s):
    w.comment(f"fault {fault} at bus {bus}; current meters vf_*")
    point = "fpt"
    if transient:
        if fault != "3ph":
            raise NetlistError("the transient netlist writes three-phase faults only")
        w.add(".model fsw sw(vt=0.5 vh=0.1 ron=1e-6 roff=1e12)")
        w.add(f"VCTL fctl 0 PWL(0 0 {close_s:.12g} 0 {close_s + 1e-9:.12g} 1)")
        for k in range(3):
            w.add(f"vf_{PHASES[k]} {ph(bus, k)} fsw{k} 0")
            w.add(f"SWF{k} fsw{k} {point} fctl 0 fsw")
        w.add(f"RFG {point} {ret(bus)} 1e-6")
        return
    zf = complex(fault_ohm, 0.0)
    if fault == "3ph":
        for k in range(3):
            w.add(f"vf_{PHASES[k]} {ph(bus, k)} f{k} 0")
            w.impedance(f"f{k}", point, zf, "fault")
        w.add(f"VFG {point} {ret(bus)} 0")
    elif fault == "slg":
        w.add(f"vf_a {ph(bus, 0)} f0 0")
        w.impedance("f0", ret(bus), zf, "fault")
    elif fault == "ll":
        w.add(f"vf_b {ph(bus, 1)} f1 0")
        w.impedance("f1", ph(bus, 2), zf, "fault")
    else:
        w.add(f"vf_b {ph(bus, 1)} {point} 0")
        w.add(f"vf_c {ph(bus, 2)} {point} 0")
        w.add(f"vf_g {point} fg 0")
        w.impedance("fg", ret(bus), zf, "fault")


def _transformer(w: _Writer, t, ph, ret) -> None:
    r, reverse = _connection(t.phase_shift_clock, t.hv_winding, t.lv_winding)
    mva = t.kva / 1000.0
    z1_lv = _split(t.z_pct / 100.0, t.xr) * t.lv_kv**2 / mva  # ohms, LV line-to-neutral basis
    z0_lv = _split(t.z0_pct / 100.0, t.xr0) * t.lv_kv**2 / mva
    z0_hv = _split(t.z0_pct / 100.0, t.xr0) * t.hv_kv**2 / mva
    z1_hv = _split(t.z_pct / 100.0, t.xr) * t.hv_kv**2 / mva
    v_hv = t.hv_kv * (1.0 if t.hv_winding == "D" else 1.0 / SQRT3)
    v_lv = t.lv_kv * (1.0 if t.lv_winding == "D" else 1.0 / SQRT3)
    ratio = v_hv / v_lv
    label = f"x{w.count + 1}"
    w.comment(
        f"transformer {t.transformer}: {t.hv_bus} ({t.hv_winding}) / {t.lv_bus} "
        f"({t.lv_winding}), clock {t.phase_shift_clock}, winding ratio {ratio:.9g}"
    )
    hstar, lstar = f"{label}_hn", f"{label}_ln"
    for k in range(3):
        # HV winding k.
        if t.hv_winding == "D":
            h1, h2 = ph(t.hv_bus, k), ph(t.hv_bus, k - 1)
        else:
            h1, h2 = ph(t.hv_bus, k), hstar
        # LV winding coupled with it: on LV phase k + r, leakage impedance in series.
        j = k + r
        if t.lv_winding == "D":
            other = j - 1 if t.hv_winding == "D" else j + 1
            l1, l2 = f"{label}_w{k}", ph(t.lv_bus, other)
            zw = 3.0 * z1_lv
        else:
            l1, l2 = f"{label}_w{k}", lstar
            zw = z1_lv
        w.impedance(ph(t.lv_bus, j), l1, zw, t.transformer)
        s1, s2 = (l2, l1) if reverse else (l1, l2)
        sense = f"{label}_s{k}"
        w.add(f"E{label}_{k} {s1} {sense} {h1} {h2} {1.0 / ratio:.12g}")
        w.add(f"V{label}_{k} {sense} {s2} 0")
        w.add(f"F{label}_{k} {h2} {h1} V{label}_{k} {1.0 / ratio:.12g}")
    # Neutrals: the zero-sequence impedance beyond Z1 goes in the grounded neutral.
    pair = (t.hv_winding, t.lv_winding)
    if t.lv_winding == "YN":
        extra = (z0_lv - z1_lv) / 3.0
        w.impedance(lstar, ret(t.lv_bus), t.lv_neutral_ohm + extra, t.transformer)
    if t.hv_winding == "YN":
        extra = (z0_hv - z1_hv) / 3.0 if pair == ("YN", "D") else 0j
        w.impedance(hstar, ret(t.hv_bus), t.hv_neutral_ohm + extra, t.transformer)


def _three_winding(w: _Writer, t, ph) -> None:
    """A three-winding transformer (or autotransformer) as its real windings, phase by phase:
    each winding's leakage leg (the star of the pair impedances, in ohms of that winding, with
    its zero-sequence leg by the coupled drop of ``_series``) from its terminals to an inner
    node; the h winding's inner port carries the currents of the m and l windings, each an
    ideal transformer (a voltage-controlled voltage source and a current-controlled current
    source) on the h port, connected as its winding (D, Y, YN) with its clock number. A
    tertiary with no bus gets three inner terminals of its own; an autotransformer's h and m
    stars are one node, grounded through its one neutral impedance."""
    letters = ["h", "m"] + (["l"] if t.has_tertiary else [])

    def pair_ohm_1mva(pair, zero):  # the pair on a 1 MVA base, as a per-unit number
        z_pct = getattr(t, f"{pair}_z0_pct" if zero else f"{pair}_z_pct")
        if z_pct is None:
            z_pct = getattr(t, f"{pair}_z_pct")
        return _split(z_pct / 100.0, getattr(t, f"{pair}_xr")) / (getattr(t, f"{pair}_kva") / 1000)

    def legs(zero):
        if not t.has_tertiary:
            return {"h": pair_ohm_1mva("hm", zero), "m": 0j}
        hm, hl, ml = (pair_ohm_1mva(p, zero) for p in ("hm", "hl", "ml"))
        return {"h": (hm + hl - ml) / 2, "m": (hm + ml - hl) / 2, "l": (hl + ml - hm) / 2}

    z1_legs, z0_legs = legs(False), legs(True)
    label = f"x{w.count + 1}"
    kind = "autotransformer" if t.kind == "auto" else "three-winding transformer"
    w.comment(
        f"{kind} {t.transformer}: "
        + ", ".join(
            f"{x} {getattr(t, x + '_bus') or '(no bus)'} ({getattr(t, x + '_winding')})"
            for x in letters
        )
    )
    stars = {x: f"{label}_{x}n" for x in letters}
    if t.kind == "auto":
        stars["m"] = stars["h"]
    tertiary_nodes = [f"{label}_lt{k}" for k in range(3)]

    def terminal(x, k):
        bus = getattr(t, f"{x}_bus")
        return ph(bus, k) if bus is not None else tertiary_nodes[k % 3]

    def winding_volts(x):
        kv = getattr(t, f"{x}_kv") or 1.0  # a tertiary not brought out: any rating
        return kv * (1.0 if getattr(t, f"{x}_winding") == "D" else 1.0 / SQRT3)

    def leg_ohm(x, z_pu):
        kv = getattr(t, f"{x}_kv") or 1.0
        return z_pu * kv**2 * (3.0 if getattr(t, f"{x}_winding") == "D" else 1.0)

    h_w = t.h_winding
    inner = [f"{label}_hi{k}" for k in range(3)]
    h2 = [terminal("h", k - 1) if h_w == "D" else stars["h"] for k in range(3)]
    _series(
        w,
        [terminal("h", k) for k in range(3)],
        inner,
        leg_ohm("h", z1_legs["h"]),
        leg_ohm("h", z0_legs["h"]),
        t.transformer,
    )
    for x in letters[1:]:
        x_w = getattr(t, f"{x}_winding")
        r, reverse = _connection(t.clock(x), h_w, x_w)
        ratio = winding_volts("h") / winding_volts(x)
        near, far, outer = [], [], []
        for k in range(3):
            j = k + r
            if x_w == "D":
                other = j - 1 if h_w == "D" else j + 1
                far.append(terminal(x, other))
            else:
                far.append(stars[x])
            near.append(f"{label}_{x}w{k}")
            outer.append(terminal(x, j))
        _series(w, outer, near, leg_ohm(x, z1_legs[x]), leg_ohm(x, z0_legs[x]), t.transformer)
        for k in range(3):
            s1, s2 = (far[k], near[k]) if reverse else (near[k], far[k])
            sense = f"{label}_{x}s{k}"
            w.add(f"E{label}_{x}{k} {s1} {sense} {inner[k]} {h2[k]} {1.0 / ratio:.12g}")
            w.add(f"V{label}_{x}{k} {sense} {s2} 0")
            w.add(f"F{label}_{x}{k} {h2[k]} {inner[k]} V{label}_{x}{k} {1.0 / ratio:.12g}")
    for x in letters:
        if getattr(t, f"{x}_winding") == "YN" and not (t.kind == "auto" and x == "m"):
            w.impedance(stars[x], "0", complex(getattr(t, f"{x}_neutral_ohm")), t.transformer)
