"""Checks of the reference formulas themselves before they judge the solver."""
import numpy as np
import pytest

from tests.validation.line_formulas import (ETA0, microstrip_z0_hammerstad_jensen,
                                            microstrip_z0_wheeler)


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
