"""Sparse near-field part of the partial inductance: the triangle pairs a grid cannot represent.

The pre-corrected FFT (:mod:`copperpath.solver.elements.pfft`) represents every triangle pair through its grid
charges; that is accurate only for pairs far apart compared with the grid spacing and with
the triangles. For the near pairs listed here (centroid distance in 3-D below a radius, see
:func:`near_pair_list`) this module computes two sets of the six pair moments of
:mod:`copperpath.solver.elements.quadrature`:

- the exact moments, by the same rule the dense :func:`copperpath.solver.elements.partial.inductance_matrix` uses
  (inside :data:`copperpath.solver.elements.partial.NEAR_FACTOR` diameters the rule of the
  pair's class, polar near-field quadrature or product Gauss, and product Gauss of the
  distance level beyond), for the same owner triangle of each pair, so the entries agree with
  the dense matrix to rounding;
- the grid moments, the same pair as the FFT sees it (its grid charges and the sampled kernel).

Both are scattered onto the branch pairs in one sparse pattern (:func:`branch_near_matrices`):
the operator adds ``exact - grid`` to the FFT product. Work and memory are proportional to the
number of near pairs, O(N) for a mesh whose density the grid follows.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit, prange
from scipy.spatial import cKDTree

from copperpath.solver.elements.kernels import FASTMATH
from copperpath.solver.elements.partial import NEAR_FACTOR
from copperpath.solver.elements.quadrature import class_moments, far_moments, half_pair, pair_class


def near_pair_list(cent, zmid, diam, radius, diam_factor):
    """Near triangle pairs, each unordered pair once, as a CSR over its owner triangle.

    A pair is near when its 3-D centroid distance is below ``max(radius, diam_factor *
    max(diam_a, diam_b))``. The owner of ``{a, b}`` is the triangle the dense fill uses
    (:func:`copperpath.solver.elements.partial._near_pairs`): ``lo`` when ``2 (hi - lo) <= n``, else ``hi``; every
    triangle lists itself first.

    Parameters
    ----------
    cent : ndarray, shape (V, 2)
        Centroids in metres.
    zmid : ndarray, shape (V,)
        Mid-plane elevation of each triangle's copper in metres.
    diam : ndarray, shape (V,)
        Longest edge of each triangle in metres.
    radius : float
        Near radius of the grid in metres.
    diam_factor : float
        Near radius in triangle diameters.

    Returns
    -------
    ptr : ndarray of int64, shape (V + 1,)
    other : ndarray of int64, shape (n_pairs,)
    """
    n = len(cent)
    xyz = np.column_stack([cent, zmid])
    tree = cKDTree(xyz)
    pairs = [tree.query_pairs(radius, output_type="ndarray").astype(np.int64)]
    big = np.flatnonzero(diam_factor * diam > radius)
    if len(big):
        # triangles whose own radius exceeds the grid's: query them one radius each
        hits = tree.query_ball_point(xyz[big], diam_factor * diam[big] * (1.0 + 1e-12))
        cnt = np.array([len(h) for h in hits], np.int64)
        b = np.repeat(big, cnt)
        o = np.concatenate([np.asarray(h, np.int64) for h in hits]) if cnt.sum() else b
        pairs.append(np.stack([np.minimum(b, o), np.maximum(b, o)], 1)[b != o])
    pairs = np.concatenate(pairs)
    if len(pairs):
        lo, hi = pairs.min(axis=1), pairs.max(axis=1)
        if len(big):
            key = np.unique(lo * n + hi)
            lo, hi = key // n, key % n
        d = np.linalg.norm(xyz[lo] - xyz[hi], axis=1)
        keep = d < np.maximum(radius, diam_factor * np.maximum(diam[lo], diam[hi]))
        lo, hi = lo[keep], hi[keep]
    else:
        lo = hi = np.zeros(0, np.int64)
    mine = 2 * (hi - lo) <= n
    owner = np.concatenate([np.arange(n), np.where(mine, lo, hi)])
    other = np.concatenate([np.arange(n), np.where(mine, hi, lo)])
    step = (other - owner) % n
    order = np.lexsort((step, owner))
    owner, other = owner[order], other[order]
    ptr = np.searchsorted(owner, np.arange(n + 1)).astype(np.int64)
    return ptr, np.ascontiguousarray(other)


def symmetric_list(ptr, other):
    """Both orientations of the owner list: per triangle its near triangles, pair index, owner flag.

    Returns
    -------
    fptr : ndarray of int64, shape (V + 1,)
    fidx, fpid : ndarray of int64
        Near triangle and index into the pair tables.
    fown : ndarray of bool
        True where the row triangle is the pair's owner (the self pair counts as owned).
    """
    n = len(ptr) - 1
    owner = np.repeat(np.arange(n), np.diff(ptr))
    pid = np.arange(len(other))
    cross = owner != other
    rows = np.concatenate([owner, other[cross]])
    cols = np.concatenate([other, owner[cross]])
    pids = np.concatenate([pid, pid[cross]])
    own = np.concatenate([np.ones(len(other), bool), np.zeros(int(cross.sum()), bool)])
    order = np.argsort(rows, kind="stable")
    fptr = np.searchsorted(rows[order], np.arange(n + 1)).astype(np.int64)
    return (fptr, np.ascontiguousarray(cols[order]), np.ascontiguousarray(pids[order]),
            np.ascontiguousarray(own[order]))


@njit(cache=True, fastmath=FASTMATH)
def _grid_moments(a, b, node_ptr, nodes, w, gk, out):
    """Pair moments as the grid sees them: ``sum_ij q_a(i) G(n_i - n_j) q_b(j)`` per moment."""
    for k in range(6):
        out[k] = 0.0
    for na in range(node_ptr[a], node_ptr[a + 1]):
        ia, ja = nodes[na, 0], nodes[na, 1]
        s0 = 0.0
        sx = 0.0
        sy = 0.0
        for nb in range(node_ptr[b], node_ptr[b + 1]):
            g = gk[abs(ia - nodes[nb, 0]), abs(ja - nodes[nb, 1])]
            s0 += g * w[0, nb]
            sx += g * w[1, nb]
            sy += g * w[2, nb]
        out[0] += w[0, na] * s0
        out[1] += w[1, na] * s0
        out[2] += w[2, na] * s0
        out[3] += w[0, na] * sx
        out[4] += w[0, na] * sy
        out[5] += w[1, na] * sx + w[2, na] * sy


@njit(parallel=True, cache=True)
def pair_tables(verts, tri_vid, cent, area, diam, zmid, tri_zi, zpar, ptr, other, obary, ow,
                nrule, glx, glw, panel, sbary, sw, smooth, far_pts, far_wts, far_n, far_q,
                node_ptr, nodes, w, plane, gk, gk_key):
    """Exact and grid moments (n_pairs, 6) of every listed pair, from its owner.

    The exact rule is that of the dense fill: for pairs within
    :data:`copperpath.solver.elements.partial.NEAR_FACTOR` diameters and the self pair the
    rule of the pair's class (:func:`copperpath.solver.elements.quadrature.pair_class` with
    separation ``smooth``: polar quadrature with the outer rule of the shared vertices
    ``tri_vid``, or product Gauss ``sbary``, ``sw``), product Gauss of the distance level
    (``far_q``) beyond. ``gk[gk_key[pa, pb]]`` is the kernel sampled at the grid offsets of
    planes ``pa``, ``pb``.
    """
    n_pairs = other.size
    exact = np.empty((n_pairs, 6))
    grid = np.empty((n_pairs, 6))
    for a in prange(cent.shape[0]):
        for k in range(ptr[a], ptr[a + 1]):
            b = other[k]
            dx = cent[a, 0] - cent[b, 0]
            dy = cent[a, 1] - cent[b, 1]
            dz = zmid[a] - zmid[b]
            dmax = max(diam[a], diam[b])
            q = math.sqrt(dx * dx + dy * dy + dz * dz) / dmax
            par = zpar[tri_zi[a], tri_zi[b]]
            if a == b or q < NEAR_FACTOR:
                c = pair_class(tri_vid[a], tri_vid[b], verts[a], verts[b], dmax, par, smooth)
                class_moments(c, verts[a], cent[a, 0], cent[a, 1], area[a], verts[b], cent[b, 0],
                              cent[b, 1], area[b], par, obary, ow, nrule, glx, glw, panel, sbary,
                              sw, exact[k])
            else:
                lev = 0
                while q >= far_q[lev]:
                    lev += 1
                nq = far_n[lev]
                far_moments(dx, dy, far_pts[lev, a, :nq], far_wts[lev, a, :nq],
                            far_pts[lev, b, :nq], far_wts[lev, b, :nq], par, exact[k])
            _grid_moments(a, b, node_ptr, nodes, w, gk[gk_key[plane[a], plane[b]]], grid[k])
    return exact, grid


@njit(cache=True)
def _chunks(nb):
    return max(1, min(256, nb // 64))


@njit(parallel=True, cache=True)
def _row_counts(nb, bh_ptr, bh_half, h_tri, th_ptr, h_branch, fptr, fidx):
    counts = np.zeros(nb, np.int64)
    nch = _chunks(nb)
    size = (nb + nch - 1) // nch
    for c in prange(nch):
        marker = np.full(nb, -1, np.int64)
        for m in range(c * size, min(nb, (c + 1) * size)):
            cnt = 0
            for hh in range(bh_ptr[m], bh_ptr[m + 1]):
                a = h_tri[bh_half[hh]]
                for j in range(fptr[a], fptr[a + 1]):
                    b = fidx[j]
                    for k in range(th_ptr[b], th_ptr[b + 1]):
                        n = h_branch[k]
                        if marker[n] != m:
                            marker[n] = m
                            cnt += 1
            counts[m] = cnt
    return counts


@njit(parallel=True, cache=True, fastmath=FASTMATH)
def _row_fill(nb, indptr, bh_ptr, bh_half, h_tri, th_ptr, h_branch, h_pt, h_coef, fptr, fidx,
              fpid, fown, exact, grid, scale):
    nnz = indptr[nb]
    indices = np.empty(nnz, np.int32)
    ex = np.zeros(nnz)
    gr = np.zeros(nnz)
    cnt = np.zeros(nnz, np.uint8)
    nch = _chunks(nb)
    size = (nb + nch - 1) // nch
    for c in prange(nch):
        marker = np.full(nb, -1, np.int64)
        pos = np.empty(nb, np.int64)
        for m in range(c * size, min(nb, (c + 1) * size)):
            nxt = indptr[m]
            for hh in range(bh_ptr[m], bh_ptr[m + 1]):
                h = bh_half[hh]
                a = h_tri[h]
                px, py = h_pt[h, 0], h_pt[h, 1]
                for j in range(fptr[a], fptr[a + 1]):
                    b = fidx[j]
                    e = exact[fpid[j]]
                    g = grid[fpid[j]]
                    for k in range(th_ptr[b], th_ptr[b + 1]):
                        n = h_branch[k]
                        if marker[n] != m:
                            marker[n] = m
                            pos[n] = nxt
                            indices[nxt] = n
                            nxt += 1
                        qx, qy = h_pt[k, 0], h_pt[k, 1]
                        if a == b:
                            ve = 0.5 * (half_pair(e, px, py, qx, qy) + half_pair(e, qx, qy, px, py))
                            vg = 0.5 * (half_pair(g, px, py, qx, qy) + half_pair(g, qx, qy, px, py))
                        elif fown[j]:
                            ve = half_pair(e, px, py, qx, qy)
                            vg = half_pair(g, px, py, qx, qy)
                        else:
                            ve = half_pair(e, qx, qy, px, py)
                            vg = half_pair(g, qx, qy, px, py)
                        w = scale * h_coef[h] * h_coef[k]
                        ex[pos[n]] += w * ve
                        gr[pos[n]] += w * vg
                        cnt[pos[n]] += 1
            # sort the row by column
            r0, r1 = indptr[m], indptr[m + 1]
            order = np.argsort(indices[r0:r1])
            indices[r0:r1] = indices[r0:r1][order]
            ex[r0:r1] = ex[r0:r1][order]
            gr[r0:r1] = gr[r0:r1][order]
            cnt[r0:r1] = cnt[r0:r1][order]
    return indices, ex, gr, cnt


def branch_near_matrices(nb, h_tri, h_branch, h_pt, h_coef, th_ptr, near_list, exact, grid,
                         scale):
    """Scatter the pair moments onto the branch pairs: one CSR pattern, exact and grid values.

    Parameters
    ----------
    nb : int
        Number of branches.
    h_tri, h_branch : ndarray of int64, shape (H,)
        Triangle and branch of each half, halves sorted by triangle (``th_ptr`` their CSR).
    h_pt : ndarray, shape (H, 2)
        Free vertex relative to the triangle's centroid, metres.
    h_coef : ndarray, shape (H,)
        ``sign / (2 area)`` per half, 1/m^2.
    near_list : tuple
        :func:`symmetric_list` of the near pairs.
    exact, grid : ndarray, shape (n_pairs, 6)
        :func:`pair_tables`.
    scale : float
        Factor of every entry (``mu0 / (4 pi)``, H/m).

    Returns
    -------
    indptr : ndarray of int64
    indices : ndarray of int32
    exact_values, grid_values : ndarray of float64
        Entries in henry.
    full : ndarray of bool
        True where every half pair of the branch pair is a listed near pair, so that the
        exact value is the whole partial inductance.
    """
    fptr, fidx, fpid, fown = near_list
    bh_half = np.argsort(h_branch, kind="stable").astype(np.int64)
    bh_ptr = np.searchsorted(h_branch[bh_half], np.arange(nb + 1)).astype(np.int64)
    counts = _row_counts(nb, bh_ptr, bh_half, h_tri, th_ptr, h_branch, fptr, fidx)
    indptr = np.zeros(nb + 1, np.int64)
    np.cumsum(counts, out=indptr[1:])
    indices, ex, gr, cnt = _row_fill(nb, indptr, bh_ptr, bh_half, h_tri, th_ptr, h_branch, h_pt,
                                     h_coef, fptr, fidx, fpid, fown, exact, grid, float(scale))
    nh = np.diff(bh_ptr)
    rows = np.repeat(np.arange(nb), np.diff(indptr))
    full = cnt == nh[rows] * nh[indices]
    return indptr, indices, ex, gr, full
