"""Gross mistakes: values no real element has, or that disagree with the buses they connect.

Each rule is written once, on whole columns (numpy arrays, NaN = blank), and returns the
positions it refuses with a message naming the likely slip (kVA typed in MVA, kV in volts, %Z as
a fraction, kA in amperes, the two buses of a transformer swapped). Both readers call these
functions: the careful reader turns each finding into a located problem, the column-wise reader
gives way to the careful one when there is any. Merely unusual values are warnings
(``plausibility.py``), not here.

Every threshold is chosen so that no real system is refused; its basis is written beside it.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

# A winding's or machine's rated kV against the nominal kV of the bus it is on. Taps move a
# winding by 5 to 10 % (IEEE C57.12.00 and IEC 60076-1 tap ranges, common practice) and
# equipment rated for a neighbouring nominal voltage differs from the bus by at most about
# 1.3 x (460 V motor on 480 V, 600 V on 480 V, 13.8 kV on 12.47 kV, 2.3 kV on 2.4 kV: ANSI C84.1
# and IEC 60038 levels). Beyond 1.5 x the element is not rated for that bus (the study would
# otherwise model it as a huge off-nominal ratio; common practice, no source).
KV_RATIO_LIMIT = 1.5
# No AC system is built above 1200 kV, the highest voltage for equipment in IEC 60038 Table 5
# (value from memory of IEC 60038:2009): a larger kv cell holds volts.
MAX_KV = 1200.0
# The smallest three-phase transformer ratings: 15 kVA for a primary above 1 kV (IEEE C57.12.00
# preferred ratings, and three single-phase 5 kVA units; value from memory of IEEE Std
# C57.12.00-2015 Table 1), 3 kVA for low-voltage dry types (value from memory of NEMA ST 20).
MIN_KVA_MV = 15.0
MIN_KVA_LV = 3.0
# The largest transformers built are about 1,500 MVA (generator step-up units; common practice,
# no source): more than 2,000,000 kVA was typed in VA.
MAX_KVA = 2_000_000.0
# Transformer impedance: no power or distribution transformer has less than about 1 % (common
# practice, no source; small dry types are 1.5 to 3 %); below 0.5 % the cell holds a fraction
# (0.0575 for 5.75 %). Above 100 % a transformer could not carry its own rated current at
# rated voltage: a decimal point was lost.
MIN_Z_PCT = 0.5
MAX_Z_PCT = 100.0
# Machine subtransient reactance: 9 to 30 % for generators and 10 to 25 % for motors (locked-rotor
# current 4 to 10 x rated; value from memory of IEEE Std 551-2006 Tables 4-1 and 9-1). Below
# 3 % a machine would feed 33 x its rated current: the cell holds a fraction. Above 100 % it
# would feed less than its rated current into a bolted fault.
MIN_XD_PCT = 3.0
MAX_XD_PCT = 100.0
# Available fault current at a utility point of delivery: the largest breakers interrupt about
# 300 kA (generator circuit breakers, IEEE C37.013; value from memory) and the strongest
# transmission buses carry about 100,000 MVA (80 kA at 765 kV, common practice, no source).
# An infinite bus, the hand-calculation idealization of a stiff supply, is typed as a huge figure
# (1e6 MVA or more) and stays allowed (warned in plausibility.py). Between these, more than
# 1000 kA was typed in amperes and more than 200,000 MVA in kVA.
MAX_SC_KA = 1000.0
MAX_SC_MVA = 200_000.0
INFINITE_BUS_MVA = 1e6
# Prefault voltage: refused outside 0.5 to 1.5 pu, where no system runs (a percent typed, 105
# for 1.05); warned outside 0.9 to 1.1, the band of the IEC 60909-0 voltage factors c
# (Table 1: cmin 0.95, cmax 1.10) and of ANSI C84.1 range B (common practice otherwise).
PREFAULT_REFUSED = (0.5, 1.5)
PREFAULT_USUAL = (0.9, 1.1)


@dataclass(frozen=True)
class Slip:
    """A refused value: position in the columns given, column, value, and the message."""

    index: int
    column: str
    value: float
    message: str


def _off(rated: np.ndarray, nominal: np.ndarray) -> np.ndarray:
    """True where ``rated`` differs from ``nominal`` by more than KV_RATIO_LIMIT either way."""
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = rated / nominal
    return (ratio > KV_RATIO_LIMIT) | (ratio < 1.0 / KV_RATIO_LIMIT)


def _fits(rated: float, nominal: float) -> bool:
    return 1.0 / KV_RATIO_LIMIT <= rated / nominal <= KV_RATIO_LIMIT


def _kv_hint(rated: float, nominal: float) -> str:
    """The likely slip behind a rated kV far from its bus's kV."""
    if _fits(rated / 1000.0, nominal):
        return f"it reads as volts: kv columns are in kilovolts ({rated / 1000:g} for {rated:g} V)"
    if _fits(rated, nominal / 1000.0):
        return (
            f"the bus's kv reads as volts ({nominal:g}): kv columns are in kilovolts "
            f"({nominal / 1000:g} for {nominal:g} V)"
        )
    return "check the nameplate and which buses it connects"


def bus_slips(kv: np.ndarray) -> list[Slip]:
    """Bus voltages above any AC system's."""
    return [
        Slip(
            i,
            "kv",
            float(kv[i]),
            f"{kv[i]:g} kV is above {MAX_KV:g} kV, the highest AC system voltage (IEC 60038); "
            f"kv is in kilovolts ({kv[i] / 1000:g} for {kv[i]:g} V)",
        )
        for i in np.flatnonzero(kv > MAX_KV).tolist()
    ]


def transformer_slips(
    kva: np.ndarray,
    hv_kv: np.ndarray,
    lv_kv: np.ndarray,
    z_pct: np.ndarray,
    hv_bus_kv: np.ndarray,
    lv_bus_kv: np.ndarray,
    hv_bus: list[str],
    lv_bus: list[str],
) -> list[Slip]:
    """Rated kV inconsistent with the buses (swapped, volts, wrong buses), kVA in MVA or VA, %Z as
    a fraction; at most one finding per column, in column order within a row."""
    found: list[Slip] = []
    hv_off, lv_off = _off(hv_kv, hv_bus_kv), _off(lv_kv, lv_bus_kv)
    swapped = hv_off & lv_off & ~_off(hv_kv, lv_bus_kv) & ~_off(lv_kv, hv_bus_kv)
    min_kva = np.where(hv_kv > 1.0, MIN_KVA_MV, MIN_KVA_LV)
    small, large = kva < min_kva, kva > MAX_KVA
    low_z, high_z = z_pct < MIN_Z_PCT, z_pct > MAX_Z_PCT
    rows = hv_off | lv_off | small | large | low_z | high_z
    for i in np.flatnonzero(rows).tolist():
        if swapped[i]:
            found.append(
                Slip(
                    i,
                    "hv_bus",
                    hv_bus[i],
                    f"hv_bus and lv_bus look swapped: the {hv_kv[i]:g} kV winding is on bus "
                    f"{hv_bus[i]} of {hv_bus_kv[i]:g} kV and the {lv_kv[i]:g} kV winding on bus "
                    f"{lv_bus[i]} of {lv_bus_kv[i]:g} kV; give the high-voltage side's bus as "
                    "hv_bus",
                )
            )
        else:
            for side, off, rated, nominal, bus in (
                ("hv", hv_off, hv_kv, hv_bus_kv, hv_bus),
                ("lv", lv_off, lv_kv, lv_bus_kv, lv_bus),
            ):
                if off[i]:
                    found.append(
                        Slip(
                            i,
                            f"{side}_kv",
                            float(rated[i]),
                            f"winding rated {rated[i]:g} kV on bus {bus[i]} of {nominal[i]:g} "
                            f"kV, more than {KV_RATIO_LIMIT:g} x apart: "
                            + _kv_hint(rated[i], nominal[i]),
                        )
                    )
        if small[i]:
            found.append(
                Slip(
                    i,
                    "kva",
                    float(kva[i]),
                    f"{kva[i]:g} kVA is smaller than any three-phase power transformer with a "
                    f"{hv_kv[i]:g} kV primary (the smallest rating is {min_kva[i]:g} kVA); kva is "
                    f"in kVA: {kva[i] * 1000:g} for {kva[i]:g} MVA",
                )
            )
        elif large[i]:
            found.append(
                Slip(
                    i,
                    "kva",
                    float(kva[i]),
                    f"{kva[i]:g} kVA is larger than any transformer built (about 1,500 MVA); "
                    f"kva is in kVA: {kva[i] / 1000:g} for {kva[i]:g} VA",
                )
            )
        if low_z[i]:
            found.append(
                Slip(
                    i,
                    "z_pct",
                    float(z_pct[i]),
                    f"{z_pct[i]:g} % is below the {MIN_Z_PCT:g} % of any real transformer; z_pct "
                    f"is in percent: {z_pct[i] * 100:g} for a fraction of {z_pct[i]:g}",
                )
            )
        elif high_z[i]:
            found.append(
                Slip(
                    i,
                    "z_pct",
                    float(z_pct[i]),
                    f"{z_pct[i]:g} % is above {MAX_Z_PCT:g} %: no transformer could carry its "
                    "rated current; check the decimal point (5.75 for 5.75 %)",
                )
            )
    return found


def machine_slips(kv: np.ndarray, xd_pct: np.ndarray, bus_kv: np.ndarray, bus: list[str]):
    """Rated kV inconsistent with the bus (volts, wrong bus), X"d as a fraction or impossible."""
    found: list[Slip] = []
    off = _off(kv, bus_kv)
    low, high = xd_pct < MIN_XD_PCT, xd_pct > MAX_XD_PCT
    for i in np.flatnonzero(off | low | high).tolist():
        if off[i]:
            found.append(
                Slip(
                    i,
                    "kv",
                    float(kv[i]),
                    f"machine rated {kv[i]:g} kV on bus {bus[i]} of {bus_kv[i]:g} kV, more than "
                    f"{KV_RATIO_LIMIT:g} x apart: {_kv_hint(kv[i], bus_kv[i])}",
                )
            )
        if low[i]:
            found.append(
                Slip(
                    i,
                    "xd_pct",
                    float(xd_pct[i]),
                    f'X"d of {xd_pct[i]:g} % is below the {MIN_XD_PCT:g} % of any real machine '
                    f"(usually 9 to 30 %); xd_pct is in percent: {xd_pct[i] * 100:g} for a "
                    f"fraction of {xd_pct[i]:g}",
                )
            )
        elif high[i]:
            found.append(
                Slip(
                    i,
                    "xd_pct",
                    float(xd_pct[i]),
                    f'X"d of {xd_pct[i]:g} % is above {MAX_XD_PCT:g} %: the machine would feed '
                    "less than its rated current into a bolted fault; check the decimal point",
                )
            )
    return found


def source_slips(
    sc_mva: np.ndarray, sc_ka: np.ndarray, slg_ka: np.ndarray, bus_kv: np.ndarray
) -> list[Slip]:
    """Available fault current typed in amperes, or power in kVA (an infinite bus, 1e6 MVA or
    more, is allowed: the line-to-ground figure of one may be as large)."""
    found: list[Slip] = []
    mva = np.where(np.isnan(sc_mva), np.sqrt(3.0) * bus_kv * sc_ka, sc_mva)
    infinite = mva >= INFINITE_BUS_MVA
    high_mva = (sc_mva > MAX_SC_MVA) & ~infinite
    high_ka = (sc_ka > MAX_SC_KA) & ~infinite
    high_slg = (slg_ka > MAX_SC_KA) & ~infinite
    for i in np.flatnonzero(high_mva | high_ka | high_slg).tolist():
        if high_mva[i]:
            found.append(
                Slip(
                    i,
                    "sc_mva",
                    float(sc_mva[i]),
                    f"{sc_mva[i]:g} MVA is more than any power system delivers (about "
                    f"{MAX_SC_MVA / 2:,.0f} MVA at the strongest transmission buses); sc_mva is "
                    f"in MVA: {sc_mva[i] / 1000:g} for {sc_mva[i]:g} kVA (for an infinite bus "
                    f"give {INFINITE_BUS_MVA:g} MVA or more)",
                )
            )
        for column, flags, value in (("sc_ka", high_ka, sc_ka), ("slg_ka", high_slg, slg_ka)):
            if flags[i]:
                found.append(
                    Slip(
                        i,
                        column,
                        float(value[i]),
                        f"{value[i]:g} kA is more than any equipment interrupts (about 300 kA); "
                        f"{column} is in kA: {value[i] / 1000:g} for {value[i]:g} A",
                    )
                )
    return found


def prefault_finding(value: float) -> tuple[bool, str] | None:
    """(refused, message) for a prefault voltage outside the usual band, or None."""
    low, high = PREFAULT_REFUSED
    if not low <= value <= high:
        hint = f" ({value / 100:g} for {value:g} %)" if 50 <= value <= 150 else ""
        return True, (
            f"prefault_pu: {value:g} pu is outside {low:g} to {high:g} pu, where no system runs; "
            f"it is per-unit of the bus's nominal kV{hint}"
        )
    low, high = PREFAULT_USUAL
    if not low <= value <= high:
        return False, (
            f"prefault_pu: {value:g} pu is outside {low:g} to {high:g} pu, the range of the "
            "IEC 60909-0 voltage factors and of ANSI C84.1 range B; check it"
        )
    return None
