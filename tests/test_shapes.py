"""Tests of copperpath.geometry.shapes: areas against closed forms of plane geometry.

References: the area of a regular n-gon inscribed in a circle of radius r is
(n / 2) r^2 sin(2 pi / n) (Euclid, Elements IV; any geometry handbook, e.g. Bronshtein and
Semendyayev, Handbook of Mathematics, 2015, sec. 3.1); a stadium (rectangle L x 2r with
half-disc ends) has area 2 r L + pi r^2. Each reference is first checked against its limit
or against shapely with a very fine buffer (a general-purpose geometry library).
"""
import math

import numpy as np
import pytest
import shapely
from shapely.geometry import LineString, Point

from copperpath.geometry.shapes import (CHORD_TOL, MAX_SEGMENTS, MIN_SEGMENTS, circle, n_segments,
                             polygon, polygon_problem, rect, trace)


def ngon_area(n, r):
    """Area of the regular n-gon inscribed in a circle of radius r."""
    return 0.5 * n * r * r * math.sin(2 * math.pi / n)


def test_ngon_reference_limit():
    assert ngon_area(4, 1.0) == pytest.approx(2.0)                  # the inscribed square
    assert ngon_area(100_000, 1.0) == pytest.approx(math.pi, rel=1e-9)


@pytest.mark.parametrize("r", [10e-6, 0.15e-3, 0.3e-3, 1e-3, 5e-3, 20e-3])
def test_n_segments_meets_chord_tolerance(r):
    n = n_segments(r)
    assert n % 4 == 0 and MIN_SEGMENTS <= n <= MAX_SEGMENTS
    sagitta = r * (1 - math.cos(math.pi / n))
    assert sagitta <= CHORD_TOL or n in (MIN_SEGMENTS, MAX_SEGMENTS)
    if n > MIN_SEGMENTS:          # and it is the fewest (to a multiple of 4) that does
        assert r * (1 - math.cos(math.pi / (n - 4))) > CHORD_TOL


@pytest.mark.parametrize("r", [0.15e-3, 1e-3, 5e-3])
def test_circle_area_and_distance(r):
    c = circle((1e-3, -2e-3), r)
    n = n_segments(r)
    assert len(c.exterior.coords) - 1 == n
    assert c.area == pytest.approx(ngon_area(n, r), rel=1e-12)
    fine = Point(1e-3, -2e-3).buffer(r, quad_segs=2048)
    assert shapely.hausdorff_distance(c.exterior, fine.exterior) <= CHORD_TOL * 1.01
    assert c.is_valid and c.exterior.is_ccw


def test_circle_deterministic_and_symmetric():
    a, b = circle((0, 0), 0.3e-3), circle((0, 0), 0.3e-3)
    assert a.wkb == b.wkb
    left = a.intersection(shapely.box(-1, -1, 0, 1)).area
    assert left == pytest.approx(a.area / 2, rel=1e-12)     # n multiple of 4: symmetric


def test_rect_any_corner_order():
    assert rect(3, 4, 1, 1).area == pytest.approx(6.0)
    assert rect(3, 4, 1, 1).bounds == (1.0, 1.0, 3.0, 4.0)
    with pytest.raises(ValueError):
        rect(0, 0, 0, 1)


def test_polygon_with_hole():
    p = polygon([[0, 0], [4, 0], [4, 4], [0, 4]], [[[1, 1], [3, 1], [3, 2], [1, 2]]])
    assert p.area == pytest.approx(16 - 2)
    assert p.exterior.is_ccw and not p.interiors[0].is_ccw
    # clockwise input gives the same region
    q = polygon([[0, 4], [4, 4], [4, 0], [0, 0]])
    assert q.area == pytest.approx(16) and q.exterior.is_ccw


@pytest.mark.parametrize("shell, holes, words", [
    ([[0, 0], [1, 1]], [], "2 distinct points"),
    ([[0, 0], [1, 0], [1, 0], [0, 0]], [], "2 distinct points"),
    ([[0, 0], [2, 2], [2, 0], [0, 2]], [], "self-intersecting near (1, 1)"),
    ([[0, 0], [4, 0], [4, 4], [0, 4]], [[[5, 5], [6, 5], [6, 6]]], "hole lies outside shell"),
    ([[0, 0], [1, 0], [2, 0]], [], "self-intersecting"),
])
def test_polygon_problems(shell, holes, words):
    assert words in polygon_problem(shell, holes)
    with pytest.raises(ValueError, match="polygon"):
        polygon(shell, holes)


def test_stadium_reference_against_shapely():
    # check the closed form itself with a very fine buffer
    fine = LineString([(0, 0), (10, 0)]).buffer(0.5, quad_segs=4096)
    assert fine.area == pytest.approx(10 * 1.0 + math.pi * 0.25, rel=1e-6)


@pytest.mark.parametrize("w", [0.2e-3, 1e-3, 3e-3])
def test_trace_is_a_stadium(w):
    r, length = w / 2, 12e-3
    t = trace([[0, 0], [length, 0]], w)
    exact = 2 * r * length + math.pi * r * r
    # the two half-disc ends together are the inscribed n-gon
    assert t.area == pytest.approx(length * w + ngon_area(n_segments(r), r), rel=1e-12)
    # and the polygon lies inside the true stadium, within the chord tolerance of its arcs
    assert exact - CHORD_TOL * 2 * math.pi * r <= t.area <= exact
    assert t.bounds == pytest.approx((-r, -r, length + r, r))


def joint_area(lengths, r, theta):
    """Area of a two-segment trace with one round joint turning by theta (r small).

    Union of two stadiums: 2 r L + pi r^2 (end caps) + r^2 theta / 2 (outer sector of the
    joint) - r^2 tan(theta / 2) (inner overlap of the two rectangles); own derivation from
    plane geometry, checked below against shapely with a fine buffer.
    """
    return 2 * r * sum(lengths) + math.pi * r * r + r * r * (theta / 2 - math.tan(theta / 2))


@pytest.mark.parametrize("theta_deg", [30, 90, 120])
def test_trace_round_joint(theta_deg):
    th = math.radians(theta_deg)
    a, b = 5e-3, 4e-3
    pts = [[-a, 0], [0, 0], [b * math.cos(th), b * math.sin(th)]]
    r = 0.4e-3
    ref = joint_area((a, b), r, th)
    fine = LineString(pts).buffer(r, quad_segs=4096)
    assert fine.area == pytest.approx(ref, rel=1e-7)            # the reference itself
    t = trace(pts, 2 * r)
    arcs = 2 * math.pi * r + r * th                             # total length of round parts
    assert ref - CHORD_TOL * arcs <= t.area <= ref * (1 + 1e-12)
    assert t.is_valid


def test_trace_errors():
    with pytest.raises(ValueError, match="width"):
        trace([[0, 0], [1, 0]], 0)
    with pytest.raises(ValueError, match="two distinct points"):
        trace([[1, 1], [1, 1]], 0.1)


def test_polygon_vertices_unchanged():
    pts = np.array([[0, 0], [3e-3, 0], [3e-3, 1e-3], [0, 2e-3]])
    p = polygon(pts)
    assert p.area == pytest.approx(4.5e-6)
