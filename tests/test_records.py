"""Column-stored element rows read back as the same objects as the rows they were made from.

Check values: the objects themselves (common practice (no source): a container must return
what was put in).
"""

import math

import numpy as np
import pytest

from faultcalc.model import Bus, Cable, Machine, Settings, System
from faultcalc.model.records import Records


def test_columns_read_back_as_objects_with_none_and_int():
    records = Records(
        Cable,
        {
            "cable": ["C1", "C2"],
            "from_bus": ["A", "B"],
            "to_bus": ["B", "C"],
            "length_m": np.array([10.0, math.nan]),
            "length_ft": np.array([math.nan, 30.0]),
            "sets": np.array([1.0, 2.0]),
            "r_ohm_per_km": np.array([0.1, 0.2]),
            "x_ohm_per_km": np.array([0.08, 0.09]),
        },
    )
    first, second = records
    assert first == Cable("C1", "A", "B", length_m=10.0, r_ohm_per_km=0.1, x_ohm_per_km=0.08)
    assert second.length_m is None and second.length_ft == 30.0
    assert type(second.sets) is int and second.sets == 2
    assert records[1] is second  # objects are made once
    assert records == (first, second)
    assert records.array("length_m")[1] != records.array("length_m")[1]  # NaN for None


def test_objects_give_columns_and_defaults():
    machines = (
        Machine("M1", "A", "induction_motor", 0.48, 16.7, 6.0, kva=100.0),
        Machine("M2", "A", "generator", 0.48, 12.0, 20.0, kva=500.0, count=2),
    )
    records = Records.of(Machine, machines)
    assert records.column("count") == [1, 2]
    assert records.array("hp").tolist() != records.array("hp").tolist()  # NaN, NaN
    assert tuple(records) == machines
    empty = Records(Bus, {"bus": ["A"], "kv": [0.48]})
    assert empty.column("service") == ["no"] and empty[0].service == "no"
    with pytest.raises(ValueError):
        Records(Bus, {"bus": ["A", "B"], "kv": [0.48]})
    with pytest.raises(ValueError):
        Records(Bus, {"bus": ["A"], "kv": [0.48], "volts": [480]})


def test_system_holds_records_whatever_it_is_given():
    system = System(Settings(), buses=(Bus("A", 0.48),))
    assert isinstance(system.buses, Records) and isinstance(system.cables, Records)
    assert system.buses == (Bus("A", 0.48),) and not system.cables
    assert system.bus_kv() == {"A": 0.48}
