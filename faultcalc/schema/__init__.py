"""The one table of every input sheet and column.

The reader, the blank template, the README's input reference and the error messages are all
generated from this table, so they cannot drift apart. Column names carry their unit.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

# Column kinds understood by the reader.
ID = "id"  # unique name of the row's element within the workbook
BUS_REF = "bus"  # name of a bus on the buses sheet
TEXT = "text"
NUMBER = "number"
INTEGER = "integer"
CHOICE = "choice"  # one of `choices`, case-insensitive

# Bounds on numbers.
POSITIVE = ">0"
NON_NEGATIVE = ">=0"
AT_LEAST_ONE = ">=1"
AT_LEAST_ONE_NUMBER = ">=1.0"

BOUND_TEXT = {
    POSITIVE: "a number greater than 0",
    NON_NEGATIVE: "a number of 0 or more",
    AT_LEAST_ONE: "a whole number of 1 or more",
    AT_LEAST_ONE_NUMBER: "a number of 1 or more",
}


@dataclass(frozen=True)
class Column:
    name: str
    kind: str
    help: str
    unit: str = ""
    required: bool = False
    default: Any = None
    choices: tuple[str, ...] = ()
    bound: str = ""
    default_from: str = ""  # blank takes the value of this other column of the row

    def expected(self) -> str:
        """What a valid cell of this column holds, in words, for error messages."""
        if self.kind == CHOICE:
            return "one of " + ", ".join(self.choices)
        if self.kind in (NUMBER, INTEGER):
            text = BOUND_TEXT.get(
                self.bound, "a whole number" if self.kind == INTEGER else "a number"
            )
            return text + (f" in {self.unit}" if self.unit else "")
        if self.kind == BUS_REF:
            return "the name of a bus on the 'buses' sheet"
        if self.kind == ID:
            return "a name, unique in the workbook"
        return "text"


@dataclass(frozen=True)
class Alternative:
    """Exactly one of several column groups must be filled (all columns of that group)."""

    groups: tuple[tuple[str, ...], ...]
    required: bool = True

    def describe(self) -> str:
        return " or ".join(" + ".join(g) for g in self.groups)


@dataclass(frozen=True)
class Sheet:
    name: str
    help: str
    columns: tuple[Column, ...]
    required: bool = False
    alternatives: tuple[Alternative, ...] = field(default=())

    def column(self, name: str) -> Column:
        for c in self.columns:
            if c.name == name:
                return c
        raise KeyError(name)

    @property
    def names(self) -> tuple[str, ...]:
        return tuple(c.name for c in self.columns)


def _in_service(what: str, help_text: str = "") -> Column:
    """The in_service column of a sheet (``help_text`` replaces the usual help)."""
    return Column(
        "in_service",
        CHOICE,
        help_text
        or f"no: {what} is out of service in the base case (checked like any row, then left out "
        "of the study; a case can put it in service). Blank: yes.",
        default="yes",
        choices=("yes", "no"),
    )


WINDINGS = ("D", "Y", "YN")

# Settings on the `study` sheet (columns `setting`, `value`), described like columns.
SETTINGS: tuple[Column, ...] = (
    Column("title", TEXT, "Title of the study, printed on every report.", default=""),
    Column(
        "base_mva",
        NUMBER,
        "Common MVA base of the per-unit system.",
        unit="MVA",
        default=100.0,
        bound=POSITIVE,
    ),
    Column(
        "frequency_hz", CHOICE, "System frequency.", unit="Hz", default="60", choices=("50", "60")
    ),
    Column(
        "prefault_pu",
        NUMBER,
        "Prefault voltage behind every Thevenin impedance, per-unit of each bus's nominal kV.",
        unit="pu",
        default=1.0,
        bound=POSITIVE,
    ),
    Column(
        "prefault_voltage",
        CHOICE,
        "The voltage behind each bus's Thevenin impedance: nominal (prefault_pu x the bus's "
        "nominal kV) or open_circuit (the no-load voltage of the network with every source at "
        "prefault_pu behind its impedance: differs from nominal behind off-nominal transformer "
        "ratios). Methods thevenin and ieee.",
        default="nominal",
        choices=("nominal", "open_circuit"),
    ),
    Column(
        "conductor_temp_c",
        NUMBER,
        "Conductor temperature for cable resistances taken from the tables (75 C as printed). "
        "Lower temperature, lower R, higher fault current: use 20 or 25 for maximum duty. "
        "Resistances typed by the user are used as typed.",
        unit="C",
        default=75.0,
    ),
    Column(
        "method",
        CHOICE,
        "Calculation method: thevenin (prefault voltage behind the Thevenin impedance, machines "
        "at subtransient), iec60909 (IEC 60909-0 maximum and minimum currents: voltage factor "
        "c, transformer correction K_T, conductor temperatures), ieee (IEEE first-cycle: machine "
        "multipliers of IEEE Std 551-2006 Table 9-1, X/R from separate R and X networks).",
        default="thevenin",
        choices=("thevenin", "iec60909", "ieee"),
    ),
    Column(
        "xr_method",
        CHOICE,
        "X/R at the fault for asymmetry and duty: complex (X1/R1 of the complex Thevenin "
        "impedance) or separate (X from an X-only and R from an R-only reduction, the IEEE/ANSI "
        "practice). Blank: separate with method ieee, complex otherwise.",
        choices=("complex", "separate"),
    ),
    Column(
        "lv_tolerance_pct",
        CHOICE,
        "Method iec60909: voltage tolerance of low-voltage systems, which sets cmax (6: 1.05, "
        "10: 1.10; IEC 60909-0 Table 1).",
        unit="%",
        default="10",
        choices=("6", "10"),
    ),
    Column(
        "end_of_fault_temp_c",
        NUMBER,
        "Method iec60909: conductor temperature at the end of the fault for minimum currents "
        "(e.g. 160 for PVC, 250 for XLPE insulation).",
        unit="C",
        default=160.0,
    ),
    Column(
        "min_time_delay_s",
        CHOICE,
        "Method iec60909: minimum time delay t_min (the breaker's contact parting) for the "
        "breaking current Ib and the DC component (IEC 60909-0 clause 9.1.1: 0.02, 0.05, 0.1, "
        "0.25 s or more). Blank: 0.02, the largest Ib.",
        unit="s",
        default="0.02",
        choices=("0.02", "0.05", "0.1", "0.25"),
    ),
    Column(
        "fault_duration_s",
        NUMBER,
        "Method iec60909: duration T_k of the fault for the thermal equivalent current Ith "
        "(equipment short-time ratings are often for 1 s or 3 s).",
        unit="s",
        default=1.0,
        bound=POSITIVE,
    ),
    Column(
        "fault_ohm",
        NUMBER,
        "Fault impedance (arc or contact resistance) in every fault, ohms; 0 = bolted. "
        "Three-phase: in each phase; line-to-ground and double-line-to-ground: to ground; "
        "line-to-line: between the two lines.",
        unit="ohm",
        default=0.0,
        bound=NON_NEGATIVE,
    ),
)

STUDY = Sheet(
    "study",
    "Study settings, one per row: put the setting's name in 'setting' and its value in 'value'. "
    "Any setting left out takes its default.",
    (
        Column(
            "setting",
            TEXT,
            "Name of the setting: " + ", ".join(s.name for s in SETTINGS) + ".",
            required=True,
        ),
        Column("value", TEXT, "Value of the setting; blank takes the default."),
        Column("note", TEXT, "Free text for the reader of the workbook; not used."),
    ),
)

BUSES = Sheet(
    "buses",
    "Every bus (switchboard, panel, motor control centre, transformer terminal) of the one-line.",
    (
        Column("bus", ID, "Unique name of the bus.", required=True),
        Column(
            "kv",
            NUMBER,
            "Nominal line-to-line voltage; also the bus's base kV.",
            unit="kV",
            required=True,
            bound=POSITIVE,
        ),
        Column("description", TEXT, "Free text, e.g. equipment and location."),
        Column(
            "device",
            CHOICE,
            "Protective device whose rating is checked at this bus: lvpcb (LV power breaker, "
            "unfused; peak basis), lvpcb_fused (LV power breaker with integral fuses; "
            "asymmetrical RMS basis like a fuse), mccb (molded case), iccb (insulated case), "
            "fuse; above 1 kV: mvcb (breaker rated on the symmetrical-current, constant-kA "
            "basis, since about 2000), mvcb_mva (breaker rated on the older constant-MVA basis, "
            "with its voltage range factor K).",
            choices=("lvpcb", "lvpcb_fused", "mccb", "iccb", "fuse", "mvcb", "mvcb_mva"),
        ),
        Column(
            "rating_ka",
            NUMBER,
            "Interrupting or short-circuit current rating of the device (symmetrical RMS).",
            unit="kA",
            bound=POSITIVE,
        ),
        Column(
            "rating_xr",
            NUMBER,
            "Test X/R of the rating, when the manufacturer states one; blank: by device "
            "(see the README).",
            bound=POSITIVE,
        ),
        Column(
            "rated_max_kv",
            NUMBER,
            "mvcb and mvcb_mva: the breaker's rated maximum voltage (e.g. 15 for a breaker on a "
            "13.8 kV bus); rating_ka is its rated short-circuit current at this voltage.",
            unit="kV",
            bound=POSITIVE,
        ),
        Column(
            "k_factor",
            NUMBER,
            "mvcb_mva: the rating's voltage range factor K (e.g. 1.3). mvcb: blank or 1.",
            bound=AT_LEAST_ONE_NUMBER,
        ),
        Column(
            "interrupting_cycles",
            CHOICE,
            "mvcb and mvcb_mva: rated interrupting time in cycles (contact parting 1.5, 2, 3 or "
            "4 cycles). Blank: 5.",
            choices=("2", "3", "5", "8"),
        ),
        Column(
            "closing_ka",
            NUMBER,
            "mvcb and mvcb_mva: closing-and-latching capability; mvcb: kA peak, blank = 2.6 x "
            "rating_ka (2.5 x at 50 Hz); mvcb_mva: kA RMS asymmetrical, blank = 1.6 x K x "
            "rating_ka.",
            unit="kA",
            bound=POSITIVE,
        ),
        Column(
            "service",
            CHOICE,
            "yes: service equipment, which gets a printable label sheet with the maximum "
            "available fault current (NFPA 70 110.24).",
            default="no",
            choices=("yes", "no"),
        ),
        _in_service(
            "the bus",
            "no: the bus is out of service in the base case, with the elements connected to it "
            "and whatever is fed only through it (said in a warning); a case can put it back. "
            "Blank: yes.",
        ),
    ),
    required=True,
)

SOURCES = Sheet(
    "sources",
    "Utility supply points: the available three-phase short-circuit at the point of delivery, as "
    "stated by the serving utility. A system fed only by generators (machines sheet) needs none.",
    (
        Column("source", ID, "Unique name of the source.", required=True),
        Column("bus", BUS_REF, "Bus the source feeds.", required=True),
        Column(
            "sc_mva",
            NUMBER,
            "Available three-phase short-circuit power at the bus.",
            unit="MVA",
            bound=POSITIVE,
        ),
        Column(
            "sc_ka",
            NUMBER,
            "Available three-phase short-circuit current at the bus.",
            unit="kA",
            bound=POSITIVE,
        ),
        Column(
            "xr",
            NUMBER,
            "X/R ratio of the source impedance, from the utility.",
            required=True,
            bound=POSITIVE,
        ),
        Column(
            "slg_ka",
            NUMBER,
            "Available line-to-ground short-circuit current at the bus, from the utility; fixes "
            "the source's zero-sequence impedance. Blank with r0_ohm/x0_ohm blank: Z0 = Z1.",
            unit="kA",
            bound=POSITIVE,
        ),
        Column(
            "slg_xr",
            NUMBER,
            "X/R ratio of the line-to-ground fault loop (2 Z1 + Z0).",
            bound=POSITIVE,
            default_from="xr",
        ),
        Column(
            "r0_ohm",
            NUMBER,
            "Zero-sequence resistance of the source, ohms at the bus voltage.",
            unit="ohm",
            bound=NON_NEGATIVE,
        ),
        Column(
            "x0_ohm",
            NUMBER,
            "Zero-sequence reactance of the source, ohms at the bus voltage.",
            unit="ohm",
            bound=NON_NEGATIVE,
        ),
        _in_service("the source (a utility feed that is off)"),
    ),
    alternatives=(
        Alternative((("sc_mva",), ("sc_ka",))),
        Alternative((("slg_ka",), ("r0_ohm", "x0_ohm")), required=False),
    ),
)

TRANSFORMERS = Sheet(
    "transformers",
    "Two-winding transformers, from the nameplate.",
    (
        Column("transformer", ID, "Unique name of the transformer.", required=True),
        Column("hv_bus", BUS_REF, "Bus on the high-voltage side.", required=True),
        Column("lv_bus", BUS_REF, "Bus on the low-voltage side.", required=True),
        Column(
            "kva",
            NUMBER,
            "Rated power (self-cooled rating the %Z is stated on).",
            unit="kVA",
            required=True,
            bound=POSITIVE,
        ),
        Column(
            "hv_kv",
            NUMBER,
            "Rated high-voltage winding voltage, line to line.",
            unit="kV",
            required=True,
            bound=POSITIVE,
        ),
        Column(
            "lv_kv",
            NUMBER,
            "Rated low-voltage winding voltage, line to line.",
            unit="kV",
            required=True,
            bound=POSITIVE,
        ),
        Column(
            "z_pct",
            NUMBER,
            "Impedance on the transformer's own kVA and kV.",
            unit="%",
            required=True,
            bound=POSITIVE,
        ),
        Column(
            "xr", NUMBER, "X/R ratio of the transformer impedance.", required=True, bound=POSITIVE
        ),
        Column(
            "hv_winding",
            CHOICE,
            "High-voltage winding connection (IEC 60076): D delta, "
            "Y wye with the neutral not grounded, YN wye with the neutral grounded.",
            required=True,
            choices=WINDINGS,
        ),
        Column(
            "lv_winding",
            CHOICE,
            "Low-voltage winding connection (IEC 60076): D, Y or YN.",
            required=True,
            choices=WINDINGS,
        ),
        Column(
            "lv_neutral_ohm",
            NUMBER,
            "Impedance from the low-voltage neutral to ground; 0 = solidly grounded.",
            unit="ohm",
            default=0.0,
            bound=NON_NEGATIVE,
        ),
        Column(
            "hv_neutral_ohm",
            NUMBER,
            "Impedance from the high-voltage neutral to ground (YN winding); 0 = solidly grounded.",
            unit="ohm",
            default=0.0,
            bound=NON_NEGATIVE,
        ),
        Column(
            "z0_pct",
            NUMBER,
            "Zero-sequence impedance on the transformer's own kVA and kV.",
            unit="%",
            bound=POSITIVE,
            default_from="z_pct",
        ),
        Column(
            "xr0",
            NUMBER,
            "X/R ratio of the zero-sequence impedance.",
            bound=POSITIVE,
            default_from="xr",
        ),
        Column(
            "clock_number",
            INTEGER,
            "Phase displacement as the IEC 60076 clock number of the vector group (Dyn1 -> 1, "
            "Dyn11 -> 11): the low-voltage side lags by 30 degrees per hour. Used for the "
            "currents of sources seen through the transformer. Blank = 1 for D-Y and Y-D "
            "connections (low voltage lagging by 30 degrees), 0 otherwise.",
            bound=NON_NEGATIVE,
        ),
        _in_service("the transformer"),
    ),
)

CABLES = Sheet(
    "cables",
    "Cables and feeders: length and impedance of one conductor per phase; the tool divides by "
    "'sets' for parallel conductors. Leave R and X blank to take them from NFPA 70 Chapter 9 "
    "Table 9 (AWG, kcmil) or IEC 60228 (mm2) by size, material and raceway.",
    (
        Column("cable", ID, "Unique name of the cable.", required=True),
        Column("from_bus", BUS_REF, "Bus at one end.", required=True),
        Column("to_bus", BUS_REF, "Bus at the other end.", required=True),
        Column("length_ft", NUMBER, "Route length.", unit="ft", bound=POSITIVE),
        Column("length_m", NUMBER, "Route length.", unit="m", bound=POSITIVE),
        Column("sets", INTEGER, "Parallel conductors per phase.", default=1, bound=AT_LEAST_ONE),
        Column(
            "size",
            TEXT,
            "Conductor size: AWG 14 to 4/0 (e.g. 12, 4/0), kcmil 250 to 1000 (e.g. 500), or "
            "metric with mm2 (e.g. 240 mm2). Needed when R and X are blank.",
        ),
        Column(
            "material", CHOICE, "Conductor material: cu copper, al aluminium.", choices=("cu", "al")
        ),
        Column(
            "raceway",
            CHOICE,
            "Raceway: pvc (non-metallic), aluminum, steel.",
            choices=("pvc", "aluminum", "steel"),
        ),
        Column(
            "r_ohm_per_kft",
            NUMBER,
            "AC resistance of one conductor; blank: from the table.",
            unit="ohm/1000 ft",
            bound=NON_NEGATIVE,
        ),
        Column(
            "x_ohm_per_kft",
            NUMBER,
            "Reactance of one conductor; blank: from the table.",
            unit="ohm/1000 ft",
            bound=NON_NEGATIVE,
        ),
        Column(
            "r_ohm_per_km",
            NUMBER,
            "AC resistance of one conductor; blank: from the table.",
            unit="ohm/km",
            bound=NON_NEGATIVE,
        ),
        Column(
            "x_ohm_per_km",
            NUMBER,
            "Reactance of one conductor; blank: from the table.",
            unit="ohm/km",
            bound=NON_NEGATIVE,
        ),
        *(
            Column(
                f"{q}0_ohm_per_{unit}",
                NUMBER,
                f"Zero-sequence {what} of one set of conductors with its return path "
                "(divided by 'sets' like R and X). Blank: 3 x the positive-sequence value "
                "(an assumption, warned).",
                unit=f"ohm/{label}",
                bound=NON_NEGATIVE,
            )
            for unit, label in (("kft", "1000 ft"), ("km", "km"))
            for q, what in (("r", "resistance"), ("x", "reactance"))
        ),
        _in_service("the cable"),
    ),
    alternatives=(
        Alternative((("length_ft",), ("length_m",))),
        Alternative(
            (("r_ohm_per_kft", "x_ohm_per_kft"), ("r_ohm_per_km", "x_ohm_per_km")),
            required=False,
        ),
        Alternative(
            (("r0_ohm_per_kft", "x0_ohm_per_kft"), ("r0_ohm_per_km", "x0_ohm_per_km")),
            required=False,
        ),
    ),
)

IMPEDANCES = Sheet(
    "impedances",
    "Other series elements (reactors, busway, overhead lines), as total ohms per phase at the "
    "from-bus voltage. r_ohm = x_ohm = 0 is a closed tie or switch: its two buses become one.",
    (
        Column("element", ID, "Unique name of the element.", required=True),
        Column("from_bus", BUS_REF, "Bus at one end.", required=True),
        Column("to_bus", BUS_REF, "Bus at the other end.", required=True),
        Column(
            "r_ohm",
            NUMBER,
            "Total resistance per phase.",
            unit="ohm",
            required=True,
            bound=NON_NEGATIVE,
        ),
        Column(
            "x_ohm",
            NUMBER,
            "Total reactance per phase.",
            unit="ohm",
            required=True,
            bound=NON_NEGATIVE,
        ),
        Column(
            "r0_ohm",
            NUMBER,
            "Total zero-sequence resistance. Blank: equal to r_ohm (true of a reactor of three "
            "single-phase coils; for busway and lines enter it).",
            unit="ohm",
            bound=NON_NEGATIVE,
        ),
        Column(
            "x0_ohm",
            NUMBER,
            "Total zero-sequence reactance. Blank: equal to x_ohm.",
            unit="ohm",
            bound=NON_NEGATIVE,
        ),
        _in_service("the element (a normally-open tie)"),
    ),
    alternatives=(Alternative((("r0_ohm", "x0_ohm"),), required=False),),
)

MACHINE_KINDS = ("induction_motor", "synchronous_motor", "generator")

MACHINES = Sheet(
    "machines",
    "Rotating machines that feed a fault: motors running at the time of the fault and "
    "generators, each a source behind its subtransient impedance. Group identical small motors "
    "with 'count'.",
    (
        Column("machine", ID, "Unique name of the machine or group.", required=True),
        Column("bus", BUS_REF, "Bus the machine is connected to.", required=True),
        Column(
            "kind",
            CHOICE,
            "induction_motor, synchronous_motor or generator.",
            required=True,
            choices=MACHINE_KINDS,
        ),
        Column("kva", NUMBER, "Rated apparent power of one machine.", unit="kVA", bound=POSITIVE),
        Column(
            "hp",
            NUMBER,
            "Rated output of one motor; taken as 1 kVA per hp (see the README's method).",
            unit="hp",
            bound=POSITIVE,
        ),
        Column(
            "kv",
            NUMBER,
            "Rated line-to-line voltage of the machine.",
            unit="kV",
            required=True,
            bound=POSITIVE,
        ),
        Column(
            "xd_pct",
            NUMBER,
            "Subtransient reactance X\"d on the machine's own kVA and kV (induction motors: the "
            "locked-rotor reactance, about 100 / locked-rotor current multiple); the reactance "
            "itself, with R = X / xr.",
            unit="%",
            required=True,
            bound=POSITIVE,
        ),
        Column("xr", NUMBER, "X/R ratio of the machine.", required=True, bound=POSITIVE),
        Column(
            "count",
            INTEGER,
            "Number of identical machines in the group.",
            default=1,
            bound=AT_LEAST_ONE,
        ),
        Column(
            "neutral_ohm",
            NUMBER,
            "Impedance from the machine's neutral to ground; 0 = solidly grounded; blank = "
            "ungrounded (no zero-sequence path).",
            unit="ohm",
            bound=NON_NEGATIVE,
        ),
        Column(
            "rpm",
            NUMBER,
            "Rated speed, r/min; method ieee uses it for induction motors above 250 hp.",
            unit="r/min",
            bound=POSITIVE,
        ),
        Column(
            "x0_pct",
            NUMBER,
            "Zero-sequence reactance on the machine's own rating, used when the neutral is "
            "grounded. Blank: equal to xd_pct (warned; a generator's is usually lower).",
            unit="%",
            bound=POSITIVE,
        ),
        Column(
            "power_factor",
            NUMBER,
            "Generators, method iec60909: rated power factor cos phi_rG, for the impedance "
            "correction K_G (IEC 60909-0 6.6.1) and the rated current. Blank: K_G not applied "
            "(warned).",
            bound=POSITIVE,
        ),
        Column(
            "unit_transformer",
            TEXT,
            "Generators, method iec60909: the transformer (its name on the transformers sheet, "
            "its LV winding on this generator's bus) forming a generating unit with it; the "
            "unit is corrected by K_S or K_SO (IEC 60909-0 6.7) instead of K_G and K_T.",
        ),
        Column(
            "unit_tap_changer",
            CHOICE,
            "With unit_transformer: yes if the unit transformer has an on-load tap changer "
            "(K_S); no (K_SO at the main tap, the generator at its rated voltage).",
            default="no",
            choices=("yes", "no"),
        ),
        _in_service("the machine (a standby generator, a motor that does not run)"),
    ),
    alternatives=(Alternative((("kva",), ("hp",))),),
)

CASES = Sheet(
    "cases",
    "Named variations of the system, each studied on its own after the base case: one "
    "override per row. 'column' is a column of the element's sheet, or in_service (yes/no) to "
    "take the element out or put it in (a tie opened or closed, a generator off or on); "
    "in_service no on a bus takes out the bus and whatever is fed only through it.",
    (
        Column("case", TEXT, "Name of the case, e.g. utility minimum.", required=True),
        Column(
            "element",
            TEXT,
            "Name of the element (or bus) the override applies to.",
            required=True,
        ),
        Column("column", TEXT, "Column to override, or in_service.", required=True),
        Column("value", TEXT, "The value in that case; blank clears the cell."),
        Column(
            "label",
            CHOICE,
            "no: leave this case out of the maximum printed on the service labels (a temporary "
            "set-up, e.g. for maintenance); its currents and duty are still studied and shown. "
            "Say it on one row of the case or on every row; blank = yes unless another row of "
            "the same case says no. Rows of one case that say yes and no disagree (an error).",
            choices=("yes", "no"),
        ),
    ),
)

GROUNDING_TRANSFORMERS = Sheet(
    "grounding_transformers",
    "Grounding transformers (zig-zag, or a wye-delta bank) that give an ungrounded or delta-fed "
    "system its path to ground: a zero-sequence impedance from the bus to ground, no path in "
    "the positive and negative sequences.",
    (
        Column("grounding_transformer", ID, "Unique name of the grounding bank.", required=True),
        Column("bus", BUS_REF, "Bus it is connected to.", required=True),
        Column(
            "kind",
            CHOICE,
            "zigzag (a zig-zag transformer) or wye_delta (a grounded-wye / delta bank).",
            required=True,
            choices=("zigzag", "wye_delta"),
        ),
        Column(
            "z0_ohm",
            NUMBER,
            "Zero-sequence impedance per phase, ohms (as the maker states it).",
            unit="ohm",
            bound=POSITIVE,
        ),
        Column(
            "z0_pct",
            NUMBER,
            "Or the zero-sequence impedance in % on the bank's kva and kv.",
            unit="%",
            bound=POSITIVE,
        ),
        Column("kva", NUMBER, "Rating for z0_pct.", unit="kVA", bound=POSITIVE),
        Column("kv", NUMBER, "Rated line-to-line voltage for z0_pct.", unit="kV", bound=POSITIVE),
        Column("xr", NUMBER, "X/R of the zero-sequence impedance.", required=True, bound=POSITIVE),
        Column(
            "neutral_ohm",
            NUMBER,
            "Impedance from the bank's neutral to ground, ohms; 0 = solidly grounded.",
            unit="ohm",
            default=0.0,
            bound=NON_NEGATIVE,
        ),
        _in_service("the grounding bank"),
    ),
    alternatives=(Alternative((("z0_ohm",), ("z0_pct", "kva", "kv"))),),
)


def _winding_columns(letter: str, which: str, required: bool) -> tuple[Column, ...]:
    """The bus, rating, voltage, connection and neutral of one winding of a three-winding
    transformer (``letter`` h, m or l)."""
    return (
        Column(f"{letter}_bus", BUS_REF, f"Bus of the {which} winding.", required=required),
        Column(
            f"{letter}_kva",
            NUMBER,
            f"Rated power of the {which} winding.",
            unit="kVA",
            required=required,
            bound=POSITIVE,
        ),
        Column(
            f"{letter}_kv",
            NUMBER,
            f"Rated voltage of the {which} winding, line to line.",
            unit="kV",
            required=required,
            bound=POSITIVE,
        ),
        Column(
            f"{letter}_winding",
            CHOICE,
            f"Connection of the {which} winding (IEC 60076): D, Y or YN.",
            required=required,
            choices=WINDINGS,
        ),
        Column(
            f"{letter}_neutral_ohm",
            NUMBER,
            f"Impedance from the {which} winding's neutral to ground (YN); 0 = solidly grounded.",
            unit="ohm",
            default=0.0,
            bound=NON_NEGATIVE,
        ),
    )


def _pair_columns(pair: str, which: str, required: bool) -> tuple[Column, ...]:
    """The short-circuit impedance of one pair of windings, on the kVA it is stated on."""
    return (
        Column(
            f"{pair}_z_pct",
            NUMBER,
            f"Impedance {which} (test report), in % on {pair}_kva and the windings' rated kV.",
            unit="%",
            required=required,
            bound=POSITIVE,
        ),
        Column(
            f"{pair}_kva",
            NUMBER,
            f"The kVA {pair}_z_pct is stated on.",
            unit="kVA",
            required=required,
            bound=POSITIVE,
        ),
        Column(f"{pair}_xr", NUMBER, f"X/R of {pair}_z_pct.", required=required, bound=POSITIVE),
        Column(
            f"{pair}_z0_pct",
            NUMBER,
            f"Zero-sequence impedance {which}, in % on {pair}_kva (blank: {pair}_z_pct, as for "
            "a bank of single-phase units); same X/R.",
            unit="%",
            bound=POSITIVE,
            default_from=f"{pair}_z_pct",
        ),
    )


THREE_WINDING_TRANSFORMERS = Sheet(
    "three_winding_transformers",
    "Three-winding transformers and autotransformers: the high (h), medium (m) and low (l) "
    "voltage windings, and the impedance of each pair of windings from the test report. "
    "Modelled as the star of three impedances (a negative one is legal). An autotransformer "
    "(kind auto, YNa0) joins h and m through its series and common windings, with or without "
    "a delta tertiary (l). A delta tertiary with no load brought out (l_bus blank) still "
    "gives ground-fault current its path: fill l_winding D and the hl and ml impedances.",
    (
        Column("transformer", ID, "Unique name of the transformer.", required=True),
        Column(
            "kind",
            CHOICE,
            "separate: three separate windings; auto: h and m are an autotransformer (both "
            "YN, one neutral: h_neutral_ohm), l its tertiary.",
            default="separate",
            choices=("separate", "auto"),
        ),
        *_winding_columns("h", "high-voltage", True),
        *_winding_columns("m", "medium-voltage", True),
        *_winding_columns("l", "low-voltage or tertiary", False),
        *_pair_columns("hm", "between h and m", True),
        *_pair_columns("hl", "between h and l", False),
        *_pair_columns("ml", "between m and l", False),
        Column(
            "m_clock",
            INTEGER,
            "IEC 60076 clock number of m against h (YNyn0d1 -> 0): m lags h by 30 degrees per "
            "hour. Blank = 1 when one of the two is D and the other not, 0 otherwise.",
            bound=NON_NEGATIVE,
        ),
        Column(
            "l_clock",
            INTEGER,
            "IEC 60076 clock number of l against h (YNyn0d1 -> 1). Blank as for m_clock.",
            bound=NON_NEGATIVE,
        ),
        _in_service("the transformer"),
    ),
)

INVERTERS = Sheet(
    "inverters",
    "Inverter-based sources (solar PV, battery storage, full-converter wind): each feeds a "
    "fault with a current held at its control's limit, not through an impedance. Group "
    "identical units with 'count'.",
    (
        Column("inverter", ID, "Unique name of the inverter or group.", required=True),
        Column("bus", BUS_REF, "Bus its AC terminals are connected to.", required=True),
        Column(
            "kva",
            NUMBER,
            "Rated apparent power of one inverter.",
            unit="kVA",
            required=True,
            bound=POSITIVE,
        ),
        Column(
            "kv",
            NUMBER,
            "Rated line-to-line AC voltage of the inverter; with kva it gives the rated "
            "current kva / (sqrt(3) kv).",
            unit="kV",
            required=True,
            bound=POSITIVE,
        ),
        Column(
            "count",
            INTEGER,
            "Number of identical inverters in the group.",
            default=1,
            bound=AT_LEAST_ONE,
        ),
        Column(
            "current_limit_pu",
            NUMBER,
            "Fault current the inverter's control holds, per-unit of its rated current (from "
            "the manufacturer; usually 1.05 to 1.5; refused below 1 or above 2).",
            unit="pu",
            required=True,
            bound=POSITIVE,
        ),
        Column(
            "behaviour",
            CHOICE,
            "positive: balanced positive-sequence current only (the common case); "
            "negative_share: in unbalanced faults the share negative_share_pct of the limit "
            "current is negative-sequence current.",
            default="positive",
            choices=("positive", "negative_share"),
        ),
        Column(
            "negative_share_pct",
            NUMBER,
            "With behaviour negative_share: the negative-sequence current in unbalanced faults, "
            "in % of the limit current (the positive-sequence current takes the rest).",
            unit="%",
            bound=POSITIVE,
        ),
        Column(
            "cease_below_pu",
            NUMBER,
            "Momentary cessation: below this positive-sequence terminal voltage (per-unit of "
            "the bus's nominal kV) the inverter injects nothing. Blank: it never ceases.",
            unit="pu",
            bound=POSITIVE,
        ),
        _in_service("the inverter"),
    ),
)

SHEETS: tuple[Sheet, ...] = (
    STUDY,
    BUSES,
    SOURCES,
    TRANSFORMERS,
    CABLES,
    IMPEDANCES,
    MACHINES,
    GROUNDING_TRANSFORMERS,
    THREE_WINDING_TRANSFORMERS,
    INVERTERS,
    CASES,
)

# Sheets of elements (after buses): their first column is the element's name.
ELEMENT_SHEETS: tuple[Sheet, ...] = (
    SOURCES,
    TRANSFORMERS,
    CABLES,
    IMPEDANCES,
    MACHINES,
    GROUNDING_TRANSFORMERS,
    THREE_WINDING_TRANSFORMERS,
    INVERTERS,
)

# Sheets the template writes for people; the reader passes over them without a warning.
GUIDE_SHEET = "guide"
