"""Large studies: a summary workbook plus every bus as CSV, and the CSV reads back exactly.

Check values: the study's own bus table (common practice (no source): a results file must hold
what was computed); 10 significant digits against Python's own "%.10g" formatting; the input's
SHA-256 recomputed here with hashlib by the rule the README states for a CSV folder.
"""

from __future__ import annotations

import csv
import hashlib
import json
import math

import numpy as np
import openpyxl
from click.testing import CliRunner

from faultcalc import cli, read_system, run_study
from faultcalc.report import csvout, jsonout, outputs
from faultcalc.results import BUS_COLUMNS
from tests.networks import random_sheets


def test_round_significant_matches_python_formatting():
    rng = np.random.default_rng(7)
    x = 10 ** rng.uniform(-12, 12, 20_000) * rng.choice([-1.0, 1.0], 20_000)
    x = np.concatenate([x, [0.0, math.nan, math.inf, 1.0, 0.5, 2.675, 1e-7]])
    rounded = csvout.round_significant(x)
    expected = np.array([float(f"{v:.10g}") for v in x.tolist()])
    assert np.array_equal(rounded, expected, equal_nan=True)


def _study(make_input, monkeypatch, tmp_path, sheets):
    monkeypatch.setattr(outputs, "BIG_OUTPUT_BUSES", 10)
    folder = make_input(sheets)
    out = tmp_path / "big-results.xlsx"
    run = CliRunner().invoke(cli.main, ["study", str(folder), "-o", str(out)])
    assert run.exit_code == 0, run.output
    return folder, out, tmp_path / "big-results-buses.csv", run.output


def _read_back(path):
    with path.open(newline="") as handle:
        return list(csv.DictReader(handle))


def test_big_study_writes_summary_and_every_bus(make_input, monkeypatch, tmp_path):
    sheets = random_sheets(3, n_mv=10, n_lv=30, zero_sequence=True, machines=4)
    folder, out, csv_path, output = _study(make_input, monkeypatch, tmp_path, sheets)
    assert "a summary" in output and str(csv_path.resolve()) in output
    result = run_study(read_system(folder))
    rows = _read_back(csv_path)
    assert list(rows[0])[:-1] == list(BUS_COLUMNS)  # the bus columns in order, then the digest
    assert list(rows[0])[-1] == "input_sha256"
    assert {r["input_sha256"] for r in rows} == {_folder_sha256(folder)}
    assert [r["bus"] for r in rows] == result.buses.bus.tolist()
    for column in ("r1_ohm", "x0_ohm", "i3ph_ka", "islg_ka", "kappa", "ip_ka"):
        got = np.array([float(r[column]) if r[column] else math.nan for r in rows])
        want = result.buses[column].to_numpy(dtype=float)
        assert np.allclose(got, want, rtol=1e-9, atol=0, equal_nan=True)
        assert np.isfinite(got).sum() >= 10
    blank = [r["rating_ka"] for r in rows]
    assert set(blank) == {""}  # no rating given: an empty field, not "nan"
    book = openpyxl.load_workbook(out, read_only=True)
    texts = [c for row in book["Fault currents"].iter_rows(values_only=True) for c in row if c]
    assert any(isinstance(t, str) and csv_path.name in t for t in texts)


def test_text_with_commas_is_quoted(make_input, monkeypatch, tmp_path):
    sheets = random_sheets(5, n_mv=6, n_lv=12)
    old = sheets["buses"][3]["bus"]
    new = 'L3, "east" board'
    sheets["buses"][3]["bus"] = new
    for sheet in sheets.values():
        for row in sheet:
            for key, value in row.items():
                if value == old:
                    row[key] = new
    _, _, csv_path, _ = _study(make_input, monkeypatch, tmp_path, sheets)
    assert new in [r["bus"] for r in _read_back(csv_path)]


def test_json_written_row_by_row_is_the_whole_document(tmp_path):
    """The streamed file parses to the document built in memory (cases, envelope and
    contributions included)."""
    import json

    from faultcalc import sample_path, write_json
    from faultcalc.report.jsonout import result_dict

    result = run_study(read_system(sample_path("plant_480v")), contributions="all")
    path = tmp_path / "r.json"
    write_json(result, path)
    text = path.read_text(encoding="utf-8")
    expected = json.loads(json.dumps(result_dict(result), allow_nan=False))
    assert json.loads(text) == expected
    assert expected["cases"] and expected["envelope"] and expected["contributions"]
    lines = text.count('\n    {"bus": ')
    assert lines == len(result.buses) + len(result.envelope)  # one line per bus and row


def _folder_sha256(folder):
    """SHA-256 of a CSV folder as the README states it: each file's name, a NUL, its bytes."""
    digest = hashlib.sha256()
    for file in sorted(folder.glob("*.csv")):
        digest.update(file.name.encode() + b"\0" + file.read_bytes())
    return digest.hexdigest()


def _invoke(*args):
    return CliRunner().invoke(cli.main, [str(a) for a in args])


def test_every_output_names_the_same_input(make_input, monkeypatch, tmp_path):
    monkeypatch.setattr(outputs, "BIG_OUTPUT_BUSES", 10)
    folder = make_input(random_sheets(4, n_mv=6, n_lv=14))
    out, js = tmp_path / "r.xlsx", tmp_path / "r.json"
    assert _invoke("study", folder, "-o", out, "--json", js).exit_code == 0
    digest = _folder_sha256(folder)
    assert {r["input_sha256"] for r in _read_back(tmp_path / "r-buses.csv")} == {digest}
    assert json.loads(js.read_text())["study"]["input_sha256"] == digest
    book = openpyxl.load_workbook(out, read_only=True)
    basis = {r[0]: r[1] for r in book["Basis and cautions"].iter_rows(values_only=True) if r[0]}
    assert basis["Input SHA-256"] == digest


def test_bus_csv_goes_with_its_workbook(make_input, monkeypatch, tmp_path):
    """A smaller study over the same results name removes the bus CSV of a larger one; a
    larger one replaces it; without --overwrite an existing bus CSV is refused."""
    monkeypatch.setattr(outputs, "BIG_OUTPUT_BUSES", 10)
    big = make_input(random_sheets(5, n_mv=6, n_lv=14))  # 20 buses: summary + CSV
    small = make_input(random_sheets(6, n_mv=2, n_lv=4))  # 6 buses: a full workbook only
    out, csv_path = tmp_path / "r.xlsx", tmp_path / "r-buses.csv"
    assert _invoke("study", big, "-o", out).exit_code == 0 and csv_path.exists()
    before = (out.read_bytes(), csv_path.read_bytes())

    refused = _invoke("study", small, "-o", out)
    assert refused.exit_code == 1 and "--overwrite" in refused.output
    assert (out.read_bytes(), csv_path.read_bytes()) == before
    lone = tmp_path / "lone.xlsx"  # a workbook name free, its bus CSV name taken
    (tmp_path / "lone-buses.csv").write_text("someone's file\n")
    refused = _invoke("study", small, "-o", lone)
    assert refused.exit_code == 1 and "lone-buses.csv exists already" in refused.output
    assert not lone.exists()

    smaller = _invoke("study", small, "-o", out, "--overwrite")
    assert smaller.exit_code == 0, smaller.output
    assert not csv_path.exists() and "removed r-buses.csv" in smaller.output
    book = openpyxl.load_workbook(out, read_only=True)
    names = [r[0] for r in book["Fault currents"].iter_rows(min_row=2, values_only=True)]
    buses = [b["bus"] for b in random_sheets(6, 2, 4)["buses"]]
    assert names[: len(buses)] == buses and "a summary" not in smaller.output

    again = _invoke("study", big, "-o", out, "--overwrite")
    assert again.exit_code == 0 and csv_path.exists()
    assert {r["input_sha256"] for r in _read_back(csv_path)} == {_folder_sha256(big)}
    assert sorted(p.name for p in tmp_path.iterdir() if p.is_file()) == [
        "lone-buses.csv",
        "r-buses.csv",
        "r.xlsx",
    ]


def test_a_failed_write_keeps_the_earlier_bus_csv(make_input, monkeypatch, tmp_path):
    monkeypatch.setattr(outputs, "BIG_OUTPUT_BUSES", 10)
    big = make_input(random_sheets(5, n_mv=6, n_lv=14))
    small = make_input(random_sheets(6, n_mv=2, n_lv=4))
    out, csv_path = tmp_path / "r.xlsx", tmp_path / "r-buses.csv"
    assert _invoke("study", big, "-o", out).exit_code == 0
    before = (out.read_bytes(), csv_path.read_bytes())

    def broken(result, path):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(jsonout, "write_json_to", broken)
    failed = _invoke("study", small, "-o", out, "--json", tmp_path / "r.json", "--overwrite")
    assert failed.exit_code == 1 and "No space left" in failed.output
    assert (out.read_bytes(), csv_path.read_bytes()) == before
    assert sorted(p.name for p in tmp_path.iterdir() if p.is_file()) == ["r-buses.csv", "r.xlsx"]
