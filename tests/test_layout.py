"""Tests of copperpath.geometry.layout and copperpath.geometry.connectivity: copper areas from plane geometry.

Areas of rectangles are exact; circles are the inscribed regular n-gons of
copperpath.geometry.shapes, whose area (n / 2) r^2 sin(2 pi / n) is checked in tests/test_shapes.py.
"""
import math

import numpy as np
import pytest
import shapely

from copperpath.geometry.connectivity import bodies, floating_islands, islands
from copperpath.geometry.errors import InputError
from copperpath.geometry.layout import CopperShape, as_multipolygon, build_layout, via_array
from copperpath.geometry.model import Layer, Lumped, Terminal, Via
from copperpath.geometry.shapes import circle, n_segments, rect

MM = 1e-3
L1 = Layer("L1", 1.565e-3, 35e-6)
L2 = Layer("L2", 0.0, 35e-6)
L3 = Layer("L3", -1e-3, 35e-6)


def ngon_area(r):
    n = n_segments(r)
    return 0.5 * n * r * r * math.sin(2 * math.pi / n)


def box(x0, y0, x1, y1, layer="L1", clear=False):
    return CopperShape(layer, rect(x0 * MM, y0 * MM, x1 * MM, y1 * MM), clear)


def via(name, x, y, *, drill=0.3, pad=0.6, span=("L1", "L2")):
    return Via(name, x * MM, y * MM, drill * MM, 25e-6, pad * MM, span)


def test_union_of_overlapping_shapes():
    lay = build_layout([L1], [box(0, 0, 4, 2), box(2, 1, 6, 3)])
    assert lay.copper["L1"].area == pytest.approx((8 + 8 - 2) * MM ** 2, rel=1e-12)
    assert len(lay.copper["L1"].geoms) == 1


def test_clear_applies_in_file_order():
    shapes = [box(0, 0, 10, 2), box(2, 0, 8, 2, clear=True), box(4, 0, 5, 2), box(0, 5, 1, 6)]
    lay = build_layout([L1], shapes)
    # 10x2, minus 6x2, plus 1x2 put back, plus a separate 1x1
    assert lay.copper["L1"].area == pytest.approx((20 - 12 + 2 + 1) * MM ** 2, rel=1e-12)
    assert len(lay.copper["L1"].geoms) == 4
    # a clear after everything wins over earlier additions
    lay = build_layout([L1], shapes + [box(0, 0, 10, 2, clear=True)])
    assert lay.copper["L1"].area == pytest.approx(1 * MM ** 2, rel=1e-12)


def test_layers_kept_apart_and_sorted():
    lay = build_layout([L2, L1], [box(0, 0, 1, 1, "L2"), box(0, 0, 2, 1)])
    assert [la.name for la in lay.layers] == ["L1", "L2"]
    assert lay.copper["L2"].area == pytest.approx(1 * MM ** 2)
    assert lay.copper["L1"].area == pytest.approx(2 * MM ** 2)


def test_window_crop():
    lay = build_layout([L1], [box(0, 0, 10, 2)], window=(2 * MM, -1 * MM, 5 * MM, 1 * MM))
    assert lay.copper["L1"].area == pytest.approx(3 * MM ** 2, rel=1e-12)
    assert lay.copper["L1"].bounds == pytest.approx((2 * MM, 0, 5 * MM, 1 * MM))


def test_window_drops_outside_vias_and_crops_pads():
    vias = [via("in", 4.9, 1.0), via("out", 8, 1)]
    lay = build_layout([L1, L2], [box(0, 0, 10, 2), box(0, 0, 10, 2, "L2")], vias,
                       window=(0, 0, 5 * MM, 2 * MM))
    assert [v.name for v in lay.vias] == ["in"]
    assert lay.copper["L1"].bounds[2] <= 5 * MM + 1e-12


def test_via_array_count_and_positions():
    vs = via_array(via("g", 1, 2), (0.5 * MM, -1 * MM), (3, 2))
    assert len(vs) == 6
    xy = np.array([(v.x, v.y) for v in vs]) / MM
    np.testing.assert_allclose(xy, [[1, 2], [1.5, 2], [2, 2], [1, 1], [1.5, 1], [2, 1]])
    assert [v.name for v in vs][:2] == ["g[0,0]", "g[1,0]"] and vs[3].name == "g[0,1]"
    assert all(v.drill == 0.3 * MM and v.span == ("L1", "L2") for v in vs)


def test_drill_holes_cut_and_pads_added():
    # L1: a 1 mm wide strip ending at the via centre: half the pad sticks out and is added.
    # L2: a plane that covers the pad: only the hole is cut. L3: outside the span.
    shapes = [box(0, 0, 10, 1), box(0, -5, 20, 5, "L2"), box(0, -5, 20, 5, "L3")]
    lay = build_layout([L1, L2, L3], shapes, [via("v", 10, 0.5, pad=0.8)])
    r_pad, r_hole = 0.4 * MM, 0.15 * MM
    (v,) = lay.vias
    assert v.connects == ("L1", "L2")
    octagon = 2 * math.sqrt(2) * r_hole ** 2                # the drill hole is a regular octagon
    assert lay.copper["L1"].area == pytest.approx(10 * MM ** 2 + ngon_area(r_pad) / 2 - octagon, rel=1e-9)
    assert lay.copper["L2"].area == pytest.approx(200 * MM ** 2 - octagon, rel=1e-12)
    assert lay.copper["L3"].area == pytest.approx(200 * MM ** 2, rel=1e-12)
    for name in ("L1", "L2"):
        assert not lay.copper[name].contains(shapely.Point(10 * MM, 0.5 * MM))
        assert lay.copper[name].contains(shapely.Point(10.3 * MM, 0.5 * MM))


def test_pad_not_added_without_copper_and_touching_point_does_not_connect():
    # L2 copper only touches the pad disk at a point (x = 10.3 mm, the pad's rightmost vertex)
    shapes = [box(0, 0, 10, 1), box(10.3, 0, 12, 1, "L2")]
    lay = build_layout([L1, L2], shapes, [via("v", 10, 0.5)])
    assert lay.vias[0].connects == ("L1",)
    assert lay.copper["L2"].area == pytest.approx(1.7 * MM ** 2, rel=1e-12)


def test_terminal_intersected_with_copper():
    t = Terminal("A", "L1", rect(-1 * MM, 0, 1 * MM, 1 * MM))
    lay = build_layout([L1], [box(0, 0, 10, 1)], terminals=[t])
    assert lay.terminals[0].shape.area == pytest.approx(1 * MM ** 2, rel=1e-12)


def test_terminal_errors():
    off = Terminal("A", "L1", rect(20 * MM, 0, 21 * MM, 1 * MM))
    with pytest.raises(InputError, match=r"^x.toml: \[\[terminal\]\] 'A': does not lie on the copper"):
        build_layout([L1], [box(0, 0, 10, 1)], terminals=[off], source="x.toml")
    with pytest.raises(InputError, match="layer 'L2' has no copper"):
        build_layout([L1, L2], [box(0, 0, 10, 1)], terminals=[Terminal("B", "L2", rect(0, 0, 1, 1))])
    with pytest.raises(InputError, match=r"\[\[copper\]\] #1: unknown layer 'L9'"):
        build_layout([L1], [box(0, 0, 1, 1, "L9")])


def test_artwork_is_the_base_of_the_shapes():
    lay = build_layout([L1], [box(0, 0, 1, 1, clear=True)], artwork={"L1": rect(0, 0, 2 * MM, 1 * MM)})
    assert lay.copper["L1"].area == pytest.approx(1 * MM ** 2, rel=1e-12)


def test_deterministic_and_on_grid():
    shapes = [CopperShape("L1", circle((0.1234567891 * MM, 0), 1 * MM)), box(0, 0, 3, 0.5)]
    a = build_layout([L1], shapes, [via("v", 0, 0, span=("L1",))])
    b = build_layout([L1], shapes, [via("v", 0, 0, span=("L1",))])
    assert a.copper["L1"].wkb == b.copper["L1"].wkb
    xy = shapely.get_coordinates(a.copper["L1"]) / 1e-9
    np.testing.assert_allclose(xy, np.round(xy), atol=1e-6)


def test_as_multipolygon():
    g = shapely.GeometryCollection([shapely.box(0, 0, 1, 1), shapely.LineString([(0, 0), (5, 5)])])
    assert as_multipolygon(g).area == 1 and len(as_multipolygon(g).geoms) == 1


# ------------------------------------------------------------------ connectivity
def two_strips(**kw):
    """Two strips on L1 and a bridge on L2 under their inner ends."""
    shapes = [box(0, 0, 4, 1), box(6, 0, 10, 1), box(3, 0, 7, 1, "L2")]
    terms = [Terminal("A", "L1", rect(0, 0, 1 * MM, 1 * MM)), Terminal("B", "L1", rect(9 * MM, 0, 10 * MM, 1 * MM)),
             Terminal("C", "L1", rect(3 * MM, 0, 4 * MM, 1 * MM)), Terminal("D", "L1", rect(6 * MM, 0, 7 * MM, 1 * MM))]
    return build_layout([L1, L2], shapes, terminals=terms, **kw)


def test_islands_and_bodies_without_joins():
    lay = two_strips()
    assert [name for name, _ in islands(lay)] == ["L1", "L1", "L2"]
    found = bodies(lay)
    assert found.n_bodies == 3 and not found.joined("A", "B")
    assert found.joined("A", "C")
    assert floating_islands(found, ["A", "B"]) == [2]            # the L2 bridge


def test_vias_join_bodies():
    lay = two_strips(vias=[via("v1", 3.5, 0.5), via("v2", 6.5, 0.5)])
    found = bodies(lay)
    assert found.n_bodies == 1 and found.joined("A", "B")
    assert floating_islands(found, ["A", "B"]) == []
    lay = two_strips(vias=[via("v1", 3.5, 0.5)])
    assert not bodies(lay).joined("A", "B") and bodies(lay).n_bodies == 2


def test_lumped_and_terminals_join_bodies():
    lay = two_strips()
    found = bodies(lay, [Lumped("R", ("C", "D"), resistance=1e-3)])
    assert found.joined("A", "B") and found.n_bodies == 2
    # a terminal that covers both strips makes them one body
    wide = Terminal("W", "L1", rect(3 * MM, 0, 7 * MM, 1 * MM))
    lay = build_layout([L1], [box(0, 0, 4, 1), box(6, 0, 10, 1)], terminals=[wide])
    assert bodies(lay).n_bodies == 1 and len(lay.terminals[0].shape.geoms) == 2


def test_bodies_of_empty_layout():
    found = bodies(build_layout([L1]))
    assert found.n_bodies == 0 and found.islands == ()
