"""The worst over the base case and every case, bus by bus: the envelope, each device's worst
duty, the service labels' figure and the maximum available fault current.

Every function here takes the bus tables aligned on one bus order (:class:`CaseTables`) and
walks them one table at a time, keeping the worst so far. A stack of every table's column
would hold cases x buses values at once (100 cases of 100,000 buses: 80 MB a column, and
400 values a bus for the four fault types); walking them costs the same reads and no more
memory than two columns. On equal values the first table wins, so the base case before any
case, and NaN (no value) counts as none.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator

import numpy as np
import pandas as pd

from .model import System
from .results import (
    DUTY_COLUMNS,
    FAULT_OF_COLUMN,
    LABEL_COLUMNS,
    MAXIMUM_COLUMNS,
    NOT_CONVERGED,
    unconverged,
)
from .solve import duty, faults

ENVELOPE_COLUMNS = ("i3ph_ka", "islg_ka", "ill_ka", "illg_ka", "ip_ka", "iasym_ka", "duty_pct")
LABEL_FAULTS = ("i3ph_ka", "islg_ka", "ill_ka", "illg_ka")  # in the order of FAULT_TYPES


class CaseTables:
    """Bus tables by case name (the base case first) with one row per bus of ``order`` (every
    bus of the base case and of any case, see :func:`all_buses`), in that order: a bus missing
    from a table (out of service there) gets a row of blanks. ``aligned``: names of tables
    known to hold exactly the buses of ``order`` in that order (not compared again)."""

    def __init__(
        self,
        tables: dict[str, pd.DataFrame],
        order: list[str],
        aligned: Iterable[str] = (),
        _masks: dict | None = None,
    ):
        self.order = order
        known = set(aligned)
        index = None
        self.tables: dict[str, pd.DataFrame] = {}
        for name, table in tables.items():
            if name not in known:
                if index is None:
                    index = pd.Index(np.array(order, dtype=object), name="bus")
                same = len(table) == len(order) and bool(
                    (table.bus.to_numpy(dtype=object) == index.to_numpy()).all()
                )
                if not same:
                    table = table.set_index("bus").reindex(index).reset_index()
            self.tables[name] = table
        self._masks = {} if _masks is None else _masks  # per (table, what): a bus mask

    @property
    def names(self) -> list[str]:
        return list(self.tables)

    @property
    def base(self) -> pd.DataFrame:
        return next(iter(self.tables.values()))

    def without(self, left_out: Iterable[str]) -> CaseTables:
        """These tables less the cases ``left_out`` (already aligned)."""
        left_out = set(left_out)
        kept = {n: t for n, t in self.tables.items() if n not in left_out}
        return CaseTables(kept, self.order, kept, self._masks)

    def floats(self, column: str, rows=None) -> Iterator[np.ndarray]:
        """``column`` of each table as floats (at ``rows`` when given), in table order."""
        for table in self.tables.values():
            values = table[column].to_numpy(dtype=float)
            yield values if rows is None else values[rows]

    def _mask(self, name: str, what, make) -> np.ndarray:
        key = (name, what)
        if key not in self._masks:
            self._masks[key] = make(self.tables[name])
        return self._masks[key]

    def stuck(self, rows=slice(None), fault: str | None = None) -> np.ndarray:
        """At ``rows``: where any table holds a current of ``fault`` (any when None) that the
        inverter iteration did not converge on."""
        found = np.zeros(len(self.order), bool)
        for name in self.tables:
            found |= self._mask(name, ("stuck", fault), lambda t: unconverged(t, fault))
        return found[rows]

    def not_computed(self) -> np.ndarray:
        """Where any table's duty is not computed (a current not converged on)."""
        found = np.zeros(len(self.order), bool)
        for name in self.tables:
            found |= self._mask(
                name,
                "not computed",
                lambda t: (t.duty_status == duty.STATUS_NOT_COMPUTED).to_numpy(dtype=bool),
            )
        return found

    def pick(self, column: str, worst: np.ndarray, rows: np.ndarray) -> np.ndarray:
        """``column`` at ``rows`` taken from the table ``worst`` names for each row."""
        out = np.empty(len(rows), dtype=object)
        for k, table in enumerate(self.tables.values()):
            mine = np.flatnonzero(worst == k)
            if len(mine):
                out[mine] = table[column].iloc[rows[mine]].to_numpy(dtype=object)
        return out


def bus_tables(system: System) -> Iterator:
    """The bus tables of the base case and its cases, each once (a case that changes no bus
    shares the base's), in order."""
    walked: set[int] = set()
    for one in (system, *(case for _, case in system.cases)):
        if id(one.buses) not in walked:
            walked.add(id(one.buses))
            yield one.buses


def all_buses(system: System) -> tuple[list[str], dict[str, str], list[str]]:
    """Every bus of the base case and of any case (a bus out of service in the base case may be
    in service in a case), in input order; their descriptions; the service buses among them."""
    buses = system.buses
    if not system.cases:  # the base case alone, in its own order (whole columns)
        names = list(buses.column("bus"))
        service = [n for n, yes in zip(names, buses.column("service"), strict=True) if yes == "yes"]
        texts = (t or "" for t in buses.column("description"))
        return names, dict(zip(names, texts, strict=True)), service
    seen: dict[str, tuple[int, str, str]] = {}
    for buses in bus_tables(system):
        for name, row, text, service in zip(
            buses.column("bus"),
            buses.column("row"),
            buses.column("description"),
            buses.column("service"),
            strict=True,
        ):
            if name not in seen:
                seen[name] = (row if row is not None else 0, text or "", service)
    order = sorted(seen, key=lambda n: seen[n][0])
    return (
        order,
        {n: seen[n][1] for n in order},
        [n for n in order if seen[n][2] == "yes"],
    )


def _largest(arrays: Iterable[np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """Over the arrays (one value per bus each): per bus the index of the array with the
    largest value (the first on equal values; NaN counts as none) and that value (NaN where
    none has one)."""
    worst = best = None
    for k, values in enumerate(arrays):
        filled = np.where(np.isnan(values), -np.inf, values)
        if best is None:
            worst, best = np.zeros(len(filled), np.int64), filled
            continue
        better = filled > best
        worst[better] = k
        np.maximum(best, filled, out=best)
    return worst, np.where(np.isinf(best), np.nan, best)


def _worst(tables: CaseTables, column: str, rows=None) -> tuple[np.ndarray, np.ndarray]:
    return _largest(tables.floats(column, rows))


def envelope(tables: CaseTables) -> pd.DataFrame:
    """Worst value per bus over the base and every case, with the case that gave it; for the
    duty also its fault type and status."""
    base = tables.base
    out = {"bus": base.bus.tolist()}
    case_names = np.array(tables.names, dtype=object)
    worst_of = {}
    for column in ENVELOPE_COLUMNS:
        worst, value = _worst(tables, column)
        stuck = tables.stuck(fault=FAULT_OF_COLUMN.get(column))  # duty: any type
        value = np.where(stuck, np.nan, value)  # the worst is not known without them
        worst_of[column] = worst
        out[column] = value
        out[column.replace("_ka", "").replace("_pct", "") + "_case"] = np.where(
            stuck, NOT_CONVERGED, np.where(np.isfinite(value), case_names[worst], "")
        )
    rated = np.flatnonzero(np.isfinite(out["duty_pct"]))
    worst = worst_of["duty_pct"][rated]
    for column, blank in (("duty_fault", ""), ("duty_status", duty.STATUS_NONE)):
        values = np.full(len(base), blank, dtype=object)
        values[rated] = tables.pick(column, worst, rated)
        out[column] = values
    out["duty_status"] = np.where(
        tables.not_computed(), duty.STATUS_NOT_COMPUTED, out["duty_status"]
    )
    return pd.DataFrame(out)


def worst_duty(tables: CaseTables, descriptions: dict[str, str]) -> pd.DataFrame:
    """Each bus with a device in the base or any case: its worst duty over all of them (the
    first table on equal duty, so the base case before any case), with the case, the fault
    type and the X/R that gave it, and the base case's duty beside it."""
    base = tables.base
    rated = np.zeros(len(base), dtype=bool)
    for values in tables.floats("duty_pct"):
        rated |= np.isfinite(values)
    not_computed = tables.not_computed()
    rated |= not_computed
    rows = np.flatnonzero(rated)
    worst, pct = _worst(tables, "duty_pct", rows)
    out: dict[str, object] = {"bus": base.bus.iloc[rows].to_numpy(dtype=object)}
    for column in ("device", "rating_ka", "test_xr", "mf", "duty_ka", "duty_status", "duty_basis"):
        out[column] = tables.pick(column, worst, rows)
    out["duty_pct"] = pct
    fault = tables.pick("duty_fault", worst, rows)
    out["duty_fault"] = fault
    # the X/R of the duty: the ground-fault loop's, the interrupting network's for an MV
    # breaker's interrupting duty with method ieee, else the bus's (first-cycle)
    xr_int = tables.pick("xr_int", worst, rows).astype(float)
    mv = (
        np.isin(out["device"].astype(str), duty.MV_DEVICES)
        & np.isfinite(xr_int)
        & (out["duty_basis"].astype(str) != duty.BASIS_CLOSING)
    )
    out["duty_xr"] = np.where(
        fault == "slg",
        tables.pick("xr_slg", worst, rows).astype(float),
        np.where(mv, xr_int, tables.pick("xr_fault", worst, rows).astype(float)),
    )
    out["duty_case"] = np.array(tables.names, dtype=object)[worst]
    for column in (
        "capability_ka",
        "interrupting_pct",
        "closing_duty_ka",
        "closing_rating_ka",
        "closing_pct",
    ):
        out[column] = tables.pick(column, worst, rows).astype(float)
    out["base_duty_pct"] = base.duty_pct.iloc[rows].to_numpy(dtype=float)
    out["base_duty_status"] = np.where(
        pd.isna(base.duty_status.iloc[rows]).to_numpy(),
        duty.STATUS_NONE,
        base.duty_status.iloc[rows].to_numpy(dtype=object),
    )
    out["description"] = [descriptions.get(b, "") for b in out["bus"]]
    stuck = not_computed[rows]  # in any case: the worst duty is not known
    if stuck.any():
        for column in ("duty_pct", "duty_ka", "mf", "duty_xr"):
            out[column] = np.where(stuck, np.nan, np.asarray(out[column], dtype=float))
        for column, words in (
            ("duty_status", duty.STATUS_NOT_COMPUTED),
            ("duty_case", NOT_CONVERGED),
            ("duty_fault", ""),
        ):
            out[column] = np.where(stuck, words, np.asarray(out[column], dtype=object))
    table = pd.DataFrame(out, columns=list(DUTY_COLUMNS))
    for column in ("rating_ka", "test_xr", "mf", "duty_ka"):
        table[column] = table[column].astype(float)
    return table


def labels(tables: CaseTables, service: list[str], descriptions) -> pd.DataFrame:
    """The label figure of the ``service`` buses: the largest of the four fault currents over
    ``tables`` (the base case first, then the cases counted in labels), with the fault type
    and the case that gave it (the first on equal values)."""
    rows = pd.Index(np.array(tables.order, dtype=object)).get_indexer(service)
    table, value, fault = _largest_fault(tables, rows)
    return pd.DataFrame(
        {
            "bus": tables.base.bus.iloc[rows].to_numpy(dtype=object),
            "description": [descriptions[b] for b in service],
            "kv": _kv(tables, rows),
            "label_ka": value,
            "label_fault": fault,
            "label_case": np.where(
                tables.stuck(rows), NOT_CONVERGED, np.array(tables.names, dtype=object)[table]
            ),
        },
        columns=list(LABEL_COLUMNS),
    )


def _kv(tables: CaseTables, rows) -> np.ndarray:
    """The nominal kV at ``rows`` (a bus in service only in a case has its kV in that case's
    table alone)."""
    kv = None
    for values in tables.floats("kv", rows):
        kv = values if kv is None else np.fmax(kv, values)
    return kv


def _largest_fault(tables: CaseTables, rows) -> tuple[np.ndarray, ...]:
    """At ``rows`` of the aligned ``tables``: the index of the table holding the largest of the
    four fault currents (the first on equal values: the base case, then three-phase, ...),
    that current (NaN if none) and its fault type."""

    def in_turn():  # table-major: base 3ph, slg, ll, llg, then each case's
        for table in tables.tables.values():
            for column in LABEL_FAULTS:
                yield table[column].to_numpy(dtype=float)[rows]

    worst, value = _largest(in_turn())
    kinds = len(LABEL_FAULTS)
    fault = np.array(faults.FAULT_TYPES, dtype=object)[worst % kinds]
    value = np.where(tables.stuck(rows), np.nan, value)  # never a maximum without them
    return worst // kinds, value, np.where(np.isfinite(value), fault, "")


def maximum(tables: CaseTables, descriptions, worst_duty: pd.DataFrame) -> pd.DataFrame:
    """Per bus, the maximum available fault current over the base case and every case: the
    largest of the four fault types, the type and the case that give it and that case's X/R;
    the worst peak and half-cycle asymmetrical current over all; the worst duty status."""
    order = tables.order
    rows = np.arange(len(order))
    table, value, fault = _largest_fault(tables, rows)
    xr = np.full(len(order), np.nan)
    for k, values in enumerate(tables.floats("xr")):
        mine = table == k
        xr[mine] = values[mine]
    status = dict(zip(worst_duty.bus, worst_duty.duty_status, strict=True))
    return pd.DataFrame(
        {
            "bus": np.array(order, dtype=object),
            "description": [descriptions[b] for b in order],
            "kv": _kv(tables, rows),
            "max_ka": value,
            "max_fault": fault,
            "max_case": np.where(
                tables.stuck(rows),
                NOT_CONVERGED,
                np.where(np.isfinite(value), np.array(tables.names, dtype=object)[table], ""),
            ),
            "xr": np.where(np.isfinite(value), xr, np.nan),
            "ip_ka": _worst(tables, "ip_ka")[1],
            "iasym_ka": _worst(tables, "iasym_ka")[1],
            "duty_status": [status.get(b, duty.STATUS_NONE) for b in order],
        },
        columns=list(MAXIMUM_COLUMNS),
    )
