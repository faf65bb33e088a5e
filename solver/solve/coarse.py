"""Coarse correction of the fast path's preconditioner: smooth loop-current patterns.

The sparse near-field preconditioner (:mod:`copperpath.solver.solve.krylov`) sees each vertex
loop's couplings within a few grid spacings. A pattern of many neighbouring loops carrying the
same current (a large-scale circulating current) couples mostly through the far field it
drops, so its preconditioned eigenvalue drifts away from 1 as the mesh is refined and the
GMRES iteration count grows with the unknowns. A coarse space fixes those patterns exactly:

- aggregates: the vertex loops are grouped by the cell of a coarse 2-D grid their centroid lies
  in, separately for every copper plane (z), so ``P`` (n x m, zeros and ones) sums the loops of
  an aggregate into the loop around its boundary; loops with more than :data:`LONG_LOOP`
  branches (around holes, through vias and lumped branches) and loops with no sheet branch are
  aggregates of their own;
- coarse operator: ``A_c(w) = P^T C^T R C P + jw P^T C^T L C P``, the frequency-independent
  products ``C^T L C P`` formed once per sweep by ``m`` products of the compressed ``L``;
- two-level preconditioner, the "A-DEF2" form (Tang, Nabben, Vuik & Erlangga 2009, "Comparison
  of two-level preconditioners derived from deflation, domain decomposition and multigrid
  methods", J. Sci. Comput. 39; from memory): ``z = M^-1 (r - A Q r) + Q r`` with
  ``Q = P A_c^-1 P^T``, using the stored ``A P``, so no extra product of ``L`` per iteration.

Measured on the four-layer section (DEVELOPERS.md): 28k unknowns, 405 aggregates of 4 mm: 22
iterations at 1-100 MHz instead of 31-40.
"""
from __future__ import annotations

import math

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp

#: Aggregates aimed at over the whole layout (all planes together), and the fewest loops per
#: aggregate on average (a small mesh gets fewer aggregates: its coarse space stays coarse).
TARGET_AGGREGATES = 400
MIN_LOOPS_PER_AGGREGATE = 16
#: Loops with more branches than this are coarse unknowns of their own.
LONG_LOOP = 12
#: Columns of ``C P`` multiplied by ``L`` at a time.
CHUNK = 64


def aggregates(C, positions, target):
    """Aggregate of every loop: a coarse-cell and plane index, or its own for long loops.

    Parameters
    ----------
    C : scipy.sparse matrix, shape (B, n)
        Loop basis.
    positions : ndarray, shape (B, 3)
        Branch positions in metres, NaN for branches that are not sheet branches.
    target : int
        Aggregates to aim at.

    Returns
    -------
    ndarray of int64, shape (n,)
        Aggregate of each loop, ``0 .. m - 1``.
    """
    C = sp.csc_matrix(C)
    n = C.shape[1]
    sheet = np.isfinite(positions[:, 0])
    absC = abs(C)
    on_sheet = absC.T @ sheet.astype(float)
    pos = absC.T @ np.where(sheet[:, None], positions, 0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        pos = pos / on_sheet[:, None]
    n_branch = np.diff(C.indptr)
    own = (n_branch > LONG_LOOP) | (on_sheet == 0)
    local = ~own
    target = min(int(target), int(local.sum()) // MIN_LOOPS_PER_AGGREGATE)
    key = np.zeros(0, np.int64)
    if local.any():
        xy = pos[local, :2]
        lo, hi = xy.min(axis=0), xy.max(axis=0)
        _, plane = np.unique(np.round(pos[local, 2] * 1e7), return_inverse=True)
        n_planes = int(plane.max()) + 1
        area = max(float(np.prod(np.maximum(hi - lo, 1e-9))), 1e-18)
        cell = math.sqrt(n_planes * area / max(int(target), 1))
        ij = np.floor((xy - lo) / cell).astype(np.int64)
        ny = int(ij[:, 1].max()) + 1
        nx = int(ij[:, 0].max()) + 1
        key = (plane.ravel() * nx + ij[:, 0]) * ny + ij[:, 1]
    _, agg = np.unique(key, return_inverse=True)
    out = np.empty(n, np.int64)
    m = int(agg.max()) + 1 if local.any() else 0
    out[local] = agg.ravel()
    out[own] = m + np.arange(int(own.sum()))
    return out


class CoarseSpace:
    """The two-level correction of one sweep.

    Parameters
    ----------
    C : scipy.sparse matrix, shape (B, n)
        Loop basis.
    Rc : scipy.sparse matrix, shape (n, n)
        ``C^T R C``, ohm.
    L : object
        ``L @ X`` (:class:`copperpath.solver.solve.system.InductanceOperator`), henry.
    positions : ndarray, shape (B, 3)
        Branch positions (NaN off the sheets), metres.
    target : int, optional
        Aggregates to aim at; default :data:`TARGET_AGGREGATES`.

    Attributes
    ----------
    size : int
        Coarse unknowns ``m``.
    """

    def __init__(self, C, Rc, L, positions, target=None):
        C = sp.csc_matrix(C)
        agg = aggregates(C, positions, TARGET_AGGREGATES if target is None else target)
        n, m = C.shape[1], int(agg.max()) + 1
        self.size = m
        self.P = sp.csc_matrix((np.ones(n), (np.arange(n), agg)), shape=(n, m))
        self.Pt = self.P.T.tocsr()
        CP = (C @ self.P).tocsc()
        Ct = C.T.tocsr()
        self.LcP = np.empty((n, m))
        for c0 in range(0, m, CHUNK):
            c1 = min(m, c0 + CHUNK)
            self.LcP[:, c0:c1] = Ct @ np.asarray(L @ CP[:, c0:c1].toarray())
        self.RcP = (sp.csr_matrix(Rc) @ self.P).tocsc()
        lcc = self.Pt @ self.LcP
        self.Lcc = 0.5 * (lcc + lcc.T)
        rcc = (self.Pt @ self.RcP).toarray()
        self.Rcc = 0.5 * (rcc + rcc.T)

    def precondition(self, w, smoother):
        """``r -> M^-1 (r - A Q r) + Q r`` at ``w``, ``Q = P A_c(w)^-1 P^T``.

        Parameters
        ----------
        w : float
            Angular frequency, rad/s.
        smoother : callable
            ``v -> M^-1 v``, the one-level preconditioner at ``w``.
        """
        lu = sla.lu_factor(self.Rcc + 1j * w * self.Lcc)

        def apply(r):
            q = sla.lu_solve(lu, self.Pt @ r)
            lq = self.LcP @ q.real + 1j * (self.LcP @ q.imag)     # no complex copy of LcP
            aq = self.RcP @ q + 1j * w * lq
            return smoother(r - aq) + self.P @ q
        return apply
