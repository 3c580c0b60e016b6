"""Random radial and meshed test networks as input sheets (invented data, for tests only)."""

from __future__ import annotations

import numpy as np

MV_KV = 13.8
LV_KV = 0.48

# Winding pairs drawn when zero_sequence=True (HV, LV), grounded ones more often.
WINDINGS = [
    ("D", "YN"),
    ("D", "YN"),
    ("YN", "YN"),
    ("YN", "D"),
    ("D", "Y"),
    ("D", "D"),
    ("Y", "YN"),
]


def random_sheets(
    seed: int,
    n_mv: int = 8,
    n_lv: int = 20,
    loops: int = 0,
    sources: int = 1,
    ties: int = 0,
    off_nominal: bool = False,
    zero_sequence: bool = False,
    machines: int = 0,
    clocks: bool = False,
    grounding: int = 0,
    three_winding: int = 0,
    inverters: int = 0,
) -> dict[str, list[dict]]:
    """A 13.8 kV network with 480 V networks hung under it through transformers.

    MV buses form a random tree (plus ``loops`` extra cables); every LV bus hangs from an MV bus
    through a transformer or from an LV bus through a cable or impedance. With
    ``zero_sequence`` the sources, cables and transformers get zero-sequence data and random
    winding connections; ``machines`` adds motors and generators; ``grounding`` adds zig-zag
    and wye-delta grounding banks at random buses; ``three_winding`` adds three-winding
    transformers and autotransformers from random MV buses to 4.16 kV buses of their own (and a
    0.48 kV tertiary bus, or a delta tertiary not brought out); ``inverters`` adds
    inverter-based sources (drawn last, so a network without them is the same), a few with a
    negative-sequence share or a cessation voltage; ``clocks`` draws the
    transformers' IEC 60076 clock numbers. Closed ties join only buses of one phase
    displacement, so every loop is consistent.
    """
    rng = np.random.default_rng(seed)
    buses = [{"bus": f"M{i}", "kv": MV_KV} for i in range(n_mv)]
    buses += [{"bus": f"L{i}", "kv": LV_KV} for i in range(n_lv)]
    src = []
    for k in range(sources):
        row = {
            "source": f"S{k}",
            "bus": f"M{rng.integers(n_mv)}",
            "sc_mva": float(rng.uniform(100, 800)),
            "xr": float(rng.uniform(5, 20)),
        }
        if zero_sequence and k % 2 == 0:
            # A line-to-ground current between 0.6 and 1.1 of the three-phase one.
            i3 = row["sc_mva"] / (3**0.5 * MV_KV)
            row["slg_ka"] = float(i3 * rng.uniform(0.6, 1.1))
            row["slg_xr"] = float(row["xr"] * rng.uniform(0.8, 1.0))
        elif zero_sequence:
            row["r0_ohm"] = float(rng.uniform(0.1, 1.0))
            row["x0_ohm"] = float(rng.uniform(0.5, 3.0))
        src.append(row)
    cables, transformers, impedances = [], [], []

    def cable(a, b, kv):
        low = kv < 1
        row = {
            "cable": f"C{len(cables)}",
            "from_bus": a,
            "to_bus": b,
            "sets": int(rng.integers(1, 4)),
        }
        if rng.random() < 0.5:
            row["length_ft"] = float(rng.uniform(20, 800 if low else 5000))
        else:
            row["length_m"] = float(rng.uniform(10, 250 if low else 1500))
        if rng.random() < 0.5:
            row["r_ohm_per_kft"] = float(rng.uniform(0.02, 0.3))
            row["x_ohm_per_kft"] = float(rng.uniform(0.03, 0.06))
        else:
            row["r_ohm_per_km"] = float(rng.uniform(0.06, 1.0))
            row["x_ohm_per_km"] = float(rng.uniform(0.1, 0.2))
        if zero_sequence and rng.random() < 0.7:
            if rng.random() < 0.5:
                row["r0_ohm_per_kft"] = float(rng.uniform(0.05, 0.9))
                row["x0_ohm_per_kft"] = float(rng.uniform(0.05, 0.3))
            else:
                row["r0_ohm_per_km"] = float(rng.uniform(0.15, 3.0))
                row["x0_ohm_per_km"] = float(rng.uniform(0.15, 1.0))
        cables.append(row)

    for i in range(1, n_mv):
        cable(f"M{rng.integers(i)}", f"M{i}", MV_KV)
    for _ in range(loops):
        a, b = rng.choice(n_mv, 2, replace=False)
        cable(f"M{a}", f"M{b}", MV_KV)
    lv_fed = []
    angle: dict[str, int] = {}  # phase displacement of each LV bus, degrees
    for i in range(n_lv):
        name = f"L{i}"
        if not lv_fed or rng.random() < 0.4:
            hv_kv = MV_KV * (rng.choice([1.0, 0.95, 1.04]) if off_nominal else 1.0)
            lv_kv = LV_KV * (rng.choice([1.0, 1.02]) if off_nominal else 1.0)
            row = {
                "transformer": f"T{len(transformers)}",
                "hv_bus": f"M{rng.integers(n_mv)}",
                "lv_bus": name,
                "kva": float(rng.choice([300, 500, 750, 1000, 1500, 2500])),
                "hv_kv": float(hv_kv),
                "lv_kv": float(lv_kv),
                "z_pct": float(rng.uniform(4, 7)),
                "xr": float(rng.uniform(3, 10)),
                "hv_winding": "D",
                "lv_winding": "YN",
            }
            if zero_sequence:
                hv_w, lv_w = WINDINGS[rng.integers(len(WINDINGS))]
                row.update(
                    {
                        "hv_winding": hv_w,
                        "lv_winding": lv_w,
                        "z0_pct": float(row["z_pct"] * rng.uniform(0.8, 1.0)),
                        "xr0": float(rng.uniform(3, 10)),
                        "lv_neutral_ohm": float(rng.choice([0, 0, 0.5, 2.0])),
                        "hv_neutral_ohm": float(rng.choice([0, 0, 5.0])),
                    }
                )
            mixed = (row["hv_winding"] == "D") != (row["lv_winding"] == "D")
            if clocks:
                row["clock_number"] = int(rng.choice([1, 5, 7, 11] if mixed else [0, 4, 6, 8]))
            angle[name] = -30 * row.get("clock_number", 1 if mixed else 0) % 360
            transformers.append(row)
        elif rng.random() < 0.8:
            parent = lv_fed[rng.integers(len(lv_fed))]
            angle[name] = angle[parent]
            cable(parent, name, LV_KV)
        else:
            parent = lv_fed[rng.integers(len(lv_fed))]
            angle[name] = angle[parent]
            row = {
                "element": f"Z{len(impedances)}",
                "from_bus": parent,
                "to_bus": name,
                "r_ohm": float(rng.uniform(0, 0.003)),
                "x_ohm": float(rng.uniform(0.0005, 0.004)),
            }
            if zero_sequence and rng.random() < 0.5:
                row["r0_ohm"] = float(rng.uniform(0, 0.01))
                row["x0_ohm"] = float(rng.uniform(0.001, 0.01))
            impedances.append(row)
        lv_fed.append(name)
    for _ in range(ties):
        a = int(rng.integers(n_lv))
        mates = [j for j in range(n_lv) if j != a and angle[f"L{j}"] == angle[f"L{a}"]]
        if not mates:
            continue
        b = mates[int(rng.integers(len(mates)))]
        impedances.append(
            {
                "element": f"Z{len(impedances)}",
                "from_bus": f"L{a}",
                "to_bus": f"L{b}",
                "r_ohm": 0,
                "x_ohm": 0,
            }
        )
    machine_rows = []
    for k in range(machines):
        generator = bool(rng.random() < 0.3)
        on_lv = bool(rng.random() < 0.8)
        row = {
            "machine": f"G{k}" if generator else f"MOT{k}",
            "bus": f"L{rng.integers(n_lv)}" if on_lv else f"M{rng.integers(n_mv)}",
            "kind": "generator"
            if generator
            else str(rng.choice(["induction_motor", "synchronous_motor"])),
            "kv": (LV_KV if on_lv else MV_KV) * float(rng.choice([1.0, 0.9583])),
            "xd_pct": float(rng.uniform(12, 25)),
            "xr": float(rng.uniform(3, 30)),
            "count": int(rng.integers(1, 5)),
        }
        if generator or rng.random() < 0.5:
            row["kva"] = float(rng.uniform(50, 2000))
        else:
            row["hp"] = float(rng.uniform(5, 500))
        if generator and rng.random() < 0.7:
            row["neutral_ohm"] = float(rng.choice([0.0, 0.3]))
            row["x0_pct"] = float(rng.uniform(3, 10))
        machine_rows.append(row)
    three_rows = []
    for k in range(three_winding):
        three_rows.append(
            _three_winding_row(rng, k, f"M{rng.integers(n_mv)}", buses, zero_sequence)
        )
    sheets = {"buses": buses, "sources": src, "transformers": transformers, "cables": cables}
    if three_rows:
        sheets["three_winding_transformers"] = three_rows
    if impedances:
        sheets["impedances"] = impedances
    if machine_rows:
        sheets["machines"] = machine_rows
    if grounding:
        banks = []
        for k in range(grounding):
            bus = buses[int(rng.integers(len(buses)))]
            scale = (bus["kv"] / LV_KV) ** 2  # ohms that suit the bus's voltage
            banks.append(
                {
                    "grounding_transformer": f"ZG{k}",
                    "bus": bus["bus"],
                    "kind": ["zigzag", "wye_delta"][k % 2],
                    "z0_ohm": float(rng.uniform(0.02, 0.2) * scale),
                    "xr": float(rng.uniform(4, 15)),
                    "neutral_ohm": float(rng.choice([0.0, 0.0, 0.05]) * scale),
                }
            )
        sheets["grounding_transformers"] = banks
    if inverters:
        rows = []
        for k in range(inverters):
            bus = buses[int(rng.integers(len(buses)))]
            low = bus["kv"] < 1
            row = {
                "inverter": f"PV{k}",
                "bus": bus["bus"],
                "kva": float(rng.uniform(20, 150) if low else rng.uniform(500, 3000)),
                "kv": bus["kv"],
                "count": int(rng.integers(1, 4)),
                "current_limit_pu": float(rng.uniform(1.05, 1.5)),
            }
            if rng.random() < 0.4:
                row["behaviour"] = "negative_share"
                row["negative_share_pct"] = float(rng.uniform(10, 40))
            if rng.random() < 0.3:
                row["cease_below_pu"] = float(rng.uniform(0.3, 0.6))
            rows.append(row)
        sheets["inverters"] = rows
    return sheets


def _three_winding_row(rng, k: int, h_bus: str, buses: list[dict], zero_sequence: bool) -> dict:
    """A random three-winding transformer (or autotransformer) from ``h_bus`` (13.8 kV) to new
    buses of its own, appended to ``buses``; windings, neutrals and clocks drawn at random."""
    auto = bool(rng.random() < 0.4)
    # an auto steps 13.8 kV down to 4.16 kV; a separate-winding unit too, or up to 69 kV as h
    m_kv = 4.16
    m_bus, l_bus = f"W{k}M", f"W{k}L"
    buses.append({"bus": m_bus, "kv": m_kv})
    buried = bool(rng.random() < 0.3)
    if not buried:
        buses.append({"bus": l_bus, "kv": LV_KV})
    windings = ["YN", "YN", "D"]
    if zero_sequence and not auto:
        windings = [str(rng.choice(["D", "Y", "YN"])) for _ in range(3)]
        if buried:
            windings[2] = "D"
    h_w, m_w, l_w = windings
    kva = float(rng.choice([5000, 10000, 20000]))
    row = {
        "transformer": f"X3W{k}",
        "kind": "auto" if auto else "separate",
        "h_bus": h_bus,
        "h_kva": kva,
        "h_kv": MV_KV * float(rng.choice([1.0, 0.97])),
        "h_winding": h_w,
        "h_neutral_ohm": float(rng.choice([0.0, 0.0, 2.0])),
        "m_bus": m_bus,
        "m_kva": kva,
        "m_kv": m_kv * float(rng.choice([1.0, 1.03])),
        "m_winding": m_w,
        "l_winding": l_w,
        "hm_z_pct": float(rng.uniform(6, 10)),
        "hm_kva": kva,
        "hm_xr": float(rng.uniform(10, 30)),
        "hl_z_pct": float(rng.uniform(10, 20)),
        "hl_kva": kva / 3,
        "hl_xr": float(rng.uniform(8, 25)),
        "ml_z_pct": float(rng.uniform(5, 15)),
        "ml_kva": kva / 3,
        "ml_xr": float(rng.uniform(8, 25)),
    }
    if not auto:
        row["m_neutral_ohm"] = float(rng.choice([0.0, 0.5]))
        row["l_neutral_ohm"] = float(rng.choice([0.0, 0.05]))
    if not buried:
        row.update({"l_bus": l_bus, "l_kva": kva / 3, "l_kv": LV_KV})
    if zero_sequence:  # every vector group's clock
        for x, winding in (("m", m_w), ("l", l_w)):
            if auto and x == "m":
                continue
            mixed = (h_w == "D") != (winding == "D")
            row[f"{x}_clock"] = int(rng.choice([1, 5, 7, 11] if mixed else [0, 4, 6, 8]))
        for pair in ("hm", "hl", "ml"):
            row[f"{pair}_z0_pct"] = row[f"{pair}_z_pct"] * float(rng.uniform(0.8, 1.0))
    return row
