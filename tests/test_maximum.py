"""StudyResult.maximum: each bus's maximum available fault current over the base case and every
case, the fault type and case that give it (the Summary sheet and the report read it)."""

import math

import numpy as np
import pytest

from faultcalc import read_system, run_study, sample_path
from faultcalc.results import MAXIMUM_COLUMNS
from faultcalc.solve.duty import STATUS_NONE

FAULTS = {"3ph": "i3ph_ka", "slg": "islg_ka", "ll": "ill_ka", "llg": "illg_ka"}


@pytest.fixture(scope="module")
def result():
    return run_study(read_system(sample_path()))


def test_maximum_is_the_largest_of_every_table(result):
    # common practice (no source): the maximum available current at a bus is the largest of
    # the fault types over every case studied; checked here against the case tables themselves
    tables = {"base": result.buses, **result.cases}
    assert len(tables) > 1  # the sample has cases: the check is not of the base alone
    assert list(result.maximum.columns) == list(MAXIMUM_COLUMNS)
    for row in result.maximum.itertuples():
        values = {
            (case, fault): float(t.loc[t.bus == row.bus, column].iloc[0])
            for case, t in tables.items()
            if (t.bus == row.bus).any()
            for fault, column in FAULTS.items()
        }
        finite = {k: v for k, v in values.items() if math.isfinite(v)}
        best = max(finite.values())
        assert row.max_ka == best
        assert values[(row.max_case, row.max_fault)] == best
        t = tables[row.max_case]
        assert row.xr == float(t.loc[t.bus == row.bus, "xr"].iloc[0])
        peaks = [float(t.loc[t.bus == row.bus, "ip_ka"].iloc[0]) for t in tables.values()]
        assert row.ip_ka == np.nanmax(peaks)


def test_maximum_duty_status_is_the_worst_over_the_cases(result):
    statuses = dict(zip(result.duty.bus, result.duty.duty_status, strict=True))
    for row in result.maximum.itertuples():
        assert row.duty_status == statuses.get(row.bus, STATUS_NONE)
    assert set(statuses) <= set(result.maximum.bus)


def test_summary_keeps_the_maximum_of_the_buses_it_keeps(result):
    cut = result.summary(2)
    assert list(cut.maximum.bus) == list(cut.buses.bus)
    whole = result.maximum.set_index("bus")
    for row in cut.maximum.itertuples():
        assert row.max_ka == whole.loc[row.bus, "max_ka"]
