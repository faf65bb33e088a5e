"""A positive-definite sparse part of the partial inductance, for the preconditioner.

Keeping the exact entries of ``L`` for the near branch pairs and dropping the rest (a hard
cut of the 1/r kernel) gives an indefinite matrix: on a four-layer section its smallest
eigenvalues in the loop basis were about -2e-3 of the largest diagonal entry, which puts
eigenvalues of the preconditioned system around the origin. Multiplying every kept entry by a
compactly supported positive-definite function of the branch distance instead,

    L_taper = L o W,    W_ij = phi(|x_i - x_j| / rho),

keeps it positive definite: ``L`` is positive definite, ``W`` is positive semi-definite with a
unit diagonal, and the elementwise (Schur) product of the two is positive definite (Schur
1911; Horn & Johnson 1991, "Topics in Matrix Analysis", Thm. 5.2.1). ``phi`` is Wendland's
C2 function ``(1 - r)^4 (4 r + 1)`` for ``r < 1``, positive definite on points in 3-D (Wendland
1995, "Piecewise polynomial, positive definite and compactly supported radial functions of
minimal degree", Adv. Comput. Math. 4). Strictly, every pair closer than ``rho`` must be in
the sparse pattern; the compressed operator's pattern holds all triangle pairs within its
near radius, so a branch pair closer than ``rho`` is missing only where a branch's triangles
reach beyond it, and the loss is measured, not assumed (``tests/test_taper.py``).
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp


def wendland(r):
    """Wendland's C2 function ``(1 - r)^4 (4 r + 1)`` for ``0 <= r < 1``, 0 beyond."""
    r = np.clip(np.asarray(r, float), 0.0, 1.0)
    return (1.0 - r) ** 4 * (4.0 * r + 1.0)


def branch_positions(cent, zmid, h_tri, h_branch, n_branches):
    """Mean 3-D centroid of the triangles of each branch's halves (B, 3), metres.

    Parameters
    ----------
    cent : ndarray, shape (V, 2)
        Triangle centroids, metres.
    zmid : ndarray, shape (V,)
        Mid-plane elevation of each triangle's copper, metres.
    h_tri, h_branch : ndarray of int64, shape (H,)
        Triangle and branch of each half.
    n_branches : int

    Returns
    -------
    ndarray, shape (B, 3)
        NaN for branches with no half.
    """
    cnt = np.bincount(h_branch, minlength=n_branches).astype(float)
    cnt[cnt == 0] = np.nan
    xyz = np.column_stack([cent[h_tri], zmid[h_tri]])
    return np.column_stack([np.bincount(h_branch, xyz[:, k], n_branches)
                            for k in range(3)]) / cnt[:, None]


def tapered(near, positions, radius):
    """``near o W`` (csr): every entry times ``wendland(|x_i - x_j| / radius)``.

    Parameters
    ----------
    near : scipy.sparse matrix, shape (B, B)
        Symmetric sparse part of ``L``, henry.
    positions : ndarray, shape (B, 3)
        Branch positions, metres.
    radius : float
        Support of the taper, metres.
    """
    near = sp.coo_matrix(near)
    d = np.linalg.norm(positions[near.row] - positions[near.col], axis=1)
    w = wendland(d / radius)
    ok = w > 0
    return sp.csr_matrix((near.data[ok] * w[ok], (near.row[ok], near.col[ok])), shape=near.shape)
