"""The output rules reached from the public API (faultcalc/report/outputs.py), without the command
line: the large-study summary and its bus CSV, refusals before the study, all or nothing.

Check values: the rules as DEVELOPERS.md and the README's "Large studies" state them, and the
study's own bus table (common practice (no source): a results file holds what was computed).
"""

from __future__ import annotations

import csv
import json

import openpyxl
import pytest

import faultcalc
from faultcalc import (
    OutputError,
    OutputFiles,
    ResultFiles,
    read_system,
    run_study,
    sample_path,
    write_netlist,
    write_results,
    write_template,
)
from faultcalc.report import outputs
from tests.networks import random_sheets


@pytest.fixture(scope="module")
def result():
    return run_study(read_system(sample_path()))


def test_every_public_name_resolves():
    for name in faultcalc.__all__:
        assert getattr(faultcalc, name) is not None, name
    assert set(faultcalc.__all__) <= set(dir(faultcalc))
    with pytest.raises(AttributeError):
        faultcalc.no_such_name  # noqa: B018


def test_a_large_study_through_the_api(make_input, monkeypatch, tmp_path):
    monkeypatch.setattr(outputs, "BIG_OUTPUT_BUSES", 10)
    folder = make_input(random_sheets(8, n_mv=6, n_lv=14))  # 20 buses
    big = run_study(read_system(folder))
    out = tmp_path / "r.xlsx"
    written = write_results(big, out, tmp_path / "r.json", input_path=folder)
    assert written.summary and written.bus_csv == tmp_path / "r-buses.csv"
    assert written.big_above_buses == 10 and written.removed is None
    with written.bus_csv.open(newline="") as handle:
        assert [r["bus"] for r in csv.DictReader(handle)] == big.buses.bus.tolist()
    assert len(json.loads((tmp_path / "r.json").read_text())["buses"]) == len(big.buses)
    book = openpyxl.load_workbook(out, read_only=True)
    texts = [c for row in book["Fault currents"].iter_rows(values_only=True) for c in row if c]
    assert any(isinstance(t, str) and "r-buses.csv" in t for t in texts)


def test_a_smaller_study_removes_the_stale_bus_csv_only_with_overwrite(tmp_path, result):
    out, stale = tmp_path / "r.xlsx", tmp_path / "r-buses.csv"
    stale.write_text("an earlier, larger study\n")
    with pytest.raises(OutputError, match="exists already"):
        write_results(result, out)
    assert not out.exists() and stale.exists()
    written = write_results(result, out, overwrite=True)
    assert written.removed == stale and not written.summary
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r.xlsx"]


def test_names_are_refused_before_the_study(tmp_path):
    folder = sample_path()
    with pytest.raises(OutputError, match="it is the input"):
        ResultFiles(folder / "x.csv", input_path=folder)
    with pytest.raises(OutputError, match="must be different files"):
        ResultFiles(tmp_path / "r.xlsx", tmp_path / "r.xlsx")
    with pytest.raises(OutputError, match="that name is for the bus CSV"):
        ResultFiles(tmp_path / "r.xlsx", tmp_path / "r-buses.csv")
    (tmp_path / "n.cir").write_text("kept")
    with pytest.raises(OutputError, match="exists already"):
        OutputFiles(tmp_path / "n.cir")
    assert (tmp_path / "n.cir").read_text() == "kept"


def test_a_file_that_appears_after_the_check_is_kept(tmp_path, result):
    files = ResultFiles(tmp_path / "r.xlsx", overwrite=True)
    (tmp_path / "r.xlsx").write_text("someone else's")
    with pytest.raises(OutputError, match="created by something else"):
        files.write(result)
    assert (tmp_path / "r.xlsx").read_text() == "someone else's"
    assert [p.name for p in tmp_path.iterdir()] == ["r.xlsx"]


def test_netlist_and_template_writers(tmp_path):
    text = write_netlist(read_system(sample_path()), "SWBD-1", "3ph", tmp_path / "f.cir")
    assert (tmp_path / "f.cir").read_text() == text and text.count("\n") > 10
    with pytest.raises(OutputError, match="exists already"):
        write_netlist(read_system(sample_path()), "SWBD-1", "3ph", tmp_path / "f.cir")
    path = tmp_path / "blank.xlsx"
    write_template(path)
    before = path.read_bytes()
    with pytest.raises(OutputError, match="exists already"):
        write_template(path, overwrite=False)
    assert path.read_bytes() == before
    write_template(path)  # replaces by default, as it always did
    with pytest.raises(OutputError, match="is a folder"):
        write_template(tmp_path)
