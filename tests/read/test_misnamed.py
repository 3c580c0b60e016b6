"""Misnamed sheets and buses, and warnings that reach the engineer with the errors (#12).

Invented inputs; the expectations are the behaviour the issue asks for (common practice, no
source).
"""

from __future__ import annotations

import copy

import pytest
from builders import transformer
from click.testing import CliRunner

from faultcalc import InputError, read_system
from faultcalc.cli import main

BASE = {
    "buses": [{"bus": "HV", "kv": 12.47}, {"bus": "SWBD-1", "kv": 0.48}],
    "sources": [{"source": "U", "bus": "HV", "sc_mva": 250, "xr": 10}],
    "transformers": [transformer(lv_bus="SWBD-1")],
}
MOTOR = {
    "machine": "M1",
    "bus": "SWBD-1",
    "kind": "induction_motor",
    "hp": 100,
    "kv": 0.46,
    "xd_pct": 16.7,
    "xr": 8,
}


@pytest.mark.parametrize("kind", ["csv", "xlsx"])
@pytest.mark.parametrize(
    "name,meant",
    [
        ("transformer", "transformers"),
        ("Transformer", "transformers"),
        ("motors", "machines"),
        ("machine", "machines"),
        ("cabels", "cables"),
        ("case", "cases"),
    ],
)
def test_a_sheet_named_close_to_a_known_one_is_an_error(make_input, kind, name, meant):
    sheets = copy.deepcopy(BASE)
    sheets[name] = sheets.pop("transformers") if meant == "transformers" else [MOTOR]
    if meant == "cables":
        sheets[name] = [{"cable": "C", "from_bus": "HV", "to_bus": "SWBD-1"}]
    if meant == "cases":
        sheets[name] = [{"case": "x", "element": "U", "column": "xr", "value": 5}]
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets, kind=kind))
    found = [p for p in info.value.problems if p.sheet == name.lower()]
    assert len(found) == 1 and f"those of '{meant}': rename it '{meant}'" in found[0].message


@pytest.mark.parametrize("kind", ["csv", "xlsx"])
def test_an_unrelated_sheet_stays_a_warning(make_input, kind):
    sheets = copy.deepcopy(BASE)
    sheets["revision history"] = [{"rev": 1, "by": "someone"}]
    system = read_system(make_input(sheets, kind=kind))
    assert any("unknown sheet, ignored" in w for w in system.warnings)


def test_the_right_sheet_beside_a_near_one_is_not_guessed(make_input):
    # Both 'machines' and 'motor' are there: 'motor' is only an unknown sheet.
    sheets = copy.deepcopy(BASE)
    sheets["machines"] = [MOTOR]
    sheets["motor"] = [{"note": "old list"}]
    system = read_system(make_input(sheets))
    assert any("sheet 'motor'" in w and "unknown sheet" in w for w in system.warnings)


@pytest.mark.parametrize("kind", ["csv", "xlsx"])
def test_an_unknown_bus_gets_the_nearest_name(make_input, kind):
    sheets = copy.deepcopy(BASE)
    sheets["machines"] = [dict(MOTOR, bus="SWBD1")]
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets, kind=kind))
    (p,) = info.value.problems
    assert (p.sheet, p.column, p.value) == ("machines", "bus", "SWBD1")
    assert "did you mean 'SWBD-1'?" in p.message


def test_no_suggestion_when_nothing_is_near(make_input):
    sheets = copy.deepcopy(BASE)
    sheets["machines"] = [dict(MOTOR, bus="PUMPHOUSE")]
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets))
    assert "did you mean" not in info.value.problems[0].message


def test_a_missing_buses_sheet_is_one_problem(make_input):
    sheets = copy.deepcopy(BASE)
    del sheets["buses"]
    sheets["machines"] = [MOTOR, dict(MOTOR, machine="M2")]
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets))
    assert len(info.value.problems) == 1
    assert "no 'buses' sheet" in info.value.problems[0].message


def test_a_bus_with_a_bad_row_is_not_called_missing(make_input):
    # The bus row's own problem is reported; the elements on it add no "no bus" message.
    sheets = copy.deepcopy(BASE)
    sheets["buses"][1]["kv"] = "abc"
    sheets["machines"] = [MOTOR]
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets))
    (p,) = info.value.problems
    assert (p.sheet, p.column) == ("buses", "kv")


def test_warnings_are_printed_with_the_errors(make_input, tmp_path):
    sheets = copy.deepcopy(BASE)
    sheets["notes"] = [{"text": "anything"}]  # an unknown sheet: a warning
    sheets["machines"] = [dict(MOTOR, bus="NOWHERE")]  # an error
    run = CliRunner().invoke(main, ["study", str(make_input(sheets)), "-o", str(tmp_path / "r")])
    assert run.exit_code == 2
    assert "warning: sheet 'notes'" in run.output and "NOWHERE" in run.output


def test_warnings_are_printed_when_the_study_finds_the_problem(make_input, tmp_path):
    # An island without a source is found by the study, after reading: the reader's warnings
    # still reach the engineer.
    sheets = copy.deepcopy(BASE)
    sheets["buses"].append({"bus": "ISLAND", "kv": 0.48})
    sheets["notes"] = [{"text": "anything"}]
    run = CliRunner().invoke(main, ["study", str(make_input(sheets)), "-o", str(tmp_path / "r")])
    assert run.exit_code == 2 and "ISLAND" in run.output
    assert "warning: sheet 'notes'" in run.output


def test_a_second_machine_list_beside_machines_is_refused(make_input):
    # A 'motors' sheet with the machine columns beside a 'machines' sheet: its motors would be
    # left out (non-conservative), so it is refused though 'machines' is there.
    sheets = copy.deepcopy(BASE)
    sheets["machines"] = [dict(MOTOR, machine="G", kind="generator", kva=500, hp=None, kv=0.48)]
    sheets["motors"] = [dict(MOTOR, machine="M500", hp=500)]
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets))
    (p,) = info.value.problems
    assert p.sheet == "motors" and "those of 'machines'" in p.message


@pytest.mark.parametrize(
    "name,columns",
    [
        ("settings", {"relay": "R1", "pickup_a": 400}),  # relay settings, not the study sheet
        ("lines", {"drawing": "E-101", "revision": "C"}),
        ("cover", {"project": "invented", "engineer": "someone"}),
    ],
)
def test_a_sheet_with_a_near_name_but_other_columns_stays_a_warning(make_input, name, columns):
    sheets = copy.deepcopy(BASE)
    sheets[name] = [columns]
    system = read_system(make_input(sheets))
    assert any(f"sheet '{name}'" in w and "unknown sheet, ignored" in w for w in system.warnings)
