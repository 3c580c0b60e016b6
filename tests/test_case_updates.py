"""Cases studied as low-rank updates of the base case's factorizations (solve/lowrank.py)
against the same cases factorized afresh: every number of every case table the same to 1e-9
(the #17 tolerance). The fresh path is the one the rest of the suite checks against dense
references, hand calculations and ngspice; the identity used is Woodbury's (Hager, SIAM Review
31, 1989), so two ways of inverting one matrix must agree to rounding (common practice, no
source)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from networks import random_sheets

from faultcalc import read_system, run_study
from faultcalc.solve import lowrank


def _cases(sheets, loop_cable: int | None) -> list[dict]:
    cable = sheets["cables"][-1]["cable"]
    rows = [
        {"case": "utility strong", "element": "S0", "column": "sc_mva", "value": 1500},
        {
            "case": "long cable",
            "element": cable,
            "column": _length(sheets["cables"][-1]),
            "value": 900,
        },
        {
            "case": "bus out",
            "element": sheets["buses"][-1]["bus"],
            "column": "in_service",
            "value": "no",
        },
    ]
    if loop_cable is not None:
        loop = sheets["cables"][loop_cable]["cable"]
        rows.append({"case": "loop open", "element": loop, "column": "in_service", "value": "no"})
    if sheets.get("machines"):
        m = sheets["machines"][0]["machine"]
        rows.append({"case": "motor out", "element": m, "column": "in_service", "value": "no"})
    if sheets.get("transformers"):
        t = sheets["transformers"][0]["transformer"]
        rows.append({"case": "tx low z", "element": t, "column": "z_pct", "value": 3.5})
        rows.append({"case": "two changes", "element": t, "column": "z_pct", "value": 7})
        rows.append({"case": "two changes", "element": "S0", "column": "xr", "value": 25})
    return rows


def _length(cable: dict) -> str:
    return "length_m" if "length_m" in cable else "length_ft"


NETWORKS = [
    dict(seed=11, machines=4),
    dict(seed=12, loops=3, sources=2, zero_sequence=True, machines=6, clocks=True),
    dict(seed=13, zero_sequence=True, grounding=2, machines=3, ties=1),
    dict(seed=14, zero_sequence=True, three_winding=1, machines=3, loops=1),
    dict(seed=16, zero_sequence=True, machines=3, inverters=2, prefault="open_circuit"),
]
METHODS = ["thevenin", "ieee", "iec60909"]


def _run(make_input, spec, method, monkeypatch, fresh: bool):
    spec = dict(spec)
    prefault = spec.pop("prefault", None)
    sheets = random_sheets(**spec)
    # networks.random_sheets draws the MV tree's cables first, then the loop-closing ones
    loop_cable = spec.get("n_mv", 8) - 1 if spec.get("loops") else None
    sheets["cases"] = _cases(sheets, loop_cable)
    sheets["study"] = [{"setting": "method", "value": method}]
    if prefault and method != "iec60909":  # the open-circuit voltage: a solve against Y1
        sheets["study"].append({"setting": "prefault_voltage", "value": prefault})
    if fresh:
        monkeypatch.setattr(lowrank, "UPDATE_CASES", False)
    counts = {}
    real = lowrank.StudyFactors.__init__

    def counting(self):
        real(self)
        counts["factors"] = self

    monkeypatch.setattr(lowrank.StudyFactors, "__init__", counting)
    try:
        result = run_study(read_system(make_input(sheets)))
    finally:
        monkeypatch.undo()
    return result, counts["factors"]


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("spec", NETWORKS, ids=lambda s: f"seed{s['seed']}")
def test_cases_as_updates_match_cases_from_scratch(make_input, monkeypatch, spec, method):
    updated, factors = _run(make_input, spec, method, monkeypatch, fresh=False)
    fresh, none = _run(make_input, spec, method, monkeypatch, fresh=True)
    assert factors.updates > 0 and none.updates == 0
    assert list(updated.cases) == list(fresh.cases)
    for name, table in updated.cases.items():
        other = fresh.cases[name]
        assert table.bus.tolist() == other.bus.tolist()
        for column in table.columns:
            a, b = table[column], other[column]
            if pd.api.types.is_float_dtype(a.dtype):
                np.testing.assert_allclose(
                    a.to_numpy(),
                    b.to_numpy(),
                    rtol=1e-9,
                    atol=1e-12,
                    equal_nan=True,
                    err_msg=f"case {name!r}, {column}",
                )
            else:
                assert a.tolist() == b.tolist(), (name, column)


def test_a_large_change_is_factorized_afresh(make_input, monkeypatch):
    # Every cable longer: the matrix differs in most rows, so no update is tried.
    sheets = random_sheets(seed=15, n_mv=10, n_lv=30)
    sheets["cases"] = [
        {"case": "all long", "element": c["cable"], "column": _length(c), "value": 700}
        for c in sheets["cables"]
    ]
    monkeypatch.setattr(lowrank, "MAX_UPDATE_NODES", 8)
    seen = []
    real = lowrank.StudyFactors._update
    monkeypatch.setattr(
        lowrank.StudyFactors, "_update", lambda self, y: seen.append(real(self, y)) or seen[-1]
    )
    run_study(read_system(make_input(sheets)))
    assert seen and all(u is None for u in seen)


def test_an_update_that_would_lose_digits_is_refused(make_input, monkeypatch):
    # With the cancellation guard at its tightest no update is made (the cases are factorized
    # afresh) and the tables are still right; without it, updates are made (the control).
    spec = NETWORKS[1]
    made = []
    real = lowrank.UpdatedFactor.__init__

    def counting(self, *args):
        made.append(1)
        real(self, *args)

    for guard, expect_updates in ((0.0, False), (lowrank.MAX_CANCELLATION, True)):
        made.clear()
        monkeypatch.setattr(lowrank, "MAX_CANCELLATION", guard)
        monkeypatch.setattr(lowrank.UpdatedFactor, "__init__", counting)
        guarded, _ = _run(make_input, spec, "thevenin", monkeypatch, fresh=False)
        assert bool(made) == expect_updates
    fresh, _ = _run(make_input, spec, "thevenin", monkeypatch, fresh=True)
    for name, table in guarded.cases.items():
        np.testing.assert_allclose(
            table.i3ph_ka.to_numpy(), fresh.cases[name].i3ph_ka.to_numpy(), rtol=1e-9
        )


def test_updated_factor_against_a_dense_inverse():
    # Every entry the study takes from a factor: the diagonal, columns, solves and the values
    # on the branches of a radial network (dense reference: numpy.linalg.inv).
    import scipy.sparse as sp

    from faultcalc.solve.thevenin import SymmetricFactor

    rng = np.random.default_rng(3)
    n = 40
    parent = (rng.random(n - 1) * np.arange(1, n)).astype(int)
    child = np.arange(1, n)
    y_branch = 1 / (rng.uniform(0.01, 0.1, n - 1) + 1j * rng.uniform(0.05, 0.3, n - 1))
    rows = np.r_[child, parent, child, parent, 0]
    cols = np.r_[child, parent, parent, child, 0]
    vals = np.r_[y_branch, y_branch, -y_branch, -y_branch, 1 / (0.001 + 0.02j)]
    y = sp.csc_matrix(sp.coo_matrix((vals, (rows, cols)), shape=(n, n)))
    change = y.copy().tolil()
    k = 17  # the branch from 17 to its parent twice as strong, a motor at 30
    p = parent[k - 1]
    change[k, k] += y_branch[k - 1]
    change[p, p] += y_branch[k - 1]
    change[k, p] -= y_branch[k - 1]
    change[p, k] -= y_branch[k - 1]
    change[30, 30] += 1 / (0.05 + 0.4j)
    change = sp.csc_matrix(change)
    cache = lowrank.StudyFactors()
    with cache.base():
        cache.factor(y)
    updated = cache.factor(change)
    assert isinstance(updated, lowrank.UpdatedFactor) and cache.updates == 1
    dense = np.linalg.inv(change.toarray())
    np.testing.assert_allclose(updated.diagonal(), np.diag(dense), rtol=1e-10)
    np.testing.assert_allclose(updated.columns([3, 30]), dense[:, [3, 30]], rtol=1e-10)
    rhs = rng.normal(size=(n, 2)) + 0j
    np.testing.assert_allclose(updated.solve(rhs), dense @ rhs, rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(updated.pair_values(child, parent), dense[child, parent], rtol=1e-10)
    assert isinstance(SymmetricFactor(change).pair_values(child, parent), np.ndarray)
