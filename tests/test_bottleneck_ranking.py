"""Bottleneck ranking by concentration (inductance share per metre of current path), so that
the ranking does not depend on how large a region happens to be drawn."""
from functools import cache

import numpy as np
import pytest
import shapely
from shapely.geometry import box

from copperpath.geometry import gallery
from copperpath.geometry.meshing import triangulate
from copperpath.geometry.model import Layer, Layout, MeshOptions, Port, Terminal, Via
from copperpath.solver.analysis import post
from copperpath.solver.solve.sweep import solve
from copperpath.solver.solve.system import assemble

MM = 1e-3


@cache
def _solved(name):
    if name == "neck":
        # 25 x 3 mm strip, 1 mm long and 0.4 mm wide neck in the middle (the case).
        lay = gallery.strip_with_neck(25 * MM, 3 * MM, neck_width=0.4 * MM, neck_length=1 * MM)
        opts = MeshOptions(0.6 * MM, 0.1 * MM)
    else:
        lay, opts = via_starved(), MeshOptions(0.6 * MM, 0.15 * MM)
    mesh = triangulate(lay, opts)
    system = assemble(mesh, lay, [Port("P", "A", "B")])
    return lay, mesh, system, solve(system, [0.0, 1e6, 1e8])


def via_starved():
    """A go trace on L1 over a return strip on L2 (0.2 mm below), joined at the far end by via
    V1; the return reaches terminal B (beside A) only through via V2, 6.5 mm below B, along a
    detour on L2 that runs 4 mm to the side of the L1 stub from V2 up to B.

    Terminals: A (go trace, x < 0.5 mm) and B (the top of the L1 stub, y = -2..-1 mm). The
    go/return pair is closely coupled (little L per length); the detour encloses about
    5 x 7 mm and must hold the most L per length.
    """
    t = 35e-6
    layers = (Layer("L1", 0.2e-3 + t, t, 5.8e7), Layer("L2", 0.0, t, 5.8e7))
    v1 = Via("V1", 9.5 * MM, 0.0, 0.3 * MM, 25e-6, 0.6 * MM, ("L1", "L2"), ("L1", "L2"))
    v2 = Via("V2", 0.5 * MM, -7.5 * MM, 0.3 * MM, 25e-6, 0.6 * MM, ("L1", "L2"), ("L1", "L2"))
    copper = {"L1": shapely.union_all([box(0, -0.5 * MM, 10 * MM, 0.5 * MM),       # go trace
                                       box(0, -8 * MM, 1 * MM, -1 * MM)]),         # stub to B
              "L2": shapely.union_all([box(-5 * MM, -0.5 * MM, 10 * MM, 0.5 * MM),  # return
                                       box(-5 * MM, -8 * MM, -4 * MM, 0.5 * MM),    # detour leg
                                       box(-5 * MM, -8 * MM, 1 * MM, -7 * MM)])}    # to V2
    for via in (v1, v2):
        c = shapely.Point(via.x, via.y)
        for name in copper:
            copper[name] = shapely.union_all([copper[name], c.buffer(0.5 * via.pad)]).difference(
                c.buffer(0.5 * via.drill))
    terms = (Terminal("A", "L1", box(0, -0.5 * MM, 0.5 * MM, 0.5 * MM).intersection(copper["L1"])),
             Terminal("B", "L1", box(0, -2 * MM, 1 * MM, -1 * MM).intersection(copper["L1"])))
    return Layout(layers=layers, copper={k: shapely.MultiPolygon(shapely.get_parts(v).tolist())
                                         for k, v in copper.items()},
                  vias=(v1, v2), terminals=terms)


def _ranked(name, fi):
    lay, mesh, system, result = _solved(name)
    maps = post.port_maps(mesh, system, result, freq_index=fi, port_index=0, layout=lay)
    return mesh, maps, post.find_bottlenecks(mesh, maps)


@pytest.mark.parametrize("fi", [0, 1, 2])
def test_the_neck_ranks_first(fi):
    mesh, maps, found = _ranked("neck", fi)
    top = found[0]
    assert top.kind == "copper"
    assert abs(top.x - 12.5 * MM) < 1.0 * MM and 1.0 * MM < top.y < 2.0 * MM, top
    # The rule: share per metre of current path, largest first.
    keys = [b.concentration for b in found]
    assert keys == sorted(keys, reverse=True)


def test_path_length_of_a_strip_is_its_length():
    """int |K| dA over a strip that carries the whole current is its length, at any width
    (a uniform current sheet K = I / w over the area w l; Ohm's-law current distribution)."""
    mesh, maps, _ = _ranked("neck", 0)
    bulk = np.flatnonzero(mesh.tri_region < 0)
    # Bulk copper between the terminals: 25 mm minus the two 0.3 mm terminals (width / 10).
    assert post.path_length(mesh, maps, bulk) == pytest.approx(25 * MM - 2 * 0.3 * MM, rel=0.03)
    left = bulk[mesh.centroids[bulk, 0] < 6 * MM]
    half = left[mesh.centroids[left, 1] < 1.5 * MM]
    # The half-width band of the same stretch carries half the current: half the path length.
    assert post.path_length(mesh, maps, half) == pytest.approx(
        0.5 * post.path_length(mesh, maps, left), rel=0.05)


def _on_detour(b):
    if b.kind == "via":
        return b.name == "V2"
    return b.kind == "copper" and (b.x < 0 or b.y < -1 * MM)


@pytest.mark.parametrize("fi", [0, 1, 2])
def test_the_starved_return_detour_ranks_first(fi):
    mesh, maps, found = _ranked("via_starved", fi)
    assert _on_detour(found[0]), found[0]
    # and the closely coupled go/return pair is never first
    pair = [b for b in found if b.kind == "copper" and b.x > 1 * MM and abs(b.y) < 0.5 * MM]
    assert all(found.index(b) > 0 for b in pair)


def test_ranking_does_not_depend_on_the_region_drawn():
    """Growing a region along the current (more of the same strip) leaves its concentration
    nearly unchanged while its total share grows in proportion."""
    mesh, maps, _ = _ranked("neck", 0)
    bulk = mesh.tri_region < 0
    x, y = mesh.centroids.T
    short = np.flatnonzero(bulk & (x > 2 * MM) & (x < 5 * MM))
    long = np.flatnonzero(bulk & (x > 2 * MM) & (x < 10 * MM))
    key = lambda t: maps.inductance_share[t].sum() / post.path_length(mesh, maps, t)  # noqa: E731
    assert maps.inductance_share[long].sum() > 2 * maps.inductance_share[short].sum()
    assert key(long) == pytest.approx(key(short), rel=0.15)


# --- the bundled buck variants ----------------------------------------------------------------

BUCK = ("buck_baseline.toml", "buck_cap_near.toml", "buck_pour.toml")


def _buck_ranking(name, mesh_options):
    from dataclasses import replace
    from pathlib import Path

    from copperpath.geometry.case import load_case

    case = load_case(Path(__file__).resolve().parents[1] / "cases" / name)
    case = replace(case, mesh=mesh_options)
    mesh = triangulate(case.layout, case.mesh)
    system = assemble(mesh, case.layout, case.ports, case.lumped, n_freqs=1)
    result = solve(system, [2e8])
    maps = post.port_maps(mesh, system, result, freq_index=0, port_index=0, layout=case.layout,
                          lumped=case.lumped)
    return post.find_bottlenecks(mesh, maps)


COARSE = MeshOptions(max_edge=1.6e-3, min_edge=0.6e-3)


@pytest.mark.parametrize("name", BUCK)
def test_buck_variants_rank_the_fets_then_the_loop_copper(name):
    """Copper first: in the baseline the first bottleneck is the L4 return riser up the
    right-hand side, the long detour of the return (x = 13..16 mm, y = 4.6..18.7 mm on L4); the
    FETs' package inductance (0.3 nH each, lumped components a layout cannot widen) follows the
    copper and vias in every variant."""
    found = _buck_ranking(name, COARSE)
    kinds = [b.kind for b in found]
    assert {b.name for b in found if b.kind == "lumped"} == {"Q1", "Q2"}
    assert kinds[0] != "lumped" and kinds[-2:] == ["lumped", "lumped"], kinds
    copper = [b for b in found if b.kind == "copper"]
    assert copper, found
    if name == "buck_baseline.toml":
        top = found[0]
        assert top.kind == "copper" and top.layer == "L4", top
        assert 13e-3 <= top.x <= 16e-3 and 4.6e-3 <= top.y <= 18.7e-3, top
    keys = [b.concentration for b in found if b.kind != "lumped"]
    assert keys == sorted(keys, reverse=True)


@pytest.mark.slow
@pytest.mark.parametrize("name", BUCK)
def test_buck_ranking_is_stable_under_mesh_refinement(name):
    """The first copper bottleneck stays on the same layer within 2 mm from the coarse mesh
    to the case's own mesh."""
    from pathlib import Path

    from copperpath.geometry.case import load_case

    own = load_case(Path(__file__).resolve().parents[1] / "cases" / name).mesh
    a = [b for b in _buck_ranking(name, COARSE) if b.kind == "copper"][0]
    b = [b for b in _buck_ranking(name, own) if b.kind == "copper"][0]
    assert a.layer == b.layer and np.hypot(a.x - b.x, a.y - b.y) < 2e-3, (a, b)
