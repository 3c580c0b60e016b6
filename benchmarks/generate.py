"""Synthetic networks for the scale benchmarks: invented data, written as CSV input folders.

Radial feeders with laterals: a 13.8 kV substation bus with a utility source, feeders of cables
from it, laterals branching off, every bus at 13.8 kV (cable data per km); motors on a tenth of
the buses. The meshed variant adds loop-closing cables between buses near each other in the
tree, 2 % of the bus count.

    python benchmarks/generate.py 100000 out/radial-100k [--meshed] [--seed 1]
"""

from __future__ import annotations

import argparse
import csv
from pathlib import Path

import numpy as np


def generate(n_buses: int, folder: Path, meshed: bool = False, seed: int = 1) -> Path:
    """Write a network of ``n_buses`` buses into ``folder`` (created)."""
    rng = np.random.default_rng(seed)
    folder.mkdir(parents=True, exist_ok=True)
    n = n_buses
    # A random recursive tree biased to long feeders: parent is a recent bus most of the time.
    child = np.arange(1, n)
    back = np.minimum(child, rng.geometric(0.35, n - 1))
    jump = rng.random(n - 1) < 0.02  # now and then branch from anywhere earlier
    parent = np.where(jump, (rng.random(n - 1) * child).astype(np.int64), child - back)
    names = np.char.add("N", np.arange(n).astype(str))
    with (folder / "study.csv").open("w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["setting", "value"])
        w.writerow(
            [
                "title",
                f"Invented benchmark network, {n} buses" + (", meshed" if meshed else ", radial"),
            ]
        )
        w.writerow(["frequency_hz", 60])
    with (folder / "buses.csv").open("w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["bus", "kv"])
        w.writerows(zip(names.tolist(), [13.8] * n, strict=True))
    with (folder / "sources.csv").open("w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["source", "bus", "sc_mva", "xr", "slg_ka", "slg_xr"])
        w.writerow(["UTILITY", names[0], 500, 12, 18, 10])
    length = rng.uniform(50, 400, n - 1)
    r = rng.uniform(0.1, 0.5, n - 1)
    x = rng.uniform(0.08, 0.15, n - 1)
    frm, to = parent, child
    if meshed:
        k = max(1, int(0.02 * n))
        a = rng.integers(10, n, k)
        b = np.maximum(0, a - rng.integers(2, 12, k))
        frm = np.concatenate([frm, a])
        to = np.concatenate([to, b])
        length = np.concatenate([length, rng.uniform(50, 400, k)])
        r = np.concatenate([r, rng.uniform(0.1, 0.5, k)])
        x = np.concatenate([x, rng.uniform(0.08, 0.15, k)])
    with (folder / "cables.csv").open("w", newline="") as f:
        w = csv.writer(f)
        w.writerow(
            [
                "cable",
                "from_bus",
                "to_bus",
                "length_m",
                "r_ohm_per_km",
                "x_ohm_per_km",
                "r0_ohm_per_km",
                "x0_ohm_per_km",
            ]
        )
        ids = np.char.add("C", np.arange(len(frm)).astype(str))
        w.writerows(
            zip(
                ids.tolist(),
                names[frm].tolist(),
                names[to].tolist(),
                np.round(length, 1).tolist(),
                np.round(r, 4).tolist(),
                np.round(x, 4).tolist(),
                np.round(3 * r, 4).tolist(),
                np.round(3 * x, 4).tolist(),
                strict=True,
            )
        )
    motors = np.flatnonzero(rng.random(n) < 0.1)
    with (folder / "machines.csv").open("w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["machine", "bus", "kind", "kva", "kv", "xd_pct", "xr"])
        for i, bus in enumerate(motors.tolist()):
            w.writerow(
                [
                    f"M{i}",
                    names[bus],
                    "induction_motor",
                    int(rng.choice([200, 500, 1000, 2000])),
                    13.2,
                    16.7,
                    10,
                ]
            )
    return folder


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("buses", type=int)
    parser.add_argument("folder", type=Path)
    parser.add_argument("--meshed", action="store_true")
    parser.add_argument("--seed", type=int, default=1)
    args = parser.parse_args()
    generate(args.buses, args.folder, args.meshed, args.seed)
    print(f"wrote {args.folder}")


if __name__ == "__main__":
    main()
