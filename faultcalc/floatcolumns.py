"""Number columns of the result tables that hold no value (NaN) at every row or at most rows,
or that several tables hold alike.

A bus table has about twenty such columns (the minimum currents of a method without them,
the interrupting network's where it is not computed, the duty at buses without a device, Z2
which is Z1, the kV of buses a case leaves alone, ...) and a study with cases makes one table
per case: 100 cases of 100,000 buses held 20 such columns of 0.8 MB each a case. Fresh memory
is not free (here about 0.6 ms a MB: writing the values costs page faults), so such a column
is one read-only array, shared by every table that holds it.

The tables take a shared array as a pandas Series that is kept (:func:`column`): pandas then
knows the tables share it, and a user who edits a table in place (``table.loc[k, c] = v``)
gets a copy of that column first (pandas' copy-on-write), never a change to the others. The
arrays are read-only, so a write that bypasses pandas fails loudly (numpy's "assignment
destination is read-only") instead of changing every table at once.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping

import numpy as np
import pandas as pd


@functools.lru_cache(maxsize=4)
def blank(n: int) -> np.ndarray:
    """``n`` NaN, read-only, the same array for every call with this ``n``.

    >>> a = blank(3)
    >>> bool(np.isnan(a).all()), a is blank(3), a.flags.writeable
    (True, True, False)
    """
    column = np.full(n, np.nan)
    column.flags.writeable = False
    return column


def read_only(values, copy: bool = True) -> np.ndarray:
    """``values`` as a read-only float array: a copy (the input's columns stay the input's
    own), or with ``copy`` False the array itself when it is one already (a new array made
    for the table).

    >>> a = np.ones(2)
    >>> read_only(a) is a, read_only(a).flags.writeable, a.flags.writeable
    (False, False, True)
    >>> read_only(a, copy=False) is a, a.flags.writeable
    (True, False)
    """
    column = np.array(values, dtype=float) if copy else np.asarray(values, dtype=float)
    column.flags.writeable = False
    return column


def at_rows(n: int, values: Mapping[int, float]) -> np.ndarray:
    """``n`` NaN but ``values[k]`` at row ``k``: its own array, or :func:`blank` when
    ``values`` is empty.

    >>> at_rows(3, {2: 1.5}).tolist()
    [nan, nan, 1.5]
    >>> at_rows(2, {}) is blank(2)
    True
    """
    if not values:
        return blank(n)
    column = np.full(n, np.nan)
    column[np.fromiter(values.keys(), np.int64, len(values))] = np.fromiter(
        values.values(), float, len(values)
    )
    return column


def column(values: np.ndarray) -> pd.Series:
    """The read-only array ``values`` as a Series for the tables (its memory, not a copy): give
    the same Series to every column and table that shares the array (see the module
    docstring); :func:`blank` arrays get their kept Series here."""
    if values.flags.writeable:
        raise ValueError("a shared column must be read-only")
    n = len(values)
    if values is blank(n):
        return _blank_column(n)
    return pd.Series(values, copy=False)


@functools.lru_cache(maxsize=4)
def _blank_column(n: int) -> pd.Series:
    return pd.Series(blank(n), copy=False)


def frame(columns: dict[str, object], order) -> pd.DataFrame:
    """The table of ``columns`` in ``order``, without copies: each its own new array, a kept
    Series of :func:`column`, or a read-only array, given as one Series however many columns
    hold it (so pandas knows they share it; a :func:`blank` one as its kept Series)."""
    shared: dict[int, pd.Series] = {}  # by the array's id: alive while ``columns`` holds it

    def given(values):
        if isinstance(values, np.ndarray) and not values.flags.writeable:
            if id(values) not in shared:
                shared[id(values)] = column(values)
            return shared[id(values)]
        return values

    return pd.DataFrame(
        {name: given(v) for name, v in columns.items()}, columns=list(order), copy=False
    )


def copy_or_kept(values) -> np.ndarray | pd.Series:
    """``values`` (one per row) as a column of its own, or, when every row holds the same
    finite value (the prefault voltage of most studies), the kept read-only column of that
    value, shared by every table.

    >>> copy_or_kept([1.0, 1.0]) is copy_or_kept(np.ones(2)), copy_or_kept([1.0, 2.0]).tolist()
    (True, [1.0, 2.0])
    """
    values = np.array(values, dtype=float)
    if len(values) and np.isfinite(values[0]) and (values == values[0]).all():
        return _constant_column(len(values), float(values[0]))
    return values


@functools.lru_cache(maxsize=8)
def _constant_column(n: int, value: float) -> pd.Series:
    values = np.full(n, value)
    values.flags.writeable = False
    return pd.Series(values, copy=False)
