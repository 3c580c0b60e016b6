"""Results as JSON: the machine-readable twin of the workbook.

The file is indented, with one line per bus (and per case bus, envelope row, contribution):
the lists of rows are written ROWS_AT_A_TIME rows at a time, each column of those rows encoded
at once in Arrow (the text is json.dumps's for each row, tested), so a study of a million buses
needs memory for those rows' text, not for its whole JSON.
"""

from __future__ import annotations

import json
import math
import uuid
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import numpy as np

from ..results import BUS_COLUMNS, DUTY_COLUMNS, LABEL_COLUMNS, StudyResult
from .files import staged


def _number(value: Any) -> Any:
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return None
    return value


def result_dict(result: StudyResult, records=None) -> dict[str, Any]:
    """The JSON document as Python objects (``records`` turns each table into its rows)."""
    b = result.basis
    s = b.settings
    rows_of = records or _all_rows
    buses = rows_of(result.buses[list(BUS_COLUMNS)])
    return {
        "tool": {"name": b.tool_name, "version": b.tool_version},
        "study": {
            "title": s.title,
            "base_mva": s.base_mva,
            "frequency_hz": s.frequency_hz,
            "prefault_pu": s.prefault_pu,
            "prefault_voltage": s.prefault_voltage,
            "conductor_temp_c": s.conductor_temp_c,
            "fault_ohm": s.fault_ohm,
            "method": s.method,
            "xr_method": s.xr_method,
            "lv_tolerance_pct": s.lv_tolerance_pct,
            "end_of_fault_temp_c": s.end_of_fault_temp_c,
            "min_time_delay_s": s.min_time_delay_s,
            "fault_duration_s": s.fault_duration_s,
            "basis": b.method,
            "input": b.input_name,
            "input_sha256": b.input_sha256,
            "calculated_at": b.calculated_at,
        },
        "buses": buses,
        "warnings": list(result.warnings),
        "cautions": list(result.cautions),
        **(
            {
                "cases": [
                    {
                        "case": name,
                        "in_labels": name not in result.label_cases_left_out,
                        "buses": rows_of(table[list(BUS_COLUMNS)]),
                    }
                    for name, table in result.cases.items()
                ],
                "envelope": rows_of(result.envelope),
            }
            if result.envelope is not None
            else {}
        ),
        **(
            {
                "equipment_duty": {
                    "devices_over_rating": len(result.over_rating()),
                    "rows": rows_of(result.duty[list(DUTY_COLUMNS)]),
                }
            }
            if result.duty is not None
            else {}
        ),
        **(
            {
                "labels": {
                    "cases_left_out": list(result.label_cases_left_out),
                    "rows": rows_of(result.labels[list(LABEL_COLUMNS)]),
                }
            }
            if result.labels is not None
            else {}
        ),
        **(
            {"contributions": rows_of(result.contributions)}
            if result.contributions is not None
            else {}
        ),
    }


def _rows(table) -> Iterator[dict[str, Any]]:
    """Each row of a table as a dict: text as text, numbers as float, NaN and inf as None."""
    names = list(table.columns)
    columns = []
    for name in names:
        values = table[name].to_numpy(dtype=object)
        columns.append(
            [v if isinstance(v, str) else _number(None if v is None else float(v)) for v in values]
        )
    for row in zip(*columns, strict=True):
        yield dict(zip(names, row, strict=True))


def _all_rows(table) -> list[dict[str, Any]]:
    return list(_rows(table))


def cable_check_dict(checks, tolerance_pct: float, input_name: str, sha256: str) -> dict:
    """The JSON document of ``faultcalc check-cables``."""
    from .. import __version__
    from ..cautions import CAUTIONS
    from ..conductors.cablecheck import CHECK_COLUMNS

    fields = [f for f in CHECK_COLUMNS if f != "table_row"]
    return {
        "tool": {"name": "faultcalc", "version": __version__},
        "input": input_name,
        "input_sha256": sha256,
        "tolerance_pct": tolerance_pct,
        "cables": [{f: getattr(c, f) for f in fields} for c in checks],
        "cautions": list(CAUTIONS),
    }


def write_json_to(result: StudyResult, path: Path) -> None:
    tables: list[Any] = []
    mark = f"rows-{uuid.uuid4().hex}-"  # stands in for a list of rows until written

    def later(table):
        tables.append(table)
        return f"{mark}{len(tables) - 1}"

    text = json.dumps(result_dict(result, later), indent=2, allow_nan=False)
    pieces = text.split(f'"{mark}')
    with path.open("w", encoding="utf-8", newline="\n") as handle:  # rows go as bytes too
        before = pieces[0]
        handle.write(before)
        for piece in pieces[1:]:
            number, rest = piece.split('"', 1)
            line = before.rsplit("\n", 1)[-1]
            _write_rows(handle, tables[int(number)], line[: len(line) - len(line.lstrip())])
            handle.write(rest)
            before = rest
        handle.write("\n")


ROWS_AT_A_TIME = 100_000  # rows encoded and written at a time: memory for these rows only

# Floats whose shortest text Arrow writes as Python's repr does (the same shortest digits;
# measured on pyarrow's cast): finite, not a whole number, 1e-4 <= |x| < 1e10; whole numbers
# below 1e10 take ".0" after Arrow's text. Every other float (smaller, larger, not finite) is
# written by repr or as null; the test writes floats of every magnitude against json.dumps.
_ARROW_LOW, _ARROW_HIGH = 1e-4, 1e10
# Text that json.dumps writes as itself between quotes: printable ASCII without " and \.
_PLAIN_TEXT = r"^[\x20\x21\x23-\x5b\x5d-\x7e]*$"


def _write_rows(handle, table, indent: str) -> None:
    """The rows of ``table`` as ``json.dumps`` writes each (the same text), built column by
    column in Arrow: each column's values encoded at once, the rows joined element-wise, and
    the text written from Arrow's buffer (no Python object per row). Arrow's kernels let go of
    the interpreter, so two threads encode the columns and the file is written from a thread
    while the next rows are encoded."""
    from concurrent.futures import ThreadPoolExecutor

    if not len(table):
        handle.write("[]")
        return
    names = list(table.columns)
    inner = indent + "  "
    separator = ",\n" + inner
    handle.write("[\n" + inner)
    if hasattr(handle, "buffer"):  # a file: the rows go as bytes (UTF-8 already)
        handle.flush()
        write = handle.buffer.write
    else:

        def write(data):
            handle.write(bytes(data).decode("utf-8"))

    keys = [("{" if k == 0 else ", ") + json.dumps(name) + ": " for k, name in enumerate(names)]
    step = ROWS_AT_A_TIME
    with ThreadPoolExecutor(2) as pool:
        writing = None
        for start in range(0, len(table), step):
            chunk = table.iloc[start : start + step]
            encoded = list(pool.map(_encoded, [chunk[name] for name in names]))
            parts = [x for pair in zip(keys, encoded, strict=True) for x in pair]
            rows = _join(*parts, "}" + separator)
            offsets = np.frombuffer(  # large strings: 64-bit offsets, rows past 2 GiB too
                rows.buffers()[1], dtype=np.int64, count=len(rows) + 1, offset=rows.offset * 8
            )
            end = int(offsets[-1])
            if start + step >= len(table):  # the table's last row: no separator after it
                end -= len(separator.encode("utf-8"))
            if writing is not None:
                writing.result()
            data = memoryview(rows.buffers()[2])[int(offsets[0]) : end]
            writing = pool.submit(write, data)  # ``data`` keeps ``rows``' buffer alive
        writing.result()
    handle.write("\n" + indent + "]")


def _join(*parts):
    """Arrow large strings and texts joined element-wise (texts as large-string scalars)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    big = pa.large_string()
    return pc.binary_join_element_wise(
        *(pa.scalar(p, big) if isinstance(p, str) else p for p in parts), pa.scalar("", big)
    )


def _encoded(column):
    """Each value of a table column as JSON text, as ``json.dumps`` writes it (an Arrow string
    array): a float by its repr, NaN and inf as null, text escaped, None as null."""
    import pyarrow as pa

    values = column.to_numpy()
    if values.dtype.kind in "iub":
        values = values.astype(float)
    if values.dtype.kind == "f":
        return _floats(values)
    try:  # text and None only: the whole column at once
        strings = pa.array(values, pa.large_string())
    except (pa.ArrowInvalid, pa.ArrowTypeError, UnicodeEncodeError):  # numbers, lone surrogates
        return _mixed(values)
    return _texts(strings)


def _texts(strings):
    """JSON text of an Arrow string array (nulls as null): quotes around plain text, json.dumps
    for the rest (escapes, non-ASCII)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    quoted = _join('"', strings, '"')
    plain = pc.fill_null(pc.match_substring_regex(strings, _PLAIN_TEXT), True)
    if not pc.all(plain).as_py():
        other = np.flatnonzero(~plain.to_numpy(zero_copy_only=False))
        escaped = np.empty(len(strings), dtype=object)
        escaped[:] = ""
        escaped[other] = [json.dumps(v) for v in strings.take(pa.array(other)).to_pylist()]
        quoted = pc.if_else(plain, quoted, pa.array(escaped, pa.large_string()))
    return pc.fill_null(quoted, "null")


def _mixed(values: np.ndarray):
    """JSON text of a column of text, None and numbers, value by value."""
    import pyarrow as pa

    out = []
    for v in values.tolist():
        if isinstance(v, str):
            out.append(json.dumps(v))
        elif v is None:
            out.append("null")
        else:
            number = float(v)
            out.append(json.dumps(number) if math.isfinite(number) else "null")
    return pa.array(out, pa.large_string())


def _floats(values: np.ndarray):
    """Float texts as repr writes them, null for NaN and inf: Arrow's shortest text where it
    is repr's, ".0" after a whole number, repr for the rest."""
    import pyarrow as pa
    import pyarrow.compute as pc

    size = np.abs(values)
    finite = np.isfinite(values)
    with np.errstate(invalid="ignore"):
        whole = (values == np.trunc(values)) & (size < _ARROW_HIGH)
        fraction = ~whole & (size >= _ARROW_LOW) & (size < _ARROW_HIGH)
    if not finite.any():
        return pa.repeat(pa.scalar("null", pa.large_string()), len(values))
    text = pc.cast(pa.array(values), pa.large_string())
    if whole.any():
        text = pc.if_else(pa.array(whole), _join(text, ".0"), text)
    other = np.flatnonzero(~whole & ~fraction)
    if not len(other):
        return text
    replacement = np.empty(len(values), dtype=object)
    replacement[:] = "null"
    by_repr = other[finite[other]]
    replacement[by_repr] = list(map(float.__repr__, values[by_repr].tolist()))
    mask = np.zeros(len(values), bool)
    mask[other] = True
    return pc.if_else(pa.array(mask), pa.array(replacement, pa.large_string()), text)


def write_json(result: StudyResult, path: str | Path) -> None:
    """Write the results as JSON, atomically (a temporary file renamed into place)."""
    with staged(path) as (temp,):
        write_json_to(result, temp)
