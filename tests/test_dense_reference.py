"""The sparse engine against a dense numpy inverse of an independently built admittance matrix.

The reference below rebuilds the per-unit network from the raw sheets with its own code (the
textbook nodal admittance matrix and an ideal-transformer tap), inverts it with numpy.linalg.inv
and reads its diagonal (numpy as a dense reference; the method is the bus impedance matrix of any
power-system analysis text). Agreement is required to 1e-9 relative.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from networks import random_sheets

from faultcalc import read_system, run_study
from faultcalc.network import build_network
from faultcalc.perunit import to_per_unit
from faultcalc.thevenin import diagonal_of_inverse


def _by_xr(z, xr):
    r = z / math.sqrt(1 + xr * xr)
    return complex(r, r * xr)


def dense_reference(sheets, base_mva=100.0):
    """Thevenin impedance in ohms at every bus, from a dense inverse."""
    kv = {b["bus"]: b["kv"] for b in sheets["buses"]}
    names = list(kv)
    parent = {n: n for n in names}

    def root(n):
        while parent[n] != n:
            n = parent[n]
        return n

    for e in sheets.get("impedances", []):
        if e["r_ohm"] == 0 and e["x_ohm"] == 0:
            parent[root(e["to_bus"])] = root(e["from_bus"])
    nodes = sorted({root(n) for n in names})
    idx = {n: nodes.index(root(n)) for n in names}
    y = np.zeros((len(nodes), len(nodes)), dtype=complex)

    def zbase(bus):
        return kv[bus] ** 2 / base_mva

    def stamp(a, b, z_pu, tap=1.0):
        i, j = idx[a], idx[b]
        if i == j:
            return
        adm = 1 / z_pu
        y[i, i] += adm / tap**2
        y[j, j] += adm
        y[i, j] -= adm / tap
        y[j, i] -= adm / tap

    for s in sheets["sources"]:
        y[idx[s["bus"]], idx[s["bus"]]] += 1 / _by_xr(base_mva / s["sc_mva"], s["xr"])
    for t in sheets["transformers"]:
        z_lv_ohm = _by_xr(t["z_pct"] / 100, t["xr"]) * t["lv_kv"] ** 2 / (t["kva"] / 1000)
        tap = (t["hv_kv"] / kv[t["hv_bus"]]) / (t["lv_kv"] / kv[t["lv_bus"]])
        stamp(t["hv_bus"], t["lv_bus"], z_lv_ohm / zbase(t["lv_bus"]), tap)
    for c in sheets["cables"]:
        length_kft = c["length_ft"] / 1000 if "length_ft" in c else c["length_m"] / 304.8
        if "r_ohm_per_kft" in c:
            per_kft = complex(c["r_ohm_per_kft"], c["x_ohm_per_kft"])
        else:
            per_kft = complex(c["r_ohm_per_km"], c["x_ohm_per_km"]) * 0.3048
        stamp(c["from_bus"], c["to_bus"], per_kft * length_kft / c["sets"] / zbase(c["from_bus"]))
    for e in sheets.get("impedances", []):
        if e["r_ohm"] or e["x_ohm"]:
            stamp(
                e["from_bus"], e["to_bus"], complex(e["r_ohm"], e["x_ohm"]) / zbase(e["from_bus"])
            )
    z = np.diag(np.linalg.inv(y))
    return np.array([z[idx[n]] * zbase(n) for n in names])


CASES = [
    dict(seed=1),
    dict(seed=2, loops=3),
    dict(seed=3, loops=5, sources=3),
    dict(seed=4, loops=2, sources=2, ties=2),
    dict(seed=5, loops=4, off_nominal=True),
    dict(seed=6, n_mv=30, n_lv=80, loops=10, sources=4, ties=3, off_nominal=True),
]


@pytest.mark.parametrize("case", CASES, ids=lambda c: "-".join(f"{k}{v}" for k, v in c.items()))
def test_study_matches_dense_inverse(make_input, case):
    sheets = random_sheets(**case)
    result = run_study(read_system(make_input(sheets)))
    z_ref = dense_reference(sheets)
    z = result.buses.r1_ohm.to_numpy() + 1j * result.buses.x1_ohm.to_numpy()
    np.testing.assert_allclose(z, z_ref, rtol=1e-9, atol=0)
    i_ref = 1 / np.abs(z_ref) * result.buses.kv.to_numpy() / math.sqrt(3)
    np.testing.assert_allclose(result.buses.i3ph_ka.to_numpy(), i_ref, rtol=1e-9)


@pytest.mark.parametrize("seed", range(10))
def test_selected_inverse_equals_dense_diagonal(make_input, seed):
    sheets = random_sheets(
        seed=100 + seed,
        n_mv=20,
        n_lv=60,
        loops=seed,
        sources=1 + seed % 3,
        ties=seed % 2,
        off_nominal=seed % 2 == 1,
    )
    network = build_network(to_per_unit(read_system(make_input(sheets))))
    dense = np.diag(np.linalg.inv(network.y1.toarray()))
    np.testing.assert_allclose(diagonal_of_inverse(network.y1), dense, rtol=1e-9, atol=0)
