"""Every bus reference of every sheet is checked, and every element goes with its bus: the rule
written once per sheet in three places (BUS_REFERENCES, rules.check, service.BUS_COLUMNS) is
tested here for all of them, so that a new sheet cannot miss one. The rows are the template's
worked example (invented data, faultcalc/schema/examples.py)."""

from __future__ import annotations

import copy

import pytest

from faultcalc import read_system
from faultcalc.errors import InputError
from faultcalc.read import service
from faultcalc.read.references import BUS_REFERENCES
from faultcalc.schema.examples import EXAMPLES

REFERENCES = [(sheet, column) for sheet, columns in BUS_REFERENCES for column in columns]


def test_every_sheet_with_buses_goes_with_its_bus():
    assert service.BUS_COLUMNS == dict(BUS_REFERENCES)


@pytest.mark.parametrize("sheet, column", REFERENCES, ids=[f"{s}.{c}" for s, c in REFERENCES])
def test_a_misnamed_bus_is_refused_where_it_is(make_input, sheet, column):
    sheets = copy.deepcopy(EXAMPLES)
    row = sheets[sheet][0]
    row[column] = "NO-SUCH-BUS"
    with pytest.raises(InputError) as caught:
        read_system(make_input(sheets))
    assert any(
        (p.sheet, p.row, p.column, p.value) == (sheet, 2, column, "NO-SUCH-BUS")
        for p in caught.value.problems
    ), caught.value.problems
