"""Doubtful but usable input: warnings, each with its basis. Nothing here stops a study."""

from __future__ import annotations

import numpy as np

from ..model import FT_PER_KFT, M_PER_FT, System
from .slips import infinite_sources

# Voltages commonly written in volts; a kv cell holding one of them was probably typed in volts.
COMMON_VOLTS = {
    120,
    208,
    220,
    230,
    240,
    277,
    347,
    380,
    400,
    415,
    440,
    460,
    480,
    575,
    600,
    690,
    1000,
    2400,
    3300,
    4160,
    4800,
    6600,
    6900,
    11000,
    12000,
    12470,
    13200,
    13800,
    22000,
    24940,
    33000,
    34500,
}
XR_RANGE = (0.1, 100.0)
# Transformer %Z usual for distribution and substation transformers (common practice, no
# source): 1.5 to 10 % up to 10 MVA, 4 to 20 % above.
Z_RANGE_SMALL = (1.5, 10.0)
Z_RANGE_LARGE = (4.0, 20.0)
# Longest cables the voltage level carries in practice before the voltage drop (NFPA 70
# informational notes suggest 5 % in all) or the fault current itself becomes unworkable
# (common practice, no source).
LV_MAX_FT = 2000.0
MV_MAX_FT = 30 * 3280.84


def _where(sheet: str, row: int | None, column: str) -> str:
    return f"sheet '{sheet}'" + (f", row {row}" if row else "") + f", column '{column}'"


def warnings(system: System) -> list[str]:
    """The warnings, in sheet and row order (whole columns checked; objects made for the rows
    flagged only). Each sheet's are kept with its Records (``Records.memo``), so a case that
    leaves a sheet as it is shares the base's."""
    out = _kept(system.buses, "doubts", lambda: _bus_doubts(system.buses))
    out += _kept(system.transformers, "doubts", lambda: _transformer_doubts(system.transformers))
    out += _kept(system.sources, "doubts", lambda: _infinite_doubts(system.sources))
    for sheet in ("sources", "transformers", "machines"):
        items = getattr(system, sheet)
        out += _kept(items, "xr doubts", lambda items=items, sheet=sheet: _xr_doubts(sheet, items))
    cables = system.cables
    if cables:  # they depend on the buses too: kept for these very buses
        kept = _kept(cables, "doubts by buses", dict)
        if id(system.buses) not in kept or kept[id(system.buses)][0] is not system.buses:
            kept[id(system.buses)] = (system.buses, _cable_doubts(system))
        out += kept[id(system.buses)][1]
    return out


def _kept(records, key: str, make):
    """``make()``, worked out once per Records."""
    memo = records.memo()
    if key not in memo:
        memo[key] = make()
    return list(memo[key]) if isinstance(memo[key], list) else memo[key]


def _bus_doubts(buses) -> list[str]:
    out = []
    volts = np.isin(buses.array("kv"), sorted(COMMON_VOLTS))
    for b in buses.take(np.flatnonzero(volts)):
        if b.kv in COMMON_VOLTS:
            out.append(
                f"{_where('buses', b.row, 'kv')}: {b.kv:g} kV looks like a voltage in "
                f"volts; kv is in kilovolts ({b.kv / 1000:g} for {b.kv:g} V) (found "
                f"{b.kv:g})"
            )
    return out


def _transformer_doubts(transformers) -> list[str]:
    out = []
    for t in transformers:
        low, high = Z_RANGE_SMALL if t.kva <= 10_000 else Z_RANGE_LARGE
        if not low <= t.z_pct <= high:
            out.append(
                f"{_where('transformers', t.row, 'z_pct')}: {t.z_pct:g} % is outside "
                f"the {low:g} to {high:g} % usual for a {t.kva:g} kVA transformer "
                "(common practice, no source); check the nameplate"
            )
        for column in ("hv_kv", "lv_kv"):
            value = getattr(t, column)
            if value in COMMON_VOLTS:
                out.append(
                    f"{_where('transformers', t.row, column)}: {value:g} kV looks like "
                    "volts; the column is in kilovolts"
                )
    return out


def _infinite_doubts(sources) -> list[str]:
    out = []
    infinite = infinite_sources(sources.array("sc_mva"), sources.array("sc_ka"))
    for s in sources.take(np.flatnonzero(infinite)):
        column = "sc_mva" if s.sc_mva is not None else "sc_ka"
        out.append(
            f"{_where('sources', s.row, column)}: {getattr(s, column):g} is taken as an "
            "infinite bus, an idealization that overstates every current below it; use the "
            "utility's figure for the study you sign"
        )
    return out


def _xr_doubts(sheet: str, items) -> list[str]:
    out = []
    xr = items.array("xr")
    outside = ~((xr >= XR_RANGE[0]) & (xr <= XR_RANGE[1]))
    for e in items.take(np.flatnonzero(outside)):
        if not XR_RANGE[0] <= e.xr <= XR_RANGE[1]:
            out.append(
                f"{_where(sheet, e.row, 'xr')}: X/R {e.xr:g} is outside "
                f"{XR_RANGE[0]:g} to {XR_RANGE[1]:g}, where real equipment lies "
                "(common practice, no source)"
            )
    return out


def _cable_doubts(system: System) -> list[str]:
    out = []
    buses, cables = system.buses, system.cables
    ft = cables.array("length_ft")
    feet = np.where(np.isnan(ft), cables.array("length_m") / M_PER_FT, ft)
    kv_from = buses.array("kv")[system.bus_positions(cables.column("from_bus"))]
    long = feet > np.where(kv_from <= 1.0, LV_MAX_FT, MV_MAX_FT) * 0.999
    flagged = np.flatnonzero(long)
    for c, kv_bus in zip(cables.take(flagged), kv_from[flagged].tolist(), strict=True):
        length_ft = c.length_kft * FT_PER_KFT
        limit = LV_MAX_FT if kv_bus <= 1.0 else MV_MAX_FT
        if length_ft > limit:
            column = "length_ft" if c.length_ft is not None else "length_m"
            out.append(
                f"{_where('cables', c.row, column)}: {length_ft:,.0f} ft is longer than "
                f"a {kv_bus:g} kV circuit is run in practice ({limit:,.0f} ft; "
                "common practice, no source); check the length and its unit"
            )
    return out
