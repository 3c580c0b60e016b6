"""Reader fuzz test: mutated workbooks end in a result or an InputError, never another exception.

Mutations of valid inputs (the bundled samples and random networks): cells blanked, retyped
with hostile values, swapped, duplicated; rows duplicated and deleted; columns and headers
deleted, renamed or duplicated; sheets deleted. Most run on the loaded tables (fast); a share
run through real .xlsx files, whose bytes must not change. Common practice (no source).
"""

from __future__ import annotations

import copy
import dataclasses
import datetime as dt
import hashlib
import random
from dataclasses import dataclass
from pathlib import Path

import pytest
from conftest import write_csv_folder, write_xlsx
from networks import random_sheets

from faultcalc import InputError, run_study, sample_path
from faultcalc.read.raw import RawInput, RawSheet
from faultcalc.read.reader import read_tables
from faultcalc.read.tables import load_input
from faultcalc.report.workbook import build_workbook

pytestmark = pytest.mark.slow  # fuzzing and scale: `make test` runs them, `make quick` not

MUTATIONS = 5200
FILE_MUTATIONS = 120
HOSTILE = [
    "",
    " ",
    "0",
    "-1",
    "1e308",
    "-1e308",
    "nan",
    "inf",
    "1,5",
    "1,500",
    "12 ft",
    "5.75%",
    "=A1",
    "\u00a0",
    "YN",
    "d",
    "abc",
    "NULL",
    "\u2212",
    "9" * 400,
    None,
    0,
    -3.5,
    1e-300,
    10**20,
    True,
    dt.datetime(2020, 1, 1),
    "#REF!",
    "4/0",
    "240 mm2",
    "all",
    "no",
    "yes",
    "SWBD-1",
    "  swbd-1  ",
]


@dataclass
class RowSheet:
    """A raw sheet as rows of {header: cell}, for mutating."""

    headers: list[str]
    rows: list[tuple[int, dict]]
    blank_header_columns: list[int]


@dataclass
class RowInput:
    sheets: dict[str, RowSheet]
    raw: RawInput  # the rest of the loaded input (name, SHA-256, problems, notes)


def as_rows(raw: RawInput) -> RowInput:
    sheets = {
        name: RowSheet(list(s.headers), s.records(), list(s.blank_header_columns))
        for name, s in raw.sheets.items()
    }
    return RowInput(sheets, raw)


def as_raw(edited: RowInput, arrow: bool = False) -> RawInput:
    """The loaded input again; ``arrow``: columns of text only as Arrow arrays ('' for blank),
    as the CSV loader gives them, so that the whole-column typing of Arrow text is fuzzed."""
    import pyarrow as pa

    sheets = {}
    for name, s in edited.sheets.items():
        sheet = RawSheet.from_records(name, s.headers, s.rows, s.blank_header_columns)
        if arrow:
            for header, cells in sheet.columns.items():
                if all(c is None or type(c) is str for c in cells):
                    sheet.columns[header] = pa.array(
                        ["" if c is None else c for c in cells], pa.string()
                    )
        sheets[name] = sheet
    return dataclasses.replace(edited.raw, sheets=sheets, problems=list(edited.raw.problems))


def _mutate(raw: RowInput, rng: random.Random) -> str:
    names = [n for n in raw.sheets if raw.sheets[n].rows or raw.sheets[n].headers]
    name = rng.choice(names)
    sheet: RowSheet = raw.sheets[name]
    kind = rng.choice(
        [
            "blank",
            "retype",
            "retype",
            "swap",
            "dup_row",
            "del_row",
            "del_col",
            "rename_col",
            "dup_value",
            "del_sheet",
            "copy_cell",
        ]
    )
    if kind == "del_sheet":
        del raw.sheets[name]
    elif not sheet.rows or not sheet.headers:
        sheet.headers.append(rng.choice(["bus", "kv", "zzz"]))
    elif kind in ("blank", "retype", "dup_value", "copy_cell"):
        number, values = rng.choice(sheet.rows)
        column = rng.choice(sheet.headers)
        if kind == "blank":
            values[column] = None
        elif kind == "retype":
            values[column] = rng.choice(HOSTILE)
        else:
            _, other = rng.choice(sheet.rows)
            values[column] = other.get(rng.choice(sheet.headers))
    elif kind == "swap":
        (_, a), (_, b) = rng.choice(sheet.rows), rng.choice(sheet.rows)
        ca, cb = rng.choice(sheet.headers), rng.choice(sheet.headers)
        a[ca], b[cb] = b.get(cb), a.get(ca)
    elif kind == "dup_row":
        number, values = rng.choice(sheet.rows)
        sheet.rows.append((max(n for n, _ in sheet.rows) + 1, dict(values)))
    elif kind == "del_row":
        sheet.rows.pop(rng.randrange(len(sheet.rows)))
    elif kind == "del_col":
        column = rng.choice(sheet.headers)
        sheet.headers.remove(column)
        for _, values in sheet.rows:
            values.pop(column, None)
    else:  # rename_col
        column = rng.choice(sheet.headers)
        new = rng.choice(sheet.headers + ["zzz", "kv", "bus"])
        sheet.headers[sheet.headers.index(column)] = new
        for _, values in sheet.rows:
            if column in values:
                values[new] = values.pop(column)
    return f"{kind} on {name}"


def _check(raw, arrow: bool = False) -> str:
    try:
        system = read_tables(as_raw(raw, arrow))
        result = run_study(system)
    except InputError as exc:
        assert exc.problems
        for p in exc.problems:
            assert isinstance(p.sheet, str) and p.message
            assert p.row is None or isinstance(p.row, int)
        return "input error"
    assert len(result.buses) == len(system.buses)
    return "result"


@pytest.fixture(scope="module")
def bases(tmp_path_factory):
    folder = tmp_path_factory.mktemp("bases")
    raws = [as_rows(load_input(sample_path(name))) for name in ("plant_480v", "double_ended_480v")]
    for seed in (1, 2):
        sheets = random_sheets(
            seed=seed, n_mv=4, n_lv=6, loops=1, sources=2, ties=1, zero_sequence=True, machines=3
        )
        raws.append(as_rows(load_input(write_csv_folder(folder / f"net{seed}", sheets))))
    return raws


def test_table_mutations(bases):
    rng = random.Random(20261201)
    outcomes = {"result": 0, "input error": 0}
    for i in range(MUTATIONS):
        raw = copy.deepcopy(bases[i % len(bases)])
        done = [_mutate(raw, rng) for _ in range(rng.randint(1, 3))]
        try:
            outcomes[_check(raw, arrow=i % 2 == 1)] += 1
        except Exception as exc:  # the finding: report the mutation that caused it
            raise AssertionError(
                f"mutation {i} ({'; '.join(done)}) raised {type(exc).__name__}: {exc}"
            ) from exc
        if i % 97 == 0 and outcomes["result"]:
            try:
                build_workbook(run_study(read_tables(as_raw(raw))))
            except InputError:
                pass
    print(f"{MUTATIONS} table mutations: {outcomes}")
    assert outcomes["result"] > 100 and outcomes["input error"] > 1000


def test_file_mutations_never_change_the_input(tmp_path):
    rng = random.Random(7)
    base = as_rows(load_input(sample_path("plant_480v")))
    for i in range(FILE_MUTATIONS):
        raw = copy.deepcopy(base)
        _mutate(raw, rng)
        sheets = {
            name: [values for _, values in s.rows] or [dict.fromkeys(s.headers)]
            for name, s in raw.sheets.items()
        }
        path = write_xlsx(tmp_path / f"m{i}.xlsx", sheets)
        before = hashlib.sha256(path.read_bytes()).hexdigest()
        try:
            from faultcalc import read_system

            run_study(read_system(path))
        except InputError:
            pass
        assert hashlib.sha256(Path(path).read_bytes()).hexdigest() == before
