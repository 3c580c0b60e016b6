"""Named cases, their envelope, and service labels (common practice, no source)."""

from __future__ import annotations

import json

import pytest
from builders import transformer
from click.testing import CliRunner
from openpyxl import load_workbook

from faultcalc import InputError, read_system, run_study
from faultcalc.cli import main


def sheets(cases):
    return {
        "buses": [
            {"bus": "HV", "kv": 12.47},
            {"bus": "A", "kv": 0.48},
            {"bus": "B", "kv": 0.48, "service": "yes", "device": "lvpcb", "rating_ka": 50},
        ],
        "sources": [{"source": "U", "bus": "HV", "sc_mva": 300, "xr": 10, "slg_ka": 12}],
        "transformers": [
            transformer(transformer="TA", lv_bus="A"),
            transformer(transformer="TB", lv_bus="B"),
        ],
        "impedances": [{"element": "TIE", "from_bus": "A", "to_bus": "B", "r_ohm": 0, "x_ohm": 0}],
        "machines": [
            {
                "machine": "M",
                "bus": "B",
                "kind": "induction_motor",
                "hp": 300,
                "kv": 0.46,
                "xd_pct": 16.7,
                "xr": 8,
            }
        ],
        "cases": cases,
    }


CASES = [
    {"case": "tie open", "element": "TIE", "column": "in_service", "value": "no"},
    {"case": "utility weak", "element": "U", "column": "sc_mva", "value": 100},
    {"case": "utility weak", "element": "U", "column": "slg_ka", "value": 4},
    {"case": "tx low impedance", "element": "TB", "column": "z_pct", "value": 5.32},
    {"case": "motor off", "element": "M", "column": "in_service", "value": "no"},
]


def test_each_case_is_studied_and_the_envelope_names_the_worst(make_input):
    result = run_study(read_system(make_input(sheets(CASES))))
    assert list(result.cases) == list(dict.fromkeys(c["case"] for c in CASES))
    base = result.buses.set_index("bus")
    tie_open = result.cases["tie open"].set_index("bus")
    weak = result.cases["utility weak"].set_index("bus")
    low = result.cases["tx low impedance"].set_index("bus")
    # Opening the tie halves the transformers feeding B; a weaker utility lowers every current;
    # a lower transformer impedance raises B's current.
    assert tie_open.loc["B", "i3ph_ka"] < base.loc["B", "i3ph_ka"]
    assert (weak.i3ph_ka < base.i3ph_ka).all()
    assert low.loc["B", "i3ph_ka"] > base.loc["B", "i3ph_ka"]
    env = result.envelope.set_index("bus")
    assert env.loc["B", "i3ph_case"] == "tx low impedance"
    assert env.loc["B", "i3ph_ka"] == pytest.approx(low.loc["B", "i3ph_ka"], rel=1e-12)
    assert env.loc["HV", "i3ph_case"] in ("base", "tx low impedance", "tie open", "motor off")


@pytest.mark.parametrize(
    "bad,column,words",
    [
        (
            {"case": "x", "element": "NOPE", "column": "z_pct", "value": 5},
            "element",
            "no bus or element",
        ),
        ({"case": "x", "element": "TA", "column": "colour", "value": 5}, "column", "not a column"),
        (
            {"case": "x", "element": "M", "column": "in_service", "value": "maybe"},
            "value",
            "yes or no",
        ),
        (
            {"case": "base", "element": "M", "column": "in_service", "value": "no"},
            "case",
            "'base' names",
        ),
    ],
)
def test_bad_case_rows_are_located(make_input, bad, column, words):
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets([bad])))
    p = info.value.problems[0]
    assert (p.sheet, p.row, p.column) == ("cases", 2, column) and words in p.message


def test_a_case_with_a_bad_value_names_the_case(make_input):
    bad = {"case": "typo", "element": "TB", "column": "z_pct", "value": "five"}
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets([bad])))
    p = info.value.problems[0]
    assert (p.sheet, p.row, p.column) == ("transformers", 3, "z_pct")
    assert "in case 'typo'" in p.message


def test_case_that_cuts_off_a_bus(make_input):
    cut = {"case": "no TB, tie open", "element": "TIE", "column": "in_service", "value": "no"}
    cut2 = {"case": "no TB, tie open", "element": "TB", "column": "in_service", "value": "no"}
    with pytest.raises(InputError) as info:
        run_study(read_system(make_input(sheets([cut, cut2]))))
    assert "in case 'no TB, tie open'" in info.value.problems[0].message


def test_json_and_workbook_carry_cases_envelope_and_labels(make_input, tmp_path):
    path = make_input(sheets(CASES))
    out, js = tmp_path / "r.xlsx", tmp_path / "r.json"
    result = CliRunner().invoke(main, ["study", str(path), "-o", str(out), "--json", str(js)])
    assert result.exit_code == 0, result.output
    doc = json.loads(js.read_text())
    assert [c["case"] for c in doc["cases"]] == list(dict.fromkeys(c["case"] for c in CASES))
    assert {"bus", "i3ph_ka", "i3ph_case", "duty_pct", "duty_case"} <= set(doc["envelope"][0])
    for entry in doc["buses"]:
        assert {
            "ip_ka",
            "iasym_ka",
            "tau_dc_ms",
            "rating_ka",
            "duty_ka",
            "duty_pct",
            "duty_status",
        } <= set(entry)
    book = load_workbook(out)
    assert {"Cases", "Envelope", "Equipment duty", "Label B"} <= set(book.sheetnames)
    label = "\n".join(str(c.value) for row in book["Label B"].iter_rows() for c in row if c.value)
    env = next(e for e in doc["envelope"] if e["bus"] == "B")
    worst = max(env[k] for k in ("i3ph_ka", "islg_ka", "ill_ka", "illg_ka"))
    assert f"{worst:.1f} kA" in label
    assert "110.24" in label and doc["study"]["calculated_at"][:10] in label


@pytest.mark.parametrize("kind", ["csv", "xlsx"])
def test_a_case_names_its_element_as_names_are_compared(make_input, kind):
    # "tb" and "t\u200bb" (a zero-width space inside) name TB as names.key compares names;
    # the case reads as if it said TB (common practice, no source).
    said = [
        {"case": "low", "element": "TB", "column": "z_pct", "value": 5.32},
        {"case": "low, lower case", "element": "tb", "column": "z_pct", "value": 5.32},
        {"case": "low, hidden", "element": "t\u200bb", "column": "z_pct", "value": 5.32},
    ]
    result = run_study(read_system(make_input(sheets(said), kind=kind)))
    low = result.cases["low"].i3ph_ka.tolist()
    assert result.cases["low, lower case"].i3ph_ka.tolist() == low
    assert result.cases["low, hidden"].i3ph_ka.tolist() == low
    assert low != result.buses.i3ph_ka.tolist()
