"""Checks of the reference formulas themselves, before they judge the solver."""
import math

import numpy as np
import pytest
from scipy import integrate

from tests.validation.references import (MU0, bar_self_inductance, box_integral,
                                         grover_filament_mutual, grover_filament_mutual_offset,
                                         rosa_grover_bar)


def test_hoer_love_short_bar_against_numerical_integration():
    # sixfold integral reduced to the triple integral of the box autocorrelation (scipy tplquad)
    l, w, t = 1.0, 0.6, 0.3
    box = ((0, l), (0, w), (0, t))
    f = lambda z, y, x: (l - x) * (w - y) * (t - z) / math.sqrt(x * x + y * y + z * z)
    num, _ = integrate.tplquad(f, 0, l, 0, w, 0, t, epsabs=0, epsrel=1e-10)
    assert box_integral(box, box) == pytest.approx(8 * num, rel=1e-7)


def test_hoer_love_offset_boxes_against_numerical_integration():
    b1 = ((0, 1.0), (0, 0.5), (0, 0.2))
    b2 = ((0.3, 1.5), (0.8, 1.2), (0.5, 0.6))
    # Gauss-Legendre product over both boxes (the kernel is smooth: the boxes are apart)
    x, wq = np.polynomial.legendre.leggauss(10)

    def nodes(iv):
        return 0.5 * (iv[1] - iv[0]) * x + 0.5 * (iv[1] + iv[0]), 0.5 * (iv[1] - iv[0]) * wq

    pa = [nodes(iv) for iv in b1]
    pb = [nodes(iv) for iv in b2]
    ga = np.stack(np.meshgrid(*[p[0] for p in pa], indexing="ij"), -1).reshape(-1, 3)
    wa = np.einsum("i,j,k->ijk", *[p[1] for p in pa]).ravel()
    gb = np.stack(np.meshgrid(*[p[0] for p in pb], indexing="ij"), -1).reshape(-1, 3)
    wb = np.einsum("i,j,k->ijk", *[p[1] for p in pb]).ravel()
    r = np.linalg.norm(ga[:, None] - gb[None], axis=2)
    num = wa @ (1 / r) @ wb
    assert box_integral(b1, b2) == pytest.approx(num, rel=1e-6)


@pytest.mark.parametrize("l,w,t", [(1.0, 1e-3, 1e-4), (0.3, 1e-3, 35e-6)])
def test_hoer_love_long_bar_matches_rosa_grover(l, w, t):
    # Rosa 1908 / Grover 1946 approximation, valid for l >> w + t
    assert bar_self_inductance(l, w, t) == pytest.approx(rosa_grover_bar(l, w, t), rel=3e-3)


def test_grover_filament_against_numerical_integration():
    l, d = 2e-3, 0.3e-3
    num, _ = integrate.dblquad(lambda z, zp: 1 / math.hypot(d, z - zp), 0, l, 0, l, epsrel=1e-12)
    assert grover_filament_mutual(l, d) == pytest.approx(MU0 / (4 * math.pi) * num, rel=1e-9)


def test_grover_offset_against_numerical_integration():
    z1, z2, d = (0.0, 1e-3), (0.4e-3, 2.5e-3), 0.2e-3
    num, _ = integrate.dblquad(lambda z, zp: 1 / math.hypot(d, z - zp), *z2, *z1, epsrel=1e-12)
    assert grover_filament_mutual_offset(z1, z2, d) == pytest.approx(MU0 / (4 * math.pi) * num, rel=1e-9)
    # equal, aligned filaments reduce to the plain form
    assert grover_filament_mutual_offset((0, 1e-3), (0, 1e-3), d) == pytest.approx(
        grover_filament_mutual(1e-3, d), rel=1e-12)
