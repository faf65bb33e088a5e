"""Topology of the network and its loop basis on hand-made meshes."""
import numpy as np
import pytest

from copperpath.geometry.errors import InputError
from copperpath.geometry.model import Layer, Layout, Lumped, Via
from copperpath.solver.graph.loops import loop_basis
from copperpath.solver.graph.network import BARREL, LUMPED, build_network
from tests.helpers import grid_mesh

MM = 1e-3


def _layout(n_layers=1, vias=()):
    layers = tuple(Layer(f"L{k + 1}", z=-k * MM, thickness=35e-6) for k in range(n_layers))
    return Layout(layers=layers, copper={}, vias=tuple(vias))


def _check(mesh, net, basis):
    C = basis.loops
    D = net.incidence
    assert abs(D @ C).max() == 0          # every column is a closed loop (KCL)
    n_bodies = len(np.unique(net.bodies))
    assert C.shape[1] == net.n_branches - net.n_nodes + n_bodies
    # independent columns: full column rank
    dense = C.toarray()
    assert np.linalg.matrix_rank(dense) == C.shape[1]


def test_plate_with_hole_and_terminals():
    regions = {"terminal:A": lambda l, x, y: x < 1 * MM, "terminal:B": lambda l, x, y: x > 9 * MM}
    mesh = grid_mesh(10, 6, 10 * MM, 6 * MM, regions=regions,
                     drop=lambda x, y: 4 * MM < x < 6 * MM and 2 * MM < y < 4 * MM)
    net = build_network(mesh, _layout())
    basis = loop_basis(mesh, net)
    _check(mesh, net, basis)
    # one loop goes around the hole: more loops than vertex loops
    assert basis.loops.shape[1] == basis.n_vertex_loops + 1


def test_two_layers_vias_and_lumped():
    regions = {
        "terminal:A": lambda l, x, y: (l == 0) & (x < 1 * MM) & (y < 1 * MM),
        "terminal:B": lambda l, x, y: (l == 0) & (x > 9 * MM) & (y < 1 * MM),
        "via:V1@L1": lambda l, x, y: (l == 0) & (abs(x - 5.5 * MM) < 0.5 * MM) & (abs(y - 5.5 * MM) < 0.5 * MM),
        "via:V1@L2": lambda l, x, y: (l == 1) & (abs(x - 5.5 * MM) < 0.5 * MM) & (abs(y - 5.5 * MM) < 0.5 * MM),
        "via:V2@L1": lambda l, x, y: (l == 0) & (abs(x - 2.5 * MM) < 0.5 * MM) & (abs(y - 3.5 * MM) < 0.5 * MM),
        "via:V2@L2": lambda l, x, y: (l == 1) & (abs(x - 2.5 * MM) < 0.5 * MM) & (abs(y - 3.5 * MM) < 0.5 * MM),
    }
    mesh = grid_mesh(10, 8, 10 * MM, 8 * MM, layers=2, regions=regions)
    vias = [Via(f"V{k}", x, y, 0.3 * MM, 25e-6, 0.6 * MM, ("L1", "L2"), ("L1", "L2"))
            for k, (x, y) in ((1, (5.5 * MM, 5.5 * MM)), (2, (2.5 * MM, 3.5 * MM)))]
    lumped = [Lumped("Q", ("A", "B"), 1e-3, 0.0)]
    net = build_network(mesh, _layout(2, vias), lumped)
    assert (net.branch_kind == BARREL).sum() == 2 and (net.branch_kind == LUMPED).sum() == 1
    basis = loop_basis(mesh, net)
    _check(mesh, net, basis)
    # two vias between the same two plates and a lumped short: two extra loops
    assert basis.loops.shape[1] - basis.n_vertex_loops == 2


def test_port_path_and_bodies():
    regions = {"terminal:A": lambda l, x, y: (l == 0) & (x < 1 * MM), "terminal:B": lambda l, x, y: (l == 1) & (x > 5 * MM)}
    mesh = grid_mesh(6, 3, 6 * MM, 3 * MM, layers=2, regions=regions)
    net = build_network(mesh, _layout(2))
    basis = loop_basis(mesh, net)
    _check(mesh, net, basis)
    with pytest.raises(InputError, match="different bodies"):
        basis.path(net, net.terminal_node("A"), net.terminal_node("B"))


def test_port_path_satisfies_kcl():
    regions = {"terminal:A": lambda l, x, y: x < 1 * MM, "terminal:B": lambda l, x, y: x > 5 * MM}
    mesh = grid_mesh(6, 3, 6 * MM, 3 * MM, regions=regions)
    net = build_network(mesh, _layout())
    basis = loop_basis(mesh, net)
    a, b = net.terminal_node("A"), net.terminal_node("B")
    s = net.incidence @ basis.path(net, a, b)
    expected = np.zeros(net.n_nodes)
    expected[a], expected[b] = 1.0, -1.0
    assert np.allclose(s, expected)


def test_sublayers_add_one_loop_per_copy():
    regions = {"terminal:A": lambda l, x, y: x < 1 * MM, "terminal:B": lambda l, x, y: x > 5 * MM}
    mesh = grid_mesh(6, 3, 6 * MM, 3 * MM, regions=regions)
    layout = Layout(layers=(Layer("L1", 0.0, 35e-6, sublayers=3),), copper={})
    net = build_network(mesh, layout)
    single = build_network(mesh, _layout())
    assert net.n_branches == 3 * single.n_branches
    assert len(net.sheet_tri) == 3 * mesh.n_triangles
    # sheet resistances of the sublayers add up in parallel to the layer's
    per_tri = np.bincount(net.sheet_tri, 1 / net.sheet_resistance)
    assert np.allclose(per_tri, 5.8e7 * 35e-6)
    basis = loop_basis(mesh, net)
    _check(mesh, net, basis)
