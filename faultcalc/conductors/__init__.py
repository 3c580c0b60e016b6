"""Conductor impedance tables and the physics to sanity-check them.

* ``lookup(size, material, raceway)``: R and X per 1000 ft of one conductor, from NFPA 70
  Chapter 9 Table 9 (AWG and kcmil) or IEC 60228 (mm2), with the row named.
* Physics: conductor area from the ASTM B258 diameter formula (AWG) or the kcmil definition,
  DC resistance from the IEC 60028 (copper) and IEC 60889 (aluminium) resistivities, and the
  inductive reactance of a conductor from its spacing and geometric mean radius.
"""

from __future__ import annotations

import csv
import functools
import math
import re
from dataclasses import dataclass
from importlib import resources

# Resistivity at 20 C, ohm mm2 / m, and temperature coefficient per C at 20 C.
# Copper: IEC 60028, annealed copper standard, 1/58 ohm mm2/m, 0.00393 per C.
# Aluminium: IEC 60889, hard-drawn aluminium for conductors, 0.028264 ohm mm2/m, 0.00403 per C.
RESISTIVITY_20C = {"cu": 1.0 / 58.0, "al": 0.028264}
ALPHA_20C = {"cu": 0.00393, "al": 0.00403}
TABLE_TEMP_C = 75.0  # NFPA 70 Chapter 9 Tables 8 and 9 are at 75 C
# Increase of resistance by stranding (lay length) over a solid rod of the same area: about 2 %
# for concentric-lay stranded conductors (value from memory of ASTM B8; common practice).
STRANDING_FACTOR = 1.02
MM2_PER_CMIL = math.pi / 4 * 0.0254**2  # 1 circular mil = (pi/4) (0.001 in)^2
FT_PER_KFT = 1000.0
M_PER_FT = 0.3048
MU0_OVER_2PI = 2e-7  # H/m
GMR_SOLID = math.exp(-0.25)  # geometric mean radius of a solid round conductor / its radius

# NFPA 70 Table 9 is for 600 V cables; its reactances (and the metric X assumption) do not
# apply to medium-voltage cables, whose R and X must be typed.
MAX_TABLE_KV = 1.0

AWG_SIZES = ("14", "12", "10", "8", "6", "4", "3", "2", "1", "1/0", "2/0", "3/0", "4/0")
RACEWAYS = ("pvc", "aluminum", "steel")
MATERIALS = ("cu", "al")


class SizeError(ValueError):
    """A conductor size that cannot be read or is not in the tables."""


@dataclass(frozen=True)
class Size:
    system: str  # "awg", "kcmil" or "mm2"
    label: str  # canonical: "4/0", "500", "240"
    area_mm2: float

    def __str__(self) -> str:
        return {
            "awg": f"{self.label} AWG",
            "kcmil": f"{self.label} kcmil",
            "mm2": f"{self.label} mm2",
        }[self.system]


@dataclass(frozen=True)
class TableValue:
    """R and X per 1000 ft of one conductor and where they came from."""

    r_ohm_per_kft: float
    x_ohm_per_kft: float
    source: str
    assumed_x: bool = False  # the reactance is an assumption (metric sizes)


def _round_sig(value: float, digits: int) -> float:
    if value == 0:
        return 0.0
    return round(value, digits - 1 - int(math.floor(math.log10(abs(value)))))


def awg_gauge_number(label: str) -> int:
    """AWG gauge number: 1/0 -> 0, 2/0 -> -1, 3/0 -> -2, 4/0 -> -3."""
    if label.endswith("/0"):
        return 1 - int(label.split("/")[0])
    return int(label)


def awg_diameter_mils(label: str) -> float:
    """ASTM B258: d = 0.005 in x 92^((36 - n)/39), rounded to 4 significant figures (mils)."""
    n = awg_gauge_number(label)
    return _round_sig(5.0 * 92.0 ** ((36 - n) / 39.0), 4)


def awg_area_cmil(label: str) -> float:
    """ASTM B258 area in circular mils: the rounded diameter squared, to 4 significant figures."""
    return _round_sig(awg_diameter_mils(label) ** 2, 4)


_SIZE_RE = re.compile(
    r"^\s*(#?)\s*([0-9./]+)\s*(awg|kcmil|mcm|mm2|mm\^2|mm²|sq\.?\s*mm)?\s*$", re.IGNORECASE
)


def parse_size(text: str) -> Size:
    """Read '4/0', '4/0 AWG', '#12', '500', '500 kcmil', '240 mm2' ...

    Plain whole numbers 14 ... 1 are AWG and 250 ... 1000 are kcmil; metric sizes need 'mm2'.
    """
    m = _SIZE_RE.match(str(text))
    if not m:
        raise SizeError("expected a conductor size such as 12, 4/0, 500 kcmil or 240 mm2")
    hash_mark, number, unit = m.group(1), m.group(2), (m.group(3) or "").lower()
    if unit.startswith(("mm", "sq")):
        try:
            value = float(number)
        except ValueError:
            raise SizeError("expected a number of mm2, e.g. 240 mm2") from None
        label = f"{value:g}"
        if label not in metric_table():
            raise SizeError(
                "not an IEC 60228 size; sizes are " + ", ".join(metric_table()) + " mm2"
            )
        return Size("mm2", label, value)
    if "/" in number:
        if number not in AWG_SIZES or unit in ("kcmil", "mcm"):
            raise SizeError("expected an AWG size 1/0, 2/0, 3/0 or 4/0")
        return Size("awg", number, awg_area_cmil(number) * MM2_PER_CMIL)
    try:
        value = float(number)
    except ValueError:
        raise SizeError("expected a conductor size such as 12, 4/0, 500 kcmil or 240 mm2") from None
    label = f"{value:g}"
    if unit == "awg" or hash_mark or (unit == "" and label in AWG_SIZES):
        if label not in AWG_SIZES:
            raise SizeError("not an AWG size in NFPA 70 Table 9 (14 to 4/0)")
        return Size("awg", label, awg_area_cmil(label) * MM2_PER_CMIL)
    if label in nec_table() and label not in AWG_SIZES:
        return Size("kcmil", label, value * 1000 * MM2_PER_CMIL)
    raise SizeError(
        "not a size of NFPA 70 Table 9 (14 AWG to 1000 kcmil); for metric sizes "
        "write mm2, e.g. 240 mm2"
    )


def _read_csv(name: str) -> list[dict[str, str]]:
    text = resources.files("faultcalc.conductors.data").joinpath(name).read_text(encoding="utf-8")
    lines = [line for line in text.splitlines() if line and not line.startswith("#")]
    return list(csv.DictReader(lines))


def _value(text: str) -> float | None:
    return None if text.strip() == "-" else float(text)


@functools.cache
def nec_table() -> dict[str, dict[str, float | None]]:
    """NFPA 70 Chapter 9 Table 9 rows by size label (see conductors/data/nec_table9.csv)."""
    return {
        row["size"]: {k: _value(v) for k, v in row.items() if k != "size"}
        for row in _read_csv("nec_table9.csv")
    }


@functools.cache
def metric_table() -> dict[str, dict[str, float | None]]:
    """IEC 60228 class 2 DC resistance at 20 C, ohm/km (see conductors/data/iec60228.csv)."""
    return {
        f"{float(row['size_mm2']):g}": {k: _value(v) for k, v in row.items() if k != "size_mm2"}
        for row in _read_csv("iec60228.csv")
    }


def temperature_factor(material: str, from_c: float, to_c: float) -> float:
    """R(to) / R(from) with the linear coefficient at 20 C (IEC 60028 / IEC 60889)."""
    alpha = ALPHA_20C[material]
    return (1 + alpha * (to_c - 20.0)) / (1 + alpha * (from_c - 20.0))


def _nec_x(label: str, raceway: str) -> float:
    row = nec_table()[label]
    return row["xl_steel"] if raceway == "steel" else row["xl_pvc_al"]


def _nearest_nec_label(area_mm2: float) -> str:
    def area(label):
        if label in AWG_SIZES:
            return awg_area_cmil(label) * MM2_PER_CMIL
        return float(label) * 1000 * MM2_PER_CMIL

    return min(nec_table(), key=lambda label: abs(math.log(area(label) / area_mm2)))


RACEWAY_COLUMN = {"pvc": "pvc", "aluminum": "al", "steel": "steel"}


TABLE_HZ = 60.0  # NFPA 70 Table 9 reactances are at 60 Hz


def lookup(
    size_text: str,
    material: str,
    raceway: str,
    temp_c: float = TABLE_TEMP_C,
    frequency_hz: float = TABLE_HZ,
) -> TableValue:
    """R and X per 1000 ft of one conductor from the tables, R at ``temp_c``, X at
    ``frequency_hz`` (the 60 Hz table reactance scaled by frequency / 60).

    Raises SizeError for a size not in the tables.

    Examples
    --------
    >>> v = lookup("4/0", "cu", "pvc")
    >>> (v.r_ohm_per_kft, v.x_ohm_per_kft)
    (0.062, 0.041)
    """
    value = _lookup(size_text, material, raceway, temp_c)
    if frequency_hz == TABLE_HZ:
        return value
    return TableValue(
        value.r_ohm_per_kft,
        value.x_ohm_per_kft * frequency_hz / TABLE_HZ,
        value.source + f"; X scaled from 60 to {frequency_hz:g} Hz",
        value.assumed_x,
    )


def _lookup(size_text: str, material: str, raceway: str, temp_c: float) -> TableValue:
    size = parse_size(size_text)
    if size.system == "mm2":
        r20 = metric_table()[size.label][f"r20_{material}"]
        if r20 is None:
            raise SizeError(f"IEC 60228 lists no {material} conductor of {size}")
        r_kft = r20 * temperature_factor(material, 20.0, temp_c) * M_PER_FT  # ohm/km -> /kft
        nearest = _nearest_nec_label(size.area_mm2)
        x = _nec_x(nearest, raceway)
        nearest_text = f"{nearest} AWG" if nearest in AWG_SIZES else f"{nearest} kcmil"
        source = (
            f"IEC 60228 {size} {material} (DC, 20 C) at {temp_c:g} C; X assumed from "
            f"NFPA 70 Table 9 row {nearest_text} (nearest area) in {raceway}"
        )
        return TableValue(r_kft, x, source, assumed_x=True)
    row = nec_table()[size.label]
    r75 = row[f"r_{material}_{RACEWAY_COLUMN[raceway]}"]
    if r75 is None:
        raise SizeError(f"NFPA 70 Table 9 lists no {material} conductor of {size}")
    r = r75 * temperature_factor(material, TABLE_TEMP_C, temp_c)
    at = "" if temp_c == TABLE_TEMP_C else f", R adjusted from 75 C to {temp_c:g} C"
    return TableValue(
        r,
        _nec_x(size.label, raceway),
        f"NFPA 70 Table 9, {size} {material} in {raceway} conduit{at}",
    )


def table_as_printed(
    size_text: str, material: str, raceway: str, frequency_hz: float = TABLE_HZ
) -> TableValue:
    """The table row at 75 C, for comparing with values typed from the table."""
    return lookup(size_text, material, raceway, TABLE_TEMP_C, frequency_hz)


def dc_resistance_ohm_per_kft(
    area_mm2: float, material: str, temp_c: float, stranded: bool = True
) -> float:
    """DC resistance of one conductor from its area and the metal's resistivity."""
    rho = RESISTIVITY_20C[material] * (1 + ALPHA_20C[material] * (temp_c - 20.0))  # ohm mm2/m
    r_per_m = rho / area_mm2 * (STRANDING_FACTOR if stranded else 1.0)
    return r_per_m * M_PER_FT * FT_PER_KFT


def reactance_ohm_per_kft(
    spacing_mm: float, diameter_mm: float, frequency_hz: float = 60.0
) -> float:
    """Inductive reactance of one of three conductors at equilateral spacing:
    ``X = 2 pi f (mu0 / 2 pi) ln(D / GMR)`` per metre, with GMR of a solid round conductor."""
    gmr = GMR_SOLID * diameter_mm / 2.0
    return (
        2
        * math.pi
        * frequency_hz
        * MU0_OVER_2PI
        * math.log(spacing_mm / gmr)
        * M_PER_FT
        * FT_PER_KFT
    )


def area_mm2(size_text: str) -> float:
    return parse_size(size_text).area_mm2
