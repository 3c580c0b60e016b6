"""The rules of the three_winding_transformers sheet, on the rows still ok.

A row is a transformer of three separate windings (h, m, l), or an autotransformer (kind auto:
h and m joined through its series and common windings, one neutral) with or without a tertiary
l. The tertiary may have no bus: a delta winding not brought out, which still gives the zero
sequence its path. Which columns each form needs is checked here, after the cells were typed.
"""

from __future__ import annotations

import math

import numpy as np

from . import slips
from .collect import Collector
from .columns import Typed
from .references import Buses

SHEET = "three_winding_transformers"
PAIRS = ("hm", "hl", "ml")
# Doubtful but possible values, warned (common practice, no source): the X/R of power
# transformers from about 3 to 60; pair impedances from about 3 to 35 % on their own kVA.
XR_USUAL = (2.0, 80.0)
Z_USUAL = (2.0, 40.0)
PAIR_PARTS = ("z_pct", "kva", "xr")


def three_winding(sheet: Typed, buses: Buses, out: Collector, at: np.ndarray) -> None:
    """Every rule of the sheet for the rows ``at`` (a row's first problem only)."""
    at = at[sheet.ok[at]]
    v = sheet.values
    for i in at.tolist():
        row = int(sheet.rows[i])
        bus_kv = {
            x: float(buses.kv[buses.ends[(SHEET, f"{x}_bus")][i]])
            for x in ("h", "m", "l")
            if v[f"{x}_bus"][i] is not None
        }
        problem = _first_problem(v, i)
        if problem is None:
            problem = _clock_problem(v, i)
        if problem is None:
            problem = _pair_slips(v, i, bus_kv)
        if problem is not None:
            column, value, message = problem
            out.problem(SHEET, row, column, value, message)
            sheet.ok[i] = False
            continue
        for pair in PAIRS:
            xr = v[f"{pair}_xr"][i]
            if _given(v, f"{pair}_xr", i) and not XR_USUAL[0] <= xr <= XR_USUAL[1]:
                out.warn(
                    SHEET,
                    row,
                    f"{pair}_xr",
                    float(xr),
                    f"X/R {xr:g} is outside the {XR_USUAL[0]:g} to {XR_USUAL[1]:g} of power "
                    "transformers (common practice, no source); check the test report",
                )
            z = v[f"{pair}_z_pct"][i]
            if _given(v, f"{pair}_z_pct", i) and not Z_USUAL[0] <= z <= Z_USUAL[1]:
                out.warn(
                    SHEET,
                    row,
                    f"{pair}_z_pct",
                    float(z),
                    f"{z:g} % is outside the {Z_USUAL[0]:g} to {Z_USUAL[1]:g} % usual for a "
                    "pair of windings of a three-winding transformer on its stated kVA "
                    "(common practice, no source); check the test report",
                )
        for letter in ("h", "m", "l"):
            bus = v[f"{letter}_bus"][i]
            if bus is None:
                continue
            position = buses.ends[(SHEET, f"{letter}_bus")][i]
            nominal = float(buses.kv[position])
            rated = float(v[f"{letter}_kv"][i])
            if slips.off_nominal(rated, nominal):
                out.warn(
                    SHEET,
                    row,
                    f"{letter}_kv",
                    rated,
                    slips.winding_off_nominal(rated, bus, nominal),
                )


def _given(v, column: str, i: int) -> bool:
    value = v[column][i]
    if isinstance(value, float | np.floating):
        return not math.isnan(value)
    return value is not None


def _first_problem(v, i: int):
    """(column, value, message) of the row's first problem, or None."""
    auto = v["kind"][i] == "auto"
    tertiary = _given(v, "l_winding", i)
    l_parts = [c for c in ("l_bus", "l_kva", "l_kv", "l_clock") if _given(v, c, i)]
    l_pairs = [
        f"{p}_{part}" for p in ("hl", "ml") for part in PAIR_PARTS if _given(v, f"{p}_{part}", i)
    ]
    if not tertiary:
        if not auto:
            return (
                "l_winding",
                None,
                "a transformer of separate windings needs its third winding (l_winding and the "
                "hl and ml impedances); a two-winding transformer goes on the 'transformers' "
                "sheet",
            )
        if l_parts or l_pairs:
            column = (l_parts or l_pairs)[0]
            return (
                "l_winding",
                None,
                f"{column} is filled but l_winding is blank: give the tertiary's connection "
                "(D for a delta tertiary), or leave every l and hl/ml column blank for an "
                "autotransformer without a tertiary",
            )
    else:
        for pair in ("hl", "ml"):
            for part in PAIR_PARTS:
                if not _given(v, f"{pair}_{part}", i):
                    return (
                        f"{pair}_{part}",
                        None,
                        f"a winding l needs the impedance of the pair {pair}: {pair}_z_pct on "
                        f"{pair}_kva with {pair}_xr, from the test report",
                    )
        if _given(v, "l_bus", i):
            for column in ("l_kva", "l_kv"):
                if not _given(v, column, i):
                    return (column, None, "a winding l with a bus needs its rating and rated kV")
        elif v["l_winding"][i] != "D":
            return (
                "l_winding",
                v["l_winding"][i],
                "a tertiary with no bus (l_bus blank) is a delta winding not brought out: "
                "l_winding D; a wye tertiary needs its bus",
            )
    named = [(c, v[c][i]) for c in ("h_bus", "m_bus", "l_bus") if _given(v, c, i)]
    for k, (column, bus) in enumerate(named):
        for other, bus_other in named[:k]:
            if bus == bus_other:
                return (column, bus, f"the same bus as {other}; each winding has a bus of its own")
    h_kv, m_kv = float(v["h_kv"][i]), float(v["m_kv"][i])
    if m_kv > h_kv:
        return (
            "m_kv",
            m_kv,
            f"m_kv must not be higher than h_kv ({h_kv:g}): h is the winding "
            "of the highest voltage",
        )
    if _given(v, "l_kv", i) and float(v["l_kv"][i]) > h_kv:
        return (
            "l_kv",
            float(v["l_kv"][i]),
            f"l_kv must not be higher than h_kv ({h_kv:g}): h "
            "is the winding of the highest voltage",
        )
    if auto:
        for column in ("h_winding", "m_winding"):
            if v[column][i] != "YN":
                return (
                    column,
                    v[column][i],
                    "an autotransformer (kind auto) is YNa0: its h and m terminals share one "
                    "grounded neutral, so h_winding and m_winding are YN",
                )
        if float(v["m_neutral_ohm"][i]) != 0.0:
            return (
                "m_neutral_ohm",
                float(v["m_neutral_ohm"][i]),
                "an autotransformer has one neutral: give its impedance as h_neutral_ohm and "
                "leave m_neutral_ohm blank",
            )
        if _given(v, "m_clock", i) and int(v["m_clock"][i]) != 0:
            return (
                "m_clock",
                int(v["m_clock"][i]),
                "an autotransformer's m is in phase with h (clock 0)",
            )
        if not h_kv > m_kv:
            return ("m_kv", m_kv, "an autotransformer's m_kv is below its h_kv")
        if tertiary and v["l_winding"][i] != "D":
            return (
                "l_winding",
                v["l_winding"][i],
                "an autotransformer's tertiary is a delta winding (l_winding D); a wye "
                "winding behind an autotransformer is not modelled",
            )
    for pair in PAIRS:
        if not _given(v, f"{pair}_z_pct", i):
            continue
        for column in (f"{pair}_z_pct", f"{pair}_z0_pct"):
            z = float(v[column][i])
            if z < slips.MIN_Z_PCT:
                return (
                    column,
                    z,
                    f"{z:g} % is below the {slips.MIN_Z_PCT:g} % of any real "
                    f"transformer: {column} is in percent (8 for 8 %), not a fraction",
                )
            if z > slips.MAX_Z_PCT:
                return (
                    column,
                    z,
                    f"{z:g} % is above {slips.MAX_Z_PCT:g} %: no transformer "
                    "could carry its rated current; was a decimal point lost?",
                )
    return None


def _clock_problem(v, i: int):
    """A clock number that the pair of windings cannot have (IEC 60076-1 vector groups)."""
    h = v["h_winding"][i]
    for letter in ("m", "l"):
        column = f"{letter}_clock"
        if not _given(v, column, i):
            continue
        other = v[f"{letter}_winding"][i]
        number = int(v[column][i])
        mixed = (h == "D") != (other == "D")
        if number > 11 or (number % 2 == 1) != mixed:
            parity = "odd (1, 5, 7 or 11)" if mixed else "even (0, 2, ..., 10)"
            return (
                column,
                number,
                f"windings {h} and {other} have an {parity} clock number from 0 to 11 "
                "(IEC 60076-1 vector groups)",
            )
    return None


# The two-winding sheet's gross-slip rules (read/slips.py), run on each pair of windings: the
# columns they name, in this sheet's terms.
def _pair_slips(v, i: int, bus_kv: dict[str, float]):
    """The first gross slip of a pair of windings (kVA in MVA, kV in volts, a winding more than
    1.5 x from its bus, swapped buses, %Z as a fraction), or None."""
    for pair in PAIRS:
        a, b = pair
        if not _given(v, f"{pair}_z_pct", i):
            continue
        rated = {x: float(v[f"{x}_kv"][i]) for x in pair if _given(v, f"{x}_kv", i)}
        if len(rated) < 2:  # a tertiary not brought out has no kV to check
            continue
        nominal = {x: bus_kv.get(x, rated[x]) for x in pair}
        found = slips.transformer_slips(
            np.array([float(v[f"{pair}_kva"][i])]),
            np.array([rated[a]]),
            np.array([rated[b]]),
            np.array([float(v[f"{pair}_z_pct"][i])]),
            np.array([nominal[a]]),
            np.array([nominal[b]]),
            [v[f"{a}_bus"][i]],
            [v[f"{b}_bus"][i]],
        )
        # a pair's kVA is the base of its test impedance, not a rating: it may exceed what a
        # winding of the pair could carry, so only a kVA too small (typed in MVA) is refused
        found = [f for f in found if not (f.column == "kva" and "larger" in f.message)]
        if found:
            slip = found[0]
            column = {
                "hv_bus": f"{a}_bus",
                "hv_kv": f"{a}_kv",
                "lv_kv": f"{b}_kv",
                "kva": f"{pair}_kva",
                "z_pct": f"{pair}_z_pct",
            }[slip.column]
            message = (
                slip.message.replace("hv_bus and lv_bus", f"{a}_bus and {b}_bus")
                .replace("as hv_bus", f"as {a}_bus")
                .replace("kva is in kVA", f"{pair}_kva is in kVA")
                .replace("z_pct is in percent", f"{pair}_z_pct is in percent")
            )
            return column, slip.value, message
    return None
