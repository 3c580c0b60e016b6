"""Run ngspice (Debian package ngspice) in batch mode and read what the netlists print."""

from __future__ import annotations

import os
import re
import shutil
import subprocess
import tempfile
from pathlib import Path

import pytest

REQUIRE_ENV = "FAULTCALC_REQUIRE_NGSPICE"
# "name = re" or "name = re,im" (print), or "name = value at= time" (meas)
_VALUE = re.compile(
    r"^\s*([A-Za-z_]\w*)\s*=\s*([-+0-9.eE]+)(?:\s*,\s*([-+0-9.eE]+))?(?:\s+at=.*)?\s*$"
)


def ngspice_path() -> str:
    """Path of ngspice; skips the test without it, or fails when CI requires it."""
    path = shutil.which("ngspice")
    if path is None:
        if os.environ.get(REQUIRE_ENV):
            pytest.fail(
                f"ngspice is not installed but {REQUIRE_ENV} is set (apt-get install -y ngspice)"
            )
        pytest.skip("ngspice not installed (apt-get install ngspice) - cross-check skipped")
    return path


def ngspice_version() -> str:
    out = subprocess.run(
        [ngspice_path(), "--version"], capture_output=True, text=True, check=False
    ).stdout
    match = re.search(r"ngspice-(\S+)", out)
    return f"ngspice-{match.group(1)}" if match else out.strip().splitlines()[0]


def run(netlist: str) -> dict[str, complex]:
    """Run one netlist; every printed 'name = re[,im]' line as a complex number."""
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "net.cir"
        path.write_text(netlist)
        proc = subprocess.run(
            [ngspice_path(), "-b", str(path)],
            capture_output=True,
            text=True,
            timeout=120,
            check=False,
        )
    values = {}
    for line in proc.stdout.splitlines():
        m = _VALUE.match(line)
        if m:
            values[m.group(1).lower()] = complex(float(m.group(2)), float(m.group(3) or 0.0))
    errors = [
        line
        for line in (proc.stdout + proc.stderr).splitlines()
        if line.lower().startswith(("error", "fatal")) or "singular matrix" in line.lower()
    ]
    if errors or not values:
        raise RuntimeError(
            f"ngspice failed ({proc.returncode}):\n{proc.stdout[-3000:]}\n{proc.stderr[-3000:]}"
        )
    return values


A = complex(-0.5, 3**0.5 / 2)


def fault_current_ka(system, bus: str, fault: str, reactance_only: bool = False) -> float:
    """The simulated current of one fault, as the tool reports it: the faulted phase for 3ph
    and slg, phase b for ll, the larger of b and c for llg; kA. ``reactance_only``: every
    resistance left out of the netlist."""
    from faultcalc.netlist import build_netlist

    v = run(build_netlist(system, bus, fault, reactance_only=reactance_only))
    if fault in ("3ph", "slg"):
        amps = abs(v["vf_a"])
    elif fault == "ll":
        amps = abs(v["vf_b"])
    else:
        amps = max(abs(v["vf_b"]), abs(v["vf_c"]))
    return amps / 1000.0


def netlist_names(system):
    """How the netlist names things: each bus's group (closed ties), each group's node stem
    (``b1`` ...) and each source's and machine's label (its printed currents)."""
    from faultcalc.netlist import _groups, _safe

    group = _groups(system)
    names = list(dict.fromkeys(group[b.bus] for b in system.buses))
    node = {g: f"b{i + 1}" for i, g in enumerate(names)}
    labels = {
        s.source: f"src{i + 1}_{_safe(s.source)}".lower() for i, s in enumerate(system.sources)
    }
    labels |= {
        m.machine: f"mach{i + 1}_{_safe(m.machine)}".lower() for i, m in enumerate(system.machines)
    }
    return group, node, labels


def open_circuit_pu(system) -> dict[str, float]:
    """Positive-sequence prefault voltage of every bus in the simulation, per-unit of nominal."""
    from faultcalc.netlist import _groups, build_netlist

    v = run(build_netlist(system, None, None))
    group = _groups(system)
    names = list(dict.fromkeys(group[b.bus] for b in system.buses))
    node = {g: f"b{i + 1}" for i, g in enumerate(names)}
    out = {}
    for b in system.buses:
        n = node[group[b.bus]]
        v1 = (v[f"u_{n}a"] + A * v[f"u_{n}b"] + A * A * v[f"u_{n}c"]) / 3
        out[b.bus] = abs(v1) / (b.kv * 1000 / 3**0.5)
    return out
