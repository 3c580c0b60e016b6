"""Read and validate an input into a ``System``, collecting every problem before stopping.

This is the careful reader: every cell, every rule, every message. The functions without a
leading underscore (``Collector``, ``check_headers``, ``read_settings``, ``check_machines``...)
are also run by the column-wise reader (``read/columnar.py``) on the rows that can need them, so
both readers say the same things in the same words.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from .. import conductors, model, schema
from ..errors import InputError, Problem
from ..progress import Progress, reporter, without_gc
from . import cells, names, plausibility, service, sheetnames, slips
from .cases import read_cases
from .tables import RawInput, RawSheet, load_input

# Rated winding kV against bus kV: beyond this the off-nominal ratio is worth a warning.
KV_MISMATCH_WARN = 0.05


@dataclass
class Record:
    """One validated row: typed values by column (blank -> default or None)."""

    row: int
    values: dict[str, Any]
    ok: bool


class Collector:
    def __init__(self) -> None:
        self.problems: list[Problem] = []
        self.warnings: list[str] = []

    def problem(self, sheet: str, row: int | None, column: str | None, value: Any, message: str):
        self.problems.append(Problem(sheet, row, column, value, message))

    def warn(self, sheet: str, row: int | None, column: str | None, value: Any, message: str):
        self.warnings.append(str(Problem(sheet, row, column, value, message)))


def check_headers(spec: schema.Sheet, headers, blank_header_columns, out: Collector) -> bool:
    """Warn of unknown and unnamed columns; False (with a problem each) when required ones
    are missing."""
    known = set(spec.names)
    for header in headers:
        if header not in known:
            out.warn(
                spec.name,
                1,
                header,
                None,
                "unknown column, ignored; known columns are " + ", ".join(spec.names),
            )
    for position in blank_header_columns:
        out.warn(spec.name, 1, None, None, f"column {position} has values but no header; ignored")
    missing = [c.name for c in spec.columns if c.required and c.name not in headers]
    for name in missing:
        out.problem(spec.name, 1, name, None, "required column is missing from the header row")
    return not missing


def _read_sheet(spec: schema.Sheet, raw: RawSheet | None, out: Collector) -> list[Record]:
    if raw is None:
        if spec.required and not any(p.sheet == spec.name for p in out.problems):
            out.problem(
                spec.name,
                None,
                None,
                None,
                f"the workbook has no '{spec.name}' sheet; it is required "
                f"(columns: {', '.join(spec.names)})",
            )
        return []
    if not check_headers(spec, raw.headers, raw.blank_header_columns, out):
        return []
    if spec.required and not raw.rows:
        out.problem(
            spec.name, None, None, None, "the sheet has no data rows; at least one is needed"
        )
    records = []
    for number, raw_values in raw.rows:
        values: dict[str, Any] = {}
        ok = True
        for column in spec.columns:
            cell = raw_values.get(column.name)
            if cells.is_blank(cell):
                if column.required:
                    out.problem(
                        spec.name,
                        number,
                        column.name,
                        None,
                        f"a value is required: {column.expected()}",
                    )
                    ok = False
                values[column.name] = column.default
                continue
            try:
                notes: list[str] = []
                values[column.name] = cells.parse(cell, column, notes)
                for note in notes:
                    out.warn(spec.name, number, column.name, cell, note)
            except cells.CellError as exc:
                out.problem(spec.name, number, column.name, cell, str(exc))
                values[column.name] = None
                ok = False
        for column in spec.columns:
            if column.default_from and values.get(column.name) is None:
                values[column.name] = values.get(column.default_from)
        for alternative in spec.alternatives:
            ok &= _check_alternative(spec, alternative, number, raw_values, out)
        records.append(Record(number, values, ok))
    return records


def _check_alternative(spec, alternative, number, raw_values, out) -> bool:
    def filled(name):
        return not cells.is_blank(raw_values.get(name))

    used = [g for g in alternative.groups if any(filled(c) for c in g)]
    label = ", ".join(c for g in alternative.groups for c in g)
    if len(used) > 1:
        found = {c: raw_values.get(c) for g in used for c in g if filled(c)}
        out.problem(
            spec.name, number, label, found, f"give {alternative.describe()}, not more than one"
        )
        return False
    if not used:
        if alternative.required:
            out.problem(spec.name, number, label, None, f"give {alternative.describe()}")
            return False
        return True
    for c in used[0]:
        if not filled(c):
            others = [o for o in used[0] if o != c]
            out.problem(
                spec.name,
                number,
                c,
                None,
                f"a value is required here because {', '.join(others)} is given",
            )
            return False
    return True


def read_settings(raw: RawSheet | None, out: Collector) -> model.Settings:
    values = {s.name: s.default for s in schema.SETTINGS}
    records = _read_sheet(schema.STUDY, raw, out)
    known = {s.name: s for s in schema.SETTINGS}
    seen: dict[str, int] = {}
    for record in records:
        name = (record.values.get("setting") or "").strip().lower()
        raw_value = record.values.get("value")
        if not record.ok:
            continue
        if name not in known:
            out.warn(
                "study",
                record.row,
                "setting",
                name,
                "unknown setting, ignored; known settings are " + ", ".join(known),
            )
            continue
        if name in seen:
            out.problem(
                "study",
                record.row,
                "setting",
                name,
                f"the setting is given twice (rows {seen[name]} and {record.row})",
            )
            continue
        seen[name] = record.row
        spec = known[name]
        if cells.is_blank(raw_value):
            continue
        try:
            values[name] = cells.parse(raw_value, spec)
        except cells.CellError as exc:
            out.problem("study", record.row, "value", raw_value, f"{name}: {exc}")
    finding = slips.prefault_finding(float(values["prefault_pu"]))
    if finding is not None:
        refused, message = finding
        (out.problem if refused else out.warn)(
            "study", seen.get("prefault_pu"), "value", values["prefault_pu"], message
        )
    if not -60.0 <= float(values["conductor_temp_c"]) <= 250.0:
        out.problem(
            "study",
            seen.get("conductor_temp_c"),
            "value",
            values["conductor_temp_c"],
            "conductor_temp_c: expected a conductor temperature from -60 to 250 C",
        )
    return model.Settings(
        title=str(values["title"] or ""),
        base_mva=float(values["base_mva"]),
        frequency_hz=int(values["frequency_hz"]),
        prefault_pu=float(values["prefault_pu"]),
        conductor_temp_c=float(values["conductor_temp_c"]),
        method=values["method"],
        xr_method=values["xr_method"] or ("separate" if values["method"] == "ieee" else "complex"),
        lv_tolerance_pct=int(values["lv_tolerance_pct"]),
        end_of_fault_temp_c=float(values["end_of_fault_temp_c"]),
        fault_ohm=float(values["fault_ohm"]),
    )


def _unique_ids(
    sheet: str,
    id_column: str,
    records: list[Record],
    out: Collector,
    taken: dict[str, tuple[str, int, str]],
) -> None:
    for record in records:
        name = record.values.get(id_column)
        if name is None:
            continue
        key = names.key(name)
        if key in taken:
            where_sheet, where_row, first = taken[key]
            why = names.collision(first, name)
            same = f" as {first!r} ({why})" if why else ""
            out.problem(
                sheet,
                record.row,
                id_column,
                name,
                f"the name is already used on sheet '{where_sheet}' row {where_row}{same}; "
                "names must be unique",
            )
            record.ok = False
        else:
            taken[key] = (sheet, record.row, name)


def _check_refs(
    sheet: str,
    columns: tuple[str, ...],
    records: list[Record],
    bus_kv: dict[str, float],
    out: Collector,
    named: set[str] | None = None,
    folded: dict[str, str] | None = None,
) -> None:
    """Every bus reference names a bus with a usable kV. ``named`` holds the names of buses
    whose own row has a problem: a reference to one is not ok, without a second message.
    ``folded`` maps each bus name ignoring case to the name (made here when not given)."""
    if folded is None:
        folded = {name.casefold(): name for name in bus_kv}
    named = named or set()
    for record in records:
        for column in columns:
            name = record.values.get(column)
            if name is None or name in bus_kv:
                continue
            if name in named:
                record.ok = False
                continue
            if name.casefold() in folded:
                record.values[column] = folded[name.casefold()]
                out.warn(
                    sheet,
                    record.row,
                    column,
                    name,
                    f"matched bus {folded[name.casefold()]!r} ignoring case",
                )
                continue
            out.problem(
                sheet,
                record.row,
                column,
                name,
                "no bus of that name on the 'buses' sheet"
                + (_suggestion(name, bus_kv, named) if len(out.problems) < MAX_SUGGESTIONS else ""),
            )
            record.ok = False
        if len(columns) == 2:
            a, b = (record.values.get(c) for c in columns)
            if a is not None and a == b:
                out.problem(
                    sheet,
                    record.row,
                    columns[1],
                    b,
                    f"both ends are the same bus; {columns[0]} and {columns[1]} must differ",
                )
                record.ok = False


# Nearest names are looked for while there are fewer problems than this, among at most
# MAX_SUGGESTION_NAMES buses (a look costs about 12 us per known name, measured: 0.24 s against
# 20,000 names; a sheet of wrong names gets suggestions for its first rows only).
MAX_SUGGESTIONS = 20
MAX_SUGGESTION_NAMES = 5_000


def _suggestion(name: str, bus_kv: dict[str, float], named: set[str]) -> str:
    """'; did you mean X?' for the nearest known bus name, or nothing when none is near."""
    import difflib

    if len(bus_kv) + len(named) > MAX_SUGGESTION_NAMES:  # not worth the time among so many
        return ""
    known = sorted(set(bus_kv) | named)
    by_fold = {k.casefold(): k for k in known}
    near = difflib.get_close_matches(name.casefold(), list(by_fold), n=1, cutoff=0.6)
    return f"; did you mean {by_fold[near[0]]!r}?" if near else ""


def _check_same_kv(sheet: str, records: list[Record], bus_kv: dict[str, float], out: Collector):
    """A cable or impedance joins buses of one voltage; different kVs mean a missing transformer."""
    for record in records:
        if not record.ok:
            continue
        a, b = record.values["from_bus"], record.values["to_bus"]
        if abs(bus_kv[a] - bus_kv[b]) > 1e-9 * max(bus_kv[a], bus_kv[b]):
            out.problem(
                sheet,
                record.row,
                "to_bus",
                b,
                f"the two ends are at different voltages ({a}: {bus_kv[a]:g} kV, "
                f"{b}: {bus_kv[b]:g} kV); only a transformer joins voltage levels",
            )
            record.ok = False


def _refuse_slips(sheet: str, records: list[Record], found, out: Collector) -> None:
    """Located problems for the gross mistakes ``slips`` found in ``records``."""
    for slip in found:
        record = records[slip.index]
        out.problem(sheet, record.row, slip.column, slip.value, slip.message)
        record.ok = False


def _columns(records: list[Record], *names: str) -> list[np.ndarray]:
    """Number columns of ``records`` as float arrays (None as NaN)."""
    return [
        np.array([np.nan if r.values.get(n) is None else r.values[n] for r in records], float)
        for n in names
    ]


# The bus references of each element sheet.
BUS_REFERENCES = (
    ("sources", ("bus",)),
    ("transformers", ("hv_bus", "lv_bus")),
    ("cables", ("from_bus", "to_bus")),
    ("impedances", ("from_bus", "to_bus")),
    ("machines", ("bus",)),
)


def _sheet_readable(spec: schema.Sheet, raw: RawSheet | None) -> bool:
    """The sheet is there and has its required columns (else one problem said so)."""
    return raw is not None and all(c.name in raw.headers for c in spec.columns if c.required)


def check_transformers(records: list[Record], bus_kv: dict[str, float], out: Collector):
    ok = [r for r in records if r.ok]
    kva, hv_kv, lv_kv, z_pct = _columns(ok, "kva", "hv_kv", "lv_kv", "z_pct")
    hv_bus = [r.values["hv_bus"] for r in ok]
    lv_bus = [r.values["lv_bus"] for r in ok]
    hv_bus_kv = np.array([bus_kv[b] for b in hv_bus], float)
    lv_bus_kv = np.array([bus_kv[b] for b in lv_bus], float)
    found = slips.transformer_slips(kva, hv_kv, lv_kv, z_pct, hv_bus_kv, lv_bus_kv, hv_bus, lv_bus)
    _refuse_slips("transformers", ok, found, out)
    for record in ok:
        v = record.values
        if record.ok and v["hv_kv"] < v["lv_kv"]:  # equal: an isolation transformer
            out.problem(
                "transformers",
                record.row,
                "hv_kv",
                v["hv_kv"],
                f"hv_kv must not be lower than lv_kv ({v['lv_kv']:g}); "
                "list the high-voltage winding's bus as hv_bus",
            )
            record.ok = False
    for record in ok:
        if not record.ok:
            continue
        v = record.values
        for side in ("hv", "lv"):
            rated, nominal = v[f"{side}_kv"], bus_kv[v[f"{side}_bus"]]
            if abs(rated / nominal - 1.0) > KV_MISMATCH_WARN:
                out.warn(
                    "transformers",
                    record.row,
                    f"{side}_kv",
                    rated,
                    f"winding rated {rated:g} kV on bus {v[f'{side}_bus']} of {nominal:g} kV "
                    f"(differs by {100 * (rated / nominal - 1):+.1f}%); modelled as an "
                    "off-nominal ratio; check the nameplate and the bus voltage",
                )


def _check_devices(records: list[Record], out: Collector) -> None:
    """A device rating check needs both the device and its rating."""
    for record in records:
        v = record.values
        if (v.get("device") is None) != (v.get("rating_ka") is None):
            missing = "rating_ka" if v.get("device") is not None else "device"
            out.problem(
                "buses",
                record.row,
                missing,
                None,
                "device and rating_ka go together: give both to check the rating, or neither",
            )
            record.ok = False
        elif v.get("rating_xr") is not None and v.get("device") is None:
            out.problem(
                "buses",
                record.row,
                "device",
                None,
                "rating_xr is given but no device: give device and rating_ka",
            )
            record.ok = False


def _check_cable_impedance(records: list[Record], out: Collector) -> None:
    for record in records:
        v = record.values
        pairs = (("r_ohm_per_kft", "x_ohm_per_kft"), ("r_ohm_per_km", "x_ohm_per_km"))
        for r, x in pairs:
            if record.ok and v.get(r) is not None and v[r] == 0 and v.get(x) == 0:
                out.problem(
                    "cables",
                    record.row,
                    r,
                    0,
                    "R and X are both 0; a cable has impedance (use the 'impedances' sheet "
                    "with r_ohm = x_ohm = 0 for a closed tie)",
                )
                record.ok = False


def _fill_cables_from_tables(
    records: list[Record], settings, bus_kv: dict[str, float], out: Collector
) -> None:
    """R and X from the conductor tables where the user left both blank."""
    for record in records:
        v = record.values
        if not record.ok or v.get("r_ohm_per_kft") is not None or v.get("r_ohm_per_km") is not None:
            continue
        kv = bus_kv[v["from_bus"]]
        if kv > conductors.MAX_TABLE_KV:
            out.problem(
                "cables",
                record.row,
                "r_ohm_per_kft",
                None,
                f"the conductor tables are for cables of 1 kV and below; this cable is at "
                f"{kv:g} kV: give r_ohm_per_kft + x_ohm_per_kft (or per km) from its data sheet",
            )
            record.ok = False
            continue
        missing = [c for c in ("size", "material", "raceway") if not v.get(c)]
        for column in missing:
            out.problem(
                "cables",
                record.row,
                column,
                None,
                "needed to take R and X from the conductor tables; or give r_ohm_per_kft + "
                "x_ohm_per_kft (or the per-km pair)",
            )
        if missing:
            record.ok = False
            continue
        try:
            value = conductors.lookup(
                v["size"],
                v["material"],
                v["raceway"],
                settings.conductor_temp_c,
                settings.frequency_hz,
            )
        except conductors.SizeError as exc:
            out.problem("cables", record.row, "size", v["size"], str(exc))
            record.ok = False
            continue
        v["r_ohm_per_kft"] = value.r_ohm_per_kft
        v["x_ohm_per_kft"] = value.x_ohm_per_kft
        v["impedance_source"] = value.source


def check_machines(records: list[Record], bus_kv: dict[str, float], out: Collector) -> None:
    for record in records:
        v = record.values
        if v.get("kind") == "generator" and v.get("hp") is not None:
            out.problem(
                "machines",
                record.row,
                "hp",
                v["hp"],
                "a generator is rated in kVA: give kva instead of hp",
            )
            record.ok = False
    ok = [r for r in records if r.ok]
    kv, xd_pct, kva, hp = _columns(ok, "kv", "xd_pct", "kva", "hp")
    bus = [r.values["bus"] for r in ok]
    bus_kv_of = np.array([bus_kv[b] for b in bus], float)
    found = slips.machine_slips(kv, xd_pct, bus_kv_of, bus, kva, hp)
    _refuse_slips("machines", ok, found, out)
    for record in ok:
        v = record.values
        if not record.ok:
            continue
        nominal = bus_kv[v["bus"]]
        if abs(v["kv"] / nominal - 1.0) > KV_MISMATCH_WARN:
            out.warn(
                "machines",
                record.row,
                "kv",
                v["kv"],
                f"machine rated {v['kv']:g} kV on bus {v['bus']} of {nominal:g} kV; its "
                "impedance is changed to the bus voltage base; check the rating",
            )
        if v.get("neutral_ohm") is not None and v.get("x0_pct") is None:
            out.warn(
                "machines",
                record.row,
                "x0_pct",
                None,
                "grounded neutral but no zero-sequence reactance: X0 taken equal to xd_pct; "
                "a generator's X0 is usually lower, so its ground-fault contribution may be "
                "understated; enter x0_pct from the manufacturer's data",
            )


def check_sources(
    records: list[Record], raw: RawSheet | None, out: Collector, bus_kv: dict[str, float]
) -> None:
    ok = [r for r in records if r.ok]
    kv = np.array([bus_kv[r.values["bus"]] for r in ok], float)
    found = slips.source_slips(*_columns(ok, "sc_mva", "sc_ka", "slg_ka"), kv)
    _refuse_slips("sources", ok, found, out)
    raw_rows = dict(raw.rows) if raw else {}
    for record in records:
        v = record.values
        raw_values = raw_rows.get(record.row, {})
        if v.get("slg_ka") is None and not cells.is_blank(raw_values.get("slg_xr")):
            out.warn(
                "sources",
                record.row,
                "slg_xr",
                raw_values.get("slg_xr"),
                "slg_xr is used only with slg_ka; ignored",
            )


def check_clock(records: list[Record], out: Collector) -> None:
    for record in records:
        v = record.values
        clock = v.get("clock_number")
        if clock is None or not record.ok:
            continue
        mixed = (v["hv_winding"] == "D") != (v["lv_winding"] == "D")
        if clock > 11 or (clock % 2 == 1) != mixed:
            parity = "odd (1, 5, 7 or 11)" if mixed else "even (0, 2, ..., 10)"
            out.problem(
                "transformers",
                record.row,
                "clock_number",
                clock,
                f"a {v['hv_winding']}-{v['lv_winding']} transformer has an {parity} "
                "clock number from 0 to 11 (IEC 60076-1 vector groups)",
            )
            record.ok = False


def _meant_sheet(name: str, headers: list[str], present) -> str | None:
    """The known sheet an unknown sheet was probably meant as, or None.

    Its header row holds every required column of a known sheet (a second machines list named
    'motors' beside 'machines'); or its name is close to a known sheet that is not there
    (capitals, singular or plural, a small edit, another usual name) and its header shares a
    column with that sheet. Otherwise it is an unrelated sheet (notes, a cover, relay settings).
    """
    columns = set(headers)
    holding = [  # (required columns, columns shared, name) of each known sheet it can be
        (len(required), len(columns & set(sheet.names)), sheet.name)
        for sheet in schema.SHEETS[1:]
        if (required := {c.name for c in sheet.columns if c.required}) <= columns
    ]
    if holding:
        return max(holding)[2]
    meant = sheetnames.meant_by_name(name)
    if meant is None or meant in present:
        return None
    spec = next(s for s in schema.SHEETS if s.name == meant)
    return meant if columns & set(spec.names) else None


def unknown_sheets(headers: dict[str, list[str]], out: Collector) -> None:
    """Warn of unknown sheets; a sheet that is probably a known one misnamed is a problem.
    ``headers`` maps each sheet name of the input to its header row."""
    known_sheets = {s.name for s in schema.SHEETS} | {schema.GUIDE_SHEET}
    for name, header in headers.items():
        if name in known_sheets:
            continue
        meant = _meant_sheet(name, header, headers)
        if meant is not None:
            out.problem(
                name,
                None,
                None,
                None,
                f"unknown sheet, but its name or columns are those of '{meant}': rename it "
                f"'{meant}' (or merge its rows into that sheet); its rows would otherwise be left "
                "out of the study",
            )
            continue
        out.warn(
            name,
            None,
            None,
            None,
            "unknown sheet, ignored; known sheets are " + ", ".join(s.name for s in schema.SHEETS),
        )


def with_case_warnings(system: model.System) -> model.System:
    """The warnings of each case's own reading that the base case does not have (a doubtful
    value a case sets, what a bus out of service takes with it), named by their case. That a
    case takes an element out is its own row's word, not repeated."""
    base = set(system.warnings)
    extra = tuple(
        f"in case '{name}': {w}"
        for name, case in system.cases
        for w in case.warnings
        if w not in base and service.ELEMENT_OUT_NOTE not in w
    )
    return dataclasses.replace(system, warnings=system.warnings + extra) if extra else system


def in_service(system: model.System) -> model.System:
    """The system with what is out of service left out, said in its warnings."""
    kept, notes = service.in_service(system)
    if len(system.buses) and not len(kept.buses):
        first = next(b for b in system.buses if b.in_service == "no")
        raise InputError(
            [
                Problem(
                    "buses",
                    first.row,
                    service.IN_SERVICE,
                    "no",
                    "with the buses out of service goes every bus (all were fed through them): "
                    "nothing is left to study",
                )
            ],
            system.warnings,
        )
    return dataclasses.replace(kept, warnings=kept.warnings + tuple(notes)) if notes else kept


def with_doubts(system: model.System) -> model.System:
    """The system with the plausibility warnings added after the reader's own."""
    doubts = plausibility.warnings(system)
    return (
        dataclasses.replace(system, warnings=system.warnings + tuple(doubts)) if doubts else system
    )


def read_tables(raw: RawInput, with_cases: bool = True) -> model.System:
    """Validate raw sheets into a System; raises InputError listing every problem.

    The ``cases`` sheet's overrides are applied to copies of the raw sheets and each case is
    validated like the base system (``with_cases`` False reads the base only).
    """
    out = Collector()
    out.problems.extend(raw.problems)
    out.warnings.extend(raw.notes)
    unknown_sheets({n: sheet.headers for n, sheet in raw.sheets.items()}, out)
    settings = read_settings(raw.sheets.get("study"), out)
    recs = {s.name: _read_sheet(s, raw.sheets.get(s.name), out) for s in schema.SHEETS[1:]}

    bus_taken: dict[str, tuple[str, int, str]] = {}
    _unique_ids("buses", "bus", recs["buses"], out, bus_taken)
    named_buses = [r for r in recs["buses"] if r.values.get("bus") is not None]
    with_kv = [r for r in named_buses if r.values.get("kv") is not None]
    _refuse_slips("buses", with_kv, slips.bus_slips(_columns(with_kv, "kv")[0]), out)
    bus_kv = {r.values["bus"]: r.values["kv"] for r in with_kv if r.ok}
    unusable = {r.values["bus"] for r in named_buses} - set(bus_kv)
    element_taken: dict[str, tuple[str, int, str]] = {}
    for sheet in schema.ELEMENT_SHEETS:
        _unique_ids(sheet.name, sheet.columns[0].name, recs[sheet.name], out, element_taken)
    _check_devices(recs["buses"], out)
    buses_read = _sheet_readable(schema.BUSES, raw.sheets.get("buses"))
    if not buses_read:  # one problem says so already; no second one per reference to it
        unusable |= {
            r.values[c]
            for s, cs in BUS_REFERENCES
            for r in recs[s]
            for c in cs
            if r.values.get(c) is not None
        }
    folded = {name.casefold(): name for name in bus_kv}
    for sheet, columns in BUS_REFERENCES[:4]:  # machines after the cable tables, as before
        _check_refs(sheet, columns, recs[sheet], bus_kv, out, unusable, folded)
    _check_same_kv("cables", recs["cables"], bus_kv, out)
    _check_same_kv("impedances", recs["impedances"], bus_kv, out)
    check_transformers(recs["transformers"], bus_kv, out)
    check_clock(recs["transformers"], out)
    _check_cable_impedance(recs["cables"], out)
    _fill_cables_from_tables(recs["cables"], settings, bus_kv, out)
    _check_refs("machines", ("bus",), recs["machines"], bus_kv, out, unusable, folded)
    check_machines(recs["machines"], bus_kv, out)
    check_sources(recs["sources"], raw.sheets.get("sources"), out, bus_kv)
    generators = [r for r in recs["machines"] if r.values.get("kind") == "generator"]
    if not recs["sources"] and not generators and not out.problems:
        out.problem(
            "sources",
            None,
            None,
            None,
            "no utility source (sources sheet) and no generator (machines sheet): at "
            "least one is needed to feed a fault",
        )
    if out.problems:
        raise InputError(out.problems, out.warnings)

    def build(cls, sheet):
        fields = cls.__dataclass_fields__
        rows = []
        for r in recs[sheet]:
            kwargs = {f: r.values.get(f) for f in fields if f != "row"}
            for f, spec in fields.items():  # blank text cells take the dataclass default ("")
                if kwargs.get(f) is None and spec.default == "":
                    kwargs[f] = ""
            rows.append(cls(**kwargs, row=r.row))
        return tuple(rows)

    try:
        cases = read_cases(raw, recs["cases"], read_tables) if with_cases else ()
    except InputError as exc:
        raise InputError(exc.problems, out.warnings) from None
    system = model.System(
        settings=settings,
        buses=build(model.Bus, "buses"),
        sources=build(model.Source, "sources"),
        transformers=build(model.Transformer, "transformers"),
        cables=build(model.Cable, "cables"),
        impedances=build(model.Impedance, "impedances"),
        machines=build(model.Machine, "machines"),
        cases=cases,
        input_name=raw.display_name,
        input_sha256=raw.sha256,
        warnings=tuple(out.warnings),
    )
    return with_case_warnings(with_doubts(in_service(system)))


def read_system(path: str | Path, *, progress: Progress | None = None) -> model.System:
    """Read a one-line input (an .xlsx workbook or a folder of CSV files) into a System.

    Python's cyclic garbage collector is paused while it reads (it finds nothing to free among
    the many small objects read, and would cost about a quarter of the time).

    Parameters
    ----------
    path : str or Path
        The workbook, or a folder holding ``buses.csv``, ``sources.csv`` and the other sheets.
    progress : Progress, optional
        Told the phase "reading the input" and its steps (default: nothing is reported); the
        command line passes a :class:`faultcalc.TerminalProgress`.

    Raises
    ------
    InputError
        Listing every problem found, each with sheet, row, column, value and what was expected.

    Examples
    --------
    >>> from faultcalc import read_system, sample_path
    >>> system = read_system(sample_path("plant_480v"))
    >>> system.buses[0].bus
    'UTIL-12'
    """
    from .columnar import read_columns  # a CSV folder in order is read column by column

    path = Path(path)
    progress = reporter(progress)
    with progress.phase("reading the input"), without_gc():
        if path.is_dir():
            system = read_columns(path, progress)
            if system is not None:
                return system
        progress.plan(2)
        progress.step("loading every cell")
        raw = load_input(path)
        progress.step("checking every row")
        return read_tables(raw)
