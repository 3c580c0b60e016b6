"""Results do not depend on the MVA base, row order, length unit or file format.

These are facts of the per-unit method (common practice, no source).
"""

from __future__ import annotations

import copy

import numpy as np
import pytest
from networks import random_sheets

from faultcalc import read_system, run_study

VALUE_COLUMNS = ["kv", "r1_ohm", "x1_ohm", "i3ph_ka", "s3ph_mva", "xr"]


def study(path):
    return run_study(read_system(path)).buses.set_index("bus")


def base_sheets():
    return random_sheets(
        seed=11,
        n_mv=10,
        n_lv=30,
        loops=3,
        sources=2,
        ties=1,
        off_nominal=True,
        grounding=2,
        three_winding=3,
        inverters=4,
    )


def assert_same(a, b, rtol=1e-10):
    b = b.loc[a.index]
    for column in VALUE_COLUMNS:
        np.testing.assert_allclose(a[column].to_numpy(), b[column].to_numpy(), rtol=rtol)


@pytest.mark.parametrize("base_mva", [1, 10, 1000, 12345.6])
def test_mva_base(make_input, base_mva):
    sheets = base_sheets()
    reference = study(make_input(sheets))
    sheets["study"] = [{"setting": "base_mva", "value": base_mva}]
    other = study(make_input(sheets))
    assert_same(reference, other)
    # |Z1| in per-unit scales with the base; ohms do not.
    np.testing.assert_allclose(other.z1_pu / reference.z1_pu, base_mva / 100, rtol=1e-10)


def test_row_order(make_input):
    sheets = base_sheets()
    reference = study(make_input(sheets))
    rng = np.random.default_rng(5)
    shuffled = {
        name: [rows[i] for i in rng.permutation(len(rows))] for name, rows in sheets.items()
    }
    other = study(make_input(shuffled))
    assert_same(reference, other)
    # Results come back in the input's bus order.
    assert list(other.index) == [b["bus"] for b in shuffled["buses"]]


def test_column_order(make_input):
    sheets = base_sheets()
    reference = study(make_input(sheets))
    reversed_columns = {
        name: [dict(reversed(list(row.items()))) for row in rows] for name, rows in sheets.items()
    }
    assert_same(reference, study(make_input(reversed_columns)))


def test_length_and_impedance_units(make_input):
    sheets = base_sheets()
    reference = study(make_input(sheets))
    metric = copy.deepcopy(sheets)
    for c in metric["cables"]:
        if "length_ft" in c:
            c["length_m"] = c.pop("length_ft") * 0.3048
        if "r_ohm_per_kft" in c:
            c["r_ohm_per_km"] = c.pop("r_ohm_per_kft") / 0.3048
            c["x_ohm_per_km"] = c.pop("x_ohm_per_kft") / 0.3048
    assert_same(reference, study(make_input(metric)))


def test_xlsx_and_csv_agree(make_input):
    sheets = base_sheets()
    # openpyxl stores floats to 15 significant digits, so allow for the last digit.
    assert_same(
        study(make_input(sheets, kind="csv")), study(make_input(sheets, kind="xlsx")), rtol=1e-12
    )


def test_bus_names_do_not_matter(make_input):
    sheets = base_sheets()
    reference = study(make_input(sheets))
    rename = {b["bus"]: f"bus number {i:03d}" for i, b in enumerate(sheets["buses"][::-1])}
    renamed = copy.deepcopy(sheets)
    for rows in renamed.values():
        for row in rows:
            for key in ("bus", "hv_bus", "lv_bus", "from_bus", "to_bus", "h_bus", "m_bus", "l_bus"):
                if key in row:
                    row[key] = rename[row[key]]
    other = study(make_input(renamed))
    other.index = [next(k for k, v in rename.items() if v == n) for n in other.index]
    assert_same(reference, other)
