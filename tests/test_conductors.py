"""Conductor tables and physics against their published sources."""

from __future__ import annotations

import pytest

from faultcalc import conductors as c

# NFPA 70 (NEC), 2008 edition, Chapter 9, Table 9, ohms to neutral per 1000 ft, 75 C:
# XL in PVC or aluminium conduit / XL in steel conduit / R copper in PVC / R aluminium in PVC.
NEC_TABLE_9_2008 = {
    "14": (0.058, 0.073, 3.1, None),
    "12": (0.054, 0.068, 2.0, 3.2),
    "10": (0.050, 0.063, 1.2, 2.0),
    "8": (0.052, 0.065, 0.78, 1.3),
    "6": (0.051, 0.064, 0.49, 0.81),
    "4": (0.048, 0.060, 0.31, 0.51),
    "3": (0.047, 0.059, 0.25, 0.40),
    "2": (0.045, 0.057, 0.19, 0.32),
    "1": (0.046, 0.057, 0.15, 0.25),
    "1/0": (0.044, 0.055, 0.12, 0.20),
    "2/0": (0.043, 0.054, 0.10, 0.16),
    "3/0": (0.042, 0.052, 0.077, 0.13),
    "4/0": (0.041, 0.051, 0.062, 0.10),
    "250": (0.041, 0.052, 0.052, 0.085),
    "300": (0.041, 0.051, 0.044, 0.071),
    "350": (0.040, 0.050, 0.038, 0.061),
    "400": (0.040, 0.049, 0.033, 0.054),
    "500": (0.039, 0.048, 0.027, 0.043),
    "600": (0.039, 0.048, 0.023, 0.036),
    "750": (0.038, 0.048, 0.019, 0.029),
    "1000": (0.037, 0.046, 0.015, 0.023),
}


@pytest.mark.parametrize("size", NEC_TABLE_9_2008)
def test_every_table_9_row(size):
    xl_pvc, xl_steel, r_cu_pvc, r_al_pvc = NEC_TABLE_9_2008[size]
    assert c.lookup(size, "cu", "pvc").x_ohm_per_kft == xl_pvc
    assert c.lookup(size, "cu", "aluminum").x_ohm_per_kft == xl_pvc
    assert c.lookup(size, "cu", "steel").x_ohm_per_kft == xl_steel
    assert c.lookup(size, "cu", "pvc").r_ohm_per_kft == r_cu_pvc
    if r_al_pvc is None:
        with pytest.raises(c.SizeError):
            c.lookup(size, "al", "pvc")
    else:
        assert c.lookup(size, "al", "pvc").r_ohm_per_kft == r_al_pvc


def test_copper_resistance_depends_on_conduit():
    # NFPA 70 Table 9, 4/0 copper: 0.062 PVC, 0.067 aluminium conduit, 0.063 steel (2008).
    assert [c.lookup("4/0", "cu", r).r_ohm_per_kft for r in ("pvc", "aluminum", "steel")] == [
        0.062,
        0.067,
        0.063,
    ]


def test_reactance_is_not_monotonic_so_rows_are_never_interpolated():
    # NFPA 70 Table 9: 8 AWG XL (0.052) is above 10 AWG (0.050).
    assert c.lookup("8", "cu", "pvc").x_ohm_per_kft > c.lookup("10", "cu", "pvc").x_ohm_per_kft


@pytest.mark.parametrize("size,cmil", [("4/0", 211_600), ("1/0", 105_600), ("12", 6_530)])
def test_astm_b258_areas(size, cmil):
    # ASTM B258, standard nominal diameters and cross-sectional areas of AWG sizes.
    assert c.awg_area_cmil(size) == cmil


def test_iec_60028_copper_resistivity():
    # IEC 60028: annealed copper, 1/58 ohm mm2/m at 20 C, 0.00393 per C.
    assert c.RESISTIVITY_20C["cu"] == pytest.approx(1 / 58, rel=1e-12)
    assert c.ALPHA_20C["cu"] == 0.00393


# NFPA 70 Chapter 9 Table 8, DC resistance at 75 C, stranded, ohms per 1000 ft.
NEC_TABLE_8 = [
    ("1/0", "cu", 0.122),
    ("250", "cu", 0.0515),
    ("4/0", "cu", 0.0608),
    ("500", "cu", 0.0258),
    ("4/0", "al", 0.100),
    ("500", "al", 0.0424),
]


@pytest.mark.parametrize("size,material,ohm", NEC_TABLE_8)
def test_dc_resistance_from_area_and_resistivity_matches_table_8(size, material, ohm):
    r = c.dc_resistance_ohm_per_kft(c.area_mm2(size), material, 75.0)
    assert r == pytest.approx(ohm, rel=0.03)


@pytest.mark.parametrize("size", NEC_TABLE_9_2008)
def test_table_rows_are_physically_sane(size):
    # AC resistance at 75 C is at least the DC resistance of the area (skin effect only adds);
    # reactance is above that of bare round conductors touching (circuit theory; common
    # practice, no source). Table 9 rounds to two figures, so allow 5 %.
    area = c.area_mm2(size)
    d = 2 * (area / 3.141592653589793) ** 0.5
    assert c.lookup(size, "cu", "pvc").r_ohm_per_kft >= 0.95 * c.dc_resistance_ohm_per_kft(
        area, "cu", 75.0
    )
    assert c.lookup(size, "cu", "pvc").x_ohm_per_kft > c.reactance_ohm_per_kft(d, d, 60.0)


def test_temperature_adjustment():
    # IEC 60028: R(T) = R20 (1 + 0.00393 (T - 20)); 75 C to 20 C is a factor 1 / 1.21615.
    v = c.lookup("500", "cu", "pvc", temp_c=20.0)
    assert v.r_ohm_per_kft == pytest.approx(0.027 / (1 + 0.00393 * 55), rel=1e-12)
    assert "adjusted from 75 C to 20 C" in v.source


def test_fifty_hertz_scales_reactance():
    # Inductive reactance is proportional to frequency (circuit theory).
    assert c.lookup("4/0", "cu", "pvc", frequency_hz=50).x_ohm_per_kft == pytest.approx(
        0.041 * 50 / 60, rel=1e-12
    )


@pytest.mark.parametrize(
    "text,system,label",
    [
        ("4/0", "awg", "4/0"),
        ("4/0 AWG", "awg", "4/0"),
        ("#12", "awg", "12"),
        ("12", "awg", "12"),
        ("500", "kcmil", "500"),
        ("500 kcmil", "kcmil", "500"),
        ("250MCM", "kcmil", "250"),
        ("240 mm2", "mm2", "240"),
        ("95mm²", "mm2", "95"),
        ("2.5 mm2", "mm2", "2.5"),
    ],
)
def test_size_parsing(text, system, label):
    size = c.parse_size(text)
    assert (size.system, size.label) == (system, label)


@pytest.mark.parametrize("text", ["5/0", "16", "95", "240", "banana", "1100 kcmil", "13 mm2"])
def test_bad_sizes(text):
    with pytest.raises(c.SizeError):
        c.parse_size(text)


def test_metric_lookup_states_its_assumptions():
    # IEC 60228 class 2 copper 240 mm2: 0.0754 ohm/km at 20 C (value from memory of IEC 60228
    # Table 2); at 75 C x 1.21615, per 1000 ft x 0.3048.
    v = c.lookup("240 mm2", "cu", "pvc")
    assert v.r_ohm_per_kft == pytest.approx(0.0754 * (1 + 0.00393 * 55) * 0.3048, rel=1e-12)
    assert v.assumed_x and "X assumed" in v.source
