"""The column-wise CSV reader gives exactly the careful reader's System, or declines.

Check values: the careful reader (faultcalc.read.reader.read_tables), itself checked against the
sources named in the other reader tests; Python's float() for number text (the careful reader's
rule). Inputs: the invented samples and random networks, and mutations of them (common
practice (no source): two readers of one format must agree).
"""

from __future__ import annotations

import copy
import random
import shutil

import numpy as np
import pytest
from conftest import write_csv_folder
from networks import random_sheets
from test_fuzz import _mutate

from faultcalc import InputError, sample_path
from faultcalc.read import columnar
from faultcalc.read.reader import read_tables
from faultcalc.read.tables import load_input


def _careful(folder):
    try:
        return read_tables(load_input(folder))
    except InputError:
        return None


def _sample_without_cases(tmp_path, name):
    folder = tmp_path / name
    shutil.copytree(sample_path(name), folder)
    (folder / "cases.csv").unlink(missing_ok=True)
    return folder


@pytest.mark.parametrize("name", ["plant_480v", "double_ended_480v"])
def test_samples_read_alike(tmp_path, name):
    folder = _sample_without_cases(tmp_path, name)
    fast = columnar.read_columns(folder)
    assert fast is not None
    assert fast == read_tables(load_input(folder))
    assert fast.warnings == read_tables(load_input(folder)).warnings


def test_random_networks_read_alike(tmp_path):
    for seed in range(12):
        sheets = random_sheets(
            seed,
            n_mv=6,
            n_lv=10,
            loops=seed % 3,
            sources=1 + seed % 2,
            ties=seed % 2,
            off_nominal=seed % 4 == 1,
            zero_sequence=seed % 2 == 0,
            machines=seed % 5,
            clocks=seed % 3 == 2,
        )
        folder = write_csv_folder(tmp_path / f"net{seed}", sheets)
        fast = columnar.read_columns(folder)
        assert fast is not None, seed
        careful = read_tables(load_input(folder))
        assert fast == careful and fast.warnings == careful.warnings
        assert [c.row for c in fast.cables] == [c.row for c in careful.cables]


def _folder_of(raw, folder):
    sheets = {
        name: [values for _, values in s.rows] or [dict.fromkeys(s.headers)]
        for name, s in raw.sheets.items()
    }
    return write_csv_folder(folder, sheets)


@pytest.mark.slow  # fuzzing: `make test` runs it, `make quick` not
def test_mutated_inputs_read_alike_or_decline(tmp_path):
    """A mutated input is either read exactly as the careful reader reads it, or declined;
    an input the careful reader refuses is always declined."""
    bases = [load_input(_sample_without_cases(tmp_path, "plant_480v"))]
    for seed in (1, 2):
        sheets = random_sheets(
            seed, n_mv=4, n_lv=6, loops=1, sources=2, ties=1, zero_sequence=True, machines=3
        )
        bases.append(load_input(write_csv_folder(tmp_path / f"net{seed}", sheets)))
    rng = random.Random(11)
    accepted = declined = 0
    for i in range(400):
        raw = copy.deepcopy(bases[i % len(bases)])
        for _ in range(rng.randint(1, 2)):
            _mutate(raw, rng)
        folder = _folder_of(raw, tmp_path / f"m{i}")
        careful = _careful(folder)
        fast = columnar.read_columns(folder)
        if fast is None:
            declined += 1
            continue
        accepted += 1
        assert careful is not None, f"mutation {i}: the careful reader refuses it"
        assert fast == careful and fast.warnings == careful.warnings, f"mutation {i}"
    print(f"400 mutations: {accepted} read alike, {declined} declined")
    assert accepted > 40 and declined > 100


@pytest.mark.parametrize(
    "change",
    [
        lambda t: t.replace("\n", "\n\n", 2),  # a blank line
        lambda t: t.replace("13.8", "13,800", 1),  # a thousands separator
        lambda t: t.replace("13.8", "13.8 kV", 1),  # a unit after the number
        lambda t: t.replace("\n", "\r", 1),  # an old line ending
    ],
)
def test_untidy_cells_are_left_to_the_careful_reader(tmp_path, change):
    folder = write_csv_folder(tmp_path / "net", random_sheets(4, n_mv=4, n_lv=4))
    buses = folder / "buses.csv"
    buses.write_text(change(buses.read_text()))
    assert columnar.read_columns(folder) is None


def test_spaces_around_names_are_noted_alike(tmp_path):
    """The careful reader's note for each name with spaces around it, in its order."""
    sheets = random_sheets(4, n_mv=5, n_lv=5, machines=2)
    folder = write_csv_folder(tmp_path / "net", sheets)
    for name, old, new in (("buses", "\nM1,", "\n M1 ,"), ("cables", ",M1,", ",M1  ,")):
        path = folder / f"{name}.csv"
        path.write_text(path.read_text().replace(old, new))
    fast = columnar.read_columns(folder)
    careful = read_tables(load_input(folder))
    assert fast is not None and fast == careful and fast.warnings == careful.warnings
    assert sum("spaces around the text removed" in w for w in fast.warnings) >= 2


def test_quoted_fields_read_alike(tmp_path):
    sheets = random_sheets(6, n_mv=4, n_lv=4)
    sheets["buses"][0]["description"] = 'Main board, "north" room'
    folder = write_csv_folder(tmp_path / "net", sheets)
    fast = columnar.read_columns(folder)
    assert fast is not None and fast == read_tables(load_input(folder))
    assert fast.buses[0].description == 'Main board, "north" room'


def test_number_text_reads_as_python_float_reads_it():
    """Arrow's number parser accepts a text only if Python's float() reads it the same."""
    import pyarrow as pa
    import pyarrow.compute as pc

    rng = random.Random(3)
    parts = ["", "+", "-", "0", "1", "9", ".", "e", "E", "5", "00", "_", " ", "inf", "nan", "x"]
    texts = ["".join(rng.choice(parts) for _ in range(rng.randint(1, 6))) for _ in range(5000)]
    texts += [repr(v) for v in np.random.default_rng(2).uniform(-1e6, 1e6, 2000).tolist()]
    for text in texts:
        try:
            value = pc.cast(pa.array([text]), pa.float64())[0].as_py()
        except pa.ArrowInvalid:
            continue
        assert value == float(text) or (value != value and float(text) != float(text)), text
