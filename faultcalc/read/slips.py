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
# Rated winding kV against bus kV: beyond this the off-nominal ratio is worth a warning (common
# practice, no source); beyond KV_RATIO_LIMIT it is refused.
KV_MISMATCH_WARN = 0.05
# The smallest three-phase transformer ratings by their windings, so that kVA typed in MVA is
# caught at every voltage: 3 kVA for low-voltage dry types (value from memory of NEMA ST 20);
# 5 kVA with a primary up to 35 kV and a low-voltage secondary (an open-delta bank of two 5 kVA
# pole units carries 8.7 kVA; IEEE C57.12.00 single-phase ratings start at 5 kVA, value from
# memory); 75 kVA with both windings above 1 kV up to 35 kV, 500 kVA with a primary above 35 kV
# and 2,500 kVA above 100 kV (the smallest medium-voltage, sub-transmission and transmission
# substation units; common practice, no source).
MIN_KVA_LV = 3.0
MIN_KVA_DISTRIBUTION = 5.0
MIN_KVA_MV_MV = 75.0
MIN_KVA_SUBTRANSMISSION = 500.0
MIN_KVA_TRANSMISSION = 2_500.0
# The largest transformers: banks of about 3,000 MVA at 1000 kV (common practice, no source):
# more than 5,000,000 kVA was typed in VA. With a secondary of 1 kV or less, no unit is built
# above about 5,000 kVA (6,000 A at 480 V; common practice, no source): more than 10,000 kVA
# was typed in VA.
MAX_KVA = 5_000_000.0
MAX_KVA_LV_SECONDARY = 10_000.0
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
# Machine ratings: medium-voltage motors start near 100 hp (common practice, no source), so a
# floor of 5 kVA above 1 kV refuses no real machine and catches a rating of a few MVA typed in
# MVA; no machine at 1 kV or less is larger than 10,000
# kVA (low-voltage generators and motors stop near 4,000 kVA) and none at all larger than
# 2,000,000 kVA (the largest turbine generators are about 1,800 MVA; common practice, no
# source): beyond these the rating was typed in MVA or in VA.
MIN_MACHINE_KVA_MV = 5.0
MAX_MACHINE_KVA_LV = 10_000.0
MAX_MACHINE_KVA = 2_000_000.0
# Available fault current at a utility point of delivery: the largest breakers interrupt about
# 300 kA (generator circuit breakers, IEEE C37.013; value from memory) and the strongest
# transmission buses carry about 100,000 MVA (80 kA at 765 kV, common practice, no source).
# An infinite bus, the hand-calculation idealization of a stiff supply, is typed as a huge figure
# (1e6 MVA or more in sc_mva, or 1e6 kA or more in sc_ka) and stays allowed (warned in
# plausibility.py). Otherwise more than 1000 kA was typed in amperes, and more than 200,000
# MVA (typed, or from sc_ka at the bus kV) was typed in kVA or is impossible.
MAX_SC_KA = 1000.0
MAX_SC_MVA = 200_000.0
INFINITE_BUS_MVA = 1e6
INFINITE_BUS_KA = 1e6
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
    value: float | str  # the number found, or the bus name for swapped buses
    message: str


def _off(rated: np.ndarray, nominal: np.ndarray) -> np.ndarray:
    """True where ``rated`` differs from ``nominal`` by more than KV_RATIO_LIMIT either way."""
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = rated / nominal
    return (ratio > KV_RATIO_LIMIT) | (ratio < 1.0 / KV_RATIO_LIMIT)


def off_nominal(rated, nominal):
    """True where a rated kV differs from its bus's nominal kV by more than KV_MISMATCH_WARN
    (a warning: modelled as it is), on arrays or single values; False where either is
    missing (NaN) or the bus kV is 0."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.abs(np.asarray(rated, float) / np.asarray(nominal, float) - 1.0) > (
            KV_MISMATCH_WARN
        )


def winding_off_nominal(rated: float, bus: str, nominal: float) -> str:
    """The warning for a transformer winding rated off its bus's nominal kV."""
    return (
        f"winding rated {rated:g} kV on bus {bus} of {nominal:g} kV (differs by "
        f"{100 * (rated / nominal - 1):+.1f}%); modelled as an off-nominal ratio; check the "
        "nameplate and the bus voltage"
    )


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
    min_kva = np.select(
        [hv_kv > 100.0, hv_kv > 35.0, lv_kv > 1.0, hv_kv > 1.0],
        [MIN_KVA_TRANSMISSION, MIN_KVA_SUBTRANSMISSION, MIN_KVA_MV_MV, MIN_KVA_DISTRIBUTION],
        MIN_KVA_LV,
    )
    max_kva = np.where(lv_kv > 1.0, MAX_KVA, MAX_KVA_LV_SECONDARY)
    small, large = kva < min_kva, kva > max_kva
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
                    f"{kva[i]:g} kVA is smaller than any three-phase transformer of "
                    f"{hv_kv[i]:g}/{lv_kv[i]:g} kV (the smallest are about {min_kva[i]:,.0f} "
                    f"kVA); kva is in kVA: {kva[i] * 1000:g} for {kva[i]:g} MVA",
                )
            )
        elif large[i]:
            found.append(
                Slip(
                    i,
                    "kva",
                    float(kva[i]),
                    f"{kva[i]:g} kVA is larger than any transformer of {hv_kv[i]:g}/"
                    f"{lv_kv[i]:g} kV built (at most about {max_kva[i] / 2:,.0f} kVA); kva is "
                    f"in kVA: {kva[i] / 1000:g} for {kva[i]:g} VA",
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


def machine_slips(
    kv: np.ndarray,
    xd_pct: np.ndarray,
    bus_kv: np.ndarray,
    bus: list[str],
    kva: np.ndarray,
    hp: np.ndarray,
):
    """Rated kV inconsistent with the bus (volts, wrong bus), X"d as a fraction or impossible,
    a rating (kva, or hp taken as kVA) typed in MVA or VA."""
    found: list[Slip] = []
    off = _off(kv, bus_kv)
    low, high = xd_pct < MIN_XD_PCT, xd_pct > MAX_XD_PCT
    rating = np.where(np.isnan(kva), hp, kva)
    max_kva = np.where(kv > 1.0, MAX_MACHINE_KVA, MAX_MACHINE_KVA_LV)
    tiny = (kv > 1.0) & (rating < MIN_MACHINE_KVA_MV)
    huge = rating > max_kva
    for i in np.flatnonzero(off | low | high | tiny | huge).tolist():
        column = "kva" if not np.isnan(kva[i]) else "hp"
        if tiny[i]:
            found.append(
                Slip(
                    i,
                    column,
                    float(rating[i]),
                    f"{rating[i]:g} {column} is smaller than any machine rated {kv[i]:g} kV "
                    f"(the smallest are about 100 hp); {column} is per "
                    f"machine: {rating[i] * 1000:g} for {rating[i]:g} MVA",
                )
            )
        elif huge[i]:
            found.append(
                Slip(
                    i,
                    column,
                    float(rating[i]),
                    f"{rating[i]:g} {column} is larger than any machine rated {kv[i]:g} kV "
                    f"(at most about {max_kva[i] / 2:,.0f} kVA); {column} is per machine: "
                    f"{rating[i] / 1000:g} for {rating[i]:g} VA",
                )
            )
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


def infinite_sources(sc_mva: np.ndarray, sc_ka: np.ndarray) -> np.ndarray:
    """Sources typed as an infinite bus (an idealization, allowed and warned)."""
    return (sc_mva >= INFINITE_BUS_MVA) | (sc_ka >= INFINITE_BUS_KA)


def source_slips(
    sc_mva: np.ndarray, sc_ka: np.ndarray, slg_ka: np.ndarray, bus_kv: np.ndarray
) -> list[Slip]:
    """Available fault current typed in amperes, or power in kVA (an infinite bus is allowed,
    and the line-to-ground figure of one may be as large)."""
    found: list[Slip] = []
    infinite = infinite_sources(sc_mva, sc_ka)
    mva = np.where(np.isnan(sc_mva), np.sqrt(3.0) * bus_kv * sc_ka, sc_mva)
    high_ka = (sc_ka > MAX_SC_KA) & ~infinite
    high_mva = (mva > MAX_SC_MVA) & ~infinite & ~high_ka
    high_slg = (slg_ka > MAX_SC_KA) & ~infinite
    for i in np.flatnonzero(high_mva | high_ka | high_slg).tolist():
        if high_mva[i]:
            column = "sc_mva" if not np.isnan(sc_mva[i]) else "sc_ka"
            typed = sc_mva[i] if column == "sc_mva" else sc_ka[i]
            unit = (
                f"sc_mva is in MVA: {sc_mva[i] / 1000:g} for {sc_mva[i]:g} kVA"
                if column == "sc_mva"
                else f"{sc_ka[i]:g} kA at {bus_kv[i]:g} kV is {mva[i]:,.0f} MVA"
            )
            found.append(
                Slip(
                    i,
                    column,
                    float(typed),
                    f"{mva[i]:,.0f} MVA is more than any power system delivers (about "
                    f"{MAX_SC_MVA / 2:,.0f} MVA at the strongest transmission buses); {unit} "
                    f"(for an infinite bus give {INFINITE_BUS_MVA:,.0f} MVA or more)",
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
                        f"{column} is in kA: {value[i] / 1000:g} for {value[i]:g} A (for an "
                        f"infinite bus give sc_mva {INFINITE_BUS_MVA:,.0f} or more)",
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


# Inverter current limit, per-unit of rated current: the fault current of grid-following
# inverters is held between about 1.05 and 1.5 x rated (the range usual in manufacturers'
# data; IEEE 1547-2018 and IEEE 2800-2022 set the ride-through it must be held in, not the
# limit itself; values from memory). Below 1.0 the inverter could not carry its own rated
# current; above 2.0 no inverter's semiconductors carry it: a percent (120 for 1.2) or a
# multiple of another base was typed.
MIN_INVERTER_LIMIT_PU = 1.0
MAX_INVERTER_LIMIT_PU = 2.0
# Momentary cessation below a voltage of 1 pu or more would stop the inverter in normal
# operation (IEEE 1547-2018 permits it below about 0.5 pu; value from memory): a percent typed.
MAX_CEASE_PU = 1.0
# A negative-sequence share of 100 % or more leaves no positive-sequence current.
MAX_NEGATIVE_SHARE_PCT = 100.0


def inverter_slips(
    kv: np.ndarray,
    bus_kv: np.ndarray,
    bus: list[str],
    limit_pu: np.ndarray,
    cease_pu: np.ndarray,
    share_pct: np.ndarray,
) -> list[Slip]:
    """Rated kV inconsistent with the bus, a current limit no inverter has, a cessation
    voltage at or above 1 pu, a negative-sequence share of 100 % or more."""
    found: list[Slip] = []
    off = _off(kv, bus_kv)
    bad_limit = (limit_pu < MIN_INVERTER_LIMIT_PU) | (limit_pu > MAX_INVERTER_LIMIT_PU)
    bad_cease = cease_pu >= MAX_CEASE_PU
    bad_share = share_pct >= MAX_NEGATIVE_SHARE_PCT
    for i in np.flatnonzero(off | bad_limit | bad_cease | bad_share).tolist():
        if off[i]:
            found.append(
                Slip(
                    i,
                    "kv",
                    float(kv[i]),
                    f"inverter rated {kv[i]:g} kV on bus {bus[i]} of {bus_kv[i]:g} kV, more "
                    f"than {KV_RATIO_LIMIT:g} x apart: {_kv_hint(kv[i], bus_kv[i])} (an "
                    "inverter behind its own step-up transformer goes on the transformer's "
                    "low-voltage bus)",
                )
            )
        if bad_limit[i]:
            hint = (
                f"; current_limit_pu is per-unit: {limit_pu[i] / 100:g} for {limit_pu[i]:g} %"
                if 100 * MIN_INVERTER_LIMIT_PU <= limit_pu[i] <= 100 * MAX_INVERTER_LIMIT_PU
                else ""
            )
            found.append(
                Slip(
                    i,
                    "current_limit_pu",
                    float(limit_pu[i]),
                    f"a current limit of {limit_pu[i]:g} x rated current is outside the "
                    f"{MIN_INVERTER_LIMIT_PU:g} to {MAX_INVERTER_LIMIT_PU:g} x any inverter has "
                    f"(usually 1.05 to 1.5){hint}",
                )
            )
        if bad_cease[i]:
            hint = (
                f"; cease_below_pu is per-unit: {cease_pu[i] / 100:g} for {cease_pu[i]:g} %"
                if cease_pu[i] >= 10
                else ""
            )
            found.append(
                Slip(
                    i,
                    "cease_below_pu",
                    float(cease_pu[i]),
                    f"ceasing below {cease_pu[i]:g} pu would stop the inverter at its normal "
                    f"voltage (IEEE 1547-2018 permits momentary cessation below about 0.5 pu, "
                    f"value from memory){hint}",
                )
            )
        if bad_share[i]:
            found.append(
                Slip(
                    i,
                    "negative_share_pct",
                    float(share_pct[i]),
                    f"a negative-sequence share of {share_pct[i]:g} % of the limit current "
                    "leaves no positive-sequence current; give the share in % (e.g. 20)",
                )
            )
    return found
