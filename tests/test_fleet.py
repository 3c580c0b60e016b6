"""Many studies at once (#17 item 5): every input its own study and outputs, one summary, a
failure of one input said without stopping the others, on Dask's local cluster (the default
executor, so the same path as a remote cluster's). Invented data: the bundled samples."""

from __future__ import annotations

import shutil

import pandas as pd
import pytest
from click.testing import CliRunner

from faultcalc import read_system, run_fleet, run_study, sample_path
from faultcalc.cli import main
from faultcalc.fleet import SUMMARY_COLUMNS, inputs_in

pytestmark = pytest.mark.slow  # a local cluster starts in seconds


@pytest.fixture()
def inputs(tmp_path):
    folder = tmp_path / "feeders"
    folder.mkdir()
    for name in ("plant_480v", "double_ended_480v"):
        shutil.copytree(sample_path(name), folder / name)
    bad = folder / "bad"
    shutil.copytree(sample_path("plant_480v"), bad)
    text = (bad / "buses.csv").read_text().splitlines()
    text[1] = text[1].replace("12.47", "twelve", 1)
    (bad / "buses.csv").write_text("\n".join(text) + "\n")
    (folder / "notes.txt").write_text("not an input")
    return folder


def test_inputs_are_found_in_a_folder(inputs):
    assert [p.name for p in inputs_in([inputs])] == ["bad", "double_ended_480v", "plant_480v"]
    assert inputs_in([inputs / "bad"]) == [inputs / "bad"]


def test_every_input_is_studied_and_a_bad_one_does_not_stop_the_others(inputs, tmp_path):
    out = tmp_path / "results"
    fleet = run_fleet([inputs], out, json=True, workers=2)
    summary = fleet.summary.set_index(fleet.summary["input"].map(lambda p: p.split("/")[-1]))
    assert list(fleet.summary.columns) == list(SUMMARY_COLUMNS)
    assert fleet.failed == 1 and fleet.workers == 2
    bad = summary.loc["bad"]
    assert bad.status == "failed"
    assert "sheet 'buses', row 2, column 'kv'" in bad.message and "twelve" in bad.message
    assert not (out / "bad-results.xlsx").exists()
    for name in ("plant_480v", "double_ended_480v"):
        row = summary.loc[name]
        assert row.status == "ok"
        assert (out / f"{name}-results.xlsx").exists() and (out / f"{name}-results.json").exists()
        # the figure the study itself gives (the summary reports it, it computes nothing)
        maximum = run_study(read_system(sample_path(name))).maximum
        assert row.max_ka == pytest.approx(maximum.max_ka.max(), rel=1e-12)
        assert row.buses == 7
    written = pd.read_csv(fleet.summary_path)
    assert list(written.columns) == list(SUMMARY_COLUMNS) and len(written) == 3


def test_the_command_says_each_input_and_exits_4_when_one_failed(inputs, tmp_path):
    result = CliRunner().invoke(
        main, ["fleet", str(inputs), "-d", str(tmp_path / "r"), "--workers", "1"]
    )
    assert result.exit_code == 4, result.output
    assert "FAILED" in result.output and "row 2, column 'kv'" in result.output
    assert "3 inputs, 1 failed" in result.output and "Caution" in result.output
    again = CliRunner().invoke(
        main, ["fleet", str(inputs / "plant_480v"), "-d", str(tmp_path / "r"), "--workers", "1"]
    )
    assert again.exit_code == 1 and "exists already" in again.output  # never replaced unasked
    empty = tmp_path / "empty"
    empty.mkdir()
    none = CliRunner().invoke(main, ["fleet", str(empty), "-d", str(tmp_path / "r2")])
    assert none.exit_code == 2 and "no input found" in none.output


def dies_on_bad(input_path, output, json_path, overwrite):
    """A job whose worker process dies on the input named bad (a study killed mid-way)."""
    import os

    from faultcalc.fleet import study_one

    if input_path.endswith("bad"):
        os._exit(3)
    return study_one(input_path, output, json_path, overwrite)


def test_a_lost_worker_is_that_inputs_row_and_the_others_are_not_rerun(inputs, tmp_path):
    import sys

    import cloudpickle

    cloudpickle.register_pickle_by_value(sys.modules[__name__])  # workers need not import us
    fleet = run_fleet([inputs], tmp_path / "r", workers=2, job=dies_on_bad)
    summary = fleet.summary.set_index(fleet.summary["input"].map(lambda p: p.split("/")[-1]))
    assert summary.loc["bad", "status"] == "failed"
    assert "worker was lost" in summary.loc["bad", "message"]
    for name in ("plant_480v", "double_ended_480v"):  # done once, not again into their files
        assert summary.loc[name, "status"] == "ok", summary.loc[name, "message"]


def test_the_summary_is_not_replaced_unasked_and_names_do_not_depend_on_the_run(inputs, tmp_path):
    from faultcalc.errors import OutputError

    out = tmp_path / "r"
    run_fleet([inputs / "plant_480v"], out, workers=1)
    with pytest.raises(OutputError, match="exists already"):
        run_fleet([inputs / "double_ended_480v"], out, workers=1)
    # a folder whose name has a dot; two inputs of one name told apart by their paths alike
    # in any run; an earlier run's results in the folder are not inputs
    dotted = inputs / "plant.v2"
    shutil.copytree(sample_path("plant_480v"), dotted)
    other = tmp_path / "elsewhere" / "plant.v2"
    shutil.copytree(sample_path("plant_480v"), other)
    (inputs / "old-results.xlsx").write_bytes(b"")
    first = run_fleet([dotted, other], tmp_path / "r2", workers=1)
    names = sorted(p.name for p in (tmp_path / "r2").glob("*-results.xlsx"))
    assert len(names) == 2 and all(n.startswith("plant.v2-") for n in names)
    again = run_fleet([other, dotted], tmp_path / "r3", workers=1)
    assert sorted(p.name for p in (tmp_path / "r3").glob("*-results.xlsx")) == names
    assert first.failed == again.failed == 0
    assert "old-results.xlsx" not in [p.name for p in inputs_in([inputs])]
