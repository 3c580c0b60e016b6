"""Run a study: System -> per-unit -> network -> Thevenin impedances -> fault currents."""

from __future__ import annotations

import datetime as _dt

import numpy as np
import pandas as pd

from . import faults, perunit, thevenin
from ._version import __version__
from .cautions import CAUTIONS
from .model import System
from .network import build_network
from .results import BUS_COLUMNS, ELEMENT_COLUMNS, Basis, StudyResult

TOOL_NAME = "faultcalc"

METHOD = (
    "Thevenin equivalent at every bus: the diagonal of the inverse of the sparse "
    "positive-sequence nodal admittance matrix (per-unit, one MVA base, each bus's nominal "
    "kV as its base kV); prefault voltage {prefault:g} pu behind it; bolted three-phase "
    "faults; utility sources as impedances reproducing their stated available fault current; "
    "transformers at their rated ratio; load currents and capacitance neglected."
)


def _input_text(system: System) -> dict[str, str]:
    """One line per element restating what the engineer typed."""
    text = {}
    kv = system.bus_kv()
    for s in system.sources:
        given = f"{s.sc_mva:g} MVA" if s.sc_mva is not None else f"{s.sc_ka:g} kA"
        text[s.source] = (
            f"available {given} at {kv[s.bus]:g} kV "
            f"({s.available_mva(kv[s.bus]):.4g} MVA), X/R {s.xr:g}"
        )
    for t in system.transformers:
        text[t.transformer] = (
            f"{t.kva:g} kVA, {t.hv_kv:g}/{t.lv_kv:g} kV, {t.z_pct:g} %Z, "
            f"X/R {t.xr:g}, {t.hv_winding}-{t.lv_winding}"
            + (f", LV neutral {t.lv_neutral_ohm:g} ohm" if t.lv_neutral_ohm else "")
        )
    for c in system.cables:
        length = f"{c.length_ft:g} ft" if c.length_ft is not None else f"{c.length_m:g} m"
        if c.r_ohm_per_kft is not None:
            z = f"{c.r_ohm_per_kft:g} + j{c.x_ohm_per_kft:g} ohm/1000 ft"
        else:
            z = f"{c.r_ohm_per_km:g} + j{c.x_ohm_per_km:g} ohm/km"
        what = " ".join(
            x for x in (c.size, c.material or "", "in " + c.raceway if c.raceway else "") if x
        )
        text[c.cable] = f"{length}, {c.sets} set(s), {z} per conductor" + (
            f", {what}" if what else ""
        )
    for e in system.impedances:
        text[e.element] = "closed tie (0 ohm)" if e.is_tie else f"{e.r_ohm:g} + j{e.x_ohm:g} ohm"
    return text


def _element_table(system: System, pu: perunit.PerUnitSystem, used: set[int]) -> pd.DataFrame:
    text = _input_text(system)
    rows = []
    for s in pu.shunts:
        rows.append(
            (
                s.element,
                s.kind,
                s.bus,
                "",
                text[s.element],
                s.bus,
                s.base_kv,
                s.z1_ohm.real,
                s.z1_ohm.imag,
                s.z1_pu.real,
                s.z1_pu.imag,
                np.nan,
                "impedance to the prefault source",
            )
        )
    for k, s in enumerate(pu.series):
        note = ""
        if s.kind == "tie":
            note = "buses merged into one node"
        elif k not in used:
            note = "left out: both ends share one node"
        elif s.kind == "transformer":
            note = "impedance on the LV side" + (
                f"; off-nominal ratio {s.tap:.4f}" if abs(s.tap - 1) > 1e-12 else ""
            )
        rows.append(
            (
                s.element,
                s.kind,
                s.from_bus,
                s.to_bus,
                text[s.element],
                s.ohm_bus,
                s.base_kv,
                s.z1_ohm.real,
                s.z1_ohm.imag,
                s.z1_pu.real,
                s.z1_pu.imag,
                s.tap if s.kind == "transformer" else np.nan,
                note,
            )
        )
    return pd.DataFrame(rows, columns=list(ELEMENT_COLUMNS))


def run_study(system: System, *, calculated_at: _dt.datetime | None = None) -> StudyResult:
    """Thevenin impedance and three-phase bolted fault current at every bus.

    Parameters
    ----------
    system : System
        As returned by :func:`faultcalc.read_system`.
    calculated_at : datetime, optional
        Time stamp to record (default: now, local time).

    Returns
    -------
    StudyResult
        ``.buses`` holds one row per bus in input order with columns ``bus, kv, r1_ohm, x1_ohm,
        z1_pu, xr, i3ph_ka, s3ph_mva``.

    Raises
    ------
    InputError
        When a bus has no path to any source.

    Examples
    --------
    >>> from faultcalc import read_system, run_study, sample_path
    >>> result = run_study(read_system(sample_path("plant_480v")))
    >>> float(result.buses.set_index("bus").loc["SWBD-1", "i3ph_ka"]) > 20
    True
    """
    settings = system.settings
    pu = perunit.to_per_unit(system)
    network = build_network(pu, {b.bus: b.row for b in system.buses})
    z_node = thevenin.diagonal_of_inverse(network.y1)
    z1_pu = z_node[network.node_of_bus]
    kv = np.array(pu.bus_kv)
    z_base = kv**2 / pu.base_mva
    i_base = pu.base_mva / (np.sqrt(3.0) * kv)
    i3_ka = faults.three_phase_pu(z1_pu, settings.prefault_pu) * i_base
    with np.errstate(divide="ignore"):
        xr = np.where(z1_pu.real > 0, z1_pu.imag / np.where(z1_pu.real > 0, z1_pu.real, 1), np.inf)
    buses = pd.DataFrame(
        {
            "bus": list(pu.bus_names),
            "kv": kv,
            "r1_ohm": z1_pu.real * z_base,
            "x1_ohm": z1_pu.imag * z_base,
            "z1_pu": np.abs(z1_pu),
            "xr": xr,
            "i3ph_ka": i3_ka,
            "s3ph_mva": np.sqrt(3.0) * kv * i3_ka,
        },
        columns=list(BUS_COLUMNS),
    )

    groups = []
    node = network.node_of_bus
    for i in range(len(pu.bus_names)):
        mates = [pu.bus_names[j] for j in np.flatnonzero(node == node[i]) if j != i]
        groups.append(", ".join(mates))

    stamp = (calculated_at or _dt.datetime.now().astimezone()).isoformat(timespec="seconds")
    basis = Basis(
        settings,
        METHOD.format(prefault=settings.prefault_pu),
        system.input_name,
        system.input_sha256,
        stamp,
        TOOL_NAME,
        __version__,
    )
    return StudyResult(
        buses=buses,
        elements=_element_table(system, pu, set(network.series_used)),
        descriptions=tuple(b.description for b in system.buses),
        node_groups=tuple(groups),
        warnings=tuple(system.warnings) + network.warnings,
        cautions=CAUTIONS,
        basis=basis,
    )
