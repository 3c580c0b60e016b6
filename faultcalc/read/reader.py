"""Read and validate an input into a ``System``, collecting every problem before stopping.

One reader for every input: a loader gives the raw cells column by column (``tables``), each
column is typed on the whole array (``columns``), every rule across rows and sheets runs once
on whole columns (``rules``), the cases are overrides of those columns (``cases``), and the
System is built from the columns. What is out of service is then left out (``service``) and
the plausibility doubts are added (``plausibility``).
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np

from .. import model, schema
from ..errors import InputError, Problem
from ..model.records import Records
from ..progress import Progress, reporter, without_gc
from . import cells, columns, plausibility, rules, service, sheetnames, slips
from .cases import read_cases
from .collect import Collector
from .raw import RawInput, RawSheet
from .references import BUS_REFERENCES, Buses
from .rules import KV_MISMATCH_WARN  # noqa: F401 - importable from the reader
from .tables import load_input


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


def typed_sheet(spec: schema.Sheet, raw: RawSheet | None, out: Collector) -> columns.Typed:
    """The sheet typed, or an empty one (with a problem when the sheet is required, or when
    required columns are missing from its header)."""
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
        return columns.empty(spec)
    if not check_headers(spec, raw.headers, raw.blank_header_columns, out):
        return columns.empty(spec)
    if spec.required and not raw.n:
        out.problem(
            spec.name, None, None, None, "the sheet has no data rows; at least one is needed"
        )
    return columns.type_sheet(spec, raw, out)


def read_settings(raw: RawSheet | None, out: Collector) -> model.Settings:
    values = {s.name: s.default for s in schema.SETTINGS}
    study = typed_sheet(schema.STUDY, raw, out)
    known = {s.name: s for s in schema.SETTINGS}
    seen: dict[str, int] = {}
    for i in range(study.n):
        row = int(study.rows[i])
        name = (study.values["setting"][i] or "").strip().lower()
        raw_value = study.values["value"][i]
        if not study.ok[i]:
            continue
        if name not in known:
            out.warn(
                "study",
                row,
                "setting",
                name,
                "unknown setting, ignored; known settings are " + ", ".join(known),
            )
            continue
        if name in seen:
            out.problem(
                "study",
                row,
                "setting",
                name,
                f"the setting is given twice (rows {seen[name]} and {row})",
            )
            continue
        seen[name] = row
        spec = known[name]
        if cells.is_blank(raw_value):
            continue
        try:
            values[name] = cells.parse(raw_value, spec)
        except cells.CellError as exc:
            out.problem("study", row, "value", raw_value, f"{name}: {exc}")
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
    if values["prefault_voltage"] == "open_circuit" and values["method"] == "iec60909":
        out.problem(
            "study",
            seen.get("prefault_voltage"),
            "value",
            values["prefault_voltage"],
            "prefault_voltage open_circuit is for methods thevenin and ieee; method iec60909 "
            "puts its equivalent source c Un / sqrt(3) at the fault",
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
        min_time_delay_s=float(values["min_time_delay_s"]),
        fault_duration_s=float(values["fault_duration_s"]),
        prefault_voltage=values["prefault_voltage"],
    )


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


def _records(cls, sheet: columns.Typed) -> Records:
    """The element Records of a typed sheet (text fields blank -> "")."""
    data: dict[str, object] = {}
    for f in dataclasses.fields(cls):
        if f.name == "row":
            data["row"] = sheet.row_list()
        elif f.name in sheet.values:
            values = sheet.values[f.name]
            if f.default == "" and not isinstance(values, np.ndarray) and None in values:
                values = sheet.blank_as_empty(f.name)
            data[f.name] = values
    return Records(cls, data, sheet.n)


def records_of(sheets: dict[str, columns.Typed]) -> dict[str, Records]:
    """The Records of every sheet of a System, by sheet name."""
    return {name: _records(kind, sheets[name]) for name, kind in model.ELEMENT_KINDS.items()}


def system_of(
    sheets: dict[str, columns.Typed], buses: Buses, settings, records=None, **fields
) -> model.System:
    """The System of typed sheets whose rows are all ok, with the bus positions it needs.
    ``records``: Records already made for some of the sheets (a case takes the base's for the
    sheets it leaves as they are, and with them what was worked out on them)."""
    records = records or {}
    system = model.System(
        settings=settings,
        **{
            name: records[name] if name in records else _records(kind, sheets[name])
            for name, kind in model.ELEMENT_KINDS.items()
        },
        **fields,
    )
    system.remember_bus_index(buses.index)
    for sheet, names in BUS_REFERENCES:
        for column in names:
            positions = buses.ends.get((sheet, column))
            if positions is not None:
                system.remember_positions(getattr(system, sheet).column(column), positions)
    return system


def read_sheets(raw: RawInput, out: Collector):
    """The settings and every sheet typed and checked: (settings, typed sheets, buses)."""
    unknown_sheets({n: sheet.headers for n, sheet in raw.sheets.items()}, out)
    settings = read_settings(raw.sheets.get("study"), out)
    sheets = {s.name: typed_sheet(s, raw.sheets.get(s.name), out) for s in schema.SHEETS[1:]}
    sheets["buses"].readable = _sheet_readable(schema.BUSES, raw.sheets.get("buses"))
    buses = rules.check(sheets, settings, out)
    return settings, sheets, buses


def _sheet_readable(spec: schema.Sheet, raw: RawSheet | None) -> bool:
    """The sheet is there and has its required columns (else one problem said so)."""
    return raw is not None and all(c.name in raw.headers for c in spec.columns if c.required)


def read_tables(raw: RawInput, with_cases: bool = True) -> model.System:
    """Validate raw sheets into a System; raises InputError listing every problem.

    The ``cases`` sheet's rows are applied as overrides of the base's columns, and each case
    is checked where it differs (``with_cases`` False reads the base only).
    """
    out = Collector()
    out.problems.extend(raw.problems)
    for note in raw.notes:
        out.warnings.append(note)
        out.origins.append(("", None, None, True))
    settings, sheets, buses = read_sheets(raw, out)
    if out.problems:
        raise InputError(out.problems, out.warnings)
    records = records_of(sheets)
    try:
        cases = read_cases(sheets, buses, settings, raw, out, records) if with_cases else ()
    except InputError as exc:
        raise InputError(exc.problems, out.warnings) from None
    system = system_of(
        sheets,
        buses,
        settings,
        records,
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
    path = Path(path)
    progress = reporter(progress)
    with progress.phase("reading the input"), without_gc():
        progress.plan(2)
        progress.step("loading every cell")
        raw = load_input(path)
        progress.step("checking every row")
        return read_tables(raw)
