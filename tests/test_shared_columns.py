"""The bus tables' shared read-only columns (faultcalc/floatcolumns.py): the tables of a study
with cases share the columns that hold no value or the same values, and a user who edits one
table in place changes that table only (pandas copy-on-write), never another table, another
column or the next study of the same input. Behaviour checks: common practice (no source)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from faultcalc import read_system, run_study, sample_path
from faultcalc.floatcolumns import at_rows, blank, column, frame


@pytest.fixture(scope="module")
def system():
    return read_system(sample_path("double_ended_480v"))  # an invented scenario, with cases


def test_the_tables_share_what_they_hold_alike(system):
    result = run_study(system)
    base, case = result.buses, next(iter(result.cases.values()))
    assert result.cases, "the sample has cases"

    def shared(a, b):
        return np.shares_memory(a.to_numpy(), b.to_numpy())

    assert shared(base.ib_ka, case.ib_ka) and shared(base.ib_ka, base.ik_ka)  # no value
    assert shared(base.r1_ohm, base.r2_ohm) and shared(base.x1_ohm, base.x2_ohm)  # Z2 = Z1
    assert shared(base.kv, case.kv)  # the case changes no bus
    assert shared(base.prefault_pu, case.prefault_pu)  # 1.0 pu at every bus
    assert not shared(base.i3ph_ka, case.i3ph_ka)
    assert np.isnan(base.ib_ka).all()


def test_an_edit_in_place_changes_that_table_only(system):
    result = run_study(system)
    base, case = result.buses, next(iter(result.cases.values()))
    before_case = case.copy()
    r1 = base.r1_ohm.to_numpy().copy()
    base.loc[0, "ib_ka"] = 1.0
    base.loc[0, "r2_ohm"] = 5.0
    base.loc[0, "kv"] = 99.0
    base.loc[1, "prefault_pu"] = 1.1
    base.fillna({"ik_ka": 0.0}, inplace=True)
    assert base.loc[0, ["ib_ka", "r2_ohm", "kv", "ik_ka"]].tolist() == [1.0, 5.0, 99.0, 0.0]
    assert np.isnan(base.loc[0, "idc_ka"]) and np.array_equal(base.r1_ohm.to_numpy(), r1)
    pd.testing.assert_frame_equal(case, before_case)
    again = run_study(system).buses  # the same System: its kept columns are untouched
    assert np.isnan(again.ib_ka).all() and np.isnan(again.ik_ka).all()
    assert again.kv.iloc[0] == before_case.kv.iloc[0]
    assert (again.prefault_pu == before_case.prefault_pu).all()
    assert np.array_equal(again.r2_ohm.to_numpy(), r1)  # Z2 = Z1 of the base case


def test_a_write_past_pandas_fails_loudly():
    with pytest.raises(ValueError, match="read-only"):
        blank(3)[0] = 1.0
    table = frame({"a": blank(2), "b": np.ones(2)}, ["a", "b"])
    with pytest.raises(ValueError, match="read-only"):
        np.asarray(table["a"].array)[0] = 1.0
    with pytest.raises(ValueError, match="read-only"):
        column(np.ones(2))  # a writeable array is never shared


def test_a_column_of_a_few_rated_rows():
    values = at_rows(4, {3: 2.0, 1: 0.5})
    assert np.isnan(values[[0, 2]]).all() and values[1] == 0.5 and values[3] == 2.0
    assert values.flags.writeable and at_rows(4, {}) is blank(4)
