"""What a study returns: tables with unit-suffixed columns, warnings, cautions and its basis."""

from __future__ import annotations

import dataclasses
import functools
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .model import Settings
from .solve.duty import STATUS_NEAR, STATUS_OVER

# A summary of a large study keeps this many buses by fault current, and every duty finding.
SUMMARY_BUSES = 200

# Columns of StudyResult.buses, which are also the JSON fields of each bus entry.
BUS_COLUMNS = (
    "bus",
    "kv",
    "r1_ohm",
    "x1_ohm",
    "z1_pu",
    "xr",
    "i3ph_ka",
    "s3ph_mva",
    "r2_ohm",
    "x2_ohm",
    "r0_ohm",
    "x0_ohm",
    "islg_ka",
    "ill_ka",
    "illg_ka",
    "ig_llg_ka",
    "max_fault",
    "ground_note",
    "prefault_pu",
    "xr_fault",
    "kappa",
    "ip_ka",
    "iasym_ka",
    "tau_dc_ms",
    "xr_slg",
    "device",
    "rating_ka",
    "test_xr",
    "mf",
    "duty_ka",
    "duty_pct",
    "duty_status",
    "i3ph_min_ka",
    "islg_min_ka",
    "ill_min_ka",
    "illg_min_ka",
    "duty_fault",
    "duty_basis",  # interrupting, or closing and latching (MV breakers): what the duty compares
    "capability_ka",  # the rating at the bus's voltage (MV constant-MVA breakers), else rating_ka
    "interrupting_ka",  # MV breakers: interrupting duty (E/X x MF, or line-to-ground x MF)
    "interrupting_pct",
    "closing_duty_ka",  # MV breakers: first-cycle closing-and-latching duty (mvcb peak, else RMS)
    "closing_rating_ka",
    "closing_pct",
    "i_int_ka",  # method ieee: the interrupting (1.5 to 4 cycle) network's E/X current
    "xr_int",  # method ieee: its X/R from separate R and X reductions
    "ib_ka",  # method iec60909: symmetrical breaking current Ib at t_min
    "idc_ka",  # method iec60909: DC component at t_min
    "ik_ka",  # method iec60909: steady-state current (far from generators; else blank)
    "ith_ka",  # method iec60909: thermal equivalent current for the fault duration
    "iec_note",  # method iec60909: why Ik or Ith is not computed (near a generator)
    "inverter_sweeps",  # inverters: the iteration's sweeps, the most over the fault types
    "inverter_residual_pu",  # its last change per unit of an inverter's limit, the largest
    "inverter_note",  # inverters: not converged (current not reported), ceased, angle held
)

# In place of a current the inverter iteration did not converge on (never a number): in the
# bus tables' inverter_note ("3ph: not converged ..."), the maximum's and labels' case.
NOT_CONVERGED = "not converged"
# The fault type behind each current column of the bus table.
FAULT_OF_COLUMN = {
    "i3ph_ka": "3ph",
    "s3ph_mva": "3ph",
    "ip_ka": "3ph",
    "iasym_ka": "3ph",
    "islg_ka": "slg",
    "ill_ka": "ll",
    "illg_ka": "llg",
    "ig_llg_ka": "llg",
}


def unconverged(table: pd.DataFrame, fault: str | None = None) -> np.ndarray:
    """Rows of a bus table whose inverter iteration did not converge for ``fault`` (for any
    fault type when None): their currents are NaN and must not be reported as a number."""
    if "inverter_note" not in table or not len(table):
        return np.zeros(len(table), bool)
    key = NOT_CONVERGED if fault is None else f"{fault}: {NOT_CONVERGED}"
    return table["inverter_note"].fillna("").astype(str).str.contains(key, regex=False).to_numpy()


# Columns of StudyResult.duty: each rated bus's worst duty over the base case and every case.
DUTY_COLUMNS = (
    "bus",
    "device",
    "rating_ka",
    "test_xr",
    "duty_xr",  # X/R of the fault that gave the duty (bus X/R or ground-fault loop X/R)
    "mf",
    "duty_ka",
    "duty_pct",
    "duty_status",
    "duty_fault",  # 3ph or slg: the fault type that gave the duty
    "duty_case",  # base, or the case that gave the worst duty
    "duty_basis",  # interrupting, or closing and latching (MV breakers)
    "capability_ka",
    "interrupting_pct",
    "closing_duty_ka",
    "closing_rating_ka",
    "closing_pct",
    "base_duty_pct",
    "base_duty_status",
    "description",
)

# Columns of StudyResult.labels: the figure printed on each service bus's label.
LABEL_COLUMNS = (
    "bus",
    "description",
    "kv",
    "label_ka",  # largest of the four fault currents over the base and the cases in labels
    "label_fault",  # 3ph, slg, ll or llg: the fault type that gave it
    "label_case",  # base, or the case that gave it
)

# Columns of StudyResult.maximum: each bus's maximum available fault current over the base case
# and every case, what gives it, and its duty status (the Summary sheet and the report's table).
MAXIMUM_COLUMNS = (
    "bus",
    "description",
    "kv",
    "max_ka",  # largest of the four fault currents over the base case and every case
    "max_fault",  # 3ph, slg, ll or llg: the fault type that gave it
    "max_case",  # base, or the case that gave it
    "xr",  # the bus's X/R in that case
    "ip_ka",  # worst peak (three-phase) over the base case and every case
    "iasym_ka",  # worst half-cycle asymmetrical RMS (three-phase) over them
    "duty_status",  # worst duty status over them (no rating given where no device)
)

# Columns of StudyResult.elements, the echo of every element on the common base.
ELEMENT_COLUMNS = (
    "element",
    "kind",
    "from_bus",
    "to_bus",
    "input",
    "ohm_bus",
    "base_kv",
    "r_ohm",
    "x_ohm",
    "r_pu",
    "x_pu",
    "tap",
    "note",
    "r0_pu",
    "x0_pu",
    "zero_sequence",
)


@dataclass(frozen=True)
class Basis:
    """What the numbers rest on, printed with every result."""

    settings: Settings
    method: str
    input_name: str
    input_sha256: str
    calculated_at: str  # ISO 8601, local time with UTC offset
    tool_name: str
    tool_version: str


@dataclass(frozen=True)
class StudyResult:
    buses: pd.DataFrame  # one row per bus, input order, columns BUS_COLUMNS (NaN = none)
    element_table: Callable[[], pd.DataFrame]  # builds `elements` when first asked for
    descriptions: tuple[str, ...]  # bus descriptions, aligned with `buses`
    node_groups: tuple[str, ...]  # per bus: the other buses sharing its node through ties
    warnings: tuple[str, ...]
    cautions: tuple[str, ...]
    basis: Basis
    # CONTRIBUTION_COLUMNS, when asked for; text columns categorical (millions of rows, few
    # names)
    contributions: pd.DataFrame | None = None
    cable_checks: pd.DataFrame | None = None  # cablecheck.CHECK_COLUMNS, typed cables only
    cases: dict[str, pd.DataFrame] = field(default_factory=dict)  # case -> bus table
    envelope: pd.DataFrame | None = None  # worst value per bus over base and cases
    service_buses: tuple[str, ...] = ()  # buses marked service = yes (label sheets)
    duty: pd.DataFrame | None = None  # DUTY_COLUMNS, one row per rated bus (worst over cases)
    labels: pd.DataFrame | None = None  # LABEL_COLUMNS, one row per service bus
    label_cases_left_out: tuple[str, ...] = ()  # cases whose rows say label = no
    maximum: pd.DataFrame | None = None  # MAXIMUM_COLUMNS, one row per bus of any case
    case_changes: dict[str, tuple[str, ...]] = field(default_factory=dict)  # what each case sets
    # A summary's (see ``summary``): the nominal kV of every bus of the whole study, for the
    # contributions, which may name buses the summary leaves out; None in a whole result.
    bus_kv_all: dict[str, float] | None = None

    def over_rating(self) -> pd.DataFrame:
        """Rows of ``duty`` whose worst duty exceeds the rating, the largest duty first."""
        if self.duty is None:
            return pd.DataFrame(columns=list(DUTY_COLUMNS))
        over = self.duty[self.duty.duty_status == STATUS_OVER]
        return over.sort_values("duty_pct", ascending=False, kind="stable")

    def near_rating(self) -> pd.DataFrame:
        """Rows of ``duty`` whose worst duty is within 10 % of the rating (not over it)."""
        if self.duty is None:
            return pd.DataFrame(columns=list(DUTY_COLUMNS))
        return self.duty[self.duty.duty_status == STATUS_NEAR]

    def largest_three_phase(self) -> pd.Series:
        """The row of ``buses`` with the largest three-phase fault current (the first on equal
        values)."""
        return self.buses.loc[self.buses["i3ph_ka"].idxmax()]

    def summary(self, buses: int | None = None) -> StudyResult:
        """The result cut to the buses a reviewer reads first (for a study too large to read
        bus by bus): the ``buses`` (default SUMMARY_BUSES) buses with the largest fault
        current of the four types, and every bus whose duty is over or near its rating in the
        base case or any case, the largest current first; the cases and the envelope cut to
        those buses, only the flagged cable checks, no element echo. ``duty`` and ``labels``
        stay whole."""
        count = SUMMARY_BUSES if buses is None else buses
        b = self.buses
        findings = [STATUS_OVER, STATUS_NEAR]
        largest = b[["i3ph_ka", "islg_ka", "ill_ka", "illg_ka"]].max(axis=1, skipna=True)
        worst = set(largest.nlargest(count).index)
        worst |= set(b.index[b.duty_status.isin(findings)])
        if self.duty is not None:
            worst |= set(b.index[b.bus.isin(self.duty[self.duty.duty_status.isin(findings)].bus)])
        keep = sorted(worst, key=lambda i: -largest[i])
        names = set(b.bus.iloc[keep])
        return dataclasses.replace(
            self,
            bus_kv_all=(
                dict(zip(b.bus, b.kv, strict=True)) if self.bus_kv_all is None else self.bus_kv_all
            ),
            buses=b.iloc[keep].reset_index(drop=True),
            descriptions=tuple(self.descriptions[i] for i in keep),
            node_groups=tuple(self.node_groups[i] for i in keep),
            element_table=lambda: pd.DataFrame(columns=list(ELEMENT_COLUMNS)),
            cable_checks=(
                self.cable_checks[self.cable_checks.flagged]
                if self.cable_checks is not None
                else None
            ),
            cases={k: v[v.bus.isin(names)] for k, v in self.cases.items()},
            maximum=(
                self.maximum.set_index("bus").reindex(b.bus.iloc[keep]).reset_index()
                if self.maximum is not None
                else None
            ),
            envelope=(
                self.envelope[self.envelope.bus.isin(names)] if self.envelope is not None else None
            ),
        )

    def contributions_at_most(self, rows: int) -> tuple[pd.DataFrame, int]:
        """The contributions cut to whole faulted buses, the largest fault current first,
        while they hold at most ``rows`` rows (the first such bus always): the table (rows in
        their order) and the number of faulted buses kept. The table whole when it fits.
        Ranked by ``buses``: call it on the whole result, not on a summary."""
        c = self.contributions
        if c is None:
            raise ValueError("the study has no contributions")
        if self.bus_kv_all is not None:
            raise ValueError("contributions_at_most ranks by every bus: not on a summary")
        per_bus = c.groupby("faulted_bus", observed=True, sort=False).size()
        if len(c) <= rows:
            return c, len(per_bus)
        fault_ka = self.buses.set_index("bus")[["i3ph_ka", "islg_ka", "ill_ka", "illg_ka"]]
        largest = fault_ka.max(axis=1, skipna=True).reindex(per_bus.index)
        order = largest.sort_values(ascending=False, kind="stable").index
        within = per_bus[order].cumsum().to_numpy() <= rows
        within[0] = True
        keep = order[within]
        return c[c.faulted_bus.isin(keep)].reset_index(drop=True), len(keep)

    @functools.cached_property
    def elements(self) -> pd.DataFrame:
        """One row per element, columns ELEMENT_COLUMNS: the input restated on the common base.
        Built on first use (a large study that writes only a summary never needs it)."""
        return self.element_table()
