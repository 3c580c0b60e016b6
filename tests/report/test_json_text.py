"""The JSON writer builds each table's rows column by column (#17 item 3): the text must be what
json.dumps writes for each row (the standard library as the reference), byte for byte."""

from __future__ import annotations

import json
import uuid

import pytest
from networks import random_sheets

from faultcalc import read_system, run_study, sample_path
from faultcalc.report import jsonout


def _reference_text(result) -> str:
    """The document with every row written by json.dumps (the writer before this change)."""
    tables = []
    mark = f"rows-{uuid.uuid4().hex}-"

    def later(table):
        tables.append(table)
        return f"{mark}{len(tables) - 1}"

    text = json.dumps(jsonout.result_dict(result, later), indent=2, allow_nan=False)
    pieces = text.split(f'"{mark}')
    out = [pieces[0]]
    before = pieces[0]
    for piece in pieces[1:]:
        number, rest = piece.split('"', 1)
        line = before.rsplit("\n", 1)[-1]
        indent = line[: len(line) - len(line.lstrip())]
        rows = [json.dumps(r, allow_nan=False) for r in jsonout._rows(tables[int(number)])]
        inner = indent + "  "
        out.append(
            "[]" if not rows else "[\n" + inner + (",\n" + inner).join(rows) + "\n" + indent + "]"
        )
        out.append(rest)
        before = rest
    return "".join(out) + "\n"


@pytest.mark.parametrize("rows_at_a_time", [20_000, 3])
def test_the_text_is_json_dumps_row_by_row(tmp_path, monkeypatch, rows_at_a_time):
    monkeypatch.setattr(jsonout, "ROWS_AT_A_TIME", rows_at_a_time)  # 3: chunk edges tested
    # the sample (cases, labels, duty, text and NaN cells) and a random network with
    # contributions, machines and zero-sequence data (common practice, no source)
    results = [run_study(read_system(sample_path()))]
    sheets = random_sheets(4, n_mv=5, n_lv=10, zero_sequence=True, machines=4, grounding=2)
    from conftest import write_csv_folder

    system = read_system(write_csv_folder(tmp_path / "net", sheets))
    results.append(run_study(system, contributions="all"))
    for k, result in enumerate(results):
        path = tmp_path / f"r{k}.json"
        jsonout.write_json_to(result, path)
        assert path.read_text(encoding="utf-8") == _reference_text(result)


def test_every_kind_of_value_is_written_as_json_dumps_writes_it(monkeypatch):
    # Floats of every magnitude (whole, tiny, huge, subnormal, -0.0, NaN, inf), integers, text
    # with quotes, backslashes, controls and non-ASCII, None: the reference rows are built here
    # with the standard library alone (json.dumps, allow_nan=False, NaN and inf as null).
    import io
    import math

    import numpy as np
    import pandas as pd

    rng = np.random.default_rng(7)
    floats = np.concatenate(
        [
            rng.lognormal(0, 12, 3000) * rng.choice([-1, 1], 3000),
            np.round(rng.uniform(-1e6, 1e6, 500)),
            [
                0.0,
                -0.0,
                1.0,
                1e15,
                1e15 - 1,
                9999999999999998.0,
                1e16,
                1e-4,
                9.99e-5,
                5e-324,
                1.7976931348623157e308,
                0.1 + 0.2,
                np.nan,
                np.inf,
                -np.inf,
            ],
        ]
    )
    n = len(floats)
    words = [
        "plain",
        'say "hi"',
        "back\\slash",
        "tab\there",
        "line\nbreak",
        "été",
        "\u202e",
        "",
        "\x00",
        "😀",
    ]
    table = pd.DataFrame(
        {
            "x": floats,
            "k": rng.integers(-5, 5, n),
            "name": [words[i % len(words)] for i in range(n)],
            "mixed": [
                None if i % 3 == 0 else (words[i % 10] if i % 3 == 1 else float(i))
                for i in range(n)
            ],
        }
    )

    def value(v):
        if isinstance(v, str) or v is None:
            return v
        v = float(v)
        return v if math.isfinite(v) else None

    rows = [
        json.dumps({c: value(table[c].iloc[i]) for c in table.columns}, allow_nan=False)
        for i in range(n)
    ]
    expected = "[\n    " + ",\n    ".join(rows) + "\n  ]"
    for step in (1_000, 7, n):
        monkeypatch.setattr(jsonout, "ROWS_AT_A_TIME", step)
        out = io.StringIO()
        jsonout._write_rows(out, table, "  ")
        assert out.getvalue() == expected, step
