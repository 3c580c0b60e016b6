"""Words and small rules every written output shares (the workbook, the report): written once."""

from __future__ import annotations

import pandas as pd

FAULT_WORDS = {
    "3ph": "3-phase",
    "slg": "line-to-ground",
    "ll": "line-to-line",
    "llg": "double line-to-ground",
}

# Contributions whose currents are at the voltage of their own bus (contributions.py: the
# base current of the bus a source or machine is connected to); a branch's are at the faulted
# bus's (the base current of the faulted bus).
AT_OWN_BUS = frozenset(
    {
        "source",
        "generator",
        "induction_motor",
        "synchronous_motor",
        "grounding_transformer",
        "inverter",
    }
)


def case_words(case: str) -> str:
    """'the base case' or "case 'NAME'", for a sentence."""
    return "the base case" if case == "base" else f"case '{case}'"


def contribution_kv(result) -> list[float | None]:
    """Per row of ``result.contributions``: the nominal kV its currents are expressed at (None
    where the bus is not among the result's buses, as in a large study's summary)."""
    kv = result.bus_kv_all or dict(zip(result.buses.bus, result.buses.kv, strict=True))
    c = result.contributions
    return [
        kv.get(own if kind in AT_OWN_BUS else faulted)
        for own, kind, faulted in zip(c.from_bus, c.kind, c.faulted_bus, strict=True)
    ]


def contributions_cut_note(
    whole: pd.DataFrame,
    kept: int,
    rows: int,
    limit: int,
    every_row_in: str | None,
    csv: bool = True,
) -> str:
    """What a cut of the contributions table ``whole`` (StudyResult.contributions_at_most
    with ``limit`` rows) left out, and where every row is: ``every_row_in``, a CSV file's
    name when ``csv``, else a place in words; None: in no file."""
    faulted = whole.faulted_bus.nunique()
    if every_row_in is None:
        where = (
            "write the results with faultcalc study (or write_results) to have every row in "
            "a CSV file beside the workbook"
        )
    else:
        where = f"every one of the {len(whole):,} rows is in {every_row_in}" + (
            " (its first row's input_sha256 is the input's SHA-256)" if csv else ""
        )
    return (
        f"Contributions at {kept:,} of the {faulted:,} faulted buses ({rows:,} rows): those with "
        f"the largest fault currents, each with all its rows, as many as fit in {limit:,} rows "
        f"(the first always); {where}."
    )
