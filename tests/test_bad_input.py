"""Bad input: exit status 2, every problem located (sheet, row, column, value), nothing written."""

from __future__ import annotations

import copy

import pytest
from builders import transformer
from click.testing import CliRunner

from faultcalc import InputError, read_system, run_study
from faultcalc.cli import main

GOOD = {
    "buses": [{"bus": "HV", "kv": 12.47}, {"bus": "LV", "kv": 0.48}, {"bus": "PNL", "kv": 0.48}],
    "sources": [{"source": "U", "bus": "HV", "sc_mva": 200, "xr": 8, "slg_ka": 7}],
    "transformers": [transformer()],
    "cables": [
        {
            "cable": "C",
            "from_bus": "LV",
            "to_bus": "PNL",
            "length_ft": 100,
            "sets": 1,
            "r_ohm_per_kft": 0.05,
            "x_ohm_per_kft": 0.045,
            "r0_ohm_per_kft": 0.15,
            "x0_ohm_per_kft": 0.12,
        }
    ],
}


def edited(**changes):
    """GOOD with sheet -> function(sheets) edits applied."""
    sheets = copy.deepcopy(GOOD)
    for edit in changes.values():
        edit(sheets)
    return sheets


def set_cell(sheet, index, column, value):
    def edit(sheets):
        sheets[sheet][index][column] = value

    return edit


def drop_cell(sheet, index, column):
    def edit(sheets):
        sheets[sheet][index].pop(column)

    return edit


# (id, edit, expected sheet, row, column, value, words in the message)
CASES = [
    (
        "unknown bus",
        set_cell("cables", 0, "to_bus", "NOPE"),
        "cables",
        2,
        "to_bus",
        "NOPE",
        "no bus of that name",
    ),
    (
        "duplicate id",
        lambda s: s["buses"].append({"bus": "LV", "kv": 0.48}),
        "buses",
        5,
        "bus",
        "LV",
        "already used",
    ),
    (
        "duplicate id across sheets",
        set_cell("cables", 0, "cable", "T"),
        "cables",
        2,
        "cable",
        "T",
        "already used",
    ),
    (
        "missing required column",
        lambda s: [row.pop("z_pct") for row in s["transformers"]],
        "transformers",
        1,
        "z_pct",
        None,
        "required column is missing",
    ),
    (
        "text in numeric cell",
        set_cell("buses", 1, "kv", "four-eighty"),
        "buses",
        3,
        "kv",
        "four-eighty",
        "expected a number greater than 0",
    ),
    (
        "zero length",
        set_cell("cables", 0, "length_ft", 0),
        "cables",
        2,
        "length_ft",
        "0",
        "greater than 0",
    ),
    (
        "negative length",
        set_cell("cables", 0, "length_ft", -30),
        "cables",
        2,
        "length_ft",
        "-30",
        "greater than 0",
    ),
    (
        "zero kva",
        set_cell("transformers", 0, "kva", 0),
        "transformers",
        2,
        "kva",
        "0",
        "greater than 0",
    ),
    (
        "negative z_pct",
        set_cell("transformers", 0, "z_pct", -5.75),
        "transformers",
        2,
        "z_pct",
        "-5.75",
        "greater than 0",
    ),
    (
        "zero z_pct",
        set_cell("transformers", 0, "z_pct", 0),
        "transformers",
        2,
        "z_pct",
        "0",
        "greater than 0",
    ),
    (
        "both sc_mva and sc_ka",
        set_cell("sources", 0, "sc_ka", 9.3),
        "sources",
        2,
        "sc_mva, sc_ka",
        "9.3",
        "not more than one",
    ),
    (
        "neither sc_mva nor sc_ka",
        drop_cell("sources", 0, "sc_mva"),
        "sources",
        2,
        "sc_mva, sc_ka",
        None,
        "give sc_mva or sc_ka",
    ),
    (
        "both length units",
        set_cell("cables", 0, "length_m", 30),
        "cables",
        2,
        "length_ft, length_m",
        "30",
        "not more than one",
    ),
    (
        "neither impedance pair nor a size to look it up",
        lambda s: [s["cables"][0].pop(k) for k in ("r_ohm_per_kft", "x_ohm_per_kft")],
        "cables",
        2,
        "size",
        None,
        "needed to take R and X from the conductor tables",
    ),
    (
        "unknown conductor size",
        lambda s: s["cables"][0].update(
            {
                "r_ohm_per_kft": None,
                "x_ohm_per_kft": None,
                "size": "5/0",
                "material": "cu",
                "raceway": "pvc",
            }
        ),
        "cables",
        2,
        "size",
        "5/0",
        "expected an AWG size",
    ),
    (
        "metric size without its unit",
        lambda s: s["cables"][0].update(
            {
                "r_ohm_per_kft": None,
                "x_ohm_per_kft": None,
                "size": "95",
                "material": "cu",
                "raceway": "pvc",
            }
        ),
        "cables",
        2,
        "size",
        "95",
        "write mm2",
    ),
    (
        "raceway missing for a table lookup",
        lambda s: s["cables"][0].update(
            {"r_ohm_per_kft": None, "x_ohm_per_kft": None, "size": "4/0", "material": "cu"}
        ),
        "cables",
        2,
        "raceway",
        None,
        "needed to take R and X",
    ),
    (
        "unknown raceway",
        set_cell("cables", 0, "raceway", "cable tray"),
        "cables",
        2,
        "raceway",
        "cable tray",
        "one of pvc, aluminum, steel",
    ),
    (
        "half an impedance pair",
        drop_cell("cables", 0, "x_ohm_per_kft"),
        "cables",
        2,
        "x_ohm_per_kft",
        None,
        "required here because r_ohm_per_kft",
    ),
    (
        "bad winding",
        set_cell("transformers", 0, "lv_winding", "zigzag"),
        "transformers",
        2,
        "lv_winding",
        "zigzag",
        "one of D, Y, YN",
    ),
    (
        "bus cut off from every source",
        lambda s: s["buses"].append({"bus": "ISLAND", "kv": 0.48}),
        "buses",
        5,
        "bus",
        "ISLAND",
        "no path to any source",
    ),
    (
        "cable between voltage levels",
        set_cell("cables", 0, "from_bus", "HV"),
        "cables",
        2,
        "to_bus",
        "PNL",
        "different voltages",
    ),
    (
        "even clock number on a delta-wye",
        set_cell("transformers", 0, "clock_number", 6),
        "transformers",
        2,
        "clock_number",
        "6",
        "odd (1, 5, 7 or 11)",
    ),
    (
        "line-to-ground current too high to be physical",
        set_cell("sources", 0, "slg_ka", 50),
        "sources",
        2,
        "slg_ka",
        "50",
        "not physical",
    ),
    (
        "generator rated in hp",
        lambda s: s.__setitem__(
            "machines",
            [
                {
                    "machine": "G1",
                    "bus": "LV",
                    "kind": "generator",
                    "hp": 500,
                    "kv": 0.48,
                    "xd_pct": 15,
                    "xr": 20,
                }
            ],
        ),
        "machines",
        2,
        "hp",
        "500",
        "rated in kVA",
    ),
    (
        "machine on an unknown bus",
        lambda s: s.__setitem__(
            "machines",
            [
                {
                    "machine": "M1",
                    "bus": "MCC-9",
                    "kind": "induction_motor",
                    "hp": 50,
                    "kv": 0.46,
                    "xd_pct": 16.7,
                    "xr": 5,
                }
            ],
        ),
        "machines",
        2,
        "bus",
        "MCC-9",
        "no bus of that name",
    ),
    (
        "unknown machine kind",
        lambda s: s.__setitem__(
            "machines",
            [
                {
                    "machine": "M1",
                    "bus": "LV",
                    "kind": "turbine",
                    "kva": 50,
                    "kv": 0.46,
                    "xd_pct": 16.7,
                    "xr": 5,
                }
            ],
        ),
        "machines",
        2,
        "kind",
        "turbine",
        "one of induction_motor, synchronous_motor, generator",
    ),
    (
        "half a zero-sequence pair",
        drop_cell("cables", 0, "x0_ohm_per_kft"),
        "cables",
        2,
        "x0_ohm_per_kft",
        None,
        "required here because r0_ohm_per_kft",
    ),
    (
        "parallel transformers of different vector groups",
        lambda s: (
            s["transformers"].append(transformer(transformer="T2", clock_number=11)),
            s["transformers"][0].update({"clock_number": 1}),
        ),
        "transformers",
        3,
        "clock_number",
        "T2",
        "phase displacements do not add up",
    ),
    (
        "tie between zones of different displacement",
        lambda s: (
            s["buses"].append({"bus": "LV2", "kv": 0.48}),
            s["transformers"].append(transformer(transformer="T2", lv_bus="LV2", hv_winding="YN")),
            s.__setitem__(
                "impedances",
                [
                    {
                        "element": "TIE",
                        "from_bus": "LV",
                        "to_bus": "LV2",
                        "r_ohm": 0.001,
                        "x_ohm": 0.001,
                    }
                ],
            ),
        ),
        "impedances",
        2,
        None,
        "TIE",
        "phase displacements do not add up",
    ),
    (
        "three-winding transformer with its tertiary's kVA typed in MVA",
        lambda s: s.update(
            three_winding_transformers=[
                {
                    "transformer": "T3",
                    "h_bus": "HV",
                    "h_kva": 5000,
                    "h_kv": 12.47,
                    "h_winding": "D",
                    "m_bus": "LV",
                    "m_kva": 5000,
                    "m_kv": 0.48,
                    "m_winding": "YN",
                    "l_bus": "PNL",
                    "l_kva": 1000,
                    "l_kv": 0.48,
                    "l_winding": "YN",
                    "hm_z_pct": 6,
                    "hm_kva": 5000,
                    "hm_xr": 8,
                    "hl_z_pct": 7,
                    "hl_kva": 1,
                    "hl_xr": 8,
                    "ml_z_pct": 4,
                    "ml_kva": 1000,
                    "ml_xr": 6,
                }
            ]
        ),
        "three_winding_transformers",
        2,
        "hl_kva",
        1,
        "hl_kva is in kVA",
    ),
    (
        "missing buses sheet",
        lambda s: s.pop("buses"),
        "buses",
        None,
        None,
        None,
        "no 'buses' sheet",
    ),
]


def with_inverter(**changes):
    """An inverters sheet with one 250 kVA 480 V inverter on PNL (invented), ``changes``
    applied to its row (None leaves a column out)."""

    def edit(sheets):
        row = {"inverter": "PV", "bus": "PNL", "kva": 250, "kv": 0.48, "current_limit_pu": 1.2}
        row.update(changes)
        sheets["inverters"] = [{k: v for k, v in row.items() if v is not None}]

    return edit


# Inverters: each value no inverter has, located with the slip named (read/slips.py).
CASES += [
    (
        "inverter limit as a percent",
        with_inverter(current_limit_pu=120),
        "inverters",
        2,
        "current_limit_pu",
        120,
        "1.2 for 120 %",
    ),
    (
        "inverter limit below rated current",
        with_inverter(current_limit_pu=0.8),
        "inverters",
        2,
        "current_limit_pu",
        0.8,
        "outside the 1 to 2",
    ),
    ("inverter kv in volts", with_inverter(kv=480), "inverters", 2, "kv", 480, "volts"),
    (
        "inverter on an unknown bus",
        with_inverter(bus="NOPE"),
        "inverters",
        2,
        "bus",
        "NOPE",
        "no bus of that name",
    ),
    (
        "inverter cessation as a percent",
        with_inverter(cease_below_pu=50),
        "inverters",
        2,
        "cease_below_pu",
        50,
        "0.5 for 50 %",
    ),
    (
        "negative share without its share",
        with_inverter(behaviour="negative_share"),
        "inverters",
        2,
        "negative_share_pct",
        None,
        "needs the negative-sequence share",
    ),
    (
        "negative share of the whole limit",
        with_inverter(behaviour="negative_share", negative_share_pct=100),
        "inverters",
        2,
        "negative_share_pct",
        100,
        "leaves no positive-sequence current",
    ),
    (
        "inverter behaviour unknown",
        with_inverter(behaviour="grid_forming"),
        "inverters",
        2,
        "behaviour",
        "grid_forming",
        "positive, negative_share",
    ),
    (
        "inverter without its kva column",
        with_inverter(kva=None),
        "inverters",
        1,
        "kva",
        None,
        "required column is missing",
    ),
]


@pytest.mark.parametrize("case", CASES, ids=[c[0] for c in CASES])
def test_bad_input_is_located(make_input, tmp_path, case):
    _, edit, sheet, row, column, value, words = case
    sheets = copy.deepcopy(GOOD)
    edit(sheets)
    path = make_input(sheets)
    out = tmp_path / "results.xlsx"
    json_out = tmp_path / "results.json"
    result = CliRunner().invoke(main, ["study", str(path), "-o", str(out), "--json", str(json_out)])
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output
    assert not out.exists() and not json_out.exists()
    assert not list(tmp_path.glob(".results*"))  # no temporary file left behind
    with pytest.raises(InputError) as info:
        run_study(read_system(path))
    matching = [
        p
        for p in info.value.problems
        if p.sheet == sheet and p.row == row and p.column == column and words in p.message
    ]
    assert matching, [str(p) for p in info.value.problems]
    if value is not None:
        assert str(value) in str(matching[0].value)
    assert str(matching[0]) in result.output


def test_every_problem_is_listed_at_once(make_input):
    sheets = copy.deepcopy(GOOD)
    sheets["cables"][0]["to_bus"] = "NOPE"
    sheets["transformers"][0]["kva"] = "big"
    sheets["buses"][0]["kv"] = -1
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets))
    where = {(p.sheet, p.row, p.column) for p in info.value.problems}
    assert {("cables", 2, "to_bus"), ("transformers", 2, "kva"), ("buses", 2, "kv")} <= where


def test_the_good_case_is_good(make_input):
    # Guard for the table above: without the edit the input studies cleanly.
    result = run_study(read_system(make_input(copy.deepcopy(GOOD))))
    assert len(result.buses) == 3 and not result.warnings


def test_input_is_never_written(make_input, tmp_path):
    path = make_input(copy.deepcopy(GOOD), kind="xlsx")
    before = path.read_bytes()
    result = CliRunner().invoke(main, ["study", str(path), "-o", str(path)])
    assert result.exit_code == 1 and "it is the input" in result.output
    CliRunner().invoke(main, ["study", str(path), "-o", str(tmp_path / "r.xlsx")])
    assert path.read_bytes() == before
