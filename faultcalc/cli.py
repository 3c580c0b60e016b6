"""Command line: a thin layer over the public API (``faultcalc/__init__.py``); no calculation
and no file rule here.

Start-up is kept short: only click and the light modules (version, errors, choices) are
imported to build the commands, and each command imports the rest of the API when it runs,
so ``faultcalc --help`` does not wait for numpy, pandas, scipy, openpyxl or pyarrow.
"""

from __future__ import annotations

import os
import signal
import sys
from pathlib import Path

import click

from . import (
    CABLE_TOLERANCE_PCT,
    FAULT_TYPES,
    SAMPLES,
    InputError,
    OutputError,
    TerminalProgress,
    __version__,
    sample_path,
)

EXIT_BAD_INPUT = 2
EXIT_FAILURE = 1
EXIT_OVER_RATING = 3
EXIT_SOME_FAILED = 4  # fleet: some inputs failed, the others written


def _fail(message: str, status: int) -> None:
    click.echo(message, err=True)
    sys.exit(status)


class Interrupted(BaseException):
    """SIGTERM or SIGHUP arrived: unwind like Ctrl-C, so that every temporary file goes.

    A BaseException, so that no ``except Exception`` on the way turns it into another error.
    """

    def __init__(self, signum: int):
        super().__init__(signum)
        self.signum = signum


STOP_SIGNALS = tuple(getattr(signal, n) for n in ("SIGTERM", "SIGHUP") if hasattr(signal, n))
_previous_handlers: dict[int, object] = {}


_placed: list[bool] = []  # set once the outputs are in place: a stop then comes too late


def _stop(signum, frame) -> None:
    if _placed:  # the outputs are complete and in place: finish as done
        return
    for s in STOP_SIGNALS:  # a second signal must not cut the clean-up short
        if s in _previous_handlers:
            signal.signal(s, signal.SIG_IGN)
    raise Interrupted(signum)


def _mark_placed() -> None:
    _placed.append(True)


def _arm() -> None:
    """Turn SIGTERM and SIGHUP into Interrupted where they would kill the process outright
    (an ignored signal, as under nohup, stays ignored; another handler stays)."""
    for s in STOP_SIGNALS:
        try:
            if signal.getsignal(s) == signal.SIG_DFL:
                _previous_handlers[s] = signal.signal(s, _stop)
        except ValueError:  # not the main thread: signals stay as they are
            return


def _disarm() -> None:
    """Give the signals back their earlier handling (called once the outputs are in place)."""
    while _previous_handlers:
        s, handler = _previous_handlers.popitem()
        signal.signal(s, handler)


def _guarded(action):
    """Run ``action``; bad input exits 2 listing every problem, other failures exit 1, and
    SIGTERM or SIGHUP exits 128 + its number, leaving no output or temporary file."""
    _placed.clear()
    _arm()
    try:
        return action()
    except Interrupted as exc:
        _disarm()
        done = "the outputs had been written" if _placed else "nothing was written"
        _fail(f"stopped by {signal.Signals(exc.signum).name}; {done}", 128 + exc.signum)
    except click.ClickException:
        raise
    except InputError as exc:
        lines = [f"warning: {w}" for w in getattr(exc, "warnings", ())]
        lines += [f"error: {len(exc.problems)} problem(s) in the input; nothing was written:"]
        lines += [f"  - {p}" for p in exc.problems]
        _fail("\n".join(lines), EXIT_BAD_INPUT)
    except OutputError as exc:
        _fail(f"error: {exc}", EXIT_FAILURE)
    except OSError as exc:  # a locked, read-only or full target
        name = f" {exc.filename}" if getattr(exc, "filename", None) else ""
        _fail(
            f"error: cannot write{name}: {exc.strerror or exc}; nothing was written", EXIT_FAILURE
        )
    except Exception as exc:  # noqa: BLE001 - a tool for engineers never shows a bare traceback
        if os.environ.get("FAULTCALC_DEBUG"):
            import traceback

            traceback.print_exc()
        _fail(
            f"internal error: {type(exc).__name__}: {exc}\n"
            "Nothing was written. Set FAULTCALC_DEBUG=1 to see the details, and please report "
            "it with the input.",
            EXIT_FAILURE,
        )
    finally:
        _disarm()


def _summary(result) -> str:
    b = result.buses
    worst = result.largest_three_phase()
    text = (
        f"{len(b)} buses studied; highest three-phase fault current {worst.i3ph_ka:.2f} kA "
        f"at {worst.bus} ({worst.kv:g} kV). {len(result.warnings)} warning(s)."
    )
    if result.maximum is not None and len(result.maximum):
        top = result.maximum.loc[result.maximum.max_ka.idxmax()]
        words = {"3ph": "three-phase", "slg": "line-to-ground", "ll": "line-to-line"}
        fault = words.get(top.max_fault, "double line-to-ground")
        case = "the base case" if top.max_case == "base" else f"case '{top.max_case}'"
        text += (
            f"\nMaximum available: {top.max_ka:.2f} kA at {top.bus} ({fault} fault, {case}); "
            "every bus's on the 'Summary' sheet."
        )
    rated = 0 if result.duty is None else len(result.duty)
    if not rated:
        return text
    over = result.over_rating()
    where = "the base case or any case" if result.cases else "the study"
    near = len(result.near_rating())
    near_text = f"; {near} within 10 % of it" if near else ""
    if over.empty:
        return text + f"\nDuty: no device of {rated} exceeds its rating in {where}{near_text}."
    top = over.iloc[0]
    case = "the base case" if top.duty_case == "base" else f"case '{top.duty_case}'"
    fault = "three-phase" if top.duty_fault == "3ph" else "line-to-ground"
    return text + (
        f"\nDuty: {len(over)} device(s) of {rated} exceed their rating in {where}; the worst: "
        f"{top.bus}, {top.duty_pct:.1f} % of its rating in {case} ({fault} fault){near_text}. "
        "See the 'Equipment duty' sheet."
    )


REPORT = click.option(
    "--report",
    "report_path",
    type=click.Path(path_type=Path),
    metavar="REPORT.pdf",
    help="Also write the study report (PDF): title page, cautions, basis, the one-line, the "
    "tables and the service labels, for print and review.",
)

OVERWRITE = click.option(
    "--overwrite", is_flag=True, help="Replace output files that exist already."
)


def _run(
    input_path: Path,
    output: Path,
    json_path: Path | None,
    contributions: str | None = None,
    overwrite: bool = False,
    report_path: Path | None = None,
):
    """Study and write; returns the StudyResult (after every output is written)."""
    from . import ResultFiles, contribution_bus_names, read_system, run_study

    if report_path is not None and report_path.suffix.lower() != ".pdf":
        raise click.BadParameter(
            f"give the report a file name ending in .pdf (got {report_path.name!r})",
            param_hint="--report",
        )
    files = ResultFiles(
        output,
        json_path,
        report_path=report_path,
        input_path=input_path,
        overwrite=overwrite,
        on_placed=_mark_placed,
    )
    bar = TerminalProgress()
    system = read_system(input_path, progress=bar)
    if contributions is not None:
        try:
            wanted = contribution_bus_names(system, contributions)
        except ValueError as exc:
            raise click.BadParameter(
                f"{exc} (in {input_path.name})", param_hint="--contributions"
            ) from None
        if not wanted:
            raise click.BadParameter(
                "give bus names separated by commas, or all", param_hint="--contributions"
            )
    result = run_study(system, contributions=contributions, progress=bar)
    written = files.write(result, system=system, progress=bar)
    _disarm()
    for removed in written.removed_files:
        why = (
            "an earlier, larger study"
            if removed == written.removed
            else "an earlier study with more contribution rows"
        )
        click.echo(f"removed {removed.name}, left by {why}", err=True)
    for w in result.warnings:
        click.echo(f"warning: {w}", err=True)
    click.echo(_summary(result))
    click.echo(
        f"results workbook: {output.resolve()}"
        + (f" (a summary: more than {written.big_above_buses:,} buses)" if written.summary else "")
    )
    if written.summary:
        click.echo(f"bus results (every bus): {written.bus_csv.resolve()}")
    if written.contributions_csv is not None:
        click.echo(
            f"contributions (every row; the workbook holds the largest): "
            f"{written.contributions_csv.resolve()}"
        )
    if json_path:
        click.echo(f"results JSON: {json_path.resolve()}")
    if report_path:
        click.echo(f"study report: {report_path.resolve()}")
    click.echo("Caution: for review by a qualified engineer; see the 'Basis and cautions' sheet.")
    return result


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, "--version", prog_name="faultcalc")
def main() -> None:
    """Available short-circuit current and Thevenin impedance at every bus of a one-line.

    \b
    Start with a blank input workbook, fill it, then study it:
      faultcalc template plant.xlsx
      faultcalc study plant.xlsx -o plant-results.xlsx --json plant-results.json
    """


@main.command()
@click.argument("input_path", metavar="INPUT", type=click.Path(path_type=Path))
@click.option(
    "-o",
    "--output",
    required=True,
    type=click.Path(path_type=Path),
    metavar="RESULTS.xlsx",
    help="Results workbook to write.",
)
@click.option(
    "--json",
    "json_path",
    type=click.Path(path_type=Path),
    metavar="RESULTS.json",
    help="Also write the results as JSON.",
)
@REPORT
@click.option(
    "--contributions",
    metavar="BUS[,BUS...]|all",
    help="Add the current from every source, machine and branch for three-phase and "
    "line-to-ground faults at these buses (or all).",
)
@click.option(
    "--fail-on-overduty",
    is_flag=True,
    help="Exit with status 3 when the duty of any device exceeds its rating in the base case "
    "or any case (the outputs are written all the same).",
)
@OVERWRITE
def study(
    input_path: Path,
    output: Path,
    json_path: Path | None,
    report_path: Path | None,
    contributions: str | None,
    fail_on_overduty: bool,
    overwrite: bool,
) -> None:
    """Study INPUT (an .xlsx workbook or a folder of <sheet>.csv files).

    \b
    Example:
      faultcalc study plant.xlsx -o plant-results.xlsx --json plant-results.json
      faultcalc study plant.xlsx -o plant-results.xlsx --report plant-report.pdf
      faultcalc study plant.xlsx -o plant-results.xlsx --contributions SWBD-1,MCC-1
      faultcalc study plant.xlsx -o plant-results.xlsx --fail-on-overduty

    \b
    Exit status: 0 done; 1 failure; 2 bad input (every problem listed, nothing
    written); 3 (only with --fail-on-overduty) a device's duty exceeds its rating
    in the base case or a case, every output written; 143 or 129 stopped by
    SIGTERM or SIGHUP (nothing written).
    """
    result = _guarded(
        lambda: _run(input_path, output, json_path, contributions, overwrite, report_path)
    )
    if fail_on_overduty and not result.over_rating().empty:
        sys.exit(EXIT_OVER_RATING)


@main.command()
@click.argument(
    "inputs", metavar="INPUT...", nargs=-1, required=True, type=click.Path(path_type=Path)
)
@click.option(
    "-d",
    "--out-dir",
    required=True,
    type=click.Path(path_type=Path, file_okay=False),
    metavar="FOLDER",
    help="Folder for every input's results and the summary (made if missing).",
)
@click.option("--json", "json_out", is_flag=True, help="Also write each input's results as JSON.")
@click.option(
    "--workers",
    type=click.IntRange(min=1),
    metavar="N",
    help="Worker processes on this machine (default: one per core).",
)
@click.option(
    "--scheduler",
    metavar="ADDRESS",
    help="Run on the Dask cluster of this scheduler (tcp://host:8786) instead of this machine.",
)
@OVERWRITE
def fleet(
    inputs: tuple[Path, ...],
    out_dir: Path,
    json_out: bool,
    workers: int | None,
    scheduler: str | None,
    overwrite: bool,
) -> None:
    """Study many inputs at once: workbooks, CSV folders, or folders of them.

    Each input is its own study, written to FOLDER as <name>-results.xlsx (and .json); a
    failure of one input is said and the others go on. FOLDER/fleet-summary.csv holds one
    row per input: status, buses, the maximum available current and where, devices over
    their rating, the results file, and why an input failed.

    \b
    Example:
      faultcalc fleet feeders/ -d feeder-results
      faultcalc fleet a.xlsx b.xlsx --workers 2 -d results
      faultcalc fleet feeders/ -d results --scheduler tcp://10.0.0.5:8786

    \b
    Exit status: 0 every input studied; 4 some inputs failed (the others written);
    1 failure of the run itself.
    """

    def action():
        from . import run_fleet

        def done(row):
            if row["status"] == "ok":
                click.echo(
                    f"ok      {row['input']}: {row['buses']} buses, maximum "
                    f"{row['max_ka']:.2f} kA at {row['max_bus']}"
                )
            else:
                first = str(row["message"]).splitlines()[:2]
                click.echo(f"FAILED  {row['input']}: {' '.join(first)}")

        try:
            return run_fleet(
                inputs,
                out_dir,
                json=json_out,
                overwrite=overwrite,
                workers=workers,
                scheduler=scheduler,
                on_done=done,
            )
        except ValueError as exc:
            raise click.BadParameter(str(exc), param_hint="INPUT") from None
        except Interrupted as exc:  # the inputs finished are written: say so
            _disarm()
            _fail(
                f"stopped by {signal.Signals(exc.signum).name}; the inputs finished before it "
                f"are written, and {out_dir / 'fleet-summary.csv'} lists what was and was not "
                "run",
                128 + exc.signum,
            )

    result = _guarded(action)
    click.echo(
        f"{len(result.summary)} inputs, {result.failed} failed, on {result.workers} worker(s) "
        f"in {result.seconds:.1f} s; summary: {result.summary_path.resolve()}"
    )
    click.echo("Caution: for review by a qualified engineer; see each results workbook.")
    if result.failed:
        sys.exit(EXIT_SOME_FAILED)


@main.command("check-cables")
@click.argument("input_path", metavar="INPUT", type=click.Path(path_type=Path))
@click.option(
    "--json",
    "json_path",
    type=click.Path(path_type=Path),
    metavar="PATH",
    help="Also write the findings as JSON.",
)
@click.option(
    "--tolerance",
    "tolerance_pct",
    type=click.FloatRange(0.1, 100.0),
    default=CABLE_TOLERANCE_PCT,
    show_default=True,
    metavar="PCT",
    help="Flag typed R or X further than this from the table row, percent.",
)
@OVERWRITE
def check_cables_command(
    input_path: Path, json_path: Path | None, tolerance_pct: float, overwrite: bool
) -> None:
    """Compare the cable R and X typed in INPUT with NFPA 70 Table 9 / IEC 60228 rows.

    Each cable whose R and X were typed is compared with the table row of its size, material
    and raceway; one beyond the tolerance is flagged with the likely mistake (per-km typed as
    per-1000-ft, copper against aluminium, parallel sets, magnetic raceway, impossible for the
    area). Exit status 0 whether or not anything is flagged; 2 on bad input.

    \b
    Example:
      faultcalc check-cables plant.xlsx --json cable-check.json --tolerance 15
    """

    def action():
        from . import OutputFiles, check_cables, read_system, write_cable_checks

        files = None
        if json_path is not None:
            files = OutputFiles(
                json_path, input_path=input_path, overwrite=overwrite, on_placed=_mark_placed
            )
        system = read_system(input_path)
        checks = check_cables(system, tolerance_pct)
        if files is not None:
            write_cable_checks(checks, files, system=system, tolerance_pct=tolerance_pct)
            _disarm()
        flagged = [c for c in checks if c.flagged]
        for c in checks:
            mark = (
                "FLAG" if c.flagged else ("ok  " if c.table_r_ohm_per_kft is not None else "n/a ")
            )
            click.echo(f"{mark} {c.cable} (cables row {c.row}): {c.reason}")
        click.echo(
            f"{len(checks)} cable(s) with typed R and X checked at {tolerance_pct:g} %; "
            f"{len(flagged)} flagged."
        )
        if json_path is not None:
            click.echo(f"findings JSON: {json_path.resolve()}")

    _guarded(action)


@main.command()
@click.argument("input_path", metavar="INPUT", type=click.Path(path_type=Path))
@click.option("--bus", required=True, help="The faulted bus.")
@click.option(
    "--fault",
    type=click.Choice(FAULT_TYPES),
    required=True,
    help="3ph, slg (a to ground), ll (b to c) or llg (b and c to ground).",
)
@click.option(
    "-o",
    "--output",
    required=True,
    type=click.Path(path_type=Path),
    metavar="FILE.cir",
    help="Netlist to write.",
)
@OVERWRITE
def netlist(input_path: Path, bus: str, fault: str, output: Path, overwrite: bool) -> None:
    """Write a phase-domain SPICE netlist of INPUT with a fault at BUS, for a reviewer.

    Every bus becomes three phase nodes and a return node, every transformer three ideal
    single-phase transformers connected as its windings, every source a three-phase voltage
    source behind its sequence impedances. Comments map every node back to its bus. Run it
    with any SPICE simulator (ngspice -b FILE.cir prints the fault currents vf_*).

    \b
    Example:
      faultcalc netlist plant.xlsx --bus SWBD-1 --fault slg -o swbd1-slg.cir
    """

    def action():
        from . import OutputFiles, read_system, write_netlist

        files = OutputFiles(
            output, input_path=input_path, overwrite=overwrite, on_placed=_mark_placed
        )
        system = read_system(input_path)
        if bus not in set(system.buses.column("bus")):
            raise click.BadParameter(f"no bus named {bus} in {input_path.name}", param_hint="--bus")
        text = write_netlist(system, bus, fault, files)
        _disarm()
        click.echo(
            f"netlist: {output.resolve()} ({text.count(chr(10))} lines); run it with: "
            f"ngspice -b {output}"
        )

    _guarded(action)


@main.command()
@click.argument("input_path", metavar="INPUT", type=click.Path(path_type=Path))
@click.option(
    "-o",
    "--output",
    required=True,
    type=click.Path(path_type=Path),
    metavar="FILE",
    help="Diagram to write: .svg, .pdf or .png.",
)
@OVERWRITE
def diagram(input_path: Path, output: Path, overwrite: bool) -> None:
    """Draw the one-line diagram of INPUT, annotated with its study.

    Sources at the top, each bus under the bus that feeds it, with its kV, the largest
    three-phase and line-to-ground currents over the base case and the cases (kA) and its X/R;
    the branch that feeds it beside its drop; machines below their bus; a device over or near
    its rating in any case marked; open ties drawn open. Text stays text in the SVG and the
    PDF. Up to about 150 buses on one 44 x 33 in sheet; a larger system over several, with
    references at both ends (one PDF, or OUTPUT-p2.svg ... beside OUTPUT); above 3,000 buses
    only the buses above 1 kV and the service equipment.

    \b
    Example:
      faultcalc diagram plant.xlsx -o plant-one-line.pdf
    """

    def action():
        from . import OutputFiles, read_system, run_study, write_diagram

        if output.suffix.lower() not in (".svg", ".pdf", ".png"):
            raise click.BadParameter(
                f"{output.name}: a diagram is written as .svg, .pdf or .png", param_hint="-o"
            )
        files = OutputFiles(
            output, input_path=input_path, overwrite=overwrite, on_placed=_mark_placed
        )
        system = read_system(input_path)
        pages = write_diagram(system, run_study(system), files)
        _disarm()
        for note in pages[0].notes:
            click.echo(f"note: {note}")
        width = max(d.width for d in pages) / 72
        height = max(d.height for d in pages) / 72
        where = f"{len(pages)} pages of up to" if len(pages) > 1 else "one page of"
        click.echo(
            f"diagram: {output.resolve()} ({len(system.buses)} buses, {where} "
            f"{width:.1f} x {height:.1f} in)"
        )
        if len(pages) > 1 and output.suffix.lower() != ".pdf":
            click.echo(
                f"  pages 2 to {len(pages)} beside it as {output.stem}-p2{output.suffix}, ..."
            )

    _guarded(action)


@main.command()
@click.argument("path", metavar="PATH.xlsx", type=click.Path(path_type=Path))
@OVERWRITE
def template(path: Path, overwrite: bool) -> None:
    """Write a blank input workbook with every sheet and column, help and choice lists.

    \b
    Example:
      faultcalc template plant.xlsx
    """

    def action():
        from . import write_template

        write_template(path, overwrite=overwrite)
        _disarm()
        click.echo(f"blank input workbook: {path.resolve()}")
        click.echo(
            "Fill it (hover over a header for its help), then: "
            f"faultcalc study {path} -o results.xlsx"
        )

    _guarded(action)


@main.command()
@click.option(
    "-o",
    "--output",
    type=click.Path(path_type=Path),
    default=Path("faultcalc-demo-results.xlsx"),
    show_default=True,
    help="Results workbook to write.",
)
@click.option(
    "--sample",
    type=click.Choice(SAMPLES),
    default=SAMPLES[0],
    show_default=True,
    help="Which bundled sample system (invented scenarios) to study.",
)
@REPORT
@OVERWRITE
def demo(output: Path, sample: str, report_path: Path | None, overwrite: bool) -> None:
    """Study a bundled sample system (an invented scenario) and write its results.

    \b
    Example:
      faultcalc demo -o demo-results.xlsx --report demo-report.pdf
    """
    click.echo(
        f"Sample system '{sample}' (invented for demonstration; not a real site): "
        f"{sample_path(sample)}"
    )
    _guarded(lambda: _run(sample_path(sample), output, None, None, overwrite, report_path))


if __name__ == "__main__":  # pragma: no cover
    main()
