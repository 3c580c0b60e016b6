"""What governs: each device's worst duty over the base case and every case, its colouring on
every sheet that shows duty, the command's summary and exit status 3, and the service labels'
case and fault type (a case can be left out of the labels).

The system is the bundled sample double_ended_480v (invented data) with its tie entered as a
100 ohm reactance in the base case (next to open: about 3 A at 480 V) and a case that closes
it. Check values: closing the tie parallels the two 2000 kVA transformers behind each 480 V
bus, which nearly doubles its fault current (circuit theory, common practice (no source));
every other figure is compared with the study's own per-case tables, by the rule that the
worst is the largest over the base case and the cases (common practice (no source)).
"""

from __future__ import annotations

import csv
import json

import pytest
from click.testing import CliRunner
from openpyxl import load_workbook

from faultcalc import InputError, read_system, results, run_study, sample_path
from faultcalc.cli import main
from faultcalc.report import workbook
from faultcalc.solve import duty

OVER_FILL = workbook.STATUS_FILL[duty.STATUS_OVER].fgColor.rgb
NEAR_FILL = workbook.STATUS_FILL[duty.STATUS_NEAR].fgColor.rgb
FOUR = ("i3ph_ka", "islg_ka", "ill_ka", "illg_ka")
WORDS = {"i3ph_ka": "3-phase", "islg_ka": "line-to-ground", "ill_ka": "line-to-line"}
WORDS["illg_ka"] = "double line-to-ground"


def sample_sheets() -> dict[str, list[dict]]:
    folder = sample_path("double_ended_480v")
    sheets = {}
    for path in sorted(folder.glob("*.csv")):
        with path.open(newline="", encoding="utf-8") as handle:
            sheets[path.stem] = list(csv.DictReader(handle))
    return sheets


def tie_case_sheets(label: str | None = None, extra_case: bool = False) -> dict[str, list[dict]]:
    """The sample with TIE-1 open (100 ohm) in the base case and closed in case 'tie closed'."""
    sheets = sample_sheets()
    for row in sheets["impedances"]:
        if row["element"] == "TIE-1":
            row["x_ohm"] = "100"
    cases = [{"case": "tie closed", "element": "TIE-1", "column": "x_ohm", "value": "0"}]
    if label is not None:
        cases[0]["label"] = label
    if extra_case:  # a case that changes nothing at 480 V worth noting
        cases.append({"case": "utility X/R 10", "element": "UTILITY", "column": "xr", "value": 10})
    sheets["cases"] = cases
    return sheets


@pytest.fixture(scope="module")
def tie_input(tmp_path_factory):
    from conftest import write_csv_folder

    return write_csv_folder(tmp_path_factory.mktemp("tie") / "in", tie_case_sheets())


@pytest.fixture(scope="module")
def tie_result(tie_input):
    return run_study(read_system(tie_input))


@pytest.fixture(scope="module")
def tie_run(tie_input, tmp_path_factory):
    out = tmp_path_factory.mktemp("run")
    xlsx, js = out / "r.xlsx", out / "r.json"
    args = ["study", str(tie_input), "-o", str(xlsx), "--json", str(js), "--fail-on-overduty"]
    run = CliRunner().invoke(main, args)
    return run, load_workbook(xlsx), json.loads(js.read_text(encoding="utf-8"))


def rows_of(ws) -> list[dict]:
    headers = [c.value for c in ws[1]]
    out = []
    for cells in ws.iter_rows(min_row=2):
        if cells[0].value is None:
            break
        out.append({h: c for h, c in zip(headers, cells, strict=True)})
    return out


def fill(cell) -> str | None:
    return cell.fill.fgColor.rgb if cell.fill.fill_type == "solid" else None


def test_the_case_alone_exceeds_the_rating(tie_result):
    base = tie_result.buses.set_index("bus")
    closed = tie_result.cases["tie closed"].set_index("bus")
    for bus in ("SUB-A", "SUB-B"):
        # Paralleling the transformers: well over 1.5 x the base current (circuit theory).
        assert closed.loc[bus, "i3ph_ka"] > 1.5 * base.loc[bus, "i3ph_ka"]
        assert base.loc[bus, "duty_pct"] < 100 < closed.loc[bus, "duty_pct"]


def test_worst_duty_names_the_case_and_the_fault(tie_result):
    closed = tie_result.cases["tie closed"].set_index("bus")
    base = tie_result.buses.set_index("bus")
    worst = tie_result.duty.set_index("bus")
    assert set(worst.index) == {"SUB-A", "SUB-B", "DP-1", "MCC-B1"}  # every rated bus
    for bus in worst.index:
        tables = {"base": base, "tie closed": closed}
        case = max(tables, key=lambda n: tables[n].loc[bus, "duty_pct"])
        row = worst.loc[bus]
        assert row.duty_case == case
        assert row.duty_pct == tables[case].loc[bus, "duty_pct"]
        assert row.duty_fault == tables[case].loc[bus, "duty_fault"]
        assert row.duty_status == duty.status(row.duty_pct)
        assert row.base_duty_pct == base.loc[bus, "duty_pct"]
        # The duty is the factor x the current of the fault type named (README, solve/duty.py).
        current = tables[case].loc[bus, "i3ph_ka" if row.duty_fault == "3ph" else "islg_ka"]
        assert row.duty_ka == pytest.approx(row.mf * current, rel=1e-12)
    assert worst.loc["SUB-A", "duty_status"] == duty.STATUS_OVER
    assert (
        tie_result.envelope.set_index("bus").loc["SUB-A", "duty_fault"]
        == (worst.loc["SUB-A", "duty_fault"])
    )


def test_equipment_duty_sheet_row_names_the_case_and_is_coloured(tie_run, tie_result):
    _, book, _ = tie_run
    rows = {r["Bus"].value: r for r in rows_of(book["Equipment duty"])}
    worst = tie_result.duty.set_index("bus")
    for bus in ("SUB-A", "SUB-B"):
        row = rows[bus]
        assert row["Case giving the duty"].value == "tie closed"
        assert row["Duty, % of rating"].value == pytest.approx(worst.loc[bus, "duty_pct"])
        assert row["Status"].value == duty.STATUS_OVER
        assert row["Status in the base case"].value == duty.STATUS_BELOW
        assert (
            row["Fault giving the duty"].value == workbook.FAULT_WORDS[worst.loc[bus, "duty_fault"]]
        )
        assert all(fill(c) == OVER_FILL for c in row.values())


def test_every_sheet_that_shows_duty_colours_the_exceeding_rows(tie_run):
    _, book, _ = tie_run
    faults = {r["Bus"].value: r for r in rows_of(book["Fault currents"])}
    assert faults["SUB-A"]["Worst duty in case"].value == "tie closed"
    assert faults["SUB-A"]["Duty status"].value == duty.STATUS_BELOW  # the base case's
    assert fill(faults["SUB-A"]["Bus"]) == OVER_FILL  # coloured by the worst over the cases
    assert fill(faults["MV-MAIN"]["Bus"]) is None
    cases = [r for r in rows_of(book["Cases"]) if r["Bus"].value == "SUB-A"]
    by_case = {r["Case"].value: r for r in cases}
    assert fill(by_case["tie closed"]["Duty, % of rating"]) == OVER_FILL
    assert fill(by_case["base"]["Duty, % of rating"]) is None
    envelope = {r["Bus"].value: r for r in rows_of(book["Envelope"])}
    assert fill(envelope["SUB-A"]["Bus"]) == OVER_FILL
    assert envelope["SUB-A"]["Worst duty status"].value == duty.STATUS_OVER


def test_summary_counts_and_names_the_worst_and_exits_3(tie_run, tie_result):
    run, _, doc = tie_run
    assert run.exit_code == 3, run.output
    worst = tie_result.duty.sort_values("duty_pct", ascending=False).iloc[0]
    assert "2 device(s) of 4 exceed their rating" in run.output
    assert f"{worst.bus}, {worst.duty_pct:.1f} % of its rating in case 'tie closed'" in run.output
    # The outputs are written all the same, and the JSON says the same.
    assert doc["equipment_duty"]["devices_over_rating"] == 2
    rows = {r["bus"]: r for r in doc["equipment_duty"]["rows"]}
    assert rows["SUB-A"]["duty_case"] == "tie closed"
    assert rows["SUB-A"]["duty_status"] == duty.STATUS_OVER


def test_without_the_option_the_exit_status_is_0(tie_input, tmp_path):
    run = CliRunner().invoke(main, ["study", str(tie_input), "-o", str(tmp_path / "r.xlsx")])
    assert run.exit_code == 0, run.output
    assert "2 device(s) of 4 exceed their rating" in run.output


def test_option_exits_0_when_nothing_exceeds(tmp_path):
    # plant_480v: every device below its rating in the base case and every case (its Equipment
    # duty sheet; checked here against the study's own status column).
    result = run_study(read_system(sample_path("plant_480v")))
    assert (result.duty.duty_status != duty.STATUS_OVER).all()
    args = ["study", str(sample_path("plant_480v")), "-o", str(tmp_path / "r.xlsx")]
    run = CliRunner().invoke(main, [*args, "--fail-on-overduty"])
    assert run.exit_code == 0, run.output
    assert "no device of 4 exceeds its rating" in run.output


def expected_label(tables: dict, bus: str) -> tuple[float, str, str]:
    """The largest of the four fault currents over the tables given (first on equal values)."""
    best = None
    for name, table in tables.items():
        row = table.set_index("bus").loc[bus]
        for column in FOUR:
            if best is None or row[column] > best[0]:
                best = (row[column], WORDS[column], name)
    return best


def label_text(book, bus: str) -> str:
    ws = book[f"Label {bus}"]
    return "\n".join(str(c.value) for row in ws.iter_rows() for c in row if c.value)


def test_label_names_the_case_and_the_fault_type(tie_run, tie_result):
    _, book, doc = tie_run
    tables = {"base": tie_result.buses, **tie_result.cases}
    for bus in ("SUB-A", "SUB-B"):
        value, fault, case = expected_label(tables, bus)
        assert case == "tie closed"
        text = label_text(book, bus)
        assert f"{value:.1f} kA" in text
        assert f"Set by a {fault} fault in case 'tie closed'." in text
    labels = {r["bus"]: r for r in doc["labels"]["rows"]}
    assert labels["SUB-A"]["label_case"] == "tie closed"
    assert doc["labels"]["cases_left_out"] == []


def test_a_case_left_out_of_the_labels(make_input, tmp_path):
    path = make_input(tie_case_sheets(label="no", extra_case=True))
    xlsx, js = tmp_path / "r.xlsx", tmp_path / "r.json"
    run = CliRunner().invoke(main, ["study", str(path), "-o", str(xlsx), "--json", str(js)])
    assert run.exit_code == 0, run.output
    result = run_study(read_system(path))
    assert result.label_cases_left_out == ("tie closed",)
    book, doc = load_workbook(xlsx), json.loads(js.read_text(encoding="utf-8"))
    counted = {"base": result.buses, "utility X/R 10": result.cases["utility X/R 10"]}
    everything = {**counted, "tie closed": result.cases["tie closed"]}
    for bus in ("SUB-A", "SUB-B"):
        value, fault, case = expected_label(counted, bus)
        assert case != "tie closed"
        assert value < expected_label(everything, bus)[0]  # the tie would have set it
        text = label_text(book, bus)
        assert f"{value:.1f} kA" in text
        case_words = "the base case" if case == "base" else f"case '{case}'"
        assert f"Set by a {fault} fault in {case_words}." in text
        assert "Left out of this figure" in text and "'tie closed'" in text
    # Leaving a case out of the labels does not hide its duty.
    rows = {r["Bus"].value: r for r in rows_of(book["Equipment duty"])}
    assert rows["SUB-A"]["Case giving the duty"].value == "tie closed"
    assert fill(rows["SUB-A"]["Bus"]) == OVER_FILL
    assert doc["labels"]["cases_left_out"] == ["tie closed"]
    assert {c["case"]: c["in_labels"] for c in doc["cases"]} == {
        "tie closed": False,
        "utility X/R 10": True,
    }


def test_label_column_on_one_row_of_a_case_is_enough(make_input):
    sheets = tie_case_sheets(label="no")
    sheets["cases"].append(
        {"case": "tie closed", "element": "TIE-1", "column": "r_ohm", "value": 0}
    )
    result = run_study(read_system(make_input(sheets)))
    assert result.label_cases_left_out == ("tie closed",)


def test_rows_of_one_case_that_disagree_are_a_located_error(make_input):
    sheets = tie_case_sheets(label="no")
    sheets["cases"].append(
        {"case": "tie closed", "element": "TIE-1", "column": "r_ohm", "value": 0, "label": "yes"}
    )
    with pytest.raises(InputError) as info:
        read_system(make_input(sheets))
    (p,) = info.value.problems
    assert (p.sheet, p.row, p.column, p.value) == ("cases", 3, "label", "yes")
    assert "tie closed" in p.message and "row 2" in p.message


def test_a_bad_label_value_is_a_located_error(make_input):
    with pytest.raises(InputError) as info:
        read_system(make_input(tie_case_sheets(label="maybe")))
    p = info.value.problems[0]
    assert (p.sheet, p.row, p.column) == ("cases", 2, "label")


def test_large_study_summary_keeps_a_bus_that_exceeds_only_in_a_case(tie_result, monkeypatch):
    monkeypatch.setattr(results, "SUMMARY_BUSES", 1)
    cut = tie_result.summary()
    assert {"SUB-A", "SUB-B"} <= set(cut.buses.bus)
    assert set(cut.duty.bus) == set(tie_result.duty.bus)


def test_near_rating_in_a_case_is_amber(make_input, tmp_path):
    # A rating between the case's duty and 100/90 of it: within 10 % in the case only.
    result = run_study(read_system(make_input(tie_case_sheets())))
    duty_ka = result.duty.set_index("bus").loc["DP-1", "duty_ka"]
    assert result.duty.set_index("bus").loc["DP-1", "duty_case"] == "tie closed"
    sheets = tie_case_sheets()
    for row in sheets["buses"]:
        if row["bus"] == "DP-1":
            row["rating_ka"] = f"{duty_ka / 0.95:.6f}"
    path = make_input(sheets)
    out = tmp_path / "r.xlsx"
    run = CliRunner().invoke(main, ["study", str(path), "-o", str(out), "--fail-on-overduty"])
    assert run.exit_code == 3  # SUB-A and SUB-B still exceed
    rows = {r["Bus"].value: r for r in rows_of(load_workbook(out)["Equipment duty"])}
    assert rows["DP-1"]["Status"].value == duty.STATUS_NEAR
    assert rows["DP-1"]["Status in the base case"].value == duty.STATUS_BELOW
    assert fill(rows["DP-1"]["Bus"]) == NEAR_FILL


def test_a_bus_missing_from_a_case_table_counts_as_none_there(tie_result):
    # A case whose table lacks a bus (a bus out of service): the bus's worst comes from the
    # other tables (common practice (no source): a bus that is not there has no duty).
    from faultcalc import over_cases

    base = tie_result.buses
    closed = tie_result.cases["tie closed"]
    tables = {"base": base, "tie closed": closed[closed.bus != "SUB-A"].iloc[::-1]}
    order = list(base.bus)
    descriptions = dict(zip(order, tie_result.descriptions, strict=True))
    aligned = over_cases.CaseTables(tables, order)
    worst = over_cases.worst_duty(aligned, descriptions).set_index("bus")
    assert worst.loc["SUB-A", "duty_case"] == "base"
    assert worst.loc["SUB-B", "duty_case"] == "tie closed"
    assert worst.loc["SUB-B", "duty_pct"] == closed.set_index("bus").loc["SUB-B", "duty_pct"]
    envelope = over_cases.envelope(aligned).set_index("bus")
    assert envelope.loc["SUB-A", "duty_case"] == "base"
    assert envelope.loc["SUB-B", "duty_status"] == duty.STATUS_OVER
    labels = over_cases.labels(aligned, [order[3], order[4]], descriptions).set_index("bus")
    assert labels.loc["SUB-A", "label_case"] == "base"
    assert labels.loc["SUB-B", "label_case"] == "tie closed"
