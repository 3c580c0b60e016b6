"""Number columns of the result tables that hold no value (NaN) at every row or at most rows.

A bus table has about twenty such columns (the minimum currents of a method without them,
the interrupting network's where it is not computed, the duty at buses without a device, ...)
and a study with cases makes one table per case: 100 cases of 100,000 buses held 16 such
columns of 0.8 MB each a case. Fresh memory is not free (here about 0.6 ms a MB: writing the
NaN costs page faults), so every column with no value at all is one read-only array of NaN,
shared by every such column of the study's tables. Read-only: writing into one of them fails
loudly (numpy's "assignment destination is read-only") instead of changing the others.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping

import numpy as np


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
