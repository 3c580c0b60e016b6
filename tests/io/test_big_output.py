"""Large studies: a summary workbook plus every bus as CSV, and the CSV reads back exactly.

Check values: the study's own bus table (common practice (no source): a results file must hold
what was computed); 10 significant digits against Python's own "%.10g" formatting.
"""

from __future__ import annotations

import csv
import math

import numpy as np
import openpyxl
from click.testing import CliRunner

from faultcalc import cli, read_system, run_study
from faultcalc.io import csvout
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
    monkeypatch.setattr(cli, "BIG_OUTPUT_BUSES", 10)
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
    assert list(rows[0]) == list(BUS_COLUMNS)
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
    from faultcalc.io.jsonout import result_dict

    result = run_study(read_system(sample_path("plant_480v")), contributions="all")
    path = tmp_path / "r.json"
    write_json(result, path)
    text = path.read_text(encoding="utf-8")
    expected = json.loads(json.dumps(result_dict(result), allow_nan=False))
    assert json.loads(text) == expected
    assert expected["cases"] and expected["envelope"] and expected["contributions"]
    lines = text.count('\n    {"bus": ')
    assert lines == len(result.buses) + len(result.envelope)  # one line per bus and row
