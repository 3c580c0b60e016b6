"""The rules across rows and sheets, each written once on whole columns.

Every rule looks at the typed columns (``columns.Typed``) of the rows ``at`` of a sheet (all
rows when the base input is read; the rows a case changes, and those that hang on them, when a
case is read), says a located problem or warning for each row it rejects or doubts, and marks
rejected rows not ok. Rules run in a fixed order (``check``), each on the rows still ok, so a
row's first problem is said and what follows from it is not said again.
"""

from __future__ import annotations

import numpy as np

from .. import conductors, schema
from . import names, slips, threewinding
from .collect import Collector
from .columns import Typed
from .references import (  # noqa: F401 - BUS_REFERENCES is read from here too
    BUS_REFERENCES,
    Buses,
    bus_table,
    join_references,
    references,
    update_buses,
)
from .slips import KV_MISMATCH_WARN  # noqa: F401 - rated kV against bus kV, warned beyond


def every(sheet: Typed) -> np.ndarray:
    return np.arange(sheet.n)


def _ok(sheet: Typed, at: np.ndarray) -> np.ndarray:
    return at[sheet.ok[at]]


def unique_names(sheets: list[tuple[Typed, str]], out: Collector, at=None) -> None:
    """No two names alike (``names.key``: ignoring case, compatibility forms and invisible
    characters) on these sheets taken together; the second of two is the problem. ``at``: per
    sheet the rows whose names to compare (all when None)."""
    if at is None and _unique_by_arrow(sheets):
        return
    keys: list[str] = []
    where: list[tuple[Typed, list[int]]] = []
    for sheet, column in sheets:
        values = sheet.values[column]
        rows = range(sheet.n) if at is None else at[sheet.spec.name]
        picked = [i for i in rows if values[i] is not None] if None in values else list(rows)
        keys += [values[i] for i in picked] if len(picked) != len(values) else values
        where.append((sheet, picked))
    if not keys:
        return
    joined = "".join(keys)
    folded = [k.lower() for k in keys] if joined.isascii() else [names.key(k) for k in keys]
    if len(set(folded)) == len(folded):
        return
    where = [(sheet, i) for sheet, picked in where for i in picked]
    taken: dict[str, int] = {}
    for k, key in enumerate(folded):
        if key not in taken:
            taken[key] = k
            continue
        first_sheet, first_i = where[taken[key]]
        sheet, i = where[k]
        column = sheet.spec.columns[0].name
        first = keys[taken[key]]
        name = keys[k]
        why = names.collision(first, name)
        same = f" as {first!r} ({why})" if why else ""
        out.problem(
            sheet.spec.name,
            int(sheet.rows[i]),
            column,
            name,
            f"the name is already used on sheet '{first_sheet.spec.name}' row "
            f"{int(first_sheet.rows[first_i])}{same}; names must be unique",
        )
        sheet.ok[i] = False


def _unique_by_arrow(sheets: list[tuple[Typed, str]]) -> bool:
    """True when the names are plain ASCII, each typed on the fast path, and no two alike
    ignoring case (for ASCII, ``names.key`` is lower case); False when that cannot be said
    so quickly (the Python path then looks, and names the rows)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    arrays = [sheet.arrow.get(column) for sheet, column in sheets if sheet.n]
    if not arrays or any(a is None for a in arrays):
        return not arrays
    together = pa.chunked_array(arrays, pa.string())
    if not pc.all(pc.string_is_ascii(together)).as_py():
        return False
    named = pc.filter(together, pc.not_equal(together, ""))
    return len(pc.unique(pc.ascii_lower(named))) == len(named)


def refuse_slips(sheet: Typed, at: np.ndarray, found, out: Collector) -> None:
    """Located problems for the gross mistakes ``slips`` found among the rows ``at``."""
    for slip in found:
        i = int(at[slip.index])
        out.problem(sheet.spec.name, int(sheet.rows[i]), slip.column, slip.value, slip.message)
        sheet.ok[i] = False


def _given(values: list, at: np.ndarray) -> np.ndarray:
    """Which of the rows ``at`` of a list column hold a value (not None)."""
    if len(at) < len(values) // 8:  # a case's few rows: look at them, not the whole column
        return np.array([values[i] is not None for i in at.tolist()], bool)
    if None not in values:
        return np.ones(len(at), bool)
    return np.array([values[i] is not None for i in at.tolist()], bool)


def bus_voltages(buses: Typed, out: Collector, at: np.ndarray) -> None:
    named = at[_given(buses.values["bus"], at)]
    with_kv = named[~np.isnan(buses.values["kv"][named])]
    refuse_slips(buses, with_kv, slips.bus_slips(buses.values["kv"][with_kv]), out)


def devices(buses: Typed, out: Collector, at: np.ndarray) -> None:
    """A device rating check needs both the device and its rating."""
    v = buses.values
    given = v["device"]
    device = np.zeros(len(at), bool) if given.count(None) == len(given) else _given(given, at)
    rating = ~np.isnan(v["rating_ka"][at])
    xr = ~np.isnan(v["rating_xr"][at])
    for k in np.flatnonzero((device != rating) | (xr & ~device)).tolist():
        i = int(at[k])
        if device[k] != rating[k]:
            missing = "rating_ka" if device[k] else "device"
            message = "device and rating_ka go together: give both to check the rating, or neither"
        else:
            missing = "device"
            message = "rating_xr is given but no device: give device and rating_ka"
        out.problem("buses", int(buses.rows[i]), missing, None, message)
        buses.ok[i] = False
    _mv_breakers(buses, out, at)


MV_COLUMNS = ("rated_max_kv", "k_factor", "interrupting_cycles", "closing_ka")
MV_DEVICES = ("mvcb", "mvcb_mva")


def _mv_breakers(buses: Typed, out: Collector, at: np.ndarray) -> None:
    """What a medium-voltage breaker's rating needs, and only there (on rows whose cells were
    read: a refused cell is said once, not again as missing)."""
    at = at[buses.ok[at]]
    v = buses.values
    given = {
        c: _given(v[c], at) if not isinstance(v[c], np.ndarray) else ~np.isnan(v[c][at])
        for c in MV_COLUMNS
    }
    devices = [v["device"][i] for i in at.tolist()]
    mv = np.array([d in MV_DEVICES for d in devices], bool)
    look = np.flatnonzero(mv | np.logical_or.reduce([given[c] for c in MV_COLUMNS]))
    for k in look.tolist():
        i = int(at[k])
        row = int(buses.rows[i])
        device = devices[k]

        def refuse(column, value, message, i=i, row=row):
            out.problem("buses", row, column, value, message)
            buses.ok[i] = False

        if not mv[k]:
            for c in MV_COLUMNS:
                if given[c][k]:
                    refuse(
                        c,
                        v[c][i],
                        "only for an MV breaker (device mvcb or mvcb_mva); "
                        "leave it blank for this device",
                    )
            continue
        kv = float(v["kv"][i])
        if not given["rated_max_kv"][k]:
            refuse(
                "rated_max_kv",
                None,
                f"an MV breaker ({device}) needs its rated maximum "
                "voltage, e.g. 15 for a breaker on a 13.8 kV bus",
            )
        elif kv > (vmax := float(v["rated_max_kv"][i])) * (1 + 1e-9):
            refuse(
                "rated_max_kv",
                vmax,
                f"the breaker's rated maximum voltage ({vmax:g} kV) is "
                f"below the bus's nominal {kv:g} kV: it cannot be applied here",
            )
        if kv <= 1.0:
            refuse(
                "device",
                device,
                f"an MV breaker on a {kv:g} kV bus: for 1 kV and below "
                "choose lvpcb, lvpcb_fused, mccb, iccb or fuse",
            )
        if not np.isnan(v["rating_xr"][i]):
            refuse(
                "rating_xr",
                float(v["rating_xr"][i]),
                "MV breaker ratings hold up to X/R 17 (IEEE C37.010); leave rating_xr blank",
            )
        k_factor = v["k_factor"][i]
        if device == "mvcb" and given["k_factor"][k] and abs(float(k_factor) - 1.0) > 1e-9:
            refuse(
                "k_factor",
                float(k_factor),
                "mvcb is rated on the constant-kA basis (K = 1); "
                "a breaker with K above 1 is rated on the constant-MVA basis: choose mvcb_mva",
            )
        if device == "mvcb_mva" and not given["k_factor"][k]:
            refuse(
                "k_factor",
                None,
                "mvcb_mva needs the rating's voltage range factor K (on its nameplate, e.g. 1.3)",
            )


def _kv_at(sheet: Typed, column: str, buses: Buses, at: np.ndarray) -> np.ndarray:
    return buses.kv[buses.ends[(sheet.spec.name, column)][at]]


def same_voltage(sheet: Typed, buses: Buses, out: Collector, at: np.ndarray) -> None:
    """A cable or impedance joins buses of one voltage; different kVs mean a missing
    transformer."""
    at = _ok(sheet, at)
    a, b = _kv_at(sheet, "from_bus", buses, at), _kv_at(sheet, "to_bus", buses, at)
    for k in np.flatnonzero(np.abs(a - b) > 1e-9 * np.maximum(a, b)).tolist():
        i = int(at[k])
        one, two = sheet.values["from_bus"][i], sheet.values["to_bus"][i]
        out.problem(
            sheet.spec.name,
            int(sheet.rows[i]),
            "to_bus",
            two,
            f"the two ends are at different voltages ({one}: {a[k]:g} kV, "
            f"{two}: {b[k]:g} kV); only a transformer joins voltage levels",
        )
        sheet.ok[i] = False


def transformers(sheet: Typed, buses: Buses, out: Collector, at: np.ndarray) -> None:
    at = _ok(sheet, at)
    v = sheet.values
    kva, hv_kv, lv_kv, z_pct = (v[c][at] for c in ("kva", "hv_kv", "lv_kv", "z_pct"))
    hv_bus = [v["hv_bus"][i] for i in at.tolist()]
    lv_bus = [v["lv_bus"][i] for i in at.tolist()]
    hv_bus_kv, lv_bus_kv = _kv_at(sheet, "hv_bus", buses, at), _kv_at(sheet, "lv_bus", buses, at)
    found = slips.transformer_slips(kva, hv_kv, lv_kv, z_pct, hv_bus_kv, lv_bus_kv, hv_bus, lv_bus)
    refuse_slips(sheet, at, found, out)
    for k in np.flatnonzero(hv_kv < lv_kv).tolist():  # equal: an isolation transformer
        i = int(at[k])
        if sheet.ok[i]:
            out.problem(
                "transformers",
                int(sheet.rows[i]),
                "hv_kv",
                float(hv_kv[k]),
                f"hv_kv must not be lower than lv_kv ({lv_kv[k]:g}); "
                "list the high-voltage winding's bus as hv_bus",
            )
            sheet.ok[i] = False
    off_hv = slips.off_nominal(hv_kv, hv_bus_kv)
    off_lv = slips.off_nominal(lv_kv, lv_bus_kv)
    for k in np.flatnonzero(off_hv | off_lv).tolist():
        i = int(at[k])
        if not sheet.ok[i]:
            continue
        for side, off, rated, nominal, bus in (
            ("hv", off_hv, hv_kv, hv_bus_kv, hv_bus),
            ("lv", off_lv, lv_kv, lv_bus_kv, lv_bus),
        ):
            if off[k]:
                out.warn(
                    "transformers",
                    int(sheet.rows[i]),
                    f"{side}_kv",
                    float(rated[k]),
                    slips.winding_off_nominal(float(rated[k]), bus[k], float(nominal[k])),
                )


def clock_numbers(sheet: Typed, out: Collector, at: np.ndarray) -> None:
    at = _ok(sheet, at)
    v = sheet.values
    clock = v["clock_number"][at]
    given = ~np.isnan(clock)
    for k in np.flatnonzero(given).tolist():
        i = int(at[k])
        hv, lv = v["hv_winding"][i], v["lv_winding"][i]
        number = int(clock[k])
        mixed = (hv == "D") != (lv == "D")
        if number > 11 or (number % 2 == 1) != mixed:
            parity = "odd (1, 5, 7 or 11)" if mixed else "even (0, 2, ..., 10)"
            out.problem(
                "transformers",
                int(sheet.rows[i]),
                "clock_number",
                number,
                f"a {hv}-{lv} transformer has an {parity} "
                "clock number from 0 to 11 (IEC 60076-1 vector groups)",
            )
            sheet.ok[i] = False


def cable_impedance(sheet: Typed, out: Collector, at: np.ndarray) -> None:
    v = sheet.values
    for r, x in (("r_ohm_per_kft", "x_ohm_per_kft"), ("r_ohm_per_km", "x_ohm_per_km")):
        zero = (v[r][at] == 0) & (v[x][at] == 0)
        for i in at[zero].tolist():
            if sheet.ok[i]:
                out.problem(
                    "cables",
                    int(sheet.rows[i]),
                    r,
                    0,
                    "R and X are both 0; a cable has impedance (use the 'impedances' sheet "
                    "with r_ohm = x_ohm = 0 for a closed tie)",
                )
                sheet.ok[i] = False


def cables_from_tables(sheet: Typed, settings, buses: Buses, out: Collector, at) -> None:
    """R and X from the conductor tables where the user left both blank."""
    v, f = sheet.values, sheet.filled
    source = v.setdefault("impedance_source", [""] * sheet.n)
    for i in (i for i in at.tolist() if source[i]) if any(source) else ():
        # from the tables before (a case looks at the row again): taken afresh, or not at all
        for column in ("r_ohm_per_kft", "x_ohm_per_kft"):
            if not f[column][i]:
                v[column][i] = np.nan
        source[i] = ""
    at = _ok(sheet, at)
    need = at[~f["r_ohm_per_kft"][at] & ~f["r_ohm_per_km"][at]]
    if not len(need):
        return
    kv = _kv_at(sheet, "from_bus", buses, need)
    found: dict[tuple, object] = {}
    for k, i in enumerate(need.tolist()):
        row = int(sheet.rows[i])
        if kv[k] > conductors.MAX_TABLE_KV:
            out.problem(
                "cables",
                row,
                "r_ohm_per_kft",
                None,
                f"the conductor tables are for cables of 1 kV and below; this cable is at "
                f"{kv[k]:g} kV: give r_ohm_per_kft + x_ohm_per_kft (or per km) from its data "
                "sheet",
            )
            sheet.ok[i] = False
            continue
        key = (v["size"][i], v["material"][i], v["raceway"][i])
        missing = [
            c for c, value in zip(("size", "material", "raceway"), key, strict=True) if not value
        ]
        for column in missing:
            out.problem(
                "cables",
                row,
                column,
                None,
                "needed to take R and X from the conductor tables; or give r_ohm_per_kft + "
                "x_ohm_per_kft (or the per-km pair)",
            )
        if missing:
            sheet.ok[i] = False
            continue
        if key not in found:
            try:
                found[key] = conductors.lookup(
                    *key, settings.conductor_temp_c, settings.frequency_hz
                )
            except conductors.SizeError as exc:
                found[key] = exc
        value = found[key]
        if isinstance(value, conductors.SizeError):
            out.problem("cables", row, "size", key[0], str(value))
            sheet.ok[i] = False
            continue
        v["r_ohm_per_kft"][i] = value.r_ohm_per_kft
        v["x_ohm_per_kft"][i] = value.x_ohm_per_kft
        source[i] = value.source


def machines(sheet: Typed, buses: Buses, out: Collector, at: np.ndarray) -> None:
    v, f = sheet.values, sheet.filled
    pf = v["power_factor"][at]
    for k in np.flatnonzero(pf > 1.0).tolist():
        i = int(at[k])
        out.problem(
            "machines",
            int(sheet.rows[i]),
            "power_factor",
            float(pf[k]),
            "a power factor is at most 1 (e.g. 0.8 or 0.85); give it as a fraction, not a %",
        )
        sheet.ok[i] = False
    for i in at.tolist():
        if v["kind"][i] == "generator" and not np.isnan(v["hp"][i]):
            out.problem(
                "machines",
                int(sheet.rows[i]),
                "hp",
                float(v["hp"][i]),
                "a generator is rated in kVA: give kva instead of hp",
            )
            sheet.ok[i] = False
    at = _ok(sheet, at)
    kv, xd_pct, kva, hp = (v[c][at] for c in ("kv", "xd_pct", "kva", "hp"))
    bus = [v["bus"][i] for i in at.tolist()]
    bus_kv = _kv_at(sheet, "bus", buses, at)
    refuse_slips(sheet, at, slips.machine_slips(kv, xd_pct, bus_kv, bus, kva, hp), out)
    off = slips.off_nominal(kv, bus_kv)
    flagged = off | (f["neutral_ohm"][at] & ~f["x0_pct"][at])
    for k in np.flatnonzero(flagged).tolist():
        i = int(at[k])
        if not sheet.ok[i]:
            continue
        row = int(sheet.rows[i])
        if off[k]:
            out.warn(
                "machines",
                row,
                "kv",
                float(kv[k]),
                f"machine rated {kv[k]:g} kV on bus {bus[k]} of {bus_kv[k]:g} kV; its "
                "impedance is changed to the bus voltage base; check the rating",
            )
        if f["neutral_ohm"][i] and not f["x0_pct"][i]:
            out.warn(
                "machines",
                row,
                "x0_pct",
                None,
                "grounded neutral but no zero-sequence reactance: X0 taken equal to xd_pct; "
                "a generator's X0 is usually lower, so its ground-fault contribution may be "
                "understated; enter x0_pct from the manufacturer's data",
            )


# Inverter current limits usual in manufacturers' data: warned outside (value from memory;
# IEEE 1547-2018 and IEEE 2800-2022 set the ride-through the current is held in, not the
# limit). A negative-sequence share above half the limit is unusual (common practice, no
# source).
INVERTER_LIMIT_USUAL = (1.05, 1.5)
NEGATIVE_SHARE_USUAL_PCT = 50.0


def inverters(sheet: Typed, buses: Buses, out: Collector, at: np.ndarray) -> None:
    """An inverter's rated kV against its bus, its current limit, cessation voltage and
    negative-sequence share: refused when no inverter has them, warned when unusual."""
    v, f = sheet.values, sheet.filled
    name = sheet.spec.name
    at = _ok(sheet, at)
    missing = []  # refused after the slips, so that a row's other problems are said too
    for i in at.tolist():
        row = int(sheet.rows[i])
        if v["behaviour"][i] == "negative_share" and not f["negative_share_pct"][i]:
            out.problem(
                name,
                row,
                "negative_share_pct",
                None,
                "behaviour negative_share needs the negative-sequence share of the limit "
                "current in % (e.g. 20)",
            )
            missing.append(i)
        elif v["behaviour"][i] != "negative_share" and f["negative_share_pct"][i]:
            out.warn(
                name,
                row,
                "negative_share_pct",
                float(v["negative_share_pct"][i]),
                "used only with behaviour negative_share; ignored (behaviour positive: "
                "positive-sequence current only)",
            )
    kv, limit = v["kv"][at], v["current_limit_pu"][at]
    is_share = np.array([v["behaviour"][i] == "negative_share" for i in at.tolist()], bool)
    share = np.where(is_share, v["negative_share_pct"][at], np.nan)
    bus = [v["bus"][i] for i in at.tolist()]
    bus_kv = _kv_at(sheet, "bus", buses, at)
    found = slips.inverter_slips(kv, bus_kv, bus, limit, v["cease_below_pu"][at], share)
    refuse_slips(sheet, at, found, out)
    sheet.ok[missing] = False
    off = slips.off_nominal(kv, bus_kv)
    low, high = INVERTER_LIMIT_USUAL
    unusual = (limit < low) | (limit > high)
    large_share = share > NEGATIVE_SHARE_USUAL_PCT
    for k in np.flatnonzero(off | unusual | large_share).tolist():
        i = int(at[k])
        if not sheet.ok[i]:
            continue
        row = int(sheet.rows[i])
        if off[k]:
            out.warn(
                name,
                row,
                "kv",
                float(kv[k]),
                f"inverter rated {kv[k]:g} kV on bus {bus[k]} of {bus_kv[k]:g} kV; its rated "
                "current is taken at its own kV; check the rating",
            )
        if unusual[k]:
            out.warn(
                name,
                row,
                "current_limit_pu",
                float(limit[k]),
                f"outside the {low:g} to {high:g} x rated current usual for inverters' fault "
                "current (manufacturers' data; IEEE 1547-2018 and IEEE 2800-2022 set the "
                "ride-through, not the limit; value from memory); check the manufacturer's "
                "figure",
            )
        if large_share[k]:
            out.warn(
                name,
                row,
                "negative_share_pct",
                float(share[k]),
                f"more than {NEGATIVE_SHARE_USUAL_PCT:g} % of the limit current as "
                "negative-sequence current is unusual; check the control's setting",
            )


def sources(sheet: Typed, buses: Buses, out: Collector, at: np.ndarray) -> None:
    v, f = sheet.values, sheet.filled
    ok = _ok(sheet, at)
    kv = _kv_at(sheet, "bus", buses, ok)
    found = slips.source_slips(v["sc_mva"][ok], v["sc_ka"][ok], v["slg_ka"][ok], kv)
    refuse_slips(sheet, ok, found, out)
    for i in at[np.isnan(v["slg_ka"][at]) & f["slg_xr"][at]].tolist():
        out.warn(
            "sources",
            int(sheet.rows[i]),
            "slg_xr",
            sheet.raw_cell("slg_xr", i),
            "slg_xr is used only with slg_ka; ignored",
        )


def some_source(sheets: dict[str, Typed], out: Collector) -> None:
    generators = sum(1 for k in sheets["machines"].values["kind"] if k == "generator")
    if not sheets["sources"].n and not generators and not out.problems:
        out.problem(
            "sources",
            None,
            None,
            None,
            "no utility source (sources sheet) and no generator (machines sheet): at "
            "least one is needed to feed a fault",
        )


def check(sheets: dict[str, Typed], settings, out: Collector, at=None, buses=None) -> Buses:
    """Every rule across rows and sheets, in order, on the rows ``at`` of each sheet (all when
    None; a dict of sheet name to row indices otherwise), after the cells were typed. Returns
    the bus table with the bus position of every reference."""

    def rows(name):
        return every(sheets[name]) if at is None else np.asarray(at.get(name, ()), np.int64)

    if at is None:  # a case cannot change a name
        unique_names([(sheets["buses"], "bus")], out)
    bus_voltages(sheets["buses"], out, rows("buses"))
    if buses is None:
        buses = bus_table(sheets["buses"], sheets["buses"].readable)
        if not buses.readable:  # one problem says so already; no second one per reference
            for sheet, columns in BUS_REFERENCES:
                for c in columns:
                    buses.unusable |= {n for n in sheets[sheet].values[c] if n is not None}
    else:
        buses = update_buses(buses, sheets["buses"], rows("buses"))
    if at is None:
        unique_names([(sheets[s.name], s.columns[0].name) for s in schema.ELEMENT_SHEETS], out)
        join_references(sheets, buses)
    devices(sheets["buses"], out, rows("buses"))
    for sheet, columns in BUS_REFERENCES[:4]:  # machines after the cable tables, as before
        references(sheets[sheet], columns, buses, out, rows(sheet))
    same_voltage(sheets["cables"], buses, out, rows("cables"))
    same_voltage(sheets["impedances"], buses, out, rows("impedances"))
    transformers(sheets["transformers"], buses, out, rows("transformers"))
    clock_numbers(sheets["transformers"], out, rows("transformers"))
    cable_impedance(sheets["cables"], out, rows("cables"))
    cables_from_tables(sheets["cables"], settings, buses, out, rows("cables"))
    references(sheets["machines"], ("bus",), buses, out, rows("machines"))
    references(
        sheets["grounding_transformers"], ("bus",), buses, out, rows("grounding_transformers")
    )
    three = "three_winding_transformers"
    references(sheets[three], ("h_bus", "m_bus", "l_bus"), buses, out, rows(three))
    threewinding.three_winding(sheets[three], buses, out, rows(three))
    machines(sheets["machines"], buses, out, rows("machines"))
    references(sheets["inverters"], ("bus",), buses, out, rows("inverters"))
    inverters(sheets["inverters"], buses, out, rows("inverters"))
    sources(sheets["sources"], buses, out, rows("sources"))
    some_source(sheets, out)
    return buses
