"""Tests of copperpath.geometry.meshing: conformity, exact areas, quality, regions, size field."""
import subprocess
import sys
import textwrap
import time

import numpy as np
import pytest
import shapely
from shapely.geometry import Point, box

from copperpath.geometry import gallery
from copperpath.geometry.errors import InputError
from copperpath.geometry.meshing import (GRID, interior_edges, layer_copper, layout_regions, triangulate,
                              via_pad_region)
from copperpath.geometry.model import Layer, Layout, MeshOptions, Terminal, Via

MM = 1e-3


def check_conforming(mesh):
    """Every edge is used by one (boundary) or two triangles of one layer, the interior edges
    are exactly ``mesh.edges`` with their triangles, no node is shared by two layers, and
    every triangle is counter-clockwise with positive area."""
    assert (mesh.areas > 0.0).all()
    t = mesh.triangles
    pairs = np.sort(t[:, [0, 1, 1, 2, 2, 0]].reshape(-1, 2), axis=1)
    uniq, count = np.unique(pairs, axis=0, return_counts=True)
    assert count.max() <= 2
    shared = uniq[count == 2]
    np.testing.assert_array_equal(shared, mesh.edges)
    # the two triangles recorded for each interior edge hold that edge, on one layer
    for k in (0, 1):
        tri = t[mesh.edge_tris[:, k]]
        for j in (0, 1):
            assert (tri == mesh.edges[:, j:j + 1]).any(axis=1).all()
    assert (mesh.edge_tris[:, 0] < mesh.edge_tris[:, 1]).all()
    assert (mesh.tri_layer[mesh.edge_tris[:, 0]] == mesh.tri_layer[mesh.edge_tris[:, 1]]).all()
    node_layer = np.full(len(mesh.points), -1)
    node_layer[t.ravel()] = np.repeat(mesh.tri_layer, 3)
    assert (node_layer[t] == mesh.tri_layer[:, None]).all()
    assert (node_layer >= 0).all()  # no unused nodes


def layer_area(mesh, name):
    return mesh.areas[mesh.tri_layer == mesh.layer_names.index(name)].sum()


LAYOUTS = {
    "strip": (gallery.strip(), MeshOptions(0.5 * MM, 0.05 * MM)),
    "two_strips": (gallery.two_strips(), MeshOptions(0.5 * MM, 0.05 * MM)),
    "plane_pair": (gallery.plane_pair(10 * MM, 5 * MM), MeshOptions(1.0 * MM, 0.1 * MM)),
    "strip_over_plane": (gallery.strip_over_plane(), MeshOptions(1.0 * MM, 0.1 * MM)),
    "rect_loop": (gallery.rect_loop(), MeshOptions(0.5 * MM, 0.05 * MM)),
    "strip_with_neck": (gallery.strip_with_neck(), MeshOptions(0.5 * MM, 0.05 * MM)),
}


@pytest.fixture(scope="module", params=sorted(LAYOUTS))
def meshed(request):
    layout, options = LAYOUTS[request.param]
    return layout, triangulate(layout, options)


def test_conforming(meshed):
    check_conforming(meshed[1])


def test_areas_sum_to_copper(meshed):
    # Exact geometry: the triangles tile the (1 nm-snapped) copper.
    layout, mesh = meshed
    for layer in layout.layers:
        snapped = layer_copper(layout, layer.name)
        assert layer_area(mesh, layer.name) == pytest.approx(snapped.area, rel=1e-9)
        # snapping moves each boundary vertex by at most half a grid step per axis
        raw = layout.copper[layer.name]
        assert abs(snapped.area - raw.area) <= raw.length * GRID


def test_quality(meshed):
    # Delaunay refinement bounds the smallest angle for inputs without small angles
    # (Shewchuk 2002, "Delaunay refinement algorithms for triangular mesh generation").
    assert meshed[1].angles_deg.min() >= 25.0


def test_regions_are_covered_exactly(meshed):
    layout, mesh = meshed
    regions = layout_regions(layout)
    assert mesh.region_names == tuple(r.name for r in regions)
    for k, reg in enumerate(regions):
        tagged = mesh.tri_region == k
        assert (mesh.tri_layer[tagged] == mesh.layer_names.index(reg.layer)).all()
        assert mesh.areas[tagged].sum() == pytest.approx(reg.shape.area, rel=1e-9)
        c = mesh.centroids[tagged]
        assert shapely.contains_xy(reg.shape, c[:, 0], c[:, 1]).all()
    bulk = mesh.centroids[mesh.tri_region < 0]
    for reg in regions:
        assert not shapely.contains_xy(reg.shape, bulk[:, 0], bulk[:, 1]).any()


def test_terminal_and_via_names():
    layout = gallery.strip_over_plane()
    names = [r.name for r in layout_regions(layout)]
    assert names == ["terminal:S", "via:V1@top", "terminal:G", "via:V1@bottom"]


def test_deterministic():
    layout, options = LAYOUTS["strip_over_plane"]
    a, b = triangulate(layout, options), triangulate(layout, options)
    for field in ("points", "triangles", "tri_layer", "tri_region", "edges", "edge_tris"):
        np.testing.assert_array_equal(getattr(a, field), getattr(b, field))


def _crossings(mesh, x):
    """Triangles cut by the vertical line at ``x``."""
    px = mesh.points[mesh.triangles][:, :, 0]
    return int(((px.min(axis=1) < x) & (px.max(axis=1) > x)).sum())


def test_narrow_strip_is_about_two_triangles_across():
    # Target edge about half the width in a trace (common practice for DC current flow).
    w = 1 * MM
    layout = gallery.strip(40 * w, w)
    coarse = triangulate(layout, MeshOptions(100 * w, 0.02 * w))
    fine = triangulate(layout, MeshOptions(0.05 * w, 0.02 * w))
    mid = [_crossings(coarse, x * w) for x in (10.3, 20.3, 30.3)]
    assert max(mid) <= 8 and min(mid) >= 2
    assert _crossings(fine, 20.3 * w) >= 20
    sel = np.abs(coarse.centroids[:, 0] - 20 * w) < 10 * w
    mean_edge = np.sqrt(coarse.areas[sel] / (np.sqrt(3) / 4)).mean()
    assert 0.3 * w < mean_edge < 0.8 * w


def test_fine_near_terminals_coarse_far_away():
    layout = gallery.plane_pair(20 * MM, 10 * MM)
    options = MeshOptions(1.0 * MM, 0.05 * MM)
    mesh = triangulate(layout, options)
    top = mesh.tri_layer == 0
    edge = np.sqrt(mesh.areas / (np.sqrt(3) / 4))
    x = mesh.centroids[:, 0]
    near = top & (mesh.tri_region < 0) & (np.abs(x - 1 * MM) < 0.1 * MM)  # A1 ends at 1 mm
    far = top & (np.abs(x - 10 * MM) < 2 * MM)
    assert edge[near].max() < 0.25 * options.max_edge
    assert np.median(edge[far]) > 0.5 * options.max_edge
    # inside the equipotential region the mesh is left coarse
    inside = top & (mesh.tri_region == 0) & (x < 0.5 * MM)
    assert np.median(edge[inside]) > 2 * options.min_edge


def test_no_refinement_along_straight_edges():
    # A wide plate with no features: no boundary layer of small triangles (DESIGN "Cost").
    plate = box(0, 0, 20 * MM, 20 * MM)
    layout = Layout((Layer("L1", 0.0, 35e-6),), {"L1": plate})
    mesh = triangulate(layout, MeshOptions(1 * MM, 0.05 * MM))
    edge = np.sqrt(mesh.areas / (np.sqrt(3) / 4))
    assert edge.min() > 0.3 * MM
    assert mesh.n_triangles < 2 * 400 / (np.sqrt(3) / 4)  # twice the equilateral count at 1 mm


def test_neck_and_reentrant_corners_are_refined():
    layout = gallery.strip_with_neck(10 * MM, 4 * MM, neck_width=0.4 * MM, neck_length=1 * MM)
    mesh = triangulate(layout, MeshOptions(1 * MM, 0.05 * MM))
    check_conforming(mesh)
    edge = np.sqrt(mesh.areas / (np.sqrt(3) / 4))
    c = mesh.centroids
    neck = (np.abs(c[:, 0] - 5 * MM) < 0.4 * MM)
    wide = (np.abs(c[:, 0] - 2.5 * MM) < 0.3 * MM)
    assert edge[neck].max() <= 0.4 * MM  # about half the neck width, not max_edge
    assert np.median(edge[wide]) > 2 * np.median(edge[neck])
    corner = np.hypot(c[:, 0] - 4.5 * MM, c[:, 1] - 1.8 * MM) < 0.1 * MM
    assert corner.any() and edge[corner].max() < 0.2 * MM


def test_holes_and_island_in_hole():
    outer = box(0, 0, 10 * MM, 10 * MM).difference(box(3 * MM, 3 * MM, 7 * MM, 7 * MM))
    island = box(4 * MM, 4 * MM, 6 * MM, 6 * MM).difference(Point(5 * MM, 5 * MM).buffer(0.3 * MM))
    copper = shapely.MultiPolygon([outer, island])
    layout = Layout((Layer("L1", 0.0, 35e-6),), {"L1": copper})
    mesh = triangulate(layout, MeshOptions(1 * MM, 0.1 * MM))
    check_conforming(mesh)
    assert mesh.areas.sum() == pytest.approx(layer_copper(layout, "L1").area, rel=1e-9)
    c = mesh.centroids
    on_island = shapely.contains_xy(island, c[:, 0], c[:, 1])
    assert mesh.areas[on_island].sum() == pytest.approx(island.area, rel=1e-6)
    assert not shapely.contains_xy(Point(5 * MM, 5 * MM).buffer(0.29 * MM), c[:, 0], c[:, 1]).any()


def test_duplicate_vertices_do_not_crash():
    # Triangle dies with SIGSEGV on a duplicate vertex used by a segment: run in a child.
    code = textwrap.dedent("""
        import shapely
        from copperpath.geometry.model import Layer, Layout, MeshOptions, Terminal
        from copperpath.geometry.meshing import triangulate
        ring = [(0, 0), (0, 0), (1e-3, 0), (1e-3, 0), (1e-3, 1e-3), (1e-3 + 1e-13, 1e-3),
                (0.5e-3, 1e-3), (0.5e-3, 1e-3 + 1e-13), (0, 1e-3)]
        poly = shapely.Polygon(ring, [[(2e-4, 2e-4), (4e-4, 2e-4), (4e-4, 2e-4), (4e-4, 4e-4)]])
        term = shapely.Polygon([(0, 0), (1e-4, 0), (1e-4, 1e-3), (1e-4, 1e-3), (0, 1e-3)])
        lay = Layout((Layer("L1", 0.0, 35e-6),), {"L1": poly}, (),
                     (Terminal("A", "L1", term),))
        mesh = triangulate(lay, MeshOptions(2e-4, 2e-5))
        print(mesh.n_triangles, round(mesh.areas.sum() / poly.area, 9))
    """)
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert run.returncode == 0, run.stderr
    count, ratio = run.stdout.split()
    assert int(count) > 0 and float(ratio) == pytest.approx(1.0, abs=1e-8)


def _strip_with_via(via_x, pad=0.6 * MM):
    strip = box(0, 0, 10 * MM, 1 * MM)
    via = Via("V9", via_x, 0.5 * MM, 0.3 * MM, 25e-6, pad, ("L1",), ("L1",))
    c = Point(via.x, via.y)
    copper = shapely.union_all([strip, c.buffer(0.5 * pad)]).difference(c.buffer(0.15 * MM))
    term = Terminal("A", "L1", box(0, 0, 0.5 * MM, 1 * MM).intersection(copper))
    return Layout((Layer("L1", 0.0, 35e-6),), {"L1": copper}, (via,), (term,))


def test_via_pad_overlapping_terminal_joins_it():
    layout = _strip_with_via(0.6 * MM)  # pad reaches 0.3 mm into the 0.5 mm terminal
    regions = layout_regions(layout)
    assert [r.name for r in regions] == ["terminal:A"]
    assert regions[0].vias == ("V9",)
    copper = layout.copper["L1"]
    expected = shapely.union_all([layout.terminals[0].shape,
                                  via_pad_region(layout.vias[0]).intersection(copper)])
    assert regions[0].shape.area == pytest.approx(expected.area, rel=1e-9)
    mesh = triangulate(layout, MeshOptions(0.5 * MM, 0.05 * MM))
    check_conforming(mesh)
    assert mesh.areas[mesh.tri_region == 0].sum() == pytest.approx(regions[0].shape.area, rel=1e-9)


def test_via_pad_apart_from_terminal_is_own_region():
    layout = _strip_with_via(5 * MM)
    regions = layout_regions(layout)
    assert [r.name for r in regions] == ["terminal:A", "via:V9@L1"]
    # the pad region holds the layout's pad disk (minus the drill)
    disk = Point(5 * MM, 0.5 * MM).buffer(0.3 * MM).difference(Point(5 * MM, 0.5 * MM).buffer(0.15 * MM))
    assert disk.difference(regions[1].shape).area < disk.length * GRID


def test_overlapping_terminals_are_an_input_error():
    layout = gallery.strip()
    extra = Terminal("C", "L1", box(0, 0, 0.2 * MM, 1 * MM))
    bad = Layout(layout.layers, layout.copper, (), layout.terminals + (extra,))
    with pytest.raises(InputError, match="terminal 'A'.*overlaps terminal 'C'"):
        layout_regions(bad)


def test_terminal_on_unknown_layer_is_an_input_error():
    layout = gallery.strip()
    bad = Layout(layout.layers, layout.copper, (), (Terminal("Z", "L7", box(0, 0, 1, 1)),))
    with pytest.raises(InputError, match="terminal 'Z'.*'L7'"):
        triangulate(bad)


def test_bad_options():
    with pytest.raises(ValueError, match="min_edge"):
        triangulate(gallery.strip(), MeshOptions(max_edge=1e-4, min_edge=1e-3))


def test_interior_edges_rejects_three_triangles_on_an_edge():
    with pytest.raises(ValueError, match="more than two"):
        interior_edges(np.array([[0, 1, 2], [1, 0, 3], [0, 1, 4]]))


def test_layers_have_distinct_nodes():
    layout = gallery.plane_pair(4 * MM, 2 * MM)  # identical copper on both layers
    mesh = triangulate(layout, MeshOptions(0.5 * MM, 0.1 * MM))
    check_conforming(mesh)
    n0 = np.unique(mesh.triangles[mesh.tri_layer == 0])
    n1 = np.unique(mesh.triangles[mesh.tri_layer == 1])
    assert not np.intersect1d(n0, n1).size


def pcb_like_layer(seed=0, n_traces=40, n_holes=120):
    """Random traces, pads (some are terminals), a pour with clearances and vias."""
    rng = np.random.default_rng(seed)
    traces = [shapely.LineString(rng.uniform(0, 40 * MM, (3, 2))).buffer(rng.uniform(0.2, 1.0) * MM / 2)
              for _ in range(n_traces)]
    pads = [box(x, y, x + 2 * MM, y + 1.5 * MM) for x, y in rng.uniform(0, 38 * MM, (12, 2))]
    holes = [Point(p).buffer(0.4 * MM) for p in rng.uniform([50 * MM, 0], [90 * MM, 40 * MM], (n_holes, 2))]
    pour = box(50 * MM, 0, 90 * MM, 40 * MM).difference(shapely.union_all(holes))
    vias = []
    for k, (x, y) in enumerate(rng.uniform([52 * MM, 2 * MM], [88 * MM, 38 * MM], (30, 2))):
        if min(Point(x, y).distance(h) for h in holes) > 0.6 * MM:
            vias.append(Via(f"V{k}", x, y, 0.3 * MM, 25e-6, 0.6 * MM, ("L1",), ("L1",)))
    copper = shapely.union_all(traces + pads + [pour] + [Point(v.x, v.y).buffer(0.3 * MM) for v in vias])
    copper = copper.difference(shapely.union_all([Point(v.x, v.y).buffer(0.15 * MM) for v in vias]))
    terms, used = [], shapely.Polygon()
    for k, pad in enumerate(pads):
        if not pad.intersects(used):
            used = used.union(pad)
            terms.append(Terminal(f"T{k}", "L1", pad.intersection(copper)))
    return Layout((Layer("L1", 0.0, 35e-6),), {"L1": copper}, tuple(vias), tuple(terms))


@pytest.mark.slow
def test_pcb_like_layer_timing():
    layout = pcb_like_layer()
    start = time.perf_counter()
    mesh = triangulate(layout, MeshOptions(1 * MM, 0.1 * MM))
    elapsed = time.perf_counter() - start
    check_conforming(mesh)
    assert mesh.areas.sum() == pytest.approx(layer_copper(layout, "L1").area, rel=1e-9)
    angles = mesh.angles_deg.min(axis=1)
    print(f"{mesh.n_triangles} triangles in {elapsed:.2f} s, min angle {angles.min():.2f}, "
          f"{(angles < 25).mean():.2e} below 25 deg")
    assert elapsed < 10.0 * max(1.0, mesh.n_triangles / 50_000)
    assert (angles < 25).mean() < 1e-3
