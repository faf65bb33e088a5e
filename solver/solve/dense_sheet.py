"""A dense sheet-inductance operator with the interface of the compressed one (:mod:`copperpath.solver.elements.pfft`).

It wraps :func:`copperpath.solver.elements.partial.inductance_matrix` and serves as the reference and test double
of the fast path: the Krylov solve, the preconditioner and everything downstream see only
``@``, ``shape``, ``nbytes``, ``diagonal()`` and ``near()``. Its memory is that of the dense
matrix, so it is no use for large meshes.

``near()`` holds the entries of ``L`` on the near pattern: branch pairs that have a half on a
pair of near triangles (the pairs that :func:`copperpath.solver.elements.partial._near_pairs` gives the accurate
quadrature); ``near(taper=True)`` weights them by the taper of
:mod:`copperpath.solver.elements.taper` over :data:`copperpath.solver.elements.partial.NEAR_FACTOR`
median triangle diameters.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from copperpath.solver.elements import partial
from copperpath.solver.elements import taper as taper_mod


def near_branch_pattern(points, triangles, tri_z, half_branch, half_tri, n_branches):
    """Branch pairs with a half on each of a pair of near triangles (including self pairs).

    Parameters
    ----------
    points, triangles, tri_z, half_branch, half_tri, n_branches
        As :func:`copperpath.solver.elements.partial.inductance_matrix`.

    Returns
    -------
    scipy.sparse.csr_matrix of bool, shape (n_branches, n_branches)
        Symmetric pattern.
    """
    half_branch = np.asarray(half_branch, np.int64)
    used, h_tri = np.unique(np.asarray(half_tri, np.int64), return_inverse=True)
    h_tri = h_tri.ravel()
    tris = np.asarray(triangles, np.int64)[used]
    _, cent, _, diam = partial._triangle_geometry(points, tris)
    _, _, zmid = partial._layer_params(np.asarray(tri_z)[used])
    ptr, idx = partial._near_pairs(cent, zmid, diam)
    owner = np.repeat(np.arange(len(used)), np.diff(ptr))
    n = len(used)
    t = sp.coo_matrix((np.ones(len(idx), bool), (owner, idx)), shape=(n, n)).tocsr()
    t = (t + t.T).astype(bool).astype(np.float64)
    h = sp.csr_matrix((np.ones(len(half_branch)), (half_branch, h_tri)), shape=(n_branches, n))
    return (h @ t @ h.T).astype(bool).tocsr()


class DenseSheetOperator:
    """Partial inductance of the edge branches held as a dense matrix.

    Parameters
    ----------
    matrix : ndarray, shape (B, B)
        Henry.
    pattern : scipy.sparse.csr_matrix of bool, shape (B, B)
        Near pattern (see :func:`near_branch_pattern`).
    positions : ndarray, shape (B, 3)
        Branch positions (metres, NaN off the sheets).
    near_radius : float
        Support of the taper, metres.
    """

    def __init__(self, matrix, pattern, positions, near_radius):
        self._matrix = matrix
        self._pos, self.near_radius = positions, near_radius
        coo = pattern.tocoo()
        self._near = sp.csr_matrix((matrix[coo.row, coo.col], (coo.row, coo.col)),
                                   shape=matrix.shape)

    @property
    def shape(self):
        return self._matrix.shape

    @property
    def nbytes(self):
        near = self._near
        return int(self._matrix.nbytes + near.data.nbytes + near.indices.nbytes
                   + near.indptr.nbytes)

    def __matmul__(self, x):
        x = np.asarray(x)
        if np.iscomplexobj(x):
            return self._matrix @ x.real + 1j * (self._matrix @ x.imag)
        return self._matrix @ x

    def diagonal(self):
        return np.diag(self._matrix).copy()

    def positions(self):
        return self._pos

    def near(self, taper=False):
        return taper_mod.tapered(self._near, self._pos, self.near_radius) if taper else self._near


def build_dense_sheet_operator(points, triangles, tri_z, half_branch, half_tri, half_vertex,
                               half_sign, n_branches, *, tolerance=1e-4, progress=None):
    """Same arguments as :func:`copperpath.solver.elements.partial.inductance_matrix` (``tolerance`` and
    ``progress`` are accepted and unused: the dense matrix is exact to its quadrature).

    Returns
    -------
    DenseSheetOperator
    """
    matrix = partial.inductance_matrix(points, triangles, tri_z, half_branch, half_tri,
                                       half_vertex, half_sign, n_branches)
    pattern = near_branch_pattern(points, triangles, tri_z, half_branch, half_tri, n_branches)
    used, h_tri = np.unique(np.asarray(half_tri, np.int64), return_inverse=True)
    _, cent, _, diam = partial._triangle_geometry(points, np.asarray(triangles, np.int64)[used])
    _, _, zmid = partial._layer_params(np.asarray(tri_z)[used])
    pos = taper_mod.branch_positions(cent, zmid, h_tri.ravel(), np.asarray(half_branch, np.int64),
                                     n_branches)
    return DenseSheetOperator(matrix, pattern, pos, partial.NEAR_FACTOR * float(np.median(diam)))
