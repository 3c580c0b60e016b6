"""Check the cable impedances the user typed against the tables and against physics.

For each cable whose R and X were typed, the values per conductor per 1000 ft are compared with
the NFPA 70 Table 9 row (or IEC 60228 row) of its size, material and raceway, as printed (75 C).
A cable beyond the tolerance is flagged, and the likely mistake is named when the ratio fits one.

Default tolerance 10 %: the table is printed to two significant figures (rounding up to about
3 %), values for 90 C conductors run about 5 % above the 75 C table, while the smallest common
mistake to catch, magnetic against non-magnetic raceway, moves X by about 25 %.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pandas as pd

from .. import conductors
from ..choices import CABLE_TOLERANCE_PCT
from ..model import Cable, System

DEFAULT_TOLERANCE_PCT = CABLE_TOLERANCE_PCT
KM_PER_KFT = 0.3048
# Physical floor for a typed resistance: 90 % of the DC resistance of a solid rod of the
# conductor's area at 20 C (nothing at a plausible temperature conducts better).
R_FLOOR_FRACTION = 0.9
X_FLOOR_FRACTION = 0.95  # of the reactance of bare round conductors touching each other

CHECK_COLUMNS = (
    "cable",
    "flagged",
    "reason",
    "given_r_ohm_per_kft",
    "given_x_ohm_per_kft",
    "table_r_ohm_per_kft",
    "table_x_ohm_per_kft",
    "table_row",
)


@dataclass(frozen=True)
class CableCheck:
    cable: str
    flagged: bool
    reason: str
    given_r_ohm_per_kft: float
    given_x_ohm_per_kft: float
    table_r_ohm_per_kft: float | None
    table_x_ohm_per_kft: float | None
    table_row: str
    row: int | None = None


def _near(ratio: float, target: float, tol: float) -> bool:
    return abs(ratio / target - 1.0) <= tol


def _other(value: str, choices: tuple[str, ...]) -> list[str]:
    return [c for c in choices if c != value]


def _physics(c: Cable, given: complex, f_hz: float) -> list[str]:
    """Reasons the typed values cannot be those of any conductor of this size."""
    size = conductors.parse_size(c.size)
    r_rod = conductors.dc_resistance_ohm_per_kft(size.area_mm2, c.material, 20.0, stranded=False)
    d_mm = 2 * math.sqrt(size.area_mm2 / math.pi)
    x_touch = conductors.reactance_ohm_per_kft(d_mm, d_mm, f_hz)
    found = []
    if given.real < R_FLOOR_FRACTION * r_rod:
        found.append(
            f"not physically possible for {size} {c.material}: R is below the DC "
            f"resistance of that area at 20 C ({r_rod:.4g} ohm/1000 ft)"
        )
    if given.imag < X_FLOOR_FRACTION * x_touch:
        found.append(
            "not physically possible: X is below that of bare conductors touching each "
            f"other ({x_touch:.4g} ohm/1000 ft)"
        )
    return found


NAMES = {"cu": "copper", "al": "aluminium"}
ARTICLE = {"cu": "a", "al": "an"}


def _causes(
    c: Cable, rr: float, rx: float, given: complex, table, f_hz: float, tol: float
) -> list[str]:
    """The common mistakes whose ratio fits; the physics verdict when none does."""
    causes = []
    k = 1.0 / KM_PER_KFT
    if _near(rr, k, tol) and _near(rx, k, tol):
        causes.append("about 3.28 times the table: ohms per kilometre typed as ohms per 1000 ft?")
    if _near(rr, 1 / k, tol) and _near(rx, 1 / k, tol):
        causes.append("about 1/3.28 of the table: ohms per 1000 ft typed as ohms per km?")
    for material in _other(c.material, conductors.MATERIALS):
        try:
            alt = conductors.table_as_printed(c.size, material, c.raceway, f_hz)
        except conductors.SizeError:
            continue
        if _near(given.real, alt.r_ohm_per_kft, tol) and _near(rx, 1.0, tol):
            factor = alt.r_ohm_per_kft / table.r_ohm_per_kft
            causes.append(
                f"R matches {NAMES[material]} (about {factor:.2f} times the "
                f"{NAMES[c.material]} value): {NAMES[material]} values for "
                f"{ARTICLE[c.material]} {NAMES[c.material]} cable?"
            )
    if c.sets > 1 and _near(rr, 1 / c.sets, tol) and _near(rx, 1 / c.sets, tol):
        causes.append(
            f"about 1/{c.sets} of the table: already divided by the {c.sets} sets? "
            "The tool divides by 'sets' itself, so it would be divided twice"
        )
    if c.sets > 1 and _near(rr, c.sets, tol) and _near(rx, c.sets, tol):
        causes.append(
            f"about {c.sets} times the table: multiplied by the {c.sets} sets instead "
            "of entered per conductor?"
        )
    magnetic = c.raceway == "steel"
    for raceway in _other(c.raceway, conductors.RACEWAYS):
        if (raceway == "steel") == magnetic:
            continue
        alt = conductors.table_as_printed(c.size, c.material, raceway, f_hz)
        if _near(given.imag, alt.x_ohm_per_kft, tol) and _near(given.real, alt.r_ohm_per_kft, tol):
            kind = "magnetic (steel)" if raceway == "steel" else "non-magnetic"
            causes.append(
                f"X matches {kind} conduit (about "
                f"{alt.x_ohm_per_kft / table.x_ohm_per_kft:.2f} times): values for "
                f"{raceway} conduit on a cable in {c.raceway}?"
            )
            break
    return causes or _physics(c, given, f_hz)


def check_cable(
    c: Cable,
    tolerance_pct: float = DEFAULT_TOLERANCE_PCT,
    frequency_hz: float = 60.0,
    bus_kv: float = 0.48,
) -> CableCheck | None:
    """Compare one cable's typed R and X with its table row; None if it took them from a table."""
    if c.impedance_source:
        return None
    given = c.z_ohm_per_kft
    tol = tolerance_pct / 100.0

    def result(flagged, reason, table=None, row=""):
        return CableCheck(
            c.cable,
            flagged,
            reason,
            given.real,
            given.imag,
            table.r_ohm_per_kft if table else None,
            table.x_ohm_per_kft if table else None,
            row,
            c.row,
        )

    if bus_kv > conductors.MAX_TABLE_KV:
        return result(
            False,
            f"not compared: the tables are for cables of 1 kV and below "
            f"(this one is at {bus_kv:g} kV)",
        )
    missing = [name for name in ("size", "material", "raceway") if not getattr(c, name)]
    if missing:
        return result(False, f"not compared: {', '.join(missing)} not given, so no table row")
    try:
        table = conductors.table_as_printed(c.size, c.material, c.raceway, frequency_hz)
    except conductors.SizeError as exc:
        return result(False, f"not compared: size {c.size!r}: {exc}")
    rr = given.real / table.r_ohm_per_kft
    rx = given.imag / table.x_ohm_per_kft if table.x_ohm_per_kft else float("inf")
    if abs(rr - 1) <= tol and abs(rx - 1) <= tol:
        note = (
            " (the table's X for this metric size is itself an assumption)"
            if table.assumed_x
            else ""
        )
        return result(
            False, f"agrees with the table within {tolerance_pct:g} %{note}", table, table.source
        )
    causes = _causes(c, rr, rx, given, table, frequency_hz, tol)
    if not causes:
        causes = [
            f"R is {rr:.2f} and X {rx:.2f} times the table row and no common mistake "
            "fits: check the source of the data"
        ]
    return result(True, "; or ".join(causes), table, table.source)


def check_table(system: System, tolerance_pct: float = DEFAULT_TOLERANCE_PCT) -> pd.DataFrame:
    """``check_cable`` for every cable, as a table (CHECK_COLUMNS and the input ``row``).

    Cables that cannot be compared (above 1 kV, or without size, material or raceway) are
    answered on whole columns; the others one by one.
    """
    cables = system.cables
    columns = [*CHECK_COLUMNS, "row"]
    typed = np.array([not s for s in cables.column("impedance_source")], dtype=bool)
    if not typed.any():
        return pd.DataFrame(columns=columns)
    n = len(cables)
    r, x = cables.array("r_ohm_per_kft"), cables.array("x_ohm_per_kft")
    per_km = np.isnan(r)
    given_r = np.where(per_km, cables.array("r_ohm_per_km") * KM_PER_KFT, r)
    given_x = np.where(per_km, cables.array("x_ohm_per_km") * KM_PER_KFT, x)
    kv = system.buses.array("kv")[system.bus_positions(cables.column("from_bus"))]
    out = {
        "cable": cables.column("cable"),
        "flagged": np.zeros(n, bool),
        "reason": np.empty(n, dtype=object),
        "given_r_ohm_per_kft": given_r,
        "given_x_ohm_per_kft": given_x,
        "table_r_ohm_per_kft": np.full(n, np.nan),
        "table_x_ohm_per_kft": np.full(n, np.nan),
        "table_row": np.full(n, "", dtype=object),
        "row": cables.column("row"),
    }
    high = typed & (kv > conductors.MAX_TABLE_KV)
    for level in np.unique(kv[high]).tolist():
        out["reason"][high & (kv == level)] = (
            "not compared: the tables are for cables of 1 kV and below "
            f"(this one is at {level:g} kV)"
        )
    absent = {
        name: np.array([not v for v in cables.column(name)], dtype=bool)
        for name in ("size", "material", "raceway")
    }
    missing = typed & ~high & (absent["size"] | absent["material"] | absent["raceway"])
    for pattern in {tuple(bool(absent[k][i]) for k in absent) for i in np.flatnonzero(missing)}:
        where = missing.copy()
        for name, flag in zip(absent, pattern, strict=True):
            where &= absent[name] == flag
        names = ", ".join(k for k, flag in zip(absent, pattern, strict=True) if flag)
        out["reason"][where] = f"not compared: {names} not given, so no table row"
    rest = np.flatnonzero(typed & ~high & ~missing)
    f_hz = system.settings.frequency_hz
    for i, c in zip(rest.tolist(), cables.take(rest), strict=True):
        found = check_cable(c, tolerance_pct, f_hz, float(kv[i]))
        out["flagged"][i] = found.flagged
        out["reason"][i] = found.reason
        out["table_r_ohm_per_kft"][i] = (
            np.nan if found.table_r_ohm_per_kft is None else (found.table_r_ohm_per_kft)
        )
        out["table_x_ohm_per_kft"][i] = (
            np.nan if found.table_x_ohm_per_kft is None else (found.table_x_ohm_per_kft)
        )
        out["table_row"][i] = found.table_row
    table = pd.DataFrame(out, columns=columns)
    return table[typed].reset_index(drop=True)


def check_cables(system: System, tolerance_pct: float = DEFAULT_TOLERANCE_PCT) -> list[CableCheck]:
    """Every cable whose R and X the user typed, compared with the tables.

    Examples
    --------
    >>> from faultcalc import read_system, sample_path
    >>> [c.flagged for c in check_cables(read_system(sample_path("plant_480v")))]
    [False, False, False]
    """
    table = check_table(system, tolerance_pct)
    checks = []
    for values in table.itertuples(index=False):
        row = dict(zip(table.columns, values, strict=True))
        for name in ("table_r_ohm_per_kft", "table_x_ohm_per_kft"):
            row[name] = None if row[name] != row[name] else float(row[name])
        row["flagged"] = bool(row["flagged"])
        checks.append(CableCheck(**row))
    return checks
