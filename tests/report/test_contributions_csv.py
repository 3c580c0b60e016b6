"""Many contributions: every row in <results>-contributions.csv, the workbook's sheet and the
report holding whole faulted buses of the largest fault currents, and the CSV reading back.

Check values: the study's own contributions table (common practice (no source): a results
file must hold what was computed); the input's SHA-256 recomputed with hashlib by the rule the
README states for a CSV folder (as tests/report/test_big_output.py does).
"""

from __future__ import annotations

import csv
import math

import numpy as np
import openpyxl
import pytest
from click.testing import CliRunner

from faultcalc import cli, read_system, run_study
from faultcalc.report import csvout, outputs
from faultcalc.report.words import FAULT_WORDS
from faultcalc.solve.contributions import CONTRIBUTION_COLUMNS
from tests.networks import random_sheets
from tests.report.test_big_output import _folder_sha256


def _invoke(*args):
    return CliRunner().invoke(cli.main, [str(a) for a in args])


def _read_back(path):
    with path.open(newline="") as handle:
        return list(csv.DictReader(handle))


SHEETS = dict(seed=8, n_mv=6, n_lv=14, zero_sequence=True, machines=5, clocks=True)


def test_many_contributions_go_to_a_csv_beside_a_cut_sheet(make_input, monkeypatch, tmp_path):
    monkeypatch.setattr(outputs, "BIG_CONTRIBUTION_ROWS", 60)
    folder = make_input(random_sheets(**SHEETS))
    out = tmp_path / "r.xlsx"
    run = _invoke("study", folder, "-o", out, "--contributions", "all")
    assert run.exit_code == 0, run.output
    csv_path = tmp_path / "r-contributions.csv"
    assert str(csv_path.resolve()) in run.output
    result = run_study(read_system(folder), contributions="all")
    c = result.contributions
    assert len(c) > 60
    rows = _read_back(csv_path)
    assert list(rows[0]) == [*CONTRIBUTION_COLUMNS, "input_sha256"]
    assert rows[0]["input_sha256"] == _folder_sha256(folder)
    assert all(r["input_sha256"] == "" for r in rows[1:])  # the first row only
    for column in ("faulted_bus", "fault", "element", "kind", "from_bus", "phase"):
        assert [r[column] for r in rows] == c[column].tolist(), column
    for column in ("i_ka", "angle_deg", "ig_ka"):
        got = np.array([float(r[column]) if r[column] else math.nan for r in rows])
        np.testing.assert_allclose(got, c[column].to_numpy(float), rtol=1e-9, equal_nan=True)

    # The sheet: whole faulted buses, those of the largest fault currents, at most 60 rows.
    book = openpyxl.load_workbook(out, read_only=True)
    sheet = list(book["Contributions"].iter_rows(values_only=True))
    words = {FAULT_WORDS["3ph"], FAULT_WORDS["slg"]}
    body = [r for r in sheet if len(r) > 2 and r[1] in words]
    faulted = list(dict.fromkeys(r[0] for r in body))
    per_bus = c.groupby("faulted_bus", observed=True, sort=False).size()
    assert 0 < len(body) <= 60 and sum(per_bus[b] for b in faulted) == len(body)
    largest = result.buses.set_index("bus")[["i3ph_ka", "islg_ka", "ill_ka", "illg_ka"]].max(
        axis=1
    )[per_bus.index]
    top = list(largest.sort_values(ascending=False, kind="stable").index[: len(faulted)])
    assert sorted(faulted) == sorted(top)
    text = " ".join(str(v) for r in sheet for v in r if v)
    assert f"Contributions at {len(faulted)} of the {len(per_bus)} faulted buses" in text
    assert "r-contributions.csv" in text


def test_contributions_csv_goes_with_its_workbook(make_input, monkeypatch, tmp_path):
    monkeypatch.setattr(outputs, "BIG_CONTRIBUTION_ROWS", 60)
    folder = make_input(random_sheets(**SHEETS))
    out, csv_path = tmp_path / "r.xlsx", tmp_path / "r-contributions.csv"
    assert _invoke("study", folder, "-o", out, "--contributions", "all").exit_code == 0
    refused = _invoke("study", folder, "-o", out)
    assert refused.exit_code == 1 and "--overwrite" in refused.output
    smaller = _invoke("study", folder, "-o", out, "--contributions", "M0", "--overwrite")
    assert smaller.exit_code == 0, smaller.output
    assert "removed r-contributions.csv" in smaller.output and not csv_path.exists()
    clash = _invoke(
        "study", folder, "-o", out, "--json", csv_path, "--overwrite", "--contributions", "all"
    )
    assert clash.exit_code == 1 and "that name is for the contributions CSV" in clash.output


def test_contributions_at_most_keeps_whole_buses(make_input):
    result = run_study(read_system(make_input(random_sheets(**SHEETS))), contributions="all")
    c = result.contributions
    whole, kept = result.contributions_at_most(len(c))
    assert whole is c and kept == c.faulted_bus.nunique()
    cut, kept = result.contributions_at_most(1)  # the first bus always, whole
    assert cut.faulted_bus.nunique() == kept == 1
    assert len(cut) == (c.faulted_bus == cut.faulted_bus[0]).sum()


@pytest.mark.parametrize("quoted", [False, True])
def test_a_csv_written_in_chunks_is_the_same_file(make_input, monkeypatch, tmp_path, quoted):
    sheets = random_sheets(**SHEETS)
    if quoted:  # a name that needs quotes, in a late chunk only: every field is then quoted
        sheets["machines"][-1]["machine"] = 'MOT, "last"'
    result = run_study(read_system(make_input(sheets)), contributions="all")
    one = tmp_path / "one.csv"
    csvout.write_contributions_csv_to(result, one)
    monkeypatch.setattr(csvout, "SPLIT_ROWS", 3)
    monkeypatch.setattr(csvout, "CHUNK_ROWS", 7)
    monkeypatch.setattr(csvout.os, "cpu_count", lambda: 2)
    chunked = tmp_path / "chunked.csv"
    csvout.write_contributions_csv_to(result, chunked)
    assert chunked.read_bytes() == one.read_bytes()
    rows = _read_back(chunked)
    assert len(rows) == len(result.contributions) > 7 * 3
    assert ('MOT, "last"' in {r["element"] for r in rows}) == quoted


def test_the_report_prints_whole_buses_and_says_where_the_rest_is(monkeypatch, tmp_path):
    from pypdf import PdfReader

    from faultcalc import sample_path

    monkeypatch.setattr(outputs, "BIG_CONTRIBUTION_ROWS", 40)
    monkeypatch.setattr(outputs, "REPORT_CONTRIBUTION_ROWS", 25)
    out, report = tmp_path / "p.xlsx", tmp_path / "p.pdf"
    run = _invoke("study", sample_path(), "-o", out, "--report", report, "--contributions", "all")
    assert run.exit_code == 0, run.output
    text = " ".join(" ".join(p.extract_text().split()) for p in PdfReader(report).pages)
    result = run_study(read_system(sample_path()), contributions="all")
    cut, kept = result.contributions_at_most(25)
    total = len(result.contributions)
    assert (
        f"Contributions at {kept} of the {result.contributions.faulted_bus.nunique()} faulted "
        f"buses ({len(cut)} rows)" in text
    )
    assert f"every one of the {total} rows is in p-contributions.csv" in text


def test_a_summary_and_many_contributions_agree_in_workbook_and_report(
    make_input, monkeypatch, tmp_path
):
    # More buses than a full workbook takes and more contributions than a sheet: the workbook
    # and the report hold the same faulted buses (the largest fault currents of the whole
    # study, not of its summary), and every row's kV is there.
    from pypdf import PdfReader

    from faultcalc import results

    monkeypatch.setattr(outputs, "BIG_OUTPUT_BUSES", 5)
    monkeypatch.setattr(results, "SUMMARY_BUSES", 2)
    monkeypatch.setattr(outputs, "BIG_CONTRIBUTION_ROWS", 60)
    monkeypatch.setattr(outputs, "REPORT_CONTRIBUTION_ROWS", 60)
    folder = make_input(random_sheets(**SHEETS))
    out, report = tmp_path / "r.xlsx", tmp_path / "r.pdf"
    run = _invoke("study", folder, "-o", out, "--report", report, "--contributions", "all")
    assert run.exit_code == 0, run.output
    result = run_study(read_system(folder), contributions="all")
    cut, kept = result.contributions_at_most(60)
    want = list(dict.fromkeys(cut.faulted_bus))
    book = openpyxl.load_workbook(out, read_only=True)
    words = {FAULT_WORDS["3ph"], FAULT_WORDS["slg"]}
    body = [
        r for r in book["Contributions"].iter_rows(values_only=True) if len(r) > 2 and r[1] in words
    ]
    assert list(dict.fromkeys(r[0] for r in body)) == want
    assert all(r[5] is not None for r in body)  # Currents at kV, also for buses not summarised
    text = " ".join(" ".join(p.extract_text().split()) for p in PdfReader(report).pages)
    assert f"Contributions at {kept} of the" in text
    section = text[text.rindex("Contributions to the fault current") :]
    first = section.index(want[0])
    assert all(section.index(b) >= first for b in want)


def _chunked(monkeypatch):
    monkeypatch.setattr(outputs, "BIG_CONTRIBUTION_ROWS", 60)
    monkeypatch.setattr(csvout, "SPLIT_ROWS", 3)
    monkeypatch.setattr(csvout, "CHUNK_ROWS", 7)
    monkeypatch.setattr(csvout.os, "cpu_count", lambda: 2)


def test_a_failed_workbook_stops_the_csv_written_beside_it(make_input, monkeypatch, tmp_path):
    # The contributions CSV is written in a thread beside the workbook. When the workbook
    # fails, the CSV is told to stop between chunks, and no output or temporary file is left
    # (common practice (no source): all outputs or none).
    import threading

    import faultcalc.report.workbook as workbook

    _chunked(monkeypatch)
    folder = make_input(random_sheets(**SHEETS))
    out = tmp_path / "out" / "r.xlsx"
    out.parent.mkdir()
    started, raised = threading.Event(), []
    real = csvout.write_contributions_csv_to

    def csv_spy(result, path, stop=None):
        started.set()
        assert stop.wait(30)  # told to stop once the workbook has failed
        try:
            real(result, path, stop)
        except BaseException as exc:
            raised.append(exc)
            raise

    def broken_workbook(*args, **kwargs):
        assert started.wait(30)
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(csvout, "write_contributions_csv_to", csv_spy)
    monkeypatch.setattr(workbook, "write_workbook_to", broken_workbook)
    run = _invoke("study", folder, "-o", out, "--contributions", "all")
    assert run.exit_code == 1 and "No space left" in run.output
    assert [type(e) for e in raised] == [csvout.Stopped]
    assert list(out.parent.iterdir()) == []


def test_a_failed_csv_beside_the_workbook_leaves_nothing(make_input, monkeypatch, tmp_path):
    # An error in the CSV's thread is the run's error, said as any write error is
    # (common practice (no source): all outputs or none).
    _chunked(monkeypatch)
    folder = make_input(random_sheets(**SHEETS))
    out = tmp_path / "out" / "r.xlsx"
    out.parent.mkdir()

    def broken(result, path, stop=None):
        path.write_text("partial")
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(csvout, "write_contributions_csv_to", broken)
    run = _invoke("study", folder, "-o", out, "--contributions", "all")
    assert run.exit_code == 1 and "No space left" in run.output
    assert list(out.parent.iterdir()) == []


def test_a_csv_beside_others_never_makes_its_file_again(make_input, tmp_path):
    # Beside other outputs, a CSV writes only into the temporary file made for it: once a
    # failure has removed that, the writer fails and leaves nothing (common practice (no
    # source): no file left after a failed run); told to stop, it writes nothing.
    import threading

    result = run_study(read_system(make_input(random_sheets(**SHEETS))), contributions="all")
    gone = tmp_path / ".r-buses.csv.part"
    with pytest.raises(FileNotFoundError):
        csvout.write_bus_csv_to(result, gone, threading.Event())
    assert not gone.exists()
    stopped = threading.Event()
    stopped.set()
    kept = tmp_path / ".r-contributions.csv.part"
    kept.write_text("")
    with pytest.raises(csvout.Stopped):
        csvout.write_contributions_csv_to(result, kept, stopped)
    assert kept.read_text() == ""
