"""Fast reading of a folder of CSV files, whole columns at a time, for inputs that are in order.

The careful reader (``reader.read_tables``) looks at every cell in Python and explains every
problem it finds; for a large input that costs tens of microseconds a row. This reader parses
each file with Arrow's CSV parser, checks whole columns at once with the rules of the careful
reader, and builds the System from the columns. Whenever anything is not plainly in order (a
cell the careful reader would change with a note, a blank or multi-line row, an unknown bus, a
value out of bounds, any problem at all) it gives up and returns None, and the careful reader
reads the input and reports. So it never explains anything: it only has to be sure. The warnings
a clean input can still earn (unknown sheets and columns, a rating that differs from its bus)
come from the careful reader's own functions, run on the rows that can raise them.

``tests/read/test_columnar.py`` checks that both readers give the same System, warnings included,
on every input the fast one accepts.
"""

from __future__ import annotations

import csv
import hashlib
import io
import math
from dataclasses import dataclass, field, fields
from pathlib import Path
from typing import Any

import numpy as np

from .. import conductors, model, schema
from ..model.records import Records, plain_values
from ..progress import QUIET, Progress
from . import cells, reader, slips
from .names import any_problem
from .names import key as name_key
from .tables import MAX_FILE_BYTES, RawSheet, _sheet_from_rows, add_file, csv_files, is_blank

BOM = b"\xef\xbb\xbf"
# Control characters other than tab and line ends (str.strip() and Arrow differ on some).
CONTROL = bytes(range(0, 9)) + b"\x0b\x0c" + bytes(range(0x0E, 0x20)) + b"\x7f"
NOT_CONTROL = bytes(b for b in range(256) if b not in CONTROL)


# The bus references of each sheet, in the careful reader's order.
REFERENCES = reader.BUS_REFERENCES


class _Decline(Exception):
    """Something in the input that the careful reader must look at."""


@dataclass
class _Loaded:
    headers: list[str]
    arrays: dict[str, Any]  # header -> Arrow string array
    n: int
    lines: list[list[str]] | None = None  # the rows as text, for the small sheets only


@dataclass
class _Typed:
    spec: schema.Sheet
    n: int
    values: dict[str, Any]  # column -> numpy array (NaN = blank) or list
    filled: dict[str, np.ndarray]  # column -> the cell was not blank
    ascii: dict[str, Any] = field(default_factory=dict)  # text column -> Arrow array, if ASCII

    @property
    def rows(self) -> range:
        return range(2, self.n + 2)

    def records(self, indices) -> list[reader.Record]:
        """The careful reader's Records of the rows at ``indices`` (for its checks)."""
        indices = [int(i) for i in indices]
        columns = {
            c.name: plain_values(self.values[c.name], c.kind == schema.INTEGER, indices)
            for c in self.spec.columns
        }
        return [
            reader.Record(i + 2, {name: v[k] for name, v in columns.items()}, True)
            for k, i in enumerate(indices)
        ]


def read_columns(path: Path, progress: Progress = QUIET) -> model.System | None:
    """The System of the CSV folder ``path``, or None when the careful reader must read it
    (``progress`` is told each step)."""
    try:
        return _read(Path(path), progress)
    except _Decline:
        return None


def _read(path: Path, progress: Progress) -> model.System:
    if not path.is_dir():
        raise _Decline
    files = csv_files(path)
    names = [f.stem.strip().lower() for f in files]
    if not files or len(set(names)) != len(names):
        raise _Decline
    out = reader.Collector()
    loaded = {}
    digest = hashlib.sha256()  # of the bytes read here, as tables.input_sha256 has it
    progress.plan(len(files) + 2)
    for name, file in zip(names, files, strict=True):
        progress.step(file.name)
        if file.stat().st_size > MAX_FILE_BYTES:
            raise _Decline
        data = file.read_bytes()
        add_file(digest, file.name, data)
        loaded[name] = _load(data, small=name in ("study", "cases"))
    progress.step("checking every column")
    reader.unknown_sheets({n: sheet.headers for n, sheet in loaded.items()}, out)
    study = loaded.get("study")
    raw_study = None
    if study is not None:
        rows = [(1, study.headers)] + [(k + 2, line) for k, line in enumerate(study.lines)]
        raw_study = _sheet_from_rows("study", rows, [])
    settings = reader.read_settings(raw_study, out)
    _no_problems(out)
    typed = {s.name: _typed(s, loaded.get(s.name), out) for s in schema.SHEETS[1:]}
    if typed["cases"].n:
        raise _Decline  # cases are applied to the raw cells by the careful reader
    ends, bus_index = _check(typed, settings, loaded, out)
    progress.step("plausibility")
    system = model.System(
        settings=settings,
        buses=_records(model.Bus, typed["buses"]),
        sources=_records(model.Source, typed["sources"]),
        transformers=_records(model.Transformer, typed["transformers"]),
        cables=_records(model.Cable, typed["cables"]),
        impedances=_records(model.Impedance, typed["impedances"]),
        machines=_records(model.Machine, typed["machines"]),
        input_name=path.name,
        input_sha256=digest.hexdigest(),
        warnings=tuple(out.warnings),
    )
    system.remember_bus_index(bus_index)
    for sheet, columns in REFERENCES:
        for column, positions in zip(columns, ends[sheet], strict=True):
            system.remember_positions(getattr(system, sheet).column(column), positions)
    return reader.with_doubts(reader.in_service(system))


def _no_problems(out: reader.Collector) -> None:
    if out.problems:
        raise _Decline


def _load(data: bytes, small: bool) -> _Loaded:
    import pyarrow as pa
    import pyarrow.csv as pcsv

    if data.startswith(BOM):
        data = data[len(BOM) :]
    if data.count(b"\r") != data.count(b"\r\n") or data.translate(None, NOT_CONTROL):
        raise _Decline  # a lone carriage return or a control character: left to the careful reader
    end = data.find(b"\n")
    first, body = (data, b"") if end < 0 else (data[:end], data[end + 1 :])
    try:
        header_cells = next(csv.reader([first.rstrip(b"\r").decode("utf-8")]), [])
    except (UnicodeDecodeError, csv.Error):
        raise _Decline from None
    headers = [h.strip().lower() for h in header_cells]
    if not headers or not all(headers) or len(set(headers)) != len(headers):
        raise _Decline
    lines = body.count(b"\n") + (1 if body and not body.endswith(b"\n") else 0)
    if small:
        try:
            rows = list(csv.reader(io.StringIO(body.decode("utf-8"), newline="")))
        except (UnicodeDecodeError, csv.Error):
            raise _Decline from None
        if len(rows) != lines or any(len(r) != len(headers) for r in rows):
            raise _Decline
        return _Loaded(headers, {}, len(rows), rows)
    if lines == 0:
        empty = pa.array([], pa.string())
        return _Loaded(headers, {h: empty for h in headers}, 0)
    keys = [f"c{i}" for i in range(len(headers))]
    try:
        table = pcsv.read_csv(
            io.BytesIO(body),
            read_options=pcsv.ReadOptions(column_names=keys),
            parse_options=pcsv.ParseOptions(newlines_in_values=False),
            convert_options=pcsv.ConvertOptions(
                column_types={k: pa.string() for k in keys},
                strings_can_be_null=False,
                quoted_strings_can_be_null=False,
                check_utf8=True,
            ),
        )
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError):
        raise _Decline from None
    if table.num_rows != lines:
        raise _Decline  # blank lines, which Arrow skips and the row numbers count
    arrays = {h: table.column(k) for h, k in zip(headers, keys, strict=True)}  # chunked
    if b'"' in body:
        _same_as_python_csv(body, arrays)
    return _Loaded(headers, arrays, table.num_rows)


def _same_as_python_csv(body: bytes, arrays: dict[str, Any]) -> None:
    """Rows with quotes, parsed again by Python's csv module (strict, one line at a time, as
    the careful reader's parser would see them): any difference declines."""
    lines = body.split(b"\n")
    quoted = [k for k, line in enumerate(lines) if b'"' in line]
    columns = list(arrays.values())
    if len(quoted) > 1000:
        columns = [c.to_pylist() for c in columns]
        cell = lambda c, k: c[k]  # noqa: E731
    else:
        cell = lambda c, k: c[k].as_py()  # noqa: E731
    for k in quoted:
        try:
            row = next(csv.reader([lines[k].rstrip(b"\r").decode("utf-8")], strict=True))
        except (csv.Error, UnicodeDecodeError, StopIteration):
            raise _Decline from None
        if row != [cell(c, k) for c in columns]:
            raise _Decline


def _typed(spec: schema.Sheet, loaded: _Loaded | None, out: reader.Collector) -> _Typed:
    import pyarrow.compute as pc

    if loaded is None:
        if spec.required:
            raise _Decline
        loaded = _Loaded(list(spec.names), {}, 0)
    if not reader.check_headers(spec, loaded.headers, [], out):
        raise _Decline
    n = loaded.n
    if spec.required and n == 0:
        raise _Decline
    if loaded.lines is not None:  # a small sheet: the cases sheet
        if any(all(is_blank(c) for c in line) for line in loaded.lines):
            raise _Decline
        return _Typed(spec, n, {}, {})
    if n and loaded.arrays:
        blank_row = np.ones(n, bool)
        for array in loaded.arrays.values():
            blank_row &= pc.equal(array, "").to_numpy(zero_copy_only=False)
        if blank_row.any():
            raise _Decline
    values: dict[str, Any] = {}
    filled: dict[str, np.ndarray] = {}
    ascii_: dict[str, Any] = {}
    notes: list[tuple[int, int, str, str]] = []  # the careful reader's cell notes, to sort
    for position, column in enumerate(spec.columns):
        array = loaded.arrays.get(column.name)
        if array is None or n == 0:
            filled[column.name] = np.zeros(n, bool)
            values[column.name] = _blank_column(column, n)
            continue
        if column.kind in (schema.NUMBER, schema.INTEGER):
            values[column.name], filled[column.name] = _numbers(column, array)
        elif column.kind == schema.CHOICE:
            values[column.name], filled[column.name] = _choices(column, array)
        else:
            values[column.name], filled[column.name], text, spaced = _texts(column, array)
            if text is not None:
                ascii_[column.name] = text
            notes += [(i, position, column.name, cell) for i, cell in spaced]
        if column.required and not filled[column.name].all():
            raise _Decline
    for i, _, name, cell in sorted(notes, key=lambda note: note[:2]):  # row by row, as it reads
        out.warn(spec.name, i + 2, name, cell, cells.SPACES_NOTE)
    for column in spec.columns:
        if column.default_from:
            _fill_from(values, column.name, column.default_from)
    for alternative in spec.alternatives:
        _check_alternative(alternative, filled, n)
    return _Typed(spec, n, values, filled, ascii_)


def _blank_column(column: schema.Column, n: int):
    if column.kind in (schema.NUMBER, schema.INTEGER):
        return np.full(n, math.nan if column.default is None else float(column.default))
    return [column.default] * n


def _numbers(column: schema.Column, array) -> tuple[np.ndarray, np.ndarray]:
    import pyarrow as pa
    import pyarrow.compute as pc

    blank = pc.equal(array, "")
    try:
        numbers = pc.cast(pc.if_else(blank, pa.scalar(None, pa.string()), array), pa.float64())
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError):
        raise _Decline from None
    x = numbers.to_numpy(zero_copy_only=False).astype(float, copy=True)
    filled = ~blank.to_numpy(zero_copy_only=False)
    v = x[filled]
    size = np.abs(v)
    ok = np.isfinite(v) & (
        ((size >= cells.MIN_MAGNITUDE) & (size <= cells.MAX_MAGNITUDE)) | (v == 0)
    )
    if column.bound == schema.POSITIVE:
        ok &= v > 0
    elif column.bound == schema.NON_NEGATIVE:
        ok &= v >= 0
    elif column.bound == schema.AT_LEAST_ONE:
        ok &= v >= 1
    if column.kind == schema.INTEGER:
        ok &= v == np.round(v)
    if not ok.all():
        raise _Decline
    if column.default is not None:
        x[~filled] = float(column.default)
    return x, filled


def _choices(column: schema.Column, array) -> tuple[list, np.ndarray]:
    encoded = array.combine_chunks().dictionary_encode()
    uniques = encoded.dictionary.to_pylist()
    mapped: list[Any] = []
    blank_codes = []
    for code, text in enumerate(uniques):
        if is_blank(text):
            mapped.append(column.default)
            blank_codes.append(code)
            continue
        try:
            mapped.append(cells.as_choice(text, column))
        except cells.CellError:
            raise _Decline from None
    codes = encoded.indices.to_numpy(zero_copy_only=False)
    table = np.empty(len(mapped), dtype=object)
    table[:] = mapped
    return table[codes].tolist(), ~np.isin(codes, blank_codes)


def _texts(column: schema.Column, array) -> tuple[list, np.ndarray, Any, list[tuple[int, str]]]:
    """Texts (blank -> the default), where filled, the Arrow array when all ASCII, and the
    (row index, cell) of every text that had spaces around it (the careful reader notes them)."""
    import pyarrow.compute as pc

    if pc.all(pc.string_is_ascii(array)).as_py():
        # ASCII without control characters (see _load): Arrow trims what str.strip() trims.
        stripped = pc.ascii_trim_whitespace(array)
        filled = pc.not_equal(stripped, "").to_numpy(zero_copy_only=False)
        changed = pc.not_equal(stripped, array).to_numpy(zero_copy_only=False) & filled
        spaced = [(int(i), array[int(i)].as_py()) for i in np.flatnonzero(changed)]
        texts = stripped.to_pylist()
    else:
        stripped = None
        raw = array.to_pylist()
        texts = [t.strip() for t in raw]
        filled = np.array([bool(t) for t in texts], dtype=bool)
        spaced = []
        if texts != raw:
            spaced = [
                (i, r) for i, (r, t) in enumerate(zip(raw, texts, strict=True)) if r != t and t
            ]
    if not filled.all():
        default = column.default
        texts = [t if t else default for t in texts]
    return texts, filled, stripped, spaced


def _fill_from(values: dict[str, Any], name: str, source: str) -> None:
    target, origin = values[name], values[source]
    if isinstance(target, np.ndarray):
        blank = np.isnan(target)
        target[blank] = np.asarray(origin, dtype=float)[blank]
    else:
        values[name] = [o if t is None else t for t, o in zip(target, origin, strict=True)]


def _check_alternative(alternative: schema.Alternative, filled, n: int) -> None:
    count = np.zeros(n, np.int64)
    for group in alternative.groups:
        any_filled = np.zeros(n, bool)
        all_filled = np.ones(n, bool)
        for c in group:
            any_filled |= filled[c]
            all_filled &= filled[c]
        if (any_filled & ~all_filled).any():
            raise _Decline
        count += any_filled
    if (count > 1).any() or (alternative.required and (count == 0).any()):
        raise _Decline


def _check(typed: dict[str, _Typed], settings, loaded, out: reader.Collector):
    """The careful reader's checks across rows and sheets, in its order, on whole columns;
    returns the bus positions of every bus reference (see REFERENCES) and the map from bus
    name to position."""
    buses = typed["buses"]
    bus_names = buses.values["bus"]
    if not _unique_ignoring_case([(buses, "bus")]):
        raise _Decline
    if not _unique_ignoring_case(
        [(typed[s.name], s.columns[0].name) for s in schema.ELEMENT_SHEETS]
    ):
        raise _Decline
    device = np.array([d is not None for d in buses.values["device"]], dtype=bool)
    if (device != buses.filled["rating_ka"]).any() or (buses.filled["rating_xr"] & ~device).any():
        raise _Decline
    kv = buses.values["kv"]
    if slips.bus_slips(kv):
        raise _Decline
    index = {b: i for i, b in enumerate(bus_names)}
    ends = {}
    for sheet, columns in REFERENCES:
        at = [_positions(typed[sheet], c, index) for c in columns]
        if any((a < 0).any() for a in at):
            raise _Decline  # unknown bus, or one matched ignoring case (a warning)
        if len(at) == 2 and (at[0] == at[1]).any():
            raise _Decline
        ends[sheet] = at
    for sheet in ("cables", "impedances"):
        a, b = (kv[i] for i in ends[sheet])
        if (np.abs(a - b) > 1e-9 * np.maximum(a, b)).any():
            raise _Decline
    near = np.concatenate([*ends["transformers"], ends["machines"][0], ends["sources"][0]])
    bus_kv = {bus_names[i]: kv[i].item() for i in np.unique(near).tolist()}
    transformers = typed["transformers"].records(range(typed["transformers"].n))
    reader.check_transformers(transformers, bus_kv, out)
    reader.check_clock(transformers, out)
    _no_problems(out)
    cables = typed["cables"]
    for r, x in (("r_ohm_per_kft", "x_ohm_per_kft"), ("r_ohm_per_km", "x_ohm_per_km")):
        if ((cables.values[r] == 0) & (cables.values[x] == 0)).any():
            raise _Decline
    _fill_from_tables(cables, kv[ends["cables"][0]], settings)
    machines = typed["machines"]
    machine_kv = kv[ends["machines"][0]]
    v = machines.values
    if slips.machine_slips(v["kv"], v["xd_pct"], machine_kv, v["bus"], v["kva"], v["hp"]):
        raise _Decline
    _machine_checks(machines, machine_kv, bus_kv, out)
    sources = typed["sources"]
    v = sources.values
    if slips.source_slips(v["sc_mva"], v["sc_ka"], v["slg_ka"], kv[ends["sources"][0]]):
        raise _Decline
    flagged = np.flatnonzero(~sources.filled["slg_ka"] & sources.filled["slg_xr"])
    raw_sources = RawSheet(
        "sources", [], [(int(i) + 2, _raw_row(loaded["sources"], int(i))) for i in flagged], []
    )
    reader.check_sources(sources.records(flagged), raw_sources, out, bus_kv)
    generators = sum(1 for k in machines.values["kind"] if k == "generator")
    if not sources.n and not generators:
        raise _Decline
    _no_problems(out)
    return ends, index


def _unique_ignoring_case(columns: list[tuple[_Typed, str]]) -> bool:
    """Every name valid and no two alike as the careful reader compares them (names.key);
    for ASCII names that is ASCII lower case, and the only control character that _load lets
    through is the tab."""
    import pyarrow as pa
    import pyarrow.compute as pc

    total = sum(sheet.n for sheet, _ in columns)
    arrays = [sheet.ascii.get(name) for sheet, name in columns if sheet.n]
    if all(a is not None for a in arrays):
        if not arrays:
            return True
        chunks = [c for a in arrays for c in (a.chunks if hasattr(a, "chunks") else [a])]
        together = pa.chunked_array(chunks, pa.string())
        if pc.any(pc.match_substring(together, "\t")).as_py():
            return False
        return len(pc.unique(pc.ascii_lower(together))) == total
    texts = [n for sheet, name in columns for n in sheet.values[name]]
    if any_problem(texts):
        return False
    return len({name_key(n) for n in texts}) == total


def _positions(sheet: _Typed, column: str, index: dict[str, int]) -> np.ndarray:
    """Row of the bus each name refers to, by exact name; -1 where none."""
    get = index.get
    return np.fromiter((get(n, -1) for n in sheet.values[column]), np.int64, sheet.n)


def _raw_row(loaded: _Loaded, i: int) -> dict[str, str]:
    return {h: a[i].as_py() for h, a in loaded.arrays.items()}


def _fill_from_tables(cables: _Typed, kv_from: np.ndarray, settings) -> None:
    v = cables.values
    need = np.flatnonzero(np.isnan(v["r_ohm_per_kft"]) & np.isnan(v["r_ohm_per_km"]))
    source = [""] * cables.n
    v["impedance_source"] = source
    if not len(need):
        return
    if (kv_from[need] > conductors.MAX_TABLE_KV).any():
        raise _Decline
    found: dict[tuple, Any] = {}
    for i in need.tolist():
        key = (v["size"][i], v["material"][i], v["raceway"][i])
        if not all(key):
            raise _Decline
        if key not in found:
            try:
                found[key] = conductors.lookup(
                    *key, settings.conductor_temp_c, settings.frequency_hz
                )
            except conductors.SizeError:
                raise _Decline from None
        value = found[key]
        v["r_ohm_per_kft"][i] = value.r_ohm_per_kft
        v["x_ohm_per_kft"][i] = value.x_ohm_per_kft
        source[i] = value.source


def _machine_checks(machines: _Typed, kv_bus: np.ndarray, bus_kv, out) -> None:
    """reader.check_machines on the rows that can raise something: generators given in hp,
    ratings away from the bus voltage, grounded machines without X0."""
    v, f = machines.values, machines.filled
    generator = np.array([k == "generator" for k in v["kind"]], dtype=bool)
    with np.errstate(invalid="ignore", divide="ignore"):
        off = np.abs(v["kv"] / kv_bus - 1.0) > reader.KV_MISMATCH_WARN * 0.999
    flagged = (generator & f["hp"]) | off | (f["neutral_ohm"] & ~f["x0_pct"])
    reader.check_machines(machines.records(np.flatnonzero(flagged)), bus_kv, out)
    _no_problems(out)


def _records(cls, sheet: _Typed) -> Records:
    columns: dict[str, Any] = {}
    for f in fields(cls):
        if f.name == "row":
            columns["row"] = list(sheet.rows)
        elif f.name in sheet.values:
            values = sheet.values[f.name]
            if f.default == "" and not isinstance(values, np.ndarray):
                values = ["" if x is None else x for x in values]
            columns[f.name] = values
    return Records(cls, columns, sheet.n)
