"""The all-bus engine on the benchmark networks against a dense numpy inverse, 2,000 buses.

numpy.linalg.inv as a dense reference; required agreement 1e-9 relative (the scale issue's
figure). Networks from benchmarks/generate.py (invented data): radial feeders with laterals and
motors on a tenth of the buses, and the meshed variant with 2 % loop-closing cables.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

from faultcalc import read_system
from faultcalc.study import analyse

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "benchmarks"))
from generate import generate  # noqa: E402

pytestmark = pytest.mark.slow  # fuzzing and scale: `make test` runs them, `make quick` not


@pytest.mark.parametrize("meshed", [False, True], ids=["radial", "meshed"])
def test_two_thousand_buses_against_the_dense_inverse(tmp_path, meshed):
    a = analyse(read_system(generate(2000, tmp_path / "net", meshed=meshed, seed=3)))
    for y, z in ((a.network.y1, a.z1_node), (a.network.y0, a.z0_node)):
        dense = np.diag(np.linalg.inv(y.toarray()))
        np.testing.assert_allclose(z, dense, rtol=1e-9, atol=0)
    assert a.network.n_nodes == 2000


@pytest.mark.parametrize("batch", [1, 50, 4_000_000])
def test_selected_inverse_of_far_loops_in_any_batch_size(monkeypatch, batch):
    """Loops between distant points of a random tree fill the factor; the selected inverse,
    done depth by depth of the elimination tree in batches of any size, against numpy's dense
    inverse (1e-9 relative)."""
    from engine import radial_admittance

    from faultcalc.solve import thevenin

    monkeypatch.setattr(thevenin, "SELINV_BATCH", batch)
    y = radial_admittance(1500, loops=60, seed=4)
    factor = thevenin.SymmetricFactor(y)
    assert factor._tree is None  # the general path
    dense = np.diag(np.linalg.inv(y.toarray()))
    np.testing.assert_allclose(factor.diagonal(), dense, rtol=1e-9, atol=0)
