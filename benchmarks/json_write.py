"""The cost of `--json`: the same study end to end with and without it (#17 target: 1.3 x).

For each size a radial network is generated (benchmarks/generate.py, invented data) and
`faultcalc study FOLDER -o results.xlsx` is run in a fresh process, then the same with `--json
results.json`; each the best of two runs. Printed: seconds without and with, their ratio, the
JSON's size and the time of the JSON writer alone in-process (best of two).

    python benchmarks/json_write.py                  # 100,000 and 1,000,000 buses
    python benchmarks/json_write.py --sizes 100000
"""

from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from generate import generate  # noqa: E402

WRITER = r"""
import sys, time
from pathlib import Path
from faultcalc import read_system, run_study
from faultcalc.report.jsonout import write_json_to
result = run_study(read_system(sys.argv[1]))
best = None
for _ in range(2):
    start = time.perf_counter()
    write_json_to(result, Path(sys.argv[2]))
    took = time.perf_counter() - start
    best = took if best is None else min(best, took)
print(best)
"""


def _run(args: list[str]) -> float:
    best = None
    for _ in range(2):
        start = time.perf_counter()
        subprocess.run(args, check=True, capture_output=True)
        took = time.perf_counter() - start
        best = took if best is None else min(best, took)
    return best


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", type=int, nargs="+", default=[100_000, 1_000_000])
    sizes = parser.parse_args().sizes
    exe = [sys.executable, "-m", "faultcalc.cli"]
    print(f"{'buses':>10} {'without s':>10} {'with s':>8} {'ratio':>6} {'MB':>7} {'writer s':>9}")
    with tempfile.TemporaryDirectory() as folder:
        out = Path(folder)
        for n in sizes:
            net = generate(n, out / f"radial-{n}")
            plain = _run([*exe, "study", str(net), "-o", str(out / f"a{n}.xlsx"), "--overwrite"])
            json_path = out / f"b{n}.json"
            with_json = _run(
                [
                    *exe,
                    "study",
                    str(net),
                    "-o",
                    str(out / f"b{n}.xlsx"),
                    "--json",
                    str(json_path),
                    "--overwrite",
                ]
            )
            size_mb = json_path.stat().st_size / 1e6
            writer = subprocess.run(
                [sys.executable, "-c", WRITER, str(net), str(out / f"c{n}.json")],
                check=True,
                capture_output=True,
                text=True,
            )
            print(
                f"{n:>10,} {plain:>10.1f} {with_json:>8.1f} {with_json / plain:>6.2f} "
                f"{size_mb:>7.0f} {float(writer.stdout.strip()):>9.2f}",
                flush=True,
            )


if __name__ == "__main__":
    main()
