"""The cable data check: each likely-cause rule fires on a cable built with that mistake, and
stays quiet on correct rows of every size (rules: README's cable check; common practice, no
source; table values: NFPA 70 Chapter 9 Table 9)."""

from __future__ import annotations

import json

import pytest
from builders import transformer
from click.testing import CliRunner

from faultcalc import conductors, read_system, run_study
from faultcalc.cli import main
from faultcalc.conductors.cablecheck import check_cable
from faultcalc.model import Cable

SIZES = list(conductors.nec_table())


def cable(size="4/0", material="cu", raceway="pvc", r=None, x=None, sets=1, per_km=False):
    table = conductors.table_as_printed(size, material, raceway)
    r = table.r_ohm_per_kft if r is None else r
    x = table.x_ohm_per_kft if x is None else x
    unit = "km" if per_km else "kft"
    return Cable(
        "C1",
        "A",
        "B",
        length_ft=100,
        sets=sets,
        size=size,
        material=material,
        raceway=raceway,
        row=2,
        **{f"r_ohm_per_{unit}": r, f"x_ohm_per_{unit}": x},
    )


# Every row of the table (NFPA 70 lists no 14 AWG aluminium), every raceway, 1 to 4 sets.
ROWS = [
    (size, material)
    for size in SIZES
    for material in ("cu", "al")
    if not (material == "al" and size == "14")
]


@pytest.mark.parametrize("size,material", ROWS)
@pytest.mark.parametrize("raceway", ["pvc", "aluminum", "steel"])
@pytest.mark.parametrize("sets", [1, 2, 4])
def test_quiet_on_correct_rows_of_every_size(size, material, raceway, sets):
    result = check_cable(cable(size, material, raceway, sets=sets))
    assert not result.flagged and "agrees" in result.reason


@pytest.mark.parametrize("size", SIZES[1:])
def test_per_km_typed_as_per_kft(size):
    t = conductors.table_as_printed(size, "cu", "pvc")
    result = check_cable(cable(size, r=t.r_ohm_per_kft / 0.3048, x=t.x_ohm_per_kft / 0.3048))
    assert result.flagged and "per kilometre typed as ohms per 1000 ft" in result.reason


def test_per_kft_typed_as_per_km():
    t = conductors.table_as_printed("500", "cu", "pvc")
    result = check_cable(cable("500", r=t.r_ohm_per_kft, x=t.x_ohm_per_kft, per_km=True))
    assert result.flagged and "ohms per 1000 ft typed as ohms per km" in result.reason


@pytest.mark.parametrize("size", SIZES[1:])
def test_aluminium_values_for_a_copper_cable(size):
    al = conductors.table_as_printed(size, "al", "pvc")
    result = check_cable(cable(size, "cu", r=al.r_ohm_per_kft))
    assert result.flagged and "aluminium values for a copper cable" in result.reason


def test_copper_values_for_an_aluminium_cable():
    cu = conductors.table_as_printed("350", "cu", "pvc")
    result = check_cable(cable("350", "al", r=cu.r_ohm_per_kft))
    assert result.flagged and "copper values for a aluminium cable".replace(
        "a a", "an a"
    ) in result.reason.replace("a aluminium", "an aluminium")


@pytest.mark.parametrize("sets", [2, 3, 4, 6])
def test_sets_divided_twice_and_multiplied(sets):
    t = conductors.table_as_printed("500", "cu", "steel")
    divided = check_cable(
        cable("500", raceway="steel", r=t.r_ohm_per_kft / sets, x=t.x_ohm_per_kft / sets, sets=sets)
    )
    assert divided.flagged and "divided twice" in divided.reason
    multiplied = check_cable(
        cable("500", raceway="steel", r=t.r_ohm_per_kft * sets, x=t.x_ohm_per_kft * sets, sets=sets)
    )
    assert multiplied.flagged and f"multiplied by the {sets} sets" in multiplied.reason


@pytest.mark.parametrize("size", SIZES)
def test_magnetic_raceway_values_for_pvc_and_back(size):
    steel = conductors.table_as_printed(size, "cu", "steel")
    pvc = conductors.table_as_printed(size, "cu", "pvc")
    a = check_cable(cable(size, raceway="pvc", r=steel.r_ohm_per_kft, x=steel.x_ohm_per_kft))
    assert a.flagged and "values for steel conduit on a cable in pvc" in a.reason
    b = check_cable(cable(size, raceway="steel", r=pvc.r_ohm_per_kft, x=pvc.x_ohm_per_kft))
    assert b.flagged and "conduit on a cable in steel" in b.reason


def test_not_physically_possible_for_the_area():
    # 500 kcmil copper cannot have 0.010 ohm/1000 ft: its DC resistance at 20 C is about 0.021
    # (IEC 60028 resistivity over the kcmil area).
    result = check_cable(cable("500", r=0.010))
    assert result.flagged and "not physically possible" in result.reason


def test_no_rule_fits():
    result = check_cable(cable("4/0", r=0.062 * 1.45))
    assert result.flagged and "no common mistake fits" in result.reason


def test_cables_above_1kv_and_without_a_size_are_not_compared():
    assert "1 kV and below" in check_cable(cable(), bus_kv=13.8).reason
    c = Cable("C1", "A", "B", length_ft=10, r_ohm_per_kft=0.1, x_ohm_per_kft=0.05, row=2)
    assert "no table row" in check_cable(c).reason and not check_cable(c).flagged


def _system(make_input, cables):
    used = {c["to_bus"] for c in cables}
    return make_input(
        {
            "buses": [{"bus": "HV", "kv": 12.47}, {"bus": "LV", "kv": 0.48}]
            + [{"bus": b, "kv": 0.48} for b in ("P1", "P2") if b in used],
            "sources": [{"source": "U", "bus": "HV", "sc_mva": 300, "xr": 10, "slg_ka": 12}],
            "transformers": [transformer()],
            "cables": cables,
        }
    )


def test_check_cables_command(make_input, tmp_path):
    path = _system(
        make_input,
        [
            {
                "cable": "GOOD",
                "from_bus": "LV",
                "to_bus": "P1",
                "length_ft": 100,
                "size": "4/0",
                "material": "cu",
                "raceway": "pvc",
                "r_ohm_per_kft": 0.062,
                "x_ohm_per_kft": 0.041,
            },
            {
                "cable": "KM",
                "from_bus": "LV",
                "to_bus": "P2",
                "length_ft": 100,
                "size": "4/0",
                "material": "cu",
                "raceway": "pvc",
                "r_ohm_per_kft": 0.2034,
                "x_ohm_per_kft": 0.1345,
            },
        ],
    )
    out = tmp_path / "check.json"
    result = CliRunner().invoke(main, ["check-cables", str(path), "--json", str(out)])
    assert result.exit_code == 0, result.output
    assert "1 flagged" in result.output
    doc = json.loads(out.read_text())
    fields = {
        "cable",
        "flagged",
        "reason",
        "given_r_ohm_per_kft",
        "given_x_ohm_per_kft",
        "table_r_ohm_per_kft",
        "table_x_ohm_per_kft",
    }
    assert all(fields <= set(entry) for entry in doc["cables"])
    assert [e["flagged"] for e in doc["cables"]] == [False, True]
    assert doc["cables"][1]["table_r_ohm_per_kft"] == 0.062
    strict = CliRunner().invoke(main, ["check-cables", str(path), "--tolerance", "0.1"])
    assert strict.exit_code == 0
    bad = CliRunner().invoke(main, ["check-cables", str(tmp_path / "missing.xlsx")])
    assert bad.exit_code == 2


def test_blank_r_and_x_come_from_the_table(make_input):
    typed = _system(
        make_input,
        [
            {
                "cable": "F",
                "from_bus": "LV",
                "to_bus": "P1",
                "length_ft": 150,
                "sets": 2,
                "size": "350",
                "material": "cu",
                "raceway": "steel",
                "r_ohm_per_kft": 0.039,
                "x_ohm_per_kft": 0.050,
            }
        ],
    )
    blank = _system(
        make_input,
        [
            {
                "cable": "F",
                "from_bus": "LV",
                "to_bus": "P1",
                "length_ft": 150,
                "sets": 2,
                "size": "350 kcmil",
                "material": "CU",
                "raceway": "Steel",
            }
        ],
    )
    a = run_study(read_system(typed)).buses.set_index("bus")
    result = run_study(read_system(blank))
    b = result.buses.set_index("bus")
    assert b.loc["P1", "i3ph_ka"] == pytest.approx(a.loc["P1", "i3ph_ka"], rel=1e-12)
    echo = result.elements.set_index("element").loc["F", "input"]
    assert "NFPA 70 Table 9, 350 kcmil cu in steel conduit" in echo
    assert result.cable_checks.empty  # nothing typed, nothing to check


def test_conductor_temperature_setting(make_input):
    cables = [
        {
            "cable": "F",
            "from_bus": "LV",
            "to_bus": "P1",
            "length_ft": 300,
            "size": "1/0",
            "material": "cu",
            "raceway": "pvc",
        }
    ]
    hot = run_study(read_system(_system(make_input, cables)))
    path = _system(make_input, cables)
    (path / "study.csv").write_text("setting,value\nconductor_temp_c,20\n")
    cold = run_study(read_system(path))
    # Lower temperature, lower resistance, higher fault current (IEC 60028 coefficient).
    assert cold.buses.loc[2, "i3ph_ka"] > hot.buses.loc[2, "i3ph_ka"]
    assert "20 C" in cold.basis.method
