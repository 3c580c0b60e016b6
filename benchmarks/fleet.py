"""A fleet of feeders: `run_fleet` on the local cores against the same studies one after another
(#17 target: 200 feeders of 5,000 buses on two workers within 0.6 x).

Generates the feeders (benchmarks/generate.py, invented data), then times (1) one process
studying and writing each in turn (`fleet.study_one`, the work each worker does) and (2)
`run_fleet` with two local workers, cluster start and stop included.

    python benchmarks/fleet.py                    # 200 feeders of 5,000 buses
    python benchmarks/fleet.py --feeders 20 --buses 2000
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from generate import generate  # noqa: E402


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--feeders", type=int, default=200)
    parser.add_argument("--buses", type=int, default=5000)
    parser.add_argument("--workers", type=int, default=2)
    args = parser.parse_args()
    from faultcalc.fleet import run_fleet, study_one

    with tempfile.TemporaryDirectory() as folder:
        root = Path(folder)
        feeders = root / "feeders"
        for k in range(args.feeders):
            generate(args.buses, feeders / f"feeder-{k:04d}", seed=k + 1)
        start = time.perf_counter()
        (root / "one").mkdir()
        for k in range(args.feeders):
            row = study_one(
                str(feeders / f"feeder-{k:04d}"), str(root / "one" / f"f{k}.xlsx"), None, False
            )
            assert row["status"] == "ok", row["message"]
        one_by_one = time.perf_counter() - start
        fleet = run_fleet([feeders], root / "fleet", workers=args.workers)
        assert fleet.failed == 0
        print(
            f"{args.feeders} feeders of {args.buses:,} buses: one after another "
            f"{one_by_one:.1f} s; run_fleet on {fleet.workers} workers {fleet.seconds:.1f} s "
            f"({fleet.seconds / one_by_one:.2f} x; target 0.6 x)"
        )


if __name__ == "__main__":
    main()
