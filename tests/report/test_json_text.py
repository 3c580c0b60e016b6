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
