"""Fault formulas against a phase-domain solution written in this test.

Reference: symmetrical components (Fortescue, 1918; any power-system analysis text, e.g.
Grainger and Stevenson, Power System Analysis, Chapter 12). Here the Thevenin equivalent is put
in the phase domain, Z_abc = A diag(Z0, Z1, Z2) A^-1, and each fault's boundary conditions are
solved as a linear system with numpy, independently of the closed forms in faultcalc.solve.faults.
"""

from __future__ import annotations

import numpy as np
import pytest

from faultcalc.solve.faults import all_faults, phase_currents, sequence_currents

a = np.exp(2j * np.pi / 3)
A = np.array([[1, 1, 1], [1, a * a, a], [1, a, a * a]])


def phase_domain(fault, z1, z2, z0, e, zf):
    """Solve V = E - Z_abc I with the fault's boundary conditions; returns I_abc (into fault)."""
    z_abc = A @ np.diag([z0, z1, z2]) @ np.linalg.inv(A)
    e_abc = e * np.array([1, a * a, a])
    # Unknowns x = [Ia, Ib, Ic, Va, Vb, Vc]; first three rows: V + Z I = E.
    m = np.zeros((6, 6), dtype=complex)
    rhs = np.zeros(6, dtype=complex)
    m[:3, :3] = z_abc
    m[:3, 3:] = np.eye(3)
    rhs[:3] = e_abc
    if fault == "3ph":  # each phase through zf to a common point at ground
        rows = [[zf, 0, 0, -1, 0, 0], [0, zf, 0, 0, -1, 0], [0, 0, zf, 0, 0, -1]]
    elif fault == "slg":  # a to ground through zf; b, c open
        rows = [[zf, 0, 0, -1, 0, 0], [0, 1, 0, 0, 0, 0], [0, 0, 1, 0, 0, 0]]
    elif fault == "ll":  # b to c through zf; a open
        rows = [[1, 0, 0, 0, 0, 0], [0, 1, 1, 0, 0, 0], [0, zf, 0, 0, -1, 1]]
    else:  # llg: b and c joined, to ground through zf; a open
        rows = [[1, 0, 0, 0, 0, 0], [0, 0, 0, 0, 1, -1], [0, zf, zf, 0, -1, 0]]
    m[3:] = rows
    return np.linalg.solve(m, rhs)[:3]


IMPEDANCES = [
    (0.01 + 0.1j, 0.01 + 0.1j, 0.03 + 0.3j, 0.0),
    (0.02 + 0.05j, 0.025 + 0.06j, 0.005 + 0.02j, 0.0),
    (0.1 + 0.4j, 0.1 + 0.4j, 0.6 + 1.1j, 0.05),
    (0.003 + 0.02j, 0.003 + 0.02j, 0.002 + 0.015j, 0.01 + 0.0j),
]


@pytest.mark.parametrize("fault", ["3ph", "slg", "ll", "llg"])
@pytest.mark.parametrize("z", IMPEDANCES)
def test_closed_forms_match_the_phase_domain(fault, z):
    z1, z2, z0, zf = z
    e = 1.05
    seq = sequence_currents(fault, np.array([z1]), np.array([z2]), np.array([z0]), e, zf)
    ours = phase_currents(seq.i1, seq.i2, seq.i0)[:, 0]
    reference = phase_domain(fault, z1, z2, z0, e, zf)
    np.testing.assert_allclose(ours, reference, rtol=1e-12, atol=1e-12)


def test_summary_magnitudes():
    z1, z2, z0, zf = IMPEDANCES[2]
    f = all_faults(np.array([z1]), np.array([z2]), np.array([z0]), 1.0, zf)
    ref = {k: np.abs(phase_domain(k, z1, z2, z0, 1.0, zf)) for k in ("3ph", "slg", "ll", "llg")}
    assert f.i3ph[0] == pytest.approx(ref["3ph"][0], rel=1e-12)
    assert f.islg[0] == pytest.approx(ref["slg"][0], rel=1e-12)
    assert f.ill[0] == pytest.approx(ref["ll"][1], rel=1e-12)
    assert f.illg[0] == pytest.approx(max(ref["llg"][1:]), rel=1e-12)
    i_llg = phase_domain("llg", z1, z2, z0, 1.0, zf)
    assert f.ig_llg[0] == pytest.approx(abs(i_llg.sum()), rel=1e-12)


def test_line_to_line_is_sqrt3_over_2_of_three_phase():
    # Follows from the formulas when Z2 = Z1 and the fault is bolted.
    z1 = np.array([0.01 + 0.1j, 0.2 + 0.3j])
    f = all_faults(z1, z1, np.array([0.05j, np.nan]), 1.0)
    np.testing.assert_allclose(f.ill, np.sqrt(3) / 2 * f.i3ph, rtol=1e-12)


def test_no_zero_sequence_path():
    # An isolated neutral carries no ground current; the double-line-to-ground fault is then
    # a line-to-line fault (common practice, no source).
    z1 = np.array([0.02 + 0.1j])
    f = all_faults(z1, z1, np.array([np.nan + 0j]), 1.0)
    assert np.isnan(f.islg[0]) and np.isnan(f.ig_llg[0])
    assert f.illg[0] == pytest.approx(f.ill[0], rel=1e-12)
