"""Tests of copperpath.geometry.gallery: the layouts have the stated geometry (exact areas by hand)."""
import math

import pytest
import shapely
from shapely.geometry import LineString

from copperpath.geometry import gallery

MM = 1e-3


def _valid(layout):
    names = [layer.name for layer in layout.layers]
    z = [layer.z for layer in layout.layers]
    assert z == sorted(z, reverse=True), "layers must run from the top down"
    for name in names:
        assert layout.copper[name].is_valid and layout.copper[name].area > 0
    for term in layout.terminals:
        assert term.layer in names
        assert term.shape.area > 0
        assert term.shape.difference(layout.copper[term.layer]).area < 1e-18
    for via in layout.vias:
        for name in via.connects:
            copper = layout.copper[name]
            assert not copper.contains(shapely.Point(via.x, via.y))  # drill cut out
            ring = shapely.Point(via.x, via.y).buffer(0.5 * via.pad).difference(
                shapely.Point(via.x, via.y).buffer(0.5 * via.drill))
            assert ring.difference(copper).area < 1e-15  # pad present


def test_strip():
    lay = gallery.strip(10 * MM, 1 * MM, terminal_length=0.2 * MM)
    _valid(lay)
    assert lay.copper["L1"].area == pytest.approx(10 * MM * 1 * MM, rel=1e-12)
    a, b = lay.terminals
    assert (a.name, b.name) == ("A", "B")
    assert a.shape.bounds == pytest.approx((0, 0, 0.2 * MM, 1 * MM))
    assert b.shape.bounds == pytest.approx((9.8 * MM, 0, 10 * MM, 1 * MM))
    assert lay.layers[0].thickness == 35e-6


def test_two_strips_gap():
    lay = gallery.two_strips(10 * MM, 1 * MM, gap=0.5 * MM)
    _valid(lay)
    s1, s2 = shapely.get_parts(lay.copper["L1"])
    assert s1.distance(s2) == pytest.approx(0.5 * MM, rel=1e-12)
    assert [t.name for t in lay.terminals] == ["A1", "B1", "A2", "B2"]


def test_plane_pair_stack():
    lay = gallery.plane_pair(20 * MM, 10 * MM, separation=0.2 * MM, thickness=35e-6)
    _valid(lay)
    top, bottom = lay.layers
    assert top.z - bottom.z_top == pytest.approx(0.2 * MM, rel=1e-12)  # dielectric gap
    assert {t.name: t.layer for t in lay.terminals} == {"A1": "top", "B1": "top",
                                                       "A2": "bottom", "B2": "bottom"}


def test_strip_over_plane_via():
    lay = gallery.strip_over_plane(20 * MM, 1 * MM, height=0.2 * MM, plane_width=10 * MM)
    _valid(lay)
    (via,) = lay.vias
    assert via.connects == ("top", "bottom")
    drill = math.pi * (0.5 * via.drill) ** 2
    # 64-gon of the drill (shapely's default 16 segments per quarter circle), exact area
    drill_poly = 0.5 * 64 * (0.5 * via.drill) ** 2 * math.sin(2 * math.pi / 64)
    assert drill_poly == pytest.approx(drill, rel=2e-3)
    assert lay.copper["top"].area == pytest.approx(20 * MM * 1 * MM - drill_poly, rel=1e-9)
    assert lay.copper["bottom"].area == pytest.approx(20 * MM * 10 * MM - drill_poly, rel=1e-9)
    assert [t.name for t in lay.terminals] == ["S", "G"]


def test_rect_loop_area_and_gap():
    w, gap = 1 * MM, 1 * MM
    lay = gallery.rect_loop(20 * MM, 10 * MM, width=w, gap=gap)
    _valid(lay)
    # ring of outer 20 x 10 and inner 18 x 8, minus the gap
    assert lay.copper["L1"].area == pytest.approx(20 * 10 * MM**2 - 18 * 8 * MM**2 - gap * w, rel=1e-12)
    p, n = lay.terminals
    assert p.shape.distance(n.shape) == pytest.approx(gap, rel=1e-12)
    assert len(shapely.get_parts(lay.copper["L1"])) == 1  # one conductor, open at the gap


def test_strip_with_neck_width():
    lay = gallery.strip_with_neck(10 * MM, 2 * MM, neck_width=0.4 * MM, neck_length=1 * MM)
    _valid(lay)
    cut = LineString([(5 * MM, -1 * MM), (5 * MM, 3 * MM)]).intersection(lay.copper["L1"])
    assert cut.length == pytest.approx(0.4 * MM, rel=1e-12)
    assert lay.copper["L1"].area == pytest.approx(10 * 2 * MM**2 - 1 * 1.6 * MM**2, rel=1e-12)
