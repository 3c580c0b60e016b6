"""Property-based tests (hypothesis) on random radial and meshed networks.

Facts of circuit theory (common practice, no source). Monotonicity (more series impedance never
raises a fault current, another source never lowers one) is Rayleigh's monotonicity law, which
holds for networks whose impedances share one angle; with mixed X/R ratios a few percent of
counter-examples exist (an inductive path in parallel with a resistive one), so those two
properties are checked on networks of one X/R, and on radial single-source networks of any X/R.
"""

from __future__ import annotations

import copy
import math
import tempfile
from pathlib import Path

import numpy as np
from conftest import write_csv_folder
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from networks import random_sheets

from faultcalc import read_system, run_study
from faultcalc.study import analyse

SETTINGS = settings(
    max_examples=40,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
networks = st.fixed_dictionaries(
    {
        "seed": st.integers(0, 10**6),
        "n_mv": st.integers(2, 6),
        "n_lv": st.integers(2, 10),
        "loops": st.integers(0, 3),
        "sources": st.integers(1, 3),
        "ties": st.integers(0, 2),
        "off_nominal": st.booleans(),
        "zero_sequence": st.booleans(),
        "machines": st.integers(0, 4),
        "clocks": st.booleans(),
    }
)


def fresh(tmp_path) -> Path:
    """A new folder for each example (hypothesis reuses the test's tmp_path)."""
    return Path(tempfile.mkdtemp(dir=tmp_path))


def study(tmp_path, sheets):
    return run_study(read_system(write_csv_folder(fresh(tmp_path), sheets))).buses.set_index("bus")


def lengthen(sheets, which, factor):
    """Make one cable (chosen by ``which``) ``factor`` times longer."""
    cable = sheets["cables"][which % len(sheets["cables"])]
    key = "length_ft" if "length_ft" in cable else "length_m"
    cable[key] *= factor


def one_angle(sheets, xr):
    """The same network with every impedance at one X/R."""
    s = copy.deepcopy(sheets)
    for row in s["sources"]:
        row["xr"] = xr
        row.pop("slg_xr", None)
    for row in s["transformers"] + s.get("machines", []):
        row["xr"] = xr
        if "xr0" in row:
            row["xr0"] = xr
    for c in s["cables"]:
        for r, x in (("r_ohm_per_kft", "x_ohm_per_kft"), ("r_ohm_per_km", "x_ohm_per_km")):
            if r in c:
                c[x] = c[r] * xr
    for e in s.get("impedances", []):
        if e["r_ohm"] or e["x_ohm"]:
            e["r_ohm"] = max(e["r_ohm"], 1e-4)
            e["x_ohm"] = e["r_ohm"] * xr
    return s


@SETTINGS
@given(net=networks, which=st.integers(0, 100), factor=st.floats(1.01, 5.0), xr=st.floats(0.5, 20))
def test_more_series_impedance_never_raises_a_current(tmp_path, net, which, factor, xr):
    sheets = one_angle(random_sheets(**net), xr)
    before = study(tmp_path, sheets)
    lengthen(sheets, which, factor)
    after = study(tmp_path, sheets)
    assert (after.i3ph_ka <= before.i3ph_ka * (1 + 1e-9)).all()


@SETTINGS
@given(net=networks, which=st.integers(0, 100), kva=st.floats(10, 3000), xr=st.floats(0.5, 20))
def test_another_machine_never_lowers_a_current(tmp_path, net, which, kva, xr):
    sheets = one_angle(random_sheets(**net), xr)
    before = study(tmp_path, sheets)
    bus = sheets["buses"][which % len(sheets["buses"])]
    sheets.setdefault("machines", []).append(
        {
            "machine": "NEW",
            "bus": bus["bus"],
            "kind": "induction_motor",
            "kva": kva,
            "kv": bus["kv"],
            "xd_pct": 16.7,
            "xr": xr,
        }
    )
    after = study(tmp_path, sheets)
    assert (after.i3ph_ka >= before.i3ph_ka * (1 - 1e-9)).all()


@SETTINGS
@given(
    seed=st.integers(0, 10**6),
    n_lv=st.integers(2, 12),
    factor=st.floats(1.01, 4.0),
    which=st.integers(0, 100),
)
def test_radial_single_source_any_angles(tmp_path, seed, n_lv, factor, which):
    sheets = random_sheets(seed=seed, n_mv=3, n_lv=n_lv, loops=0, sources=1)
    before = study(tmp_path, sheets)
    lengthen(sheets, which, factor)
    after = study(tmp_path, sheets)
    assert (after.i3ph_ka <= before.i3ph_ka * (1 + 1e-9)).all()


@SETTINGS
@given(net=networks, which=st.integers(0, 100), share=st.floats(0.05, 0.95))
def test_splitting_a_cable_changes_nothing_at_the_other_buses(tmp_path, net, which, share):
    sheets = random_sheets(**net)
    before = study(tmp_path, sheets)
    cables = sheets["cables"]
    cable = cables[which % len(cables)]
    key = "length_ft" if "length_ft" in cable else "length_m"
    kv = next(b["kv"] for b in sheets["buses"] if b["bus"] == cable["from_bus"])
    sheets["buses"].append({"bus": "MID", "kv": kv})
    second = dict(cable, cable="SECOND", from_bus="MID")
    second[key] = cable[key] * (1 - share)
    cable[key] = cable[key] * share
    cable["to_bus"] = "MID"
    cables.append(second)
    after = study(tmp_path, sheets).drop(index="MID")
    for column in ("i3ph_ka", "islg_ka", "ill_ka", "illg_ka", "r1_ohm", "x0_ohm"):
        np.testing.assert_allclose(after[column], before[column], rtol=1e-9)


@SETTINGS
@given(net=networks, base=st.floats(0.5, 5000), rng_seed=st.integers(0, 1000))
def test_base_and_row_order_do_not_matter(tmp_path, net, base, rng_seed):
    sheets = random_sheets(**net)
    before = study(tmp_path, sheets)
    rng = np.random.default_rng(rng_seed)
    shuffled = {k: [v[i] for i in rng.permutation(len(v))] for k, v in sheets.items()}
    shuffled["study"] = [{"setting": "base_mva", "value": base}]
    after = study(tmp_path, shuffled).loc[before.index]
    for column in ("i3ph_ka", "islg_ka", "ill_ka", "illg_ka", "ip_ka", "x1_ohm"):
        np.testing.assert_allclose(after[column], before[column], rtol=1e-8)


@SETTINGS
@given(net=networks, which=st.integers(0, 1000))
def test_thevenin_impedance_by_injecting_a_test_current(tmp_path, net, which):
    # Inject 1 pu at a bus with every source's voltage at zero: the bus voltage is the Thevenin
    # impedance. Solved here densely with numpy, apart from the selected-inverse engine.
    system = read_system(write_csv_folder(fresh(tmp_path), random_sheets(**net)))
    a = analyse(system)
    k = which % len(system.buses)
    node = a.network.node_of_bus[k]
    for y, z in ((a.network.y1, a.z1_node), (a.network.y0, a.z0_node)):
        if np.isnan(z[node]):
            continue
        current = np.zeros(a.network.n_nodes, dtype=complex)
        current[node] = 1.0
        voltage = np.linalg.solve(y.toarray(), current)
        assert abs(voltage[node] - z[node]) <= 1e-9 * abs(z[node])
    assert math.isfinite(abs(a.z1_node[node]))
