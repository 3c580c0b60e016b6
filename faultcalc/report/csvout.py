"""Bus results and contributions as CSV, for tables too large to review row by row in a
workbook (every bus beyond ``outputs.BIG_OUTPUT_BUSES`` buses; every contribution beyond
``outputs.BIG_CONTRIBUTION_ROWS`` rows, in ``<results>-contributions.csv``, whose
``input_sha256`` is on its first row only: on every row it would be half of the file).

Beyond ``outputs.BIG_OUTPUT_BUSES`` buses the results workbook holds a summary (the buses with
the largest currents and every duty finding) and every bus goes to ``<results>-buses.csv``
beside it (the rule, and why, are in ``faultcalc/report/outputs.py``).

Numbers are written to SIGNIFICANT_DIGITS significant digits (rounded on whole arrays, then
printed by Arrow's CSV writer in the shortest form that reads back to the rounded value); text
fields are quoted only when one of them holds a comma, a quote or a line break. After the
columns of the bus table (BUS_COLUMNS, in order) comes ``input_sha256``, the SHA-256 of the input
on every row, so that the file names the input it belongs to as the workbook and JSON do.

A text field that a spreadsheet program would take for a formula (it begins with ``=``, ``+``,
``-``, ``@``, a tab or a carriage return) gets a single quote ``'`` before it, as the OWASP
guidance on CSV injection advises; numbers, negative ones included, are written as numbers.
"""

from __future__ import annotations

import os
import threading
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import numpy as np
import pandas as pd

from ..results import BUS_COLUMNS, StudyResult
from ..solve.contributions import CONTRIBUTION_COLUMNS

SIGNIFICANT_DIGITS = 10
# The first characters that make a spreadsheet program read a field as a formula (OWASP, CSV
# injection), and what goes before such a field.
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")
TEXT_PREFIX = "'"
CSV_COLUMNS = (*BUS_COLUMNS, "input_sha256")
CONTRIBUTION_CSV_COLUMNS = (*CONTRIBUTION_COLUMNS, "input_sha256")


ROUND_CHUNK = 65_536


def round_significant(values: np.ndarray, digits: int = SIGNIFICANT_DIGITS) -> np.ndarray:
    """``values`` rounded to ``digits`` significant digits (NaN, inf and 0 unchanged).

    The rounded value is an integer divided by an exact power of ten, so for magnitudes above
    about 1e-13 it is the double nearest the decimal and prints with at most ``digits`` digits.
    """
    a = np.array(values, dtype=float)
    flat = a.reshape(-1)  # a view of the copy: rounded in place, any shape
    for start in range(0, len(flat), ROUND_CHUNK):  # pieces that stay in the cache: 2 x faster
        piece = flat[start : start + ROUND_CHUNK]
        ok = np.isfinite(piece) & (piece != 0)
        x = piece[ok]
        k = digits - 1 - np.floor(np.log10(np.abs(x))).astype(np.int64)
        up = k >= 0
        scale = 10.0 ** np.abs(k)
        piece[ok] = np.where(up, np.rint(x * scale) / scale, np.rint(x / scale) * scale)
    return a


class Stopped(Exception):
    """A CSV written beside other outputs was told to stop (the others failed or were
    interrupted): its temporary file is then removed with theirs."""


def write_bus_csv_to(result: StudyResult, path: Path, stop: threading.Event | None = None) -> None:
    """Every row of ``result.buses``; ``stop``, when set, ends the writing between chunks
    (raising Stopped)."""
    _write_table_csv(result.buses, BUS_COLUMNS, result.basis.input_sha256, path, stop=stop)


def write_contributions_csv_to(
    result: StudyResult, path: Path, stop: threading.Event | None = None
) -> None:
    """Every row of ``result.contributions`` (CONTRIBUTION_COLUMNS, then input_sha256 on the
    first row only: on every row it would be half of a file of millions of rows); ``stop`` as
    in write_bus_csv_to."""
    _write_table_csv(
        result.contributions,
        CONTRIBUTION_COLUMNS,
        result.basis.input_sha256,
        path,
        every_row=False,
        stop=stop,
    )


def _write_table_csv(
    table: pd.DataFrame,
    columns,
    sha256: str,
    path: Path,
    every_row: bool = True,
    stop: threading.Event | None = None,
) -> None:
    import pyarrow as pa
    import pyarrow.csv as pcsv

    _check(stop)
    table = table[list(columns)]
    floats = [n for n in columns if pd.api.types.is_float_dtype(table[n].dtype)]
    if len(table) > SPLIT_ROWS and (os.cpu_count() or 1) > 1:  # numpy lets go of the
        with ThreadPoolExecutor(2) as pool:  # interpreter on whole arrays
            done = pool.map(lambda n: round_significant(table[n].to_numpy()), floats)
            rounded = dict(zip(floats, done, strict=True))
    else:
        rounded = {n: round_significant(table[n].to_numpy()) for n in floats}
    arrays = []
    for name in columns:
        column = table[name]
        if name in rounded:
            arrays.append(pa.array(rounded[name], from_pandas=True))
        elif isinstance(column.dtype, pd.CategoricalDtype):  # text kept as codes: its values
            whole = pa.array(column, from_pandas=True)
            arrays.append(
                pa.DictionaryArray.from_arrays(whole.indices, neutralised(whole.dictionary))
            )
        else:  # text: Arrow-backed in pandas with pyarrow installed, so no copy
            arrays.append(neutralised(pa.array(column, from_pandas=True)))
    if every_row or not len(table):
        arrays.append(pa.repeat(pa.scalar(sha256, pa.string()), len(table)))
    else:  # the first row only, the others empty (nulls print as nothing)
        sha = pa.DictionaryArray.from_arrays(
            pa.array(
                np.zeros(len(table), np.int32),
                pa.int32(),
                mask=np.r_[False, np.ones(len(table) - 1, bool)],
            ),
            pa.array([sha256]),
        )
        arrays.append(sha)
    names = [*columns, "input_sha256"]
    data = pa.Table.from_arrays(arrays, names=names)
    _check(stop)
    # Beside other outputs (``stop`` given), only into the temporary file made for it: when
    # that is gone (every temporary file is removed on a failure), this fails, and never
    # makes the file again.
    with open(path, "wb" if stop is None else "r+b") as handle:
        handle.truncate()
        handle.write((",".join(names) + "\n").encode())
        start = handle.tell()
        try:  # unquoted unless a text field needs quotes (then Arrow refuses and all are)
            _write_rows(pa, pcsv, data, handle, "none", stop)
        except pa.ArrowInvalid:
            handle.seek(start)
            handle.truncate()
            _write_rows(pa, pcsv, data, handle, "needed", stop)


# Rows above which a CSV is written in chunks of CHUNK_ROWS, two rendered at once (two
# threads: Arrow's writer lets go of the interpreter) and written in order, so that at most
# a few chunks are held in memory. Measured on 20 million contribution rows: 22 s in one
# thread, 15 s in two.
SPLIT_ROWS = 1_000_000
CHUNK_ROWS = 250_000


def _check(stop: threading.Event | None) -> None:
    if stop is not None and stop.is_set():
        raise Stopped("told to stop")


def _write_rows(pa, pcsv, data, handle, quoting: str, stop=None) -> None:
    options = _options(pcsv, quoting)
    if len(data) <= SPLIT_ROWS or (os.cpu_count() or 1) < 2:
        pcsv.write_csv(data, handle, write_options=options)
        return

    def rendered(start: int):
        buffer = pa.BufferOutputStream()
        pcsv.write_csv(data.slice(start, CHUNK_ROWS), buffer, write_options=options)
        return buffer.getvalue()

    starts = list(range(0, len(data), CHUNK_ROWS))
    with ThreadPoolExecutor(2) as pool:
        pending = [pool.submit(rendered, s) for s in starts[:2]]
        for k in range(len(starts)):
            chunk = pending.pop(0).result()  # an error in a chunk is raised here
            _check(stop)
            if k + 2 < len(starts):
                pending.append(pool.submit(rendered, starts[k + 2]))
            handle.write(memoryview(chunk))


def neutralised(array):
    """The Arrow array with TEXT_PREFIX before every text that begins like a formula
    (FORMULA_STARTS); other arrays, and texts that begin otherwise, unchanged.

    >>> import pyarrow as pa
    >>> neutralised(pa.array(["=1+2", "-A", "SWBD-1", None])).to_pylist()
    ["'=1+2", "'-A", 'SWBD-1', None]
    """
    import pyarrow as pa
    import pyarrow.compute as pc

    if pa.types.is_string_view(array.type):
        array = array.cast(pa.large_string())
    if not (pa.types.is_string(array.type) or pa.types.is_large_string(array.type)):
        return array
    first = pc.utf8_slice_codeunits(array, 0, 1)
    live = pc.fill_null(pc.is_in(first, value_set=pa.array(FORMULA_STARTS, array.type)), False)
    if not pc.any(live).as_py():
        return array
    prefix, nothing = pa.scalar(TEXT_PREFIX, array.type), pa.scalar("", array.type)
    return pc.if_else(live, pc.binary_join_element_wise(prefix, array, nothing), array)


def _options(pcsv, quoting: str):
    return pcsv.WriteOptions(include_header=False, quoting_style=quoting)
