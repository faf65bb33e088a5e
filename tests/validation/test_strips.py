"""Straight strips against exact and published formulas (DC, uniform current)."""
import pytest

from copperpath.geometry import gallery
from copperpath.geometry.model import MeshOptions, Port
from tests.validation.references import bar_mutual_inductance, bar_self_inductance
from tests.validation.solver_setups import solve_layout, stacked_strips

SIGMA = 5.8e7  # S/m, annealed copper at 20 degC (IEC 60028, 1925)


@pytest.mark.parametrize("length, width, thickness", [
    (10e-3, 1e-3, 35e-6), (20e-3, 2e-3, 70e-6), (5e-3, 0.5e-3, 18e-6), (4e-3, 1.5e-3, 35e-6)])
def test_strip_dc_resistance_and_partial_self_inductance(length, width, thickness):
    lay = gallery.strip(length, width, thickness)
    tl = 0.1 * width
    res, mesh, _ = solve_layout(lay, [Port("p", "A", "B")])
    inner = length - 2 * tl                  # path between the terminals' inner edges
    # Ohm's law, R = l / (sigma w t)
    assert res.resistance[0, 0, 0] == pytest.approx(inner / (SIGMA * width * thickness), rel=5e-3)
    # Hoer & Love 1965, "Exact inductance equations for rectangular conductors with
    # applications to more complicated geometries", J. Res. NBS 69C; Ruehli 1972, IBM J. Res.
    # Dev. 16: partial self-inductance of a bar with uniform current.
    assert res.inductance[0, 0, 0] == pytest.approx(bar_self_inductance(inner, width, thickness), rel=0.01)


def test_ohms_law_with_coarse_terminal_triangles():
    # A short strip whose terminals are covered by a few large triangles: the edge functions on
    # the terminal boundaries keep only their outside half, so R stays exact (Ohm's law).
    lay = gallery.strip(3e-3, 1e-3, 35e-6, terminal_length=1e-3)
    res, mesh, _ = solve_layout(lay, [Port("p", "A", "B")], mesh=MeshOptions(1.0e-3, 0.5e-3))
    assert mesh.n_triangles < 40
    assert res.resistance[0, 0, 0] == pytest.approx(1e-3 / (SIGMA * 1e-3 * 35e-6), rel=1e-3)


def test_two_triangles_across_match_the_bar_formula():
    # A strip meshed about two triangles across must match the exact bar formula to 0.1 % at DC
    # (Hoer & Love 1965): a quadrature error would show up here, not a mesh one.
    lay = gallery.strip(10e-3, 1e-3, 35e-6)
    res, mesh, _ = solve_layout(lay, [Port("p", "A", "B")], mesh=MeshOptions(1.0e-3, 0.5e-3))
    inner = 10e-3 - 2e-4
    assert res.inductance[0, 0, 0] == pytest.approx(bar_self_inductance(inner, 1e-3, 35e-6), rel=1e-3)


def _bar(x0, x1, y0, y1, z0, z1):
    return ((x0, x1), (y0, y1), (z0, z1))


@pytest.mark.parametrize("gap", [0.5e-3, 2e-3])
def test_mutual_of_strips_side_by_side(gap):
    w, t, length = 1e-3, 35e-6, 10e-3
    lay = gallery.two_strips(length, w, gap, t)
    ports = [Port("s1", "A1", "B1"), Port("s2", "A2", "B2")]
    res, _, _ = solve_layout(lay, ports)
    tl = 0.1 * w
    b1 = _bar(tl, length - tl, 0.0, w, 0.0, t)
    b2 = _bar(tl, length - tl, w + gap, 2 * w + gap, 0.0, t)
    # Hoer & Love 1965: mutual partial inductance of parallel bars.
    assert res.inductance[0, 0, 1] == pytest.approx(bar_mutual_inductance(b1, b2), rel=0.01)
    assert res.inductance[0, 0, 1] == pytest.approx(res.inductance[0, 1, 0], rel=1e-9)


@pytest.mark.parametrize("gap", [0.2e-3, 1.0e-3])
def test_mutual_of_stacked_strips(gap):
    w, t, length = 1e-3, 35e-6, 10e-3
    lay = stacked_strips(length, w, t, gap, terminal_length=0.1 * w)
    ports = [Port("top", "A1", "B1"), Port("bottom", "A2", "B2")]
    res, _, _ = solve_layout(lay, ports)
    tl = 0.1 * w
    b1 = _bar(tl, length - tl, 0.0, w, t + gap, 2 * t + gap)
    b2 = _bar(tl, length - tl, 0.0, w, 0.0, t)
    # Hoer & Love 1965: mutual partial inductance of stacked parallel bars.
    assert res.inductance[0, 0, 1] == pytest.approx(bar_mutual_inductance(b1, b2), rel=0.01)
    for k in range(2):
        assert res.inductance[0, k, k] == pytest.approx(bar_self_inductance(length - 2 * tl, w, t), rel=0.01)


def test_rectangular_loop_equals_sum_of_partial_inductances():
    # Ruehli 1972: the loop inductance of a closed path of straight bars is the sum of their
    # partial self and mutual inductances (orthogonal bars have none), Hoer & Love 1965 bars.
    X, Y, w, t, gap = 30e-3, 20e-3, 0.5e-3, 35e-6, 0.5e-3
    tl = 0.5 * w
    lay = gallery.rect_loop(X, Y, w, gap, t, terminal_length=tl)
    res, _, _ = solve_layout(lay, [Port("p", "P", "N")])
    h = w / 2
    xc = X / 2
    z = (0.0, t)
    # bars along centre lines, current counter-clockwise: (box in its own frame, axis, direction)
    # bottom-right: from the N terminal to the corner (+x); right (+y); top (-x); left (-y);
    # bottom-left: from the corner to the P terminal (+x).
    bars = [
        (_bar(xc + gap / 2 + tl, X - h, 0, w, *z), "x", +1),
        (_bar(h, Y - h, X - w, X, *z), "y", +1),
        (_bar(h, X - h, Y - w, Y, *z), "x", -1),
        (_bar(h, Y - h, 0, w, *z), "y", -1),
        (_bar(h, xc - gap / 2 - tl, 0, w, *z), "x", +1),
    ]
    total = 0.0
    for bi, ai, si in bars:
        for bj, aj, sj in bars:
            if ai == aj:
                total += si * sj * bar_mutual_inductance(bi, bj)
    assert res.inductance[0, 0, 0] == pytest.approx(total, rel=0.02)
