"""The compressed (pre-corrected FFT) sheet inductance against the dense partial-inductance matrix.

The reference is :func:`copperpath.solver.elements.partial.inductance_matrix`, itself checked against the exact bar
formulas of Hoer & Love 1965 (tests/test_partial.py). The method is the pre-corrected FFT of
Phillips & White 1997 (IEEE TCAD 16(10)); the error bounds are the tolerance contract of
:func:`copperpath.solver.elements.pfft.build_sheet_operator` (relative 2-norm of ``L @ X``).
"""
import dataclasses

import numpy as np
import pytest

from copperpath.geometry import gallery
from copperpath.geometry.meshing import triangulate
from copperpath.geometry.model import MeshOptions
from copperpath.solver.elements import partial
from copperpath.solver.elements import pfft
from copperpath.solver.graph.network import EDGE, build_network
from tests.validation.solver_setups import stacked_strips


def _halves(layout, options, sublayers=1):
    layout = dataclasses.replace(layout, layers=tuple(
        dataclasses.replace(la, sublayers=sublayers) for la in layout.layers))
    mesh = triangulate(layout, options)
    net = build_network(mesh, layout)
    args = (mesh.points, mesh.triangles[net.sheet_tri], net.sheet_z, net.half_branch,
            net.half_tri, net.half_vertex, net.half_sign, net.n_branches)
    return net, args


@pytest.fixture(scope="module")
def strip_plane():
    """A strip over a plane joined by a via: two layers, a graded mesh, one barrel branch."""
    net, args = _halves(gallery.strip_over_plane(length=6e-3, plane_width=3e-3),
                        MeshOptions(1e-3, 0.2e-3))
    return net, args, partial.inductance_matrix(*args)


_OPS = {}


def _op(args, tolerance):
    """The operator of ``args`` at ``tolerance``, built once per module."""
    key = (id(args), tolerance)
    if key not in _OPS:
        _OPS[key] = pfft.build_sheet_operator(*args, tolerance=tolerance)
    return _OPS[key]


@pytest.fixture(scope="module")
def stacked_sublayers():
    """Two stacked strips 0.1 mm apart, each in two sublayers: four sheet planes."""
    layout = stacked_strips(4e-3, 1e-3, 35e-6, 0.1e-3, terminal_length=0.2e-3)
    net, args = _halves(layout, MeshOptions(0.4e-3, 0.15e-3), sublayers=2)
    return net, args, partial.inductance_matrix(*args)


def _rel(a, b):
    return np.linalg.norm(a - b) / np.linalg.norm(b)


def _random(n, k, seed=0):
    return np.random.default_rng(seed).standard_normal((n, k))


@pytest.mark.parametrize("tolerance", [1e-3, 1e-4])
def test_product_matches_dense(strip_plane, tolerance):
    net, args, L = strip_plane
    op = _op(args, tolerance)
    assert op.shape == L.shape
    x = _random(L.shape[0], 3)
    assert _rel(op @ x, L @ x) < tolerance
    # one vector, and a complex block (real and imaginary parts go through separately)
    assert _rel(op @ x[:, 0], L @ x[:, 0]) < tolerance
    z = x[:, :2] + 1j * x[:, 1:]
    assert (op @ z).dtype == np.complex128
    assert _rel(op @ z, L @ z) < tolerance
    # the barrel branch has no sheet current: its row and column are zero
    bar = np.flatnonzero(net.branch_kind != EDGE)
    assert np.all((op @ x)[bar] == 0.0)
    assert op.nbytes > 0


def test_sublayers_and_stacked_layers(stacked_sublayers):
    net, args, L = stacked_sublayers
    op = _op(args, 1e-4)
    assert op.n_planes == 4
    x = _random(L.shape[0], 2, seed=1)
    assert _rel(op @ x, L @ x) < 1e-4
    # a smoother current: L x
    assert _rel(op @ (L @ x), L @ (L @ x)) < 1e-4


def test_tolerance_moves_error(strip_plane):
    """A tighter tolerance gives a smaller error; each setting meets its own bound."""
    _, args, L = strip_plane
    x = _random(L.shape[0], 2, seed=2)
    errs = [_rel(_op(args, t) @ x, L @ x) for t in (1e-2, 1e-3, 1e-4)]
    assert errs[0] > errs[1] > errs[2]
    assert errs[1] < 1e-3 and errs[2] < 1e-4


def test_symmetric(strip_plane):
    _, args, L = strip_plane
    op = _op(args, 1e-4)
    x, y = _random(L.shape[0], 2, seed=3).T
    lhs, rhs = x @ (op @ y), y @ (op @ x)
    assert abs(lhs - rhs) < 1e-6 * np.linalg.norm(x) * np.linalg.norm(op @ y)


def test_near_part_is_dense_entries(strip_plane):
    """near() holds the exact entries: equal to the dense ones on its pattern, symmetric."""
    net, args, L = strip_plane
    op = _op(args, 1e-4)
    x = _random(L.shape[0], 1, seed=4)
    before = op @ x
    near = op.near()
    assert np.array_equal(op @ x, before)          # near() leaves the operator alone
    r, c = near.nonzero()
    scale = np.abs(L).max()
    assert np.abs(near.data - L[r, c]).max() < 1e-12 * scale
    assert abs(near - near.T).max() < 1e-14 * scale          # summation order only
    assert np.abs(op.diagonal() - np.diag(L)).max() < 1e-12 * scale
    edges = np.flatnonzero(net.branch_kind == EDGE)
    # every branch is near itself and its neighbours; the near part is sparse
    assert np.all(near.diagonal()[edges] > 0)
    assert near.nnz < 0.3 * L.size


def test_near_part_of_sublayers(stacked_sublayers):
    _, args, L = stacked_sublayers
    near = _op(args, 1e-3).near()
    r, c = near.nonzero()
    assert np.abs(near.data - L[r, c]).max() < 1e-12 * np.abs(L).max()


def test_bad_arguments(strip_plane):
    _, args, L = strip_plane
    with pytest.raises(ValueError, match="tolerance"):
        pfft.build_sheet_operator(*args, tolerance=0.0)
    op = _op(args, 1e-2)
    with pytest.raises(ValueError, match="shape"):
        op @ np.ones(L.shape[0] + 1)
