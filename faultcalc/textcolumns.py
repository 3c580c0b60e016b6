"""Text columns of the result tables, made from a few words and a code per row.

pandas keeps text in Arrow arrays (its ``str`` dtype, with pyarrow installed). Made from a
list of Python strings, a column of 100,000 rows costs about 5 ms; taken from a handful of
words by a code per row, about 0.3 ms. A bus table has nine text columns and a study with
cases makes one per case, so the words-and-codes way is the one used wherever a column holds
few distinct values. The columns are the same pandas ``str`` columns either way.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
import pandas as pd
import pyarrow as pa

TEXT = "str"  # pandas' text dtype


def coded(
    words: Sequence[str], codes: np.ndarray, kept: tuple[dict, object] | None = None
) -> pd.api.extensions.ExtensionArray:
    """The text column whose row k is ``words[codes[k]]``. ``kept``: (a dict, a key) where
    the last column made under that key is kept, and given again (a new array object on the
    same Arrow data) when the words and codes are the same: the cases of a study mostly
    repeat the base case's columns.

    >>> list(coded(["", "x"], np.array([1, 0, 1])))
    ['x', '', 'x']
    """
    codes = np.asarray(codes)
    if codes.dtype == bool:
        codes = codes.astype(np.int8)
    if kept is not None:
        memo, key = kept
        last = memo.get(key)
        if last is not None and last[0] == tuple(words) and np.array_equal(last[1], codes):
            return last[2].copy()
    taken = pa.array(list(words), pa.large_string()).take(pa.array(codes))
    column = pd.array(taken, dtype=TEXT)
    if kept is not None:
        memo[key] = (tuple(words), codes.copy(), column)
        return column.copy()
    return column


def repeated(word: str, n: int, kept=None) -> pd.api.extensions.ExtensionArray:
    """``n`` rows of ``word`` (``kept`` as in coded)."""
    return coded([word], np.zeros(n, np.int8), kept)


def sparse(n: int, blank: str, rows: Sequence[int], values: Sequence[str], kept=None):
    """``n`` rows of ``blank`` but ``values[j]`` at row ``rows[j]`` (``kept`` as in coded).

    >>> list(sparse(4, "-", [2, 0], ["b", "a"]))
    ['a', '-', 'b', '-']
    """
    words = [blank, *sorted(set(values) - {blank})]
    code_of = {w: k for k, w in enumerate(words)}
    codes = np.zeros(n, np.int32)
    codes[np.asarray(rows, np.int64)] = [code_of[v] for v in values]
    return coded(words, codes, kept)


def of_list(values: Sequence[str | None]) -> pd.api.extensions.ExtensionArray:
    """The text column of ``values``, None as an empty string.

    >>> list(of_list(["a", None]))
    ['a', '']
    """
    return pd.array(pa.array(values, pa.large_string()).fill_null(""), dtype=TEXT)
