"""The sample systems: in sync with the bundled copies, and xlsx equal to CSV."""

from __future__ import annotations

import filecmp
from pathlib import Path

import pytest

from faultcalc import SAMPLES, read_system, run_study, sample_path

REPO = Path(__file__).resolve().parents[1]


@pytest.mark.parametrize("name", SAMPLES)
def test_sample_folder_matches_the_bundled_copy(name):
    bundled = sample_path(name)
    copy = REPO / "sample_systems" / name
    files = sorted(p.name for p in bundled.glob("*.csv"))
    assert files == sorted(p.name for p in copy.glob("*.csv"))
    _, mismatch, errors = filecmp.cmpfiles(bundled, copy, files, shallow=False)
    assert not mismatch and not errors, "run python scripts/make_samples.py"


@pytest.mark.parametrize("name", SAMPLES)
def test_sample_workbook_reads_like_the_csv(name):
    a = read_system(REPO / "sample_systems" / name)
    b = read_system(REPO / "sample_systems" / f"{name}.xlsx")
    for part in ("settings", "buses", "sources", "transformers", "cables", "impedances"):
        assert getattr(a, part) == getattr(b, part)


@pytest.mark.parametrize("name", SAMPLES)
def test_samples_are_marked_invented_and_study_cleanly(name):
    system = read_system(sample_path(name))
    assert "invented" in system.settings.title.lower()
    result = run_study(system)
    assert result.warnings == ()
    assert (result.buses.i3ph_ka > 0).all()
