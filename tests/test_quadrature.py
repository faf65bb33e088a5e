"""Triangle rules and triangle-pair moments of the averaged kernel."""
import numpy as np
import pytest

from copperpath.solver.elements.kernels import averaged_kernel
from copperpath.solver.elements.quadrature import edge_graded_rule, pair_moments, subdivided_rule, triangle_rule

T = 35e-6
TA = np.array([[0, 0], [1e-3, 0], [0.3e-3, 0.8e-3]])
TB = np.array([[1e-3, 0], [1.2e-3, 0.9e-3], [0.3e-3, 0.8e-3]])  # shares an edge with TA
TC = TA + np.array([0.2e-3, 0.1e-3])                              # overlaps TA in plan


def _monomial_exact(i, j):
    # int over the unit triangle of x^i y^j = i! j! / (i + j + 2)!  (classical Dirichlet formula)
    from math import factorial
    return factorial(i) * factorial(j) / factorial(i + j + 2)


@pytest.mark.parametrize("degree", [1, 2, 4, 5, 6])
def test_rules_integrate_polynomials_exactly(degree):
    bary, w = triangle_rule(degree)
    x, y = bary[:, 1], bary[:, 2]
    for i in range(degree + 1):
        for j in range(degree + 1 - i):
            assert 0.5 * np.sum(w * x**i * y**j) == pytest.approx(_monomial_exact(i, j), rel=1e-12)


@pytest.mark.parametrize("rule", [subdivided_rule(4, 2), edge_graded_rule(6, 6)])
def test_composite_rules_are_consistent(rule):
    bary, w = rule
    assert w.sum() == pytest.approx(1.0, rel=1e-13)
    assert np.all(bary >= -1e-14) and np.allclose(bary.sum(1), 1.0)
    assert 0.5 * np.sum(w * bary[:, 1] ** 2 * bary[:, 2]) == pytest.approx(_monomial_exact(2, 1), rel=1e-12)


def _brute_force_smooth(ta, tb, za, zb, levels=4):
    """Product Gauss on midpoint-refined triangles (numpy only), for a non-singular kernel."""
    bary, w = subdivided_rule(5, levels)
    xa, xb = bary @ ta, bary @ tb
    area = lambda t: 0.5 * abs((t[1, 0] - t[0, 0]) * (t[2, 1] - t[0, 1]) - (t[1, 1] - t[0, 1]) * (t[2, 0] - t[0, 0]))
    wa, wb = w * area(ta), w * area(tb)
    rho = np.linalg.norm(xa[:, None, :] - xb[None, :, :], axis=2)
    k = averaged_kernel(rho, za, zb) * wa[:, None] * wb[None, :]
    ra, rb = xa - ta.mean(0), xb - tb.mean(0)
    return np.array([k.sum(), *(k.sum(1) @ ra), *(k.sum(0) @ rb), np.einsum("ij,id,jd->", k, ra, rb)])


def _half(m, ta, tb, p, q):
    pt, qt = p - ta.mean(0), q - tb.mean(0)
    return m[5] - qt @ m[1:3] - pt @ m[3:5] + (pt @ qt) * m[0]


def test_other_layer_near_pair_matches_brute_force():
    za, zb = (0.0, T), (0.2e-3, 0.2e-3 + T)
    ref = _brute_force_smooth(TA, TC, za, zb)
    m = pair_moments(TA, TC, za, zb, method="near", degree=6, levels=1)
    assert m[0] == pytest.approx(ref[0], rel=1e-5)
    assert _half(m, TA, TC, TA[2], TC[0]) == pytest.approx(_half(ref, TA, TC, TA[2], TC[0]), rel=1e-5)


@pytest.mark.parametrize("tb", [TA, TB], ids=["self", "adjacent"])
def test_singular_pairs_converge(tb):
    # production rules for touching pairs (edge-graded 6 x 6, copperpath.solver.elements.partial's w panels) against a
    # heavily refined outer rule and finer w panels; the independent check of these pairs is the
    # strip against the exact bar formula (tests/test_partial.py, Hoer & Love 1965)
    from copperpath.solver.elements.partial import N_W, W_PANEL
    z = (0.0, T)
    ref = pair_moments(TA, tb, z, z, degree=6, levels=4, n_w=12, panel=0.7)
    from copperpath.solver.elements.quadrature import near_moments, _area  # noqa: F401  (production path below)
    from copperpath.solver.elements.kernels import pair_params
    bary, w = edge_graded_rule(6, 6)
    out = np.empty(6)
    glx, glw = np.polynomial.legendre.leggauss(N_W)
    ca, cb = TA.mean(0), tb.mean(0)
    near_moments(TA, ca[0], ca[1], _area(TA), np.ascontiguousarray(tb, dtype=float), cb[0], cb[1],
                 pair_params(0, T, 0, T), bary, w, glx, glw, W_PANEL, out)
    assert out[0] == pytest.approx(ref[0], rel=1e-5)
    p, q = TA[2], tb[0]
    assert _half(out, TA, tb, p, q) == pytest.approx(_half(ref, TA, tb, p, q), rel=1e-5)


def test_plain_gauss_fails_on_adjacent_pair():
    # why the near correction exists: product Gauss errs by percents on touching pairs
    z = (0.0, T)
    ref = pair_moments(TA, TB, z, z, degree=6, levels=3)
    far = pair_moments(TA, TB, z, z, method="far", degree=2)
    errs = [abs(_half(far, TA, TB, p, q) / _half(ref, TA, TB, p, q) - 1) for p in TA for q in TB]
    assert max(errs) > 1e-2


def test_far_rule_matches_near_rule_far_away():
    z = (0.0, T)
    tb = TA + np.array([8e-3, 3e-3])
    ref = pair_moments(TA, tb, z, z, degree=6)
    far = pair_moments(TA, tb, z, z, method="far", degree=4)
    np.testing.assert_allclose(far, ref, rtol=1e-6, atol=1e-9 * abs(ref).max())


def test_triangle_distance_matches_shapely():
    # smallest distance between two triangles (0 where they overlap) against shapely's
    # polygon distance (GEOS), on random counter-clockwise triangles, disjoint and overlapping
    from shapely.geometry import Polygon

    from copperpath.solver.elements.quadrature import triangle_distance

    rng = np.random.default_rng(3)
    n_zero = 0
    for _ in range(400):
        t = rng.uniform(0, 1, (2, 3, 2))
        t[1] += rng.uniform(-1.0, 1.5, 2)
        for k in range(2):
            d1, d2 = t[k, 1] - t[k, 0], t[k, 2] - t[k, 0]
            if d1[0] * d2[1] - d1[1] * d2[0] < 0:
                t[k] = t[k, ::-1]
        ref = Polygon(t[0]).distance(Polygon(t[1]))
        n_zero += ref == 0.0
        assert triangle_distance(t[0], t[1]) == pytest.approx(ref, abs=1e-12)
    assert 20 < n_zero < 380
