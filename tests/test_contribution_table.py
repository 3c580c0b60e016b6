"""The batched contributions table (solve/contribution_table.py) against the per-bus path
(solve/contributions.py), row for row, on random networks of every element kind.

The per-bus path is itself checked against circuit theory (Kirchhoff's law at the faulted bus,
tests/test_ground_faults.py) and against ngspice (tests/crosscheck/test_ngspice.py); this test
holds the two paths to each other (common practice, no source: two codings of one formula
must agree to rounding).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from networks import random_sheets

from faultcalc import read_system
from faultcalc.solve import perunit
from faultcalc.solve.contribution_table import contribution_table
from faultcalc.solve.contributions import as_table, contribution_phasors
from faultcalc.study import analyse

NETWORKS = [
    dict(seed=1),
    dict(seed=2, loops=3, sources=2, zero_sequence=True, machines=6),
    dict(seed=3, loops=2, zero_sequence=True, machines=5, clocks=True, ties=2),
    dict(seed=4, zero_sequence=True, grounding=3, machines=3, off_nominal=True),
    dict(seed=5, zero_sequence=True, three_winding=2, machines=4, clocks=True, loops=1),
    dict(seed=6, n_mv=3, n_lv=4, zero_sequence=True, three_winding=1, grounding=1, ties=1),
]


def _both(a, buses):
    zf_pu = a.system.settings.fault_ohm / perunit.z_base_ohm(np.array(a.pu.bus_kv), a.pu.base_mva)
    args = (a.pu, a.network, a.factor1, a.factor0, a.z1_node, a.z0_node, buses, zf_pu, a.angle_deg)
    return contribution_table(*args), as_table(contribution_phasors(*args))


@pytest.mark.parametrize("spec", NETWORKS, ids=lambda s: f"seed{s['seed']}")
def test_batched_table_matches_the_per_bus_path(make_input, spec):
    a = analyse(read_system(make_input(random_sheets(**spec))))
    buses = list(range(len(a.system.buses)))
    batched, per_bus = _both(a, buses)
    assert len(batched) == len(per_bus) > 0
    text = ["faulted_bus", "fault", "element", "kind", "from_bus", "phase"]
    for column in text:
        assert batched[column].tolist() == per_bus[column].tolist(), column
    for column in ("i_ka", "ig_ka"):
        np.testing.assert_allclose(batched[column], per_bus[column], rtol=1e-9, atol=1e-12)
    live = per_bus.i_ka.to_numpy() > 1e-6
    d = (batched.angle_deg.to_numpy()[live] - per_bus.angle_deg.to_numpy()[live] + 180) % 360
    np.testing.assert_allclose(d - 180, 0, atol=1e-7)
    assert np.array_equal(np.isnan(batched.angle_deg), np.isnan(per_bus.angle_deg))


@pytest.mark.parametrize("spec", [NETWORKS[2], NETWORKS[3]], ids=["meshed", "radial"])
def test_batched_table_in_blocks_and_in_any_bus_order(make_input, monkeypatch, spec):
    # Blocks of one faulted node at a time (run two at once in threads), buses asked twice
    # and out of order: the same rows; the radial network by the shunts' columns.
    from faultcalc.solve import contribution_table as module

    a = analyse(read_system(make_input(random_sheets(**spec))))
    buses = [5, 0, 5, 3, 27, 1]
    whole, per_bus = _both(a, buses)
    monkeypatch.setattr(module, "BLOCK_ENTRIES", 1)
    split, _ = _both(a, buses)
    pd.testing.assert_frame_equal(whole, split)
    assert whole.faulted_bus.tolist() == per_bus.faulted_bus.tolist()
    np.testing.assert_allclose(whole.i_ka, per_bus.i_ka, rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize("spec", NETWORKS, ids=lambda s: f"seed{s['seed']}")
def test_both_ways_of_reaching_z_give_the_same_rows(make_input, monkeypatch, spec):
    # Radial networks take Z at the shunts' columns and on the branches (pair_values); the
    # columns at the faulted nodes give the same entries of one matrix (common practice, no
    # source: Z is symmetric).
    from faultcalc.solve import contribution_table as module

    a = analyse(read_system(make_input(random_sheets(**spec))))
    buses = list(range(len(a.system.buses)))
    used = []
    real = module._source_of_z
    monkeypatch.setattr(
        module, "_source_of_z", lambda *args: used.append(type(real(*args)).__name__) or real(*args)
    )
    paired, _ = _both(a, buses)
    monkeypatch.setattr(module, "PAIR_COLUMN_ENTRIES", -1)
    columns, _ = _both(a, buses)
    pd.testing.assert_frame_equal(paired, columns, rtol=1e-9, atol=1e-12)
    radial = a.factor1._tree is not None  # seeds 1, 4 and 6 are radial
    assert ("_ShuntColumns" == used[0]) == radial, used
