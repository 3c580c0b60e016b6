"""Outputs never clobber, never half-written; inputs never written; hostile files refused."""

from __future__ import annotations

import zipfile

import pytest
from click.testing import CliRunner

from faultcalc import InputError, read_system, sample_path
from faultcalc.cli import main
from faultcalc.io import tables


def run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def test_existing_results_need_overwrite(tmp_path):
    out = tmp_path / "r.xlsx"
    assert run("study", sample_path(), "-o", out).exit_code == 0
    before = out.read_bytes()
    again = run("study", sample_path(), "-o", out)
    assert again.exit_code == 1 and "--overwrite" in again.output
    assert out.read_bytes() == before
    assert run("study", sample_path(), "-o", out, "--overwrite").exit_code == 0


def test_output_that_is_the_input_is_refused(tmp_path):
    xlsx = tmp_path / "plant.xlsx"
    xlsx.write_bytes((sample_path().parents[2] / "sample_systems" / "plant_480v.xlsx").read_bytes())
    before = xlsx.read_bytes()
    result = run("study", xlsx, "-o", xlsx, "--overwrite")
    assert result.exit_code == 1 and "it is the input" in result.output
    assert xlsx.read_bytes() == before


def test_locked_output_is_a_clear_error(tmp_path, monkeypatch):
    # A results file held open by a spreadsheet program cannot be replaced: the rename fails.
    import faultcalc.io.files as files

    def locked(src, dst):
        raise PermissionError(13, "Permission denied", str(dst))

    monkeypatch.setattr(files.os, "replace", locked)
    result = run("study", sample_path(), "-o", tmp_path / "r.xlsx")
    assert result.exit_code == 1 and "Permission denied" in result.output
    assert "Traceback" not in result.output and list(tmp_path.iterdir()) == []


def test_output_path_that_is_a_folder(tmp_path):
    result = run("study", sample_path(), "-o", tmp_path, "--overwrite")
    assert result.exit_code == 1 and "is a folder" in result.output
    assert "Traceback" not in result.output


def test_a_failed_write_leaves_nothing(tmp_path, monkeypatch):
    import faultcalc.cli as cli

    def broken(result, path):
        path.write_text("partial")
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(cli, "write_json_to", broken)
    out, js = tmp_path / "r.xlsx", tmp_path / "r.json"
    result = run("study", sample_path(), "-o", out, "--json", js)
    assert result.exit_code == 1 and "No space left" in result.output
    assert list(tmp_path.iterdir()) == []  # neither file, no temporary left


def test_xml_entity_expansion_is_refused(tmp_path):
    # A workbook whose sheet XML declares entities (the "billion laughs" attack): the hardened
    # parser (defusedxml, used by openpyxl when installed) refuses it.
    good = sample_path().parents[2] / "sample_systems" / "plant_480v.xlsx"
    bad = tmp_path / "bomb.xlsx"
    with zipfile.ZipFile(good) as src, zipfile.ZipFile(bad, "w") as dst:
        for item in src.infolist():
            data = src.read(item.filename)
            if item.filename == "xl/worksheets/sheet2.xml":
                text = data.decode()
                head = (
                    '<?xml version="1.0"?><!DOCTYPE lolz [<!ENTITY lol "lol">'
                    '<!ENTITY lol2 "&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;">]>'
                )
                data = (head + text[text.index("<worksheet") :]).encode()
            dst.writestr(item, data)
    with pytest.raises(InputError) as info:
        read_system(bad)
    assert "cannot be read as an .xlsx workbook" in info.value.problems[0].message


def test_decompression_bomb_is_refused(tmp_path):
    bomb = tmp_path / "bomb.xlsx"
    with zipfile.ZipFile(bomb, "w", zipfile.ZIP_DEFLATED) as z:
        z.writestr("xl/worksheets/sheet1.xml", b"0" * (40 << 20))
    with pytest.raises(InputError) as info:
        read_system(bomb)
    assert "decompression bomb" in info.value.problems[0].message


def test_size_bound(tmp_path, monkeypatch):
    monkeypatch.setattr(tables, "MAX_FILE_BYTES", 100)
    with pytest.raises(InputError) as info:
        read_system(sample_path())
    assert "more than the" in info.value.problems[0].message
