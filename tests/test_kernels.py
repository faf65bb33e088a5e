"""Averaged kernel and radial integrals against scipy numerical integration (scipy.integrate)."""
import numpy as np
import pytest
from scipy import integrate

from copperpath.solver.elements.kernels import SWITCH_THICKNESSES, averaged_kernel, radial_integrals

T = 35e-6
PAIRS = [((0.0, T), (0.0, T)),                       # same layer
         ((0.0, T), (0.2e-3, 0.2e-3 + T)),           # adjacent layer, thin dielectric
         ((0.0, T), (-1.5e-3, -1.5e-3 + 18e-6))]     # far layer, other thickness


def _dblquad_kernel(rho, za, zb):
    # definition of the averaged kernel, integrated numerically (scipy dblquad)
    val, _ = integrate.dblquad(lambda z, zp: 1.0 / np.hypot(rho, z - zp), za[0], za[1],
                               zb[0], zb[1], epsabs=0, epsrel=1e-12)
    return val / ((za[1] - za[0]) * (zb[1] - zb[0]))


@pytest.mark.parametrize("za,zb", PAIRS)
@pytest.mark.parametrize("rho", [1e-6, 3e-5, 1e-4, 5e-4, 2e-3, 1e-2])
def test_kernel_matches_dblquad(za, zb, rho):
    ref = _dblquad_kernel(rho, za, zb)
    assert averaged_kernel(rho, za, zb) == pytest.approx(ref, rel=1e-9)


@pytest.mark.parametrize("za,zb", PAIRS)
def test_branches_agree_at_switch(za, zb):
    d = 0.5 * (za[0] + za[1] - zb[0] - zb[1])
    r_sw = SWITCH_THICKNESSES * max(za[1] - za[0], zb[1] - zb[0])
    if abs(d) >= r_sw:
        rho = np.array([1e-5, 1e-4])
    else:
        rho = np.sqrt(r_sw**2 - d**2) * np.array([0.999, 1.001])
    closed = averaged_kernel(rho, za, zb, branch="closed")
    series = averaged_kernel(rho, za, zb, branch="series")
    np.testing.assert_allclose(series, closed, rtol=1e-11)
    for r in rho:
        assert averaged_kernel(r, za, zb) == pytest.approx(_dblquad_kernel(r, za, zb), rel=1e-10)


def test_series_far_beats_closed_form():
    # far away the corner sum cancels; the series stays at the dblquad value
    za = zb = (0.0, 1e-6)
    rho = 0.05
    assert averaged_kernel(rho, za, zb) == pytest.approx(_dblquad_kernel(rho, za, zb), rel=1e-13)


@pytest.mark.parametrize("za,zb", PAIRS)
@pytest.mark.parametrize("radius", [1e-5, 1e-4, 7e-4, 3e-3])
def test_radial_integrals_match_quad(za, zb, radius):
    p1, p2 = radial_integrals(radius, za, zb)
    k = lambda r: float(averaged_kernel(r, za, zb, branch="closed"))
    # numerical radial integrals (scipy quad), log singularity at 0 is integrable
    q1, _ = integrate.quad(lambda r: r * k(r), 0, radius, epsabs=0, epsrel=1e-12, limit=200)
    q2, _ = integrate.quad(lambda r: r * r * k(r), 0, radius, epsabs=0, epsrel=1e-12, limit=200)
    assert p1 == pytest.approx(q1, rel=1e-9)
    assert p2 == pytest.approx(q2, rel=1e-9)


def test_bad_branch_raises():
    with pytest.raises(ValueError, match="branch"):
        averaged_kernel(1.0, (0, 1), (0, 1), branch="taylor")
