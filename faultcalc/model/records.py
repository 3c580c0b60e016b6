"""Rows of one element type kept column by column, with the element objects made on first use.

A study of a million buses must not build a million Python objects per element type to read,
convert and solve them: the reader hands over whole columns and the per-unit conversion and
matrix assembly work on arrays. Code that wants elements one at a time (the element echo, the
netlist, a small study's checks, the tests) iterates or indexes as with a tuple and gets the
usual frozen dataclasses, built once and kept.

Columns are Python lists or numpy arrays. In a float or complex array NaN stands for None (no
input value is NaN: the reader refuses non-finite numbers), so an optional field reads back as
None; a field annotated ``int`` reads back as int.
"""

from __future__ import annotations

import dataclasses
import math
import operator
from collections.abc import Iterator, Sequence
from typing import Any, Generic, TypeVar

import numpy as np

T = TypeVar("T")


def _int_fields(cls) -> frozenset[str]:
    return frozenset(
        f.name for f in dataclasses.fields(cls) if str(f.type).split("|")[0].strip() == "int"
    )


def plain_values(column: Any, integer: bool = False, indices: list[int] | None = None) -> list:
    """A column (or its rows at ``indices``) as Python values: NaN -> None, and integral
    floats -> int if ``integer``."""
    if indices is not None:
        column = column[indices] if isinstance(column, np.ndarray) else [column[i] for i in indices]
    if isinstance(column, np.ndarray):
        values = column.tolist()
        if column.dtype.kind in "fc":
            values = [None if v != v else v for v in values]  # v != v: NaN
    else:
        values = list(column)
    if integer:
        values = [None if v is None else int(v) for v in values]
    return values


class Records(Sequence, Generic[T]):
    """A read-only sequence of ``cls`` objects stored as columns (see the module docstring)."""

    __slots__ = ("cls", "_n", "_columns", "_objects", "_memo")

    def __init__(self, cls: type[T], columns: dict[str, Any], n: int | None = None):
        fields = [f.name for f in dataclasses.fields(cls)]
        lengths = {len(v) for v in columns.values()}
        if n is None:
            n = lengths.pop() if lengths else 0
        if lengths - {n}:
            raise ValueError(f"columns of {cls.__name__} differ in length: {sorted(lengths)}")
        unknown = set(columns) - set(fields)
        if unknown:
            raise ValueError(f"{cls.__name__} has no field {sorted(unknown)}")
        self.cls = cls
        self._n = n
        self._columns = dict(columns)
        self._objects: tuple[T, ...] | None = None
        self._memo: dict | None = None

    @classmethod
    def of(cls, kind: type[T], items: Sequence[T]) -> Records[T]:
        """Records holding existing objects (their columns are gathered when first asked)."""
        if isinstance(items, Records):
            return items
        out = cls(kind, {}, len(items))
        out._objects = tuple(items)
        return out

    def memo(self) -> dict:
        """A place for answers that depend on these rows only (the System keeps the bus
        positions of its references with its buses), made on first use."""
        if self._memo is None:
            self._memo = {}
        return self._memo

    def column(self, name: str) -> Any:
        """The field ``name`` of every row, as stored (a list or an array)."""
        if name not in self._columns:
            if self._n == 0:
                return []
            if self._objects is not None:
                self._columns[name] = [getattr(o, name) for o in self._objects]
            else:
                field = {f.name: f for f in dataclasses.fields(self.cls)}[name]
                if field.default is dataclasses.MISSING:
                    raise KeyError(f"{self.cls.__name__}.{name} was not given")
                self._columns[name] = [field.default] * self._n
        return self._columns[name]

    def array(self, name: str, dtype=float) -> np.ndarray:
        """The field as a numpy array; for float and complex, None becomes NaN."""
        values = self.column(name)
        if isinstance(values, np.ndarray):
            return values.astype(dtype, copy=False)
        if np.dtype(dtype).kind in "fc":
            nan = math.nan
            return np.array([nan if v is None else v for v in values], dtype=dtype)
        return np.array(values, dtype=dtype)

    def _all_columns(self) -> dict[str, Any]:
        return {f.name: self.column(f.name) for f in dataclasses.fields(self.cls)}

    def replace(self, **columns) -> Records[T]:
        """New Records with these columns replaced (like dataclasses.replace on every row)."""
        if not self._n:
            return self
        return Records(self.cls, {**self._all_columns(), **columns}, self._n)

    def subset(self, indices) -> Records[T]:
        """New Records of the rows at ``indices``, in that order."""
        picked = np.asarray(indices, dtype=np.int64)
        positions = picked.tolist()
        take = operator.itemgetter(*positions) if len(positions) > 1 else None
        out = {}
        for name, values in self._all_columns().items():
            if isinstance(values, np.ndarray):
                out[name] = values[picked]
            elif take is not None:
                out[name] = list(take(values))
            else:
                out[name] = [values[i] for i in positions]
        return Records(self.cls, out, len(picked))

    def take(self, indices) -> list[T]:
        """The objects at ``indices`` (made one by one: no need to make them all)."""
        indices = [int(i) for i in indices]
        if self._objects is not None or not indices:
            return [self.objects()[i] for i in indices]
        return self._make(indices)

    def _make(self, indices: list[int] | None) -> tuple[T, ...]:
        """Objects of the rows at ``indices`` (all rows for None), from the columns."""
        ints = _int_fields(self.cls)
        names = [f.name for f in dataclasses.fields(self.cls) if f.name in self._columns]
        if not names:
            return tuple(self.cls() for _ in range(self._n if indices is None else len(indices)))
        lists = [plain_values(self._columns[name], name in ints, indices) for name in names]
        make = self.cls
        return tuple(make(**dict(zip(names, row, strict=True))) for row in zip(*lists, strict=True))

    def objects(self) -> tuple[T, ...]:
        if self._objects is None:
            self._objects = self._make(None)
        return self._objects

    def __len__(self) -> int:
        return self._n

    def __getitem__(self, index):
        if self._objects is None and isinstance(index, int | np.integer):
            if not -self._n <= index < self._n:
                raise IndexError(index)
            return self.take([index % self._n])[0]  # one object, not all of them
        return self.objects()[index]

    def __iter__(self) -> Iterator[T]:
        return iter(self.objects())

    def __bool__(self) -> bool:
        return self._n > 0

    def __eq__(self, other: object) -> bool:
        if isinstance(other, (Records, tuple, list)):
            return len(self) == len(other) and tuple(self) == tuple(other)
        return NotImplemented

    def __hash__(self) -> int:
        return hash(self.objects())

    def __repr__(self) -> str:
        return f"Records({self.cls.__name__}, {self._n} rows)"
