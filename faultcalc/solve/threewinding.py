"""Three-winding transformers and autotransformers in per-unit: the star of three impedances.

Conventions (each stated in the README's method section):

* The pair impedances of the test report, each on its own kVA, go to the common MVA base with
  the windings' rated kV as base kV: ``z_ab = z_pct/100 (R + jX by X/R) x base_mva / (kva/1000)``.
* Star equivalent (any power-system analysis text, e.g. Grainger and Stevenson, Power System
  Analysis, the three-winding transformer): ``z_h = (z_hm + z_hl - z_ml) / 2``, ``z_m = (z_hm +
  z_ml - z_hl) / 2``, ``z_l = (z_hl + z_ml - z_hm) / 2``. A negative leg is legal (a winding
  between the other two); only the sums of two legs are measured.
* Each leg runs from its winding's bus, behind the ideal ratio ``tap = winding kV / bus kV``,
  to the star point, an internal node of the network on the windings' rated-voltage base.
* Zero sequence by connection, with the zero-sequence pair impedances: a YN winding's leg is
  in series (with 3 Zn of its neutral), a D winding's leg goes from the star point to ground
  (the delta gives zero-sequence current its path and no terminal current), a Y winding's leg
  is open.
* Autotransformer (YNa0, one neutral Zn to ground, n = h_kv / m_kv): zero-sequence legs
  ``z_h + 3 zn (1 - n)``, ``z_m + 3 zn n (n - 1)`` and, for the delta tertiary, ``z_l + 3 zn n``
  from the star point to ground (zn in per-unit of h's rated kV); without a tertiary one series
  impedance ``z_hm + 3 zn (n - 1)^2``. Derived here from the winding connection: the auto's
  terminal voltages relative to its neutral obey the solidly grounded model, and the neutral
  rises by ``3 Zn (I_h + I_m)``; the same form as the autotransformer equivalent of Anderson,
  Analysis of Faulted Power Systems (value from memory). Zn = 0 gives the YN-yn-d model.
"""

from __future__ import annotations

from ..model import ThreeWindingTransformer
from .perunit import Z0_OPEN, Z0_SERIES, Z0_SHUNT_TO, SeriesPU, split_by_xr, z_base_ohm

KIND = "three_winding"
STAR = "star point"  # the far end of a leg, as the contributions name it


def pair_pu(t: ThreeWindingTransformer, pair: str, base_mva: float, zero: bool = False) -> complex:
    """A pair's impedance on ``base_mva`` and the windings' rated kV (positive or zero
    sequence)."""
    z_pct = getattr(t, f"{pair}_z0_pct" if zero else f"{pair}_z_pct")
    if zero and z_pct is None:
        z_pct = getattr(t, f"{pair}_z_pct")
    own = split_by_xr(z_pct / 100.0, getattr(t, f"{pair}_xr"))
    return own * base_mva / (getattr(t, f"{pair}_kva") / 1000.0)


def star(z_hm: complex, z_hl: complex, z_ml: complex) -> tuple[complex, complex, complex]:
    """The star legs (h, m, l) of three pair impedances on one base.

    >>> [round(abs(z), 6) for z in star(7j, 9j, 12j)]  # 7 %, 9 %, 12 % on one base
    [2.0, 5.0, 7.0]
    """
    return (
        (z_hm + z_hl - z_ml) / 2.0,
        (z_hm + z_ml - z_hl) / 2.0,
        (z_hl + z_ml - z_hm) / 2.0,
    )


def star_label(t: ThreeWindingTransformer) -> str:
    return f"{t.transformer} {STAR}"


def legs(
    t: ThreeWindingTransformer, kv: dict[str, float], base_mva: float
) -> tuple[list[SeriesPU], bool]:
    """The series elements of one transformer, and whether they end at a star point of its
    own (False: an autotransformer without tertiary, one element from h to m)."""
    letters = ("h", "m", "l") if t.has_tertiary else ("h", "m")
    rated = {x: getattr(t, f"{x}_kv") for x in letters}
    z_base_w = {x: z_base_ohm(rated[x], base_mva) for x in letters if rated[x] is not None}
    auto = t.kind == "auto"
    zn_h = t.h_neutral_ohm / z_base_w["h"]
    if not t.has_tertiary:  # an autotransformer h-m: one series impedance
        n = t.h_kv / t.m_kv
        t_h, t_m = t.h_kv / kv[t.h_bus], t.m_kv / kv[t.m_bus]
        z1 = pair_pu(t, "hm", base_mva)
        z0 = pair_pu(t, "hm", base_mva, zero=True) + 3.0 * zn_h * (n - 1.0) ** 2
        return [
            SeriesPU(
                t.transformer,
                KIND,
                t.h_bus,
                t.m_bus,
                z1 * t_m**2,
                z1 * z_base_w["m"],
                t.m_bus,
                kv[t.m_bus],
                t_h / t_m,
                Z0_SERIES,
                z0 * t_m**2,
                t.clock("m"),  # h to m: m lags h (0 for an auto)
                "autotransformer without tertiary: zero sequence in series, "
                "Z0 = Z0hm + 3 Zn (n - 1)^2",
            )
        ], False
    z1 = star(*(pair_pu(t, p, base_mva) for p in ("hm", "hl", "ml")))
    z0 = star(*(pair_pu(t, p, base_mva, zero=True) for p in ("hm", "hl", "ml")))
    out = []
    n = t.h_kv / t.m_kv
    for k, x in enumerate(letters):
        winding = getattr(t, f"{x}_winding")
        bus = getattr(t, f"{x}_bus")
        if auto:
            z0_leg = z0[k] + 3.0 * zn_h * (1.0 - n, n * (n - 1.0), n)[k]
            mode = Z0_SHUNT_TO if x == "l" else Z0_SERIES
            note = (
                "autotransformer: zero sequence "
                + ("to ground at the star point (delta tertiary)" if x == "l" else "in series")
                + ", with its neutral's 3 Zn"
            )
        elif winding == "YN":
            zn = getattr(t, f"{x}_neutral_ohm") / z_base_w[x]
            z0_leg, mode, note = z0[k] + 3.0 * zn, Z0_SERIES, "zero sequence passes (YN)"
        elif winding == "D":
            z0_leg, mode = z0[k], Z0_SHUNT_TO
            note = "zero sequence: delta, a path to ground at the star point"
        else:
            z0_leg, mode, note = None, Z0_OPEN, "zero sequence blocked (Y)"
        if bus is None and winding != "D":  # a wye winding whose bus is out: open
            continue
        if bus is None:  # a delta tertiary not brought out: its leg to ground only
            out.append(
                SeriesPU(
                    t.transformer,
                    KIND,
                    "",
                    star_label(t),
                    0j,
                    0j,
                    "",
                    0.0,
                    1.0,
                    mode,
                    z0_leg,
                    0,
                    note + "; no bus (not brought out)",
                )
            )
            continue
        tap = rated[x] / kv[bus]
        out.append(
            SeriesPU(
                t.transformer,
                KIND,
                bus,
                star_label(t),
                z1[k],
                z1[k] * z_base_w[x],
                bus,
                kv[bus],
                tap,
                mode,
                z0_leg,
                0 if x == "h" else (-t.clock(x)) % 12,
                note,
            )
        )
    return out, True


def leg_is_open(leg: SeriesPU) -> bool:
    """A leg with no bus (a delta tertiary not brought out): no positive-sequence path."""
    return leg.from_bus == ""
