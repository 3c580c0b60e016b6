"""Random radial and meshed test networks as input sheets (invented data, for tests only)."""

from __future__ import annotations

import numpy as np

MV_KV = 13.8
LV_KV = 0.48


def random_sheets(
    seed: int,
    n_mv: int = 8,
    n_lv: int = 20,
    loops: int = 0,
    sources: int = 1,
    ties: int = 0,
    off_nominal: bool = False,
) -> dict[str, list[dict]]:
    """A 13.8 kV network with 480 V networks hung under it through transformers.

    MV buses form a random tree (plus ``loops`` extra cables); every LV bus hangs from an MV bus
    through a transformer or from an LV bus through a cable or impedance.
    """
    rng = np.random.default_rng(seed)
    buses = [{"bus": f"M{i}", "kv": MV_KV} for i in range(n_mv)]
    buses += [{"bus": f"L{i}", "kv": LV_KV} for i in range(n_lv)]
    src = []
    for k in range(sources):
        src.append(
            {
                "source": f"S{k}",
                "bus": f"M{rng.integers(n_mv)}",
                "sc_mva": float(rng.uniform(100, 800)),
                "xr": float(rng.uniform(5, 20)),
            }
        )
    cables, transformers, impedances = [], [], []

    def cable(a, b, kv):
        per_kft = kv < 1
        row = {
            "cable": f"C{len(cables)}",
            "from_bus": a,
            "to_bus": b,
            "sets": int(rng.integers(1, 4)),
        }
        if rng.random() < 0.5:
            row["length_ft"] = float(rng.uniform(20, 800 if per_kft else 5000))
        else:
            row["length_m"] = float(rng.uniform(10, 250 if per_kft else 1500))
        if rng.random() < 0.5:
            row["r_ohm_per_kft"] = float(rng.uniform(0.02, 0.3))
            row["x_ohm_per_kft"] = float(rng.uniform(0.03, 0.06))
        else:
            row["r_ohm_per_km"] = float(rng.uniform(0.06, 1.0))
            row["x_ohm_per_km"] = float(rng.uniform(0.1, 0.2))
        cables.append(row)

    for i in range(1, n_mv):
        cable(f"M{rng.integers(i)}", f"M{i}", MV_KV)
    for _ in range(loops):
        a, b = rng.choice(n_mv, 2, replace=False)
        cable(f"M{a}", f"M{b}", MV_KV)
    lv_fed = []
    for i in range(n_lv):
        name = f"L{i}"
        if not lv_fed or rng.random() < 0.4:
            hv_kv = MV_KV * (rng.choice([1.0, 0.95, 1.04]) if off_nominal else 1.0)
            lv_kv = LV_KV * (rng.choice([1.0, 1.02]) if off_nominal else 1.0)
            transformers.append(
                {
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
            )
        elif rng.random() < 0.8:
            cable(lv_fed[rng.integers(len(lv_fed))], name, LV_KV)
        else:
            impedances.append(
                {
                    "element": f"Z{len(impedances)}",
                    "from_bus": lv_fed[rng.integers(len(lv_fed))],
                    "to_bus": name,
                    "r_ohm": float(rng.uniform(0, 0.003)),
                    "x_ohm": float(rng.uniform(0.0005, 0.004)),
                }
            )
        lv_fed.append(name)
    for _ in range(ties):
        a, b = rng.choice(n_lv, 2, replace=False)
        impedances.append(
            {
                "element": f"Z{len(impedances)}",
                "from_bus": f"L{a}",
                "to_bus": f"L{b}",
                "r_ohm": 0,
                "x_ohm": 0,
            }
        )
    sheets = {"buses": buses, "sources": src, "transformers": transformers, "cables": cables}
    if impedances:
        sheets["impedances"] = impedances
    return sheets
