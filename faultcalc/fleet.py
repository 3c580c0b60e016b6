"""Many studies at once: a folder or a list of inputs, each its own study and outputs, and one
summary table across them (#17 item 5).

Each input (a workbook, or a folder of CSV sheets) is read, studied and written by
:func:`study_one` in a worker process of a Dask cluster: a local one on this machine's cores by
default, or the cluster whose scheduler address is given. A failure of one input (bad input,
an output refused, a worker lost) is its row of the summary; the others go on. Nothing here
computes: each study is :func:`faultcalc.run_study`, each output :func:`faultcalc.write_results`.
"""

from __future__ import annotations

import itertools
import time
import traceback
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from pathlib import Path

# The columns of the summary, one row per input, in the order the inputs were given.
SUMMARY_COLUMNS = (
    "input",  # the input's path as given
    "status",  # ok, or failed
    "buses",  # buses studied (blank when failed)
    "max_ka",  # largest available fault current at any bus, any fault type, any case
    "max_bus",  # where
    "over_rating",  # devices whose duty exceeds their rating in any case
    "warnings",  # warnings of the input and the study
    "results",  # the results workbook written
    "seconds",  # time of this input's read, study and writing, in its worker
    "message",  # why it failed (the located problems), or blank
)
SUMMARY_NAME = "fleet-summary.csv"


RESULTS_SUFFIX = "-results"  # <name>-results.xlsx: never taken for an input in a folder


def inputs_in(paths: Iterable[str | Path], out_dir: str | Path | None = None) -> list[Path]:
    """The inputs named by ``paths``, as absolute paths (a remote cluster's workers need the
    same paths, on a shared file system): a workbook, a folder of CSV sheets (it holds
    ``buses.csv``), or a folder of such inputs (its ``.xlsx`` files and CSV folders, in name
    order; not the results of an earlier run, ``*-results.xlsx``, nor anything in
    ``out_dir``).

    >>> inputs_in([])
    []
    """
    found: list[Path] = []
    for given in paths:
        path = Path(given).resolve()
        if path.is_dir() and not (path / "buses.csv").exists():
            found += sorted(
                p
                for p in path.iterdir()
                if (
                    p.suffix.lower() == ".xlsx"
                    and not p.name.startswith("~$")
                    and not p.stem.endswith(RESULTS_SUFFIX)
                )
                or (p.is_dir() and (p / "buses.csv").exists())
            )
        else:
            found.append(path)
    if out_dir is not None:
        out = Path(out_dir).resolve()
        found = [p for p in found if out != p and out not in p.parents]
    return found


def _neutral(text):
    """Text that a spreadsheet would take for a formula, with the bus CSV's text prefix."""
    from .report.csvout import FORMULA_STARTS, TEXT_PREFIX

    return TEXT_PREFIX + text if isinstance(text, str) and text.startswith(FORMULA_STARTS) else text


def _stems(inputs: list[Path]) -> list[str]:
    """The results name of each input: its file or folder name; where two inputs of a run
    share one (ignoring case), each of them with a short digest of its full path after it,
    so that an input's name does not depend on the order of the inputs."""
    import hashlib

    names = [p.name if p.is_dir() else p.stem for p in inputs]
    folded = [n.lower() for n in names]
    return [
        f"{n}-{hashlib.sha256(str(p).encode()).hexdigest()[:8]}" if folded.count(f) > 1 else n
        for n, f, p in zip(names, folded, inputs, strict=True)
    ]


def study_one(input_path: str, output: str, json_path: str | None, overwrite: bool) -> dict:
    """Read, study and write one input; its summary row (never raises: a failure is a row)."""
    start = time.perf_counter()
    row = dict.fromkeys(SUMMARY_COLUMNS, "")
    row.update(input=input_path, status="failed")
    try:
        from . import ResultFiles, read_system, run_study
        from .errors import InputError, OutputError

        files = ResultFiles(output, json_path, input_path=input_path, overwrite=overwrite)
        system = read_system(input_path)
        result = run_study(system)
        files.write(result)
        top = result.maximum.sort_values("max_ka", ascending=False).iloc[0]
        row.update(
            status="ok",
            buses=len(result.buses),
            max_ka=float(top["max_ka"]),
            max_bus=str(top["bus"]),
            over_rating=len(result.over_rating()),
            warnings=len(result.warnings),
            results=output,
        )
    except (InputError, OutputError) as exc:
        row["message"] = str(exc)
    except Exception as exc:  # noqa: BLE001 - one input's failure must not stop the others
        last = traceback.extract_tb(exc.__traceback__)[-1]
        row["message"] = (
            f"internal error {type(exc).__name__}: {exc} (at {Path(last.filename).name} line "
            f"{last.lineno}); please report it with the input"
        )
    row["seconds"] = round(time.perf_counter() - start, 3)
    return row


@dataclass
class FleetResult:
    """The summary of a fleet run (a pandas DataFrame of SUMMARY_COLUMNS) and where it is."""

    summary: object
    summary_path: Path
    failed: int = 0
    seconds: float = 0.0
    workers: int = 0


def run_fleet(
    paths: Iterable[str | Path],
    out_dir: str | Path,
    *,
    json: bool = False,
    overwrite: bool = False,
    workers: int | None = None,
    scheduler: str | None = None,
    on_done: Callable[[dict], None] | None = None,
    job: Callable[..., dict] = study_one,
) -> FleetResult:
    """Study every input of ``paths`` (see :func:`inputs_in`) into ``out_dir``, in parallel.

    Each input gets ``<out_dir>/<name>-results.xlsx`` (and ``.json`` with ``json``; above
    5,000 buses the summary workbook and its bus CSV, as ``faultcalc study`` writes them), and
    ``<out_dir>/fleet-summary.csv`` one row per input (SUMMARY_COLUMNS). Stopped part way (an
    interrupt), the summary lists what was done and what was not run.

    Parameters
    ----------
    workers : int, optional
        Worker processes of the local Dask cluster (default: one per core).
    scheduler : str, optional
        The address of a running Dask scheduler (``tcp://host:8786``) to run on instead; its
        workers must see the inputs and ``out_dir`` at the same paths.
    on_done : callable, optional
        Called with each input's summary row as it finishes (progress).
    job : callable, optional
        What is run for each input (default :func:`study_one`; the tests give others).

    Raises
    ------
    ValueError
        No input found.
    OutputError
        The summary exists already (without ``overwrite``).
    """
    import os

    import dask
    from dask.distributed import Client, LocalCluster, as_completed

    from .errors import OutputError

    inputs = inputs_in(paths, out_dir)
    if not inputs:
        raise ValueError("no input found: give workbooks, CSV folders or folders of them")
    out = Path(out_dir).resolve()
    summary_path = out / SUMMARY_NAME
    if summary_path.exists() and not overwrite:
        raise OutputError(
            f"{summary_path} exists already: choose another folder, or replace it with --overwrite"
        )
    out.mkdir(parents=True, exist_ok=True)
    jobs = [
        (
            str(path),
            str(out / f"{stem}{RESULTS_SUFFIX}.xlsx"),
            str(out / f"{stem}{RESULTS_SUFFIX}.json") if json else None,
            overwrite,
        )
        for path, stem in zip(inputs, _stems(inputs), strict=True)
    ]
    start = time.perf_counter()
    rows: dict[int, dict] = {}
    n_workers = 0
    # A task is never retried: a study that killed its worker would kill the next one, and a
    # finished study whose result sat on a lost worker would run again into its own files.
    # The workers' sampling profiler (every 10 ms, for a dashboard we do not start) takes
    # the interpreter from the study it samples: off (20 feeders of 5,000 buses on two
    # local workers: 65.7 s with it, 63.9 s without).
    settings = {
        "distributed.scheduler.allowed-failures": 0,
        "distributed.worker.profile.enabled": False,
    }
    with dask.config.set(settings):
        if scheduler:
            client, cluster = Client(scheduler), None
        else:
            cluster = LocalCluster(
                n_workers=workers or os.cpu_count() or 1,
                threads_per_worker=1,
                processes=True,
                dashboard_address=None,
            )
            client = Client(cluster)
        try:
            n_workers = len(client.scheduler_info()["workers"])
            # as many inputs in flight as there are workers, the next one sent as one is done:
            # each worker holds only the task it runs, so a worker lost takes no other input
            # with it, and each result is fetched as soon as it is done and let go of
            index: dict[str, int] = {}
            pending = as_completed(with_results=True, raise_errors=False)

            def send(k: int) -> None:
                future = client.submit(job, *jobs[k], pure=False)
                index[future.key] = k
                pending.add(future)

            queue = iter(range(len(jobs)))
            for k in itertools.islice(queue, max(1, n_workers)):
                send(k)
            for future, row in pending:
                k = index[future.key]
                nxt = next(queue, None)
                if nxt is not None:
                    send(nxt)
                if not isinstance(row, dict):  # an exception: its worker was lost
                    error = row[1] if isinstance(row, tuple) and len(row) > 1 else row
                    row = dict.fromkeys(SUMMARY_COLUMNS, "")
                    row.update(
                        input=jobs[k][0],
                        status="failed",
                        message=f"its worker was lost ({type(error).__name__}: {error})",
                    )
                future.release()
                rows[k] = row
                if on_done is not None:
                    on_done(row)
        finally:
            client.close()
            if cluster is not None:
                cluster.close()
            if len(rows) < len(jobs):  # stopped part way: the summary says what was done
                from .report.files import remove_leftovers
                from .report.outputs import bus_csv_path

                for k, args in enumerate(jobs):
                    if k in rows:
                        continue
                    rows[k] = dict(
                        dict.fromkeys(SUMMARY_COLUMNS, ""), input=args[0], status="not run"
                    )
                    # a worker stopped with the cluster while it wrote leaves its temporaries
                    targets = [args[1], bus_csv_path(args[1])] + ([args[2]] if args[2] else [])
                    remove_leftovers(targets)
                _write_summary(rows, summary_path)
    table = _write_summary(rows, summary_path)
    return FleetResult(
        table,
        summary_path,
        failed=int((table["status"] != "ok").sum()),
        seconds=time.perf_counter() - start,
        workers=n_workers,
    )


def _write_summary(rows: dict[int, dict], summary_path: Path):
    """The summary table of ``rows`` (in input order), written to ``summary_path`` (text that
    a spreadsheet could take for a formula neutralised)."""
    import pandas as pd

    from .report.files import staged

    table = pd.DataFrame([rows[k] for k in sorted(rows)], columns=list(SUMMARY_COLUMNS))
    written = table.copy()
    for column in ("input", "max_bus", "results", "message"):
        written[column] = [_neutral(v) for v in written[column]]
    with staged(summary_path) as (temp,):
        written.to_csv(temp, index=False)
    return table
