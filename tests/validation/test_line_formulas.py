"""Checks of the reference formulas themselves before they judge the solver."""
import numpy as np
import pytest

from tests.validation.line_formulas import (ETA0, MU0, microstrip_inductance_per_length,
                                            microstrip_inductance_with_skin,
                                            microstrip_z0_hammerstad_jensen, microstrip_z0_wheeler,
                                            skin_depth)


@pytest.mark.parametrize("u", [0.1, 0.3, 1.0, 3.0, 10.0])
def test_hammerstad_jensen_agrees_with_wheeler(u):
    # Two independent published fits of the same conformal-mapping result (Hammerstad & Jensen
    # 1980; Wheeler 1977) must agree closely for a zero-thickness strip.
    hj = microstrip_z0_hammerstad_jensen(u, 1.0)
    wh = microstrip_z0_wheeler(u, 1.0)
    assert hj == pytest.approx(wh, rel=0.01)


def test_wide_and_narrow_limits():
    # Wide strip: parallel-plate limit eta0 h / w (Ampere's law).
    assert microstrip_z0_hammerstad_jensen(1000.0, 1.0) == pytest.approx(ETA0 / 1000.0, rel=0.01)
    assert microstrip_z0_wheeler(1000.0, 1.0) == pytest.approx(ETA0 / 1000.0, rel=0.01)
    # Narrow strip: a thin flat strip of width w acts as a round wire of radius w/4 (Grover 1946,
    # geometric mean distance), so Z0 -> eta0/(2 pi) ln(2h / (w/4)) = eta0/(2 pi) ln(8h/w).
    w = 1e-3
    expected = ETA0 / (2 * np.pi) * np.log(8 / w)
    assert microstrip_z0_hammerstad_jensen(w, 1.0) == pytest.approx(expected, rel=1e-3)
    assert microstrip_z0_wheeler(w, 1.0) == pytest.approx(expected, rel=1e-3)


def test_thickness_correction_lowers_impedance_and_vanishes():
    z0 = microstrip_z0_hammerstad_jensen(1.0, 0.5)
    assert microstrip_z0_hammerstad_jensen(1.0, 0.5, 1e-9) == pytest.approx(z0, rel=1e-5)
    assert microstrip_z0_hammerstad_jensen(1.0, 0.5, 0.035) < z0


def test_wheeler_rule_gives_the_surface_impedance_of_wide_plates():
    # Two wide facing plates with skin-effect current on the facing faces: each face's surface
    # impedance (1 + j) / (sigma delta) (Ramo, Whinnery & Van Duzer) gives an internal
    # inductance mu0 delta / (2 w) per face, mu0 delta / w in all. Wheeler's rule on the
    # Hammerstad & Jensen line must give the same in the wide-strip limit.
    w, h, t, f = 0.5, 1e-3, 35e-6, 1e8
    internal = microstrip_inductance_with_skin(w, h, t, f) - microstrip_inductance_per_length(w, h, t)
    assert internal == pytest.approx(MU0 * skin_depth(f) / w, rel=0.02)


def test_wheeler_rule_vanishes_for_perfect_conductors():
    w, h, t = 1e-3, 0.2e-3, 35e-6
    assert microstrip_inductance_with_skin(w, h, t, 1e8, sigma=1e16) == pytest.approx(
        microstrip_inductance_per_length(w, h, t), rel=1e-6)
