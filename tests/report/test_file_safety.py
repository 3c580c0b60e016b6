"""Outputs never clobber, never half-written; inputs never written; hostile files refused."""

from __future__ import annotations

import zipfile

import openpyxl
import pytest
from click.testing import CliRunner

from faultcalc import InputError, read_system, sample_path
from faultcalc.cli import main
from faultcalc.read import tables


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
    # A results file held open by a spreadsheet program cannot be replaced: the rename fails
    # (the link that places a new file, likewise).
    import faultcalc.report.files as files

    def locked(src, dst):
        raise PermissionError(13, "Permission denied", str(dst))

    monkeypatch.setattr(files.os, "replace", locked)
    monkeypatch.setattr(files.os, "link", locked)
    result = run("study", sample_path(), "-o", tmp_path / "r.xlsx")
    assert result.exit_code == 1 and "Permission denied" in result.output
    assert "Traceback" not in result.output and list(tmp_path.iterdir()) == []


def test_locked_existing_output_with_overwrite(tmp_path, monkeypatch):
    import faultcalc.report.files as files

    out = tmp_path / "r.xlsx"
    assert run("study", sample_path(), "-o", out).exit_code == 0
    before = out.read_bytes()

    def locked(src, dst):
        raise PermissionError(13, "Permission denied", str(dst))

    monkeypatch.setattr(files.os, "replace", locked)
    result = run("study", sample_path(), "-o", out, "--overwrite")
    assert result.exit_code == 1 and "Permission denied" in result.output
    assert out.read_bytes() == before and [p.name for p in tmp_path.iterdir()] == ["r.xlsx"]


OTHER = b"a file another program wrote"


def _appears_while_writing(monkeypatch, path):
    """Another program creates ``path`` while the results are being written."""
    import faultcalc.report.workbook as workbook

    real = workbook.write_workbook_to

    def writing(result, temp, **kwargs):
        real(result, temp, **kwargs)
        path.write_bytes(OTHER)

    monkeypatch.setattr(workbook, "write_workbook_to", writing)


def test_output_that_appears_during_the_run_is_kept(tmp_path, monkeypatch):
    out = tmp_path / "r.xlsx"
    _appears_while_writing(monkeypatch, out)
    result = run("study", sample_path(), "-o", out, "--json", tmp_path / "r.json")
    assert result.exit_code == 1 and "created by something else while this ran" in result.output
    assert out.read_bytes() == OTHER
    assert [p.name for p in tmp_path.iterdir()] == ["r.xlsx"]  # no JSON, no temporary file


def test_nothing_is_placed_when_one_output_appeared(tmp_path, monkeypatch):
    # The workbook is placed before the JSON; when the JSON's name turns out taken, the
    # workbook placed a moment before is taken back.
    js = tmp_path / "r.json"
    _appears_while_writing(monkeypatch, js)
    result = run("study", sample_path(), "-o", tmp_path / "r.xlsx", "--json", js)
    assert result.exit_code == 1 and "r.json was created by something else" in result.output
    assert js.read_bytes() == OTHER and [p.name for p in tmp_path.iterdir()] == ["r.json"]


def test_overwrite_replaces_only_what_was_there(tmp_path, monkeypatch):
    out, js = tmp_path / "r.xlsx", tmp_path / "r.json"
    assert run("study", sample_path(), "-o", out).exit_code == 0
    before = out.read_bytes()
    _appears_while_writing(monkeypatch, js)
    result = run("study", sample_path(), "-o", out, "--json", js, "--overwrite")
    assert result.exit_code == 1 and "r.json was created by something else" in result.output
    assert out.read_bytes() == before and js.read_bytes() == OTHER
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r.json", "r.xlsx"]


def test_placement_without_hard_links(tmp_path, monkeypatch):
    # Some file systems (FAT, exFAT, some network shares) have no hard links.
    import errno
    import os
    import stat

    import faultcalc.report.files as files

    def no_links(src, dst):
        raise OSError(errno.EPERM, "Operation not permitted")

    monkeypatch.setattr(files.os, "link", no_links)
    out = tmp_path / "r.xlsx"
    assert run("study", sample_path(), "-o", out).exit_code == 0
    assert "Fault currents" in openpyxl.load_workbook(out, read_only=True).sheetnames
    umask = os.umask(0)
    os.umask(umask)
    # an ordinary file: 0666 less the umask, as open(2) creates one (POSIX; common practice)
    assert stat.S_IMODE(out.stat().st_mode) == 0o666 & ~umask
    other = tmp_path / "s.xlsx"
    _appears_while_writing(monkeypatch, other)
    result = run("study", sample_path(), "-o", other)
    assert result.exit_code == 1 and "created by something else" in result.output
    assert other.read_bytes() == OTHER
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r.xlsx", "s.xlsx"]


def test_output_path_that_is_a_folder(tmp_path):
    result = run("study", sample_path(), "-o", tmp_path, "--overwrite")
    assert result.exit_code == 1 and "is a folder" in result.output
    assert "Traceback" not in result.output


def test_a_failed_write_leaves_nothing(tmp_path, monkeypatch):
    import faultcalc.report.jsonout as jsonout

    def broken(result, path):
        path.write_text("partial")
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(jsonout, "write_json_to", broken)
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


def test_leftover_temporaries_of_a_killed_write_are_removed_and_nothing_else(tmp_path):
    # A fleet's worker stopped with its cluster while it wrote leaves its temporary beside
    # the target (common practice, no source: a killed process runs no clean-up).
    from faultcalc.report.files import _temporary, remove_leftovers

    target = tmp_path / "f5-results.xlsx"
    left = _temporary(target)
    other = tmp_path / ".f5-results.xlsx.keep"  # not one of ours
    other.write_text("x")
    near = _temporary(tmp_path / "f5-results.xlsx2")  # another target's
    assert remove_leftovers([target]) == [left]
    assert not left.exists() and other.exists() and near.exists()
