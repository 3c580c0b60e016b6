"""Words and small rules every written output shares (the workbook, the report): written once."""

from __future__ import annotations

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
    kv = dict(zip(result.buses.bus, result.buses.kv, strict=True))
    c = result.contributions
    return [
        kv.get(own if kind in AT_OWN_BUS else faulted)
        for own, kind, faulted in zip(c.from_bus, c.kind, c.faulted_bus, strict=True)
    ]


def contributions_cut_note(result, kept: int, rows: int, every_row_in: str | None, here: str):
    """What a cut contributions table (StudyResult.contributions_at_most) left out, and where
    every row is: ``every_row_in`` (a file name), or None when no file holds them."""
    c = result.contributions
    faulted = c.faulted_bus.nunique()
    where = (
        f"every one of the {len(c):,} rows is in {every_row_in} (its last column, "
        "input_sha256, is the input's SHA-256)"
        if every_row_in
        else "write the results with faultcalc study (or write_results) to have every row in "
        "a CSV file beside the workbook"
    )
    return (
        f"Contributions at {kept:,} of the {faulted:,} faulted buses ({rows:,} rows): those with "
        f"the largest fault currents, each with all its rows, as many as {here} holds; {where}."
    )
