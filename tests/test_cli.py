"""The command line as a user drives it."""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner
from openpyxl import load_workbook
from openpyxl.utils import get_column_letter

from faultcalc import __version__, read_system, sample_path, schema
from faultcalc.cli import main


def run(*args):
    return CliRunner().invoke(main, list(args))


def test_version():
    result = run("--version")
    assert result.exit_code == 0 and __version__ in result.output


@pytest.mark.parametrize("command", ["study", "template", "demo"])
def test_help_has_an_example(command):
    result = run(command, "--help")
    assert result.exit_code == 0
    assert "Example:" in result.output and f"faultcalc {command}" in result.output


def test_demo_writes_a_workbook_and_says_where(tmp_path):
    out = tmp_path / "demo.xlsx"
    result = run("demo", "-o", str(out))
    assert result.exit_code == 0, result.output
    assert str(out.resolve()) in result.output and "invented" in result.output
    # Summary first, then the one-line on its own sheet (#14 changes the convention)
    assert load_workbook(out).sheetnames[:3] == ["Summary", "One-line", "Fault currents"]


def test_study_writes_json_with_the_documented_fields(tmp_path):
    out, js = tmp_path / "r.xlsx", tmp_path / "r.json"
    result = run("study", str(sample_path("double_ended_480v")), "-o", str(out), "--json", str(js))
    assert result.exit_code == 0, result.output
    doc = json.loads(js.read_text())
    assert doc["tool"] == {"name": "faultcalc", "version": __version__}
    for key in (
        "title",
        "base_mva",
        "frequency_hz",
        "prefault_pu",
        "input",
        "input_sha256",
        "calculated_at",
    ):
        assert key in doc["study"]
    assert doc["study"]["input"] == "double_ended_480v" and len(doc["study"]["input_sha256"]) == 64
    fields = {"bus", "kv", "r1_ohm", "x1_ohm", "z1_pu", "xr", "i3ph_ka", "s3ph_mva"}
    fields |= {"r0_ohm", "x0_ohm", "islg_ka", "ill_ka", "illg_ka", "ig_llg_ka"}
    assert all(fields <= set(b) for b in doc["buses"]) and len(doc["buses"]) == 7
    assert [b["bus"] for b in doc["buses"]][:3] == ["MV-MAIN", "RMU-A", "RMU-B"]
    assert doc["cautions"] and isinstance(doc["warnings"], list)


def test_template_has_every_sheet_column_help_and_choice_list(tmp_path):
    path = tmp_path / "blank.xlsx"
    result = run("template", str(path))
    assert result.exit_code == 0, result.output
    book = load_workbook(path)
    for sheet in schema.SHEETS:
        ws = book[sheet.name]
        headers = [c.value for c in ws[1]]
        assert headers == list(sheet.names)
        for cell in ws[1]:
            assert cell.comment is not None and len(cell.comment.text) > 20
        lists = {
            str(dv.sqref).split(":")[0].rstrip("0123456789"): dv.formula1
            for dv in ws.data_validations.dataValidation
        }
        for j, column in enumerate(sheet.columns):
            if column.kind == schema.CHOICE:
                letter = get_column_letter(j + 1)
                assert lists[letter] == '"' + ",".join(column.choices) + '"'
    assert run("template", str(path)).exit_code == 1  # never overwrites


def test_template_overwrite(tmp_path):
    path = tmp_path / "blank.xlsx"
    path.write_bytes(b"an earlier file")
    refused = run("template", str(path))
    assert refused.exit_code == 1 and "--overwrite" in refused.output
    assert path.read_bytes() == b"an earlier file"
    replaced = run("template", str(path), "--overwrite")
    assert replaced.exit_code == 0, replaced.output
    titles = load_workbook(path).sheetnames
    assert all(sheet.name in titles for sheet in schema.SHEETS)
    assert [p.name for p in tmp_path.iterdir()] == ["blank.xlsx"]  # no temporary file left


def test_template_refuses_a_folder(tmp_path):
    folder = tmp_path / "plant.xlsx"
    folder.mkdir()
    for args in ([], ["--overwrite"]):
        result = run("template", str(folder), *args)
        assert result.exit_code == 1 and "is a folder" in result.output
        assert "Traceback" not in result.output and list(folder.iterdir()) == []


def test_filled_template_reads_back_without_warnings(tmp_path):
    path = tmp_path / "filled.xlsx"
    assert run("template", str(path)).exit_code == 0
    book = load_workbook(path)
    sample = read_system(sample_path("plant_480v"))
    for sheet in (schema.BUSES, *schema.ELEMENT_SHEETS):
        for element in getattr(sample, sheet.name):
            from_table = getattr(element, "impedance_source", "")
            book[sheet.name].append(
                [
                    None
                    if from_table and c in ("r_ohm_per_kft", "x_ohm_per_kft")
                    else getattr(element, c)
                    for c in sheet.names
                ]
            )
    book["study"]["B2"] = "Filled-in template (invented test data)"
    book.save(path)
    filled = read_system(path)
    assert filled.warnings == ()
    assert [b.bus for b in filled.buses] == [b.bus for b in sample.buses]
    for sheet in (schema.BUSES, *schema.ELEMENT_SHEETS):
        assert getattr(filled, sheet.name) == getattr(sample, sheet.name)


def test_refuses_json_over_the_workbook(tmp_path):
    out = tmp_path / "same.xlsx"
    result = run("study", str(sample_path()), "-o", str(out), "--json", str(out))
    assert result.exit_code == 1 and not out.exists()


def test_unwritable_output_folder_is_a_clear_error(tmp_path):
    out = tmp_path / "no such folder" / "r.xlsx"
    result = run("study", str(sample_path()), "-o", str(out))
    assert result.exit_code == 1 and "does not exist" in result.output
    assert "Traceback" not in result.output


def test_the_command_line_uses_only_the_public_api():
    # DEVELOPERS.md: cli.py imports the names of faultcalc/__init__.py and nothing else of the
    # package, and each of them is public (in __all__).
    import ast
    import inspect

    import faultcalc
    import faultcalc.cli as cli

    used = set()
    for node in ast.walk(ast.parse(inspect.getsource(cli))):
        if isinstance(node, ast.ImportFrom) and node.level:
            assert node.module is None, f"cli.py imports faultcalc.{node.module}"
            used |= {alias.name for alias in node.names}
        if isinstance(node, ast.ImportFrom) and not node.level:
            assert not (node.module or "").startswith("faultcalc"), node.module
    assert used and used <= set(faultcalc.__all__), used - set(faultcalc.__all__)


def test_the_summary_names_the_maximum_available_and_the_near_devices(tmp_path):
    # The console summary gives the largest current of any fault type in any case (as the
    # Summary sheet does) and counts the devices within 10 % of their rating (#14).
    from faultcalc import read_system, run_study

    result = run_study(read_system(sample_path()))
    top = result.maximum.loc[result.maximum.max_ka.idxmax()]
    done = run("study", str(sample_path()), "-o", str(tmp_path / "r.xlsx"))
    assert done.exit_code == 0, done.output
    assert f"Maximum available: {top.max_ka:.2f} kA at {top.bus}" in done.output
    near = int((result.duty.duty_status == "within 10% of rating").sum())
    assert near and f"{near} within 10 % of it" in done.output
