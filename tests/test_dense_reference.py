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
from faultcalc.solve.network import build_network
from faultcalc.solve.perunit import to_per_unit
from faultcalc.solve.thevenin import diagonal_of_inverse


def _by_xr(z, xr):
    r = z / math.sqrt(1 + xr * xr)
    return complex(r, r * xr)


def _from_reactance(x, xr):
    # Machine data give the reactance X"d; R = X / (X/R) (the trade's convention, #12).
    return complex(x / xr, x)


def dense_reference(sheets, base_mva=100.0, prefault=1.0):
    """Thevenin impedances in ohms at every bus, from dense inverses: (z1, z0), NaN = no path."""
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
    three = sheets.get("three_winding_transformers", [])
    stars = [t["transformer"] for t in three if "l_winding" in t]
    for k, name in enumerate(stars):  # star points after the buses, on a base of 1 kV
        idx[name] = len(nodes) + k
        kv[name] = 1.0
    size = len(nodes) + len(stars)
    y1 = np.zeros((size, size), dtype=complex)
    y0 = np.zeros((size, size), dtype=complex)
    links0 = []  # zero-sequence branches, for finding islands without a ground path
    grounds0 = set()

    def zbase(bus):
        return kv[bus] ** 2 / base_mva

    def stamp(y, a, b, z_pu, tap=1.0):
        i, j = idx[a], idx[b]
        if i == j:
            return
        adm = 1 / z_pu
        y[i, i] += adm / tap**2
        y[j, j] += adm
        y[i, j] -= adm / tap
        y[j, i] -= adm / tap
        if y is y0:
            links0.append((i, j))

    def shunt(y, bus, z_pu):
        y[idx[bus], idx[bus]] += 1 / z_pu
        if y is y0:
            grounds0.add(idx[bus])

    for s in sheets["sources"]:
        z1 = _by_xr(prefault * base_mva / s["sc_mva"], s["xr"])
        shunt(y1, s["bus"], z1)
        if "slg_ka" in s:
            i_base = base_mva / (math.sqrt(3) * kv[s["bus"]])
            z0 = _by_xr(3 * prefault * i_base / s["slg_ka"], s.get("slg_xr", s["xr"])) - 2 * z1
        elif "r0_ohm" in s:
            z0 = complex(s["r0_ohm"], s["x0_ohm"]) / zbase(s["bus"])
        else:
            z0 = z1
        shunt(y0, s["bus"], z0)
    for t in sheets["transformers"]:
        mva = t["kva"] / 1000
        z_lv_ohm = _by_xr(t["z_pct"] / 100, t["xr"]) * t["lv_kv"] ** 2 / mva
        tap = (t["hv_kv"] / kv[t["hv_bus"]]) / (t["lv_kv"] / kv[t["lv_bus"]])
        stamp(y1, t["hv_bus"], t["lv_bus"], z_lv_ohm / zbase(t["lv_bus"]), tap)
        z0_own = _by_xr(t.get("z0_pct", t["z_pct"]) / 100, t.get("xr0", t["xr"]))
        z0_lv = z0_own * t["lv_kv"] ** 2 / mva / zbase(t["lv_bus"])  # on the LV bus base
        z0_hv = z0_own * t["hv_kv"] ** 2 / mva / zbase(t["hv_bus"])  # on the HV bus base
        zn_lv = 3 * t.get("lv_neutral_ohm", 0) / zbase(t["lv_bus"])
        zn_hv = 3 * t.get("hv_neutral_ohm", 0) / zbase(t["hv_bus"])
        pair = (t["hv_winding"], t["lv_winding"])
        if pair == ("YN", "YN"):
            stamp(y0, t["hv_bus"], t["lv_bus"], z0_lv + zn_lv + zn_hv / tap**2, tap)
        elif pair == ("D", "YN"):
            shunt(y0, t["lv_bus"], z0_lv + zn_lv)
        elif pair == ("YN", "D"):
            shunt(y0, t["hv_bus"], z0_hv + zn_hv)
    for c in sheets["cables"]:
        length_kft = c["length_ft"] / 1000 if "length_ft" in c else c["length_m"] / 304.8
        if "r_ohm_per_kft" in c:
            per_kft = complex(c["r_ohm_per_kft"], c["x_ohm_per_kft"])
        else:
            per_kft = complex(c["r_ohm_per_km"], c["x_ohm_per_km"]) * 0.3048
        if "r0_ohm_per_kft" in c:
            per_kft0 = complex(c["r0_ohm_per_kft"], c["x0_ohm_per_kft"])
        elif "r0_ohm_per_km" in c:
            per_kft0 = complex(c["r0_ohm_per_km"], c["x0_ohm_per_km"]) * 0.3048
        else:
            per_kft0 = 3 * per_kft  # the documented default
        zb = zbase(c["from_bus"])
        stamp(y1, c["from_bus"], c["to_bus"], per_kft * length_kft / c["sets"] / zb)
        stamp(y0, c["from_bus"], c["to_bus"], per_kft0 * length_kft / c["sets"] / zb)
    for e in sheets.get("impedances", []):
        if e["r_ohm"] or e["x_ohm"]:
            zb = zbase(e["from_bus"])
            stamp(y1, e["from_bus"], e["to_bus"], complex(e["r_ohm"], e["x_ohm"]) / zb)
            z0 = complex(e.get("r0_ohm", e["r_ohm"]), e.get("x0_ohm", e["x_ohm"]))
            stamp(y0, e["from_bus"], e["to_bus"], z0 / zb)
    for m in sheets.get("machines", []):
        kva = m.get("kva", m.get("hp"))  # 1 kVA per hp, the documented convention
        scale = base_mva / (kva / 1000) * (m["kv"] / kv[m["bus"]]) ** 2 / m.get("count", 1)
        shunt(y1, m["bus"], _from_reactance(m["xd_pct"] / 100, m["xr"]) * scale)
        if "neutral_ohm" in m:
            z0 = _from_reactance(m.get("x0_pct", m["xd_pct"]) / 100, m["xr"]) * scale
            z0 += 3 * m["neutral_ohm"] / zbase(m["bus"]) / m.get("count", 1)
            shunt(y0, m["bus"], z0)
    for g in sheets.get("grounding_transformers", []):
        # a zero-sequence shunt Z0 + 3 Zn to ground, |Z0| in ohms with its X/R; no positive path
        z0 = g["z0_ohm"] / math.sqrt(1 + g["xr"] ** 2) * complex(1, g["xr"])
        shunt(y0, g["bus"], (z0 + 3 * g.get("neutral_ohm", 0.0)) / zbase(g["bus"]))
    for t in three:
        _three_winding(t, kv, base_mva, stamp, shunt, y1, y0)
    # Zero-sequence islands with no path to ground: find them by flooding from grounded nodes.
    reach = set(grounds0)
    changed = True
    while changed:
        changed = False
        for i, j in links0:
            if (i in reach) != (j in reach):
                reach |= {i, j}
                changed = True
    grounded = np.array([k in reach for k in range(size)])
    z1 = np.diag(np.linalg.inv(y1))
    z0 = np.full(size, np.nan, dtype=complex)
    keep = np.flatnonzero(grounded)
    if len(keep):
        z0[keep] = np.diag(np.linalg.inv(y0[np.ix_(keep, keep)]))
    z1_ohm = np.array([z1[idx[n]] * zbase(n) for n in names])
    z0_ohm = np.array([z0[idx[n]] * zbase(n) for n in names])
    return z1_ohm, z0_ohm


def _three_winding(t, kv, base_mva, stamp, shunt, y1, y0):
    """A three-winding transformer in the reference's own terms: each leg in ohms at the h
    winding's voltage (the star point's physical level), the star point on a 1 kV base, each
    bus behind the ratio of its winding's rated kV to h's; the autotransformer's zero sequence
    by the equivalent with its neutral (stated in the README)."""
    h_kv = t["h_kv"]

    def pair_ohm(pair, zero=False):  # ohms at the h winding's rated voltage
        pct = t.get(f"{pair}_z0_pct", t[f"{pair}_z_pct"]) if zero else t[f"{pair}_z_pct"]
        return _by_xr(pct / 100, t[f"{pair}_xr"]) * h_kv**2 / (t[f"{pair}_kva"] / 1000)

    auto = t.get("kind") == "auto"
    zn = t.get("h_neutral_ohm", 0.0)  # ohms at h's level
    n = h_kv / t["m_kv"]
    if "l_winding" not in t:  # an autotransformer h-m without tertiary: one series branch
        zb_m = kv[t["m_bus"]] ** 2 / base_mva
        to_m = (t["m_kv"] / h_kv) ** 2  # ohms at h's level to ohms at m's
        tap = (h_kv / kv[t["h_bus"]]) / (t["m_kv"] / kv[t["m_bus"]])
        stamp(y1, t["h_bus"], t["m_bus"], pair_ohm("hm") * to_m / zb_m, tap)
        z0 = pair_ohm("hm", True) + 3 * zn * (n - 1) ** 2
        stamp(y0, t["h_bus"], t["m_bus"], z0 * to_m / zb_m, tap)
        return
    hm, hl, ml = (pair_ohm(p) for p in ("hm", "hl", "ml"))
    hm0, hl0, ml0 = (pair_ohm(p, True) for p in ("hm", "hl", "ml"))
    leg1 = {"h": (hm + hl - ml) / 2, "m": (hm + ml - hl) / 2, "l": (hl + ml - hm) / 2}
    leg0 = {"h": (hm0 + hl0 - ml0) / 2, "m": (hm0 + ml0 - hl0) / 2, "l": (hl0 + ml0 - hm0) / 2}
    star = t["transformer"]
    zb_star = 1.0 / base_mva  # (1 kV)^2 / base
    for x in ("h", "m", "l"):
        bus = t.get(f"{x}_bus")
        winding = t.get(f"{x}_winding", "YN")
        rated = t.get(f"{x}_kv", h_kv)
        # per-unit ratio bus : star = (rated / bus kV) / (h_kv / 1 kV)
        tap = (rated / kv[bus]) / h_kv if bus is not None else 1.0
        if bus is not None:
            stamp(y1, bus, star, leg1[x] / zb_star, tap)
        if auto:
            extra = {"h": 3 * zn * (1 - n), "m": 3 * zn * n * (n - 1), "l": 3 * zn * n}[x]
            if x == "l":
                shunt(y0, star, (leg0[x] + extra) / zb_star)
            else:
                stamp(y0, bus, star, (leg0[x] + extra) / zb_star, tap)
        elif winding == "YN":
            zn_x = t.get(f"{x}_neutral_ohm", 0.0) * (h_kv / rated) ** 2  # to h's level
            stamp(y0, bus, star, (leg0[x] + 3 * zn_x) / zb_star, tap)
        elif winding == "D":
            shunt(y0, star, leg0[x] / zb_star)


CASES = [
    dict(seed=1),
    dict(seed=2, loops=3),
    dict(seed=3, loops=5, sources=3),
    dict(seed=4, loops=2, sources=2, ties=2),
    dict(seed=5, loops=4, off_nominal=True),
    dict(seed=6, n_mv=30, n_lv=80, loops=10, sources=4, ties=3, off_nominal=True),
    dict(seed=7, zero_sequence=True),
    dict(seed=8, zero_sequence=True, machines=6),
    dict(seed=12, zero_sequence=True, machines=3, grounding=4),
    dict(seed=13, three_winding=4),
    dict(seed=14, loops=3, sources=2, zero_sequence=True, machines=4, three_winding=6),
    dict(seed=9, loops=4, sources=2, zero_sequence=True, machines=10, ties=2),
    dict(
        seed=10,
        n_mv=30,
        n_lv=90,
        loops=8,
        sources=3,
        zero_sequence=True,
        machines=25,
        off_nominal=True,
        ties=2,
    ),
]


@pytest.mark.parametrize("case", CASES, ids=lambda c: "-".join(f"{k}{v}" for k, v in c.items()))
def test_study_matches_dense_inverse(make_input, case):
    sheets = random_sheets(**case)
    result = run_study(read_system(make_input(sheets)))
    z1_ref, z0_ref = dense_reference(sheets)
    b = result.buses
    z1 = b.r1_ohm.to_numpy() + 1j * b.x1_ohm.to_numpy()
    z2 = b.r2_ohm.to_numpy() + 1j * b.x2_ohm.to_numpy()
    z0 = b.r0_ohm.to_numpy() + 1j * b.x0_ohm.to_numpy()
    np.testing.assert_allclose(z1, z1_ref, rtol=1e-9, atol=0)
    np.testing.assert_allclose(z2, z1_ref, rtol=1e-9, atol=0)  # Z2 = Z1 (stated convention)
    assert np.array_equal(np.isnan(z0), np.isnan(z0_ref))
    ok = ~np.isnan(z0_ref)
    np.testing.assert_allclose(z0[ok], z0_ref[ok], rtol=1e-9, atol=0)
    i_ref = 1 / np.abs(z1_ref) * b.kv.to_numpy() / math.sqrt(3)
    np.testing.assert_allclose(b.i3ph_ka.to_numpy(), i_ref, rtol=1e-9)
    islg_ref = 3 / np.abs(2 * z1_ref + z0_ref) * b.kv.to_numpy() / math.sqrt(3)
    np.testing.assert_allclose(b.islg_ka.to_numpy()[ok], islg_ref[ok], rtol=1e-9)
    assert np.isnan(b.islg_ka.to_numpy()[~ok]).all()


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
        zero_sequence=True,
        machines=2 * seed,
    )
    network = build_network(to_per_unit(read_system(make_input(sheets))))
    for y in (network.y1, network.y0):
        dense = np.diag(np.linalg.inv(y.toarray()))
        np.testing.assert_allclose(diagonal_of_inverse(y), dense, rtol=1e-9, atol=0)
