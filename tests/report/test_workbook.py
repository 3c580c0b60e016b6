"""The results workbook: what a reviewer sees."""

from __future__ import annotations

import math

import pytest
from openpyxl import load_workbook

from faultcalc import read_system, run_study, sample_path, write_json, write_workbook
from faultcalc.cautions import CAUTIONS


@pytest.fixture(scope="module")
def result():
    return run_study(read_system(sample_path("double_ended_480v")))


@pytest.fixture
def book(result, tmp_path):
    path = tmp_path / "r.xlsx"
    write_workbook(result, path)
    return load_workbook(path)


def test_sheets(book):
    # The first sheet is the Summary (#14); it was "Fault currents".
    assert book.sheetnames == [
        "Summary",
        "Fault currents",
        "Equipment duty",
        "Cases",
        "Envelope",
        "Element impedances",
        "Cable check",
        "Warnings",
        "Basis and cautions",
        "Label SUB-A",
        "Label SUB-B",
    ]


def test_bus_sheet_matches_the_result_in_input_order(book, result):
    ws = book["Fault currents"]
    assert ws.freeze_panes == "B2"
    headers = [c.value for c in ws[1]]

    def col(words):
        return next(j for j, h in enumerate(headers, start=1) if h.startswith(words))

    checks = {
        "3-phase fault, kA": "i3ph_ka",
        "Line-to-ground fault, kA": "islg_ka",
        "Line-to-line fault, kA": "ill_ka",
        "Double line-to-ground fault, kA": "illg_ka",
        "X/R": "xr",
        "Thevenin R0, ohm": "r0_ohm",
    }
    for i, row in enumerate(result.buses.itertuples(index=False), start=2):
        assert ws.cell(i, 1).value == row.bus
        for header, field in checks.items():
            assert ws.cell(i, col(header)).value == pytest.approx(getattr(row, field), rel=1e-12)
        assert ws.cell(i, col("3-phase fault, kA")).number_format == "0.00"
        largest = ws.cell(i, col("Largest current from")).value
        assert largest in ("3-phase", "line-to-ground", "line-to-line", "double line-to-ground")
    # The tied buses say so.
    tied = col("Same node as")
    assert ws.cell(5, tied).value == "SUB-B" and ws.cell(6, tied).value == "SUB-A"


def test_element_echo_lets_a_reviewer_retrace(book, result):
    ws = book["Element impedances"]
    rows = {r[0].value: [c.value for c in r] for r in ws.iter_rows(min_row=2)}
    assert set(rows) == set(result.elements.element)
    tx = rows["TX-A"]
    # 5.75 % on 2000 kVA, 100 MVA base: |z| = 0.0575 x 100 / 2 = 2.875 pu
    # (change of base, common practice, no source).
    assert math.hypot(tx[9], tx[10]) == pytest.approx(2.875, rel=1e-12)
    assert "2000 kVA" in tx[4] and "13.8/0.48" in tx[4]
    assert "merged" in rows["TIE-1"][12]


def test_basis_and_cautions(book, result):
    ws = book["Basis and cautions"]
    text = "\n".join(str(c.value) for row in ws.iter_rows() for c in row if c.value is not None)
    for caution in CAUTIONS:
        assert caution in text
    for item in (
        result.basis.input_sha256,
        result.basis.calculated_at,
        "faultcalc",
        "100 MVA",
        "Prefault voltage",
        "Method",
    ):
        assert item in text


def test_every_sheet_prints_the_short_caution(book):
    for ws in book.worksheets:
        assert "qualified engineer" in ws.oddFooter.left.text


def test_write_failure_leaves_no_file(result, tmp_path, monkeypatch):
    import faultcalc.report.workbook as wb

    def broken(*args, **kwargs):
        raise RuntimeError("disk full")

    monkeypatch.setattr(wb, "write_workbook_to", broken)
    target = tmp_path / "r.xlsx"
    with pytest.raises(RuntimeError):
        wb.write_workbook(result, target)
    assert list(tmp_path.iterdir()) == []


def test_json_is_strict(result, tmp_path):
    import json

    path = tmp_path / "r.json"
    write_json(result, path)
    doc = json.loads(path.read_text(), parse_constant=lambda c: pytest.fail(f"non-JSON {c}"))
    assert [b["i3ph_ka"] for b in doc["buses"]] == result.buses.i3ph_ka.tolist()
    # No zero-sequence path gives null, never NaN (JSON has no NaN).
    assert all(b["islg_ka"] is None or b["islg_ka"] > 0 for b in doc["buses"])
