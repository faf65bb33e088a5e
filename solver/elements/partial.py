"""Partial inductance (dense) and partial resistance (sparse) of RWG branch currents.

A branch ``m`` has one or two halves. Half ``h`` lives on triangle ``T_h`` (area ``A_h``), has
the free vertex ``p_h`` and the sign ``s_h``; its surface current density per ampere of branch
current is ``J_h(r) = s_h (r - p_h) / (2 A_h)`` (the flux through the edge is 1 A). Then

    L_mn = mu0/(4 pi) sum_{h in m} sum_{k in n} int int J_h(r).J_k(r') K(|r - r'|) dS dS'
    R_mn = sum_{h in m, k in n, T_h = T_k} (1/(sigma t)) int_T J_h.J_k dS

with ``K`` the thickness-averaged kernel (:mod:`copperpath.solver.elements.kernels`). ``mu0 = 4e-7 pi`` H/m, the
classical defined value (:data:`MU0`); the 2019 SI value differs by 5.5e-10 relative.

Triangle pairs closer than :data:`NEAR_FACTOR` times the larger diameter (distance between
centroids, counting the layer offset) are near pairs: those that share a vertex, or lie closer
than :data:`SMOOTH_SEPARATION` diameters, get the accurate polar quadrature of
:mod:`copperpath.solver.elements.quadrature` (a finer outer rule where the pair shares a vertex
or an edge), the others a product Gauss rule of degree :data:`SMOOTH_DEGREE`; farther pairs
get product Gauss rules whose degree falls with distance (:data:`FAR_LEVELS`).
The pair loop runs in numba and visits every unordered triangle pair once, in parallel over
the triangles of one colour at a time (triangles of one colour carry no common branch, so no two
threads write the same row); it fills ``X`` with ``L = X + X^T`` (:func:`_fill_pairs`).
"""
from __future__ import annotations

import math

import numpy as np
import scipy.sparse as sp
from numba import njit, prange
from scipy.spatial import cKDTree

from copperpath.geometry.physics import MU0
from copperpath.solver.elements.kernels import FASTMATH, N_PAIR_PARAMS, pair_params
from copperpath.solver.elements.quadrature import (edge_graded_rule, far_moments, half_pair, near_table,
                               subdivided_rule, triangle_rule)

#: Pairs with centroid distance below this many (larger) triangle diameters are near pairs.
NEAR_FACTOR = 1.5
#: Near pairs that share no vertex and whose separation (in-plane distance between the two
#: triangles combined with the vertical gap between their copper,
#: :func:`copperpath.solver.elements.quadrature.pair_class`) is at least this many larger
#: diameters get product Gauss of :data:`SMOOTH_DEGREE` on both triangles instead of the polar
#: rule. Measured on 60k such pairs of the four-layer section (1 sublayer, 13k triangles),
#: largest error of the nine half-pair integrals relative to ``S0 d_a d_b``, degree 6: 4e-5 at
#: separations 0.5-0.75 (2e-4 at 0.3-0.4 for pairs on different layers), 3e-6 at 0.75-1; degree
#: 5: 3e-4 at 0.5-0.75. Degree 6 costs 1.9 us a pair against 12 us (same layer) and 27 us
#: (different layers) for the polar rule; 80 % of the pairs qualify.
SMOOTH_SEPARATION = 0.5
#: Degree of the triangle rule of the smooth near pairs (:func:`triangle_rule`, 12 points).
SMOOTH_DEGREE = 6
#: Far pairs: (upper distance ratio, Gauss degree on each triangle), nearest first. Single
#: half-pair integrals against the polar quadrature (30-degree Triangle mesh), worst relative
#: error: degree 5 at ratio 1.5-4: 2e-4; degree 4 at 4-10: 4e-6; degree 2 beyond 10: 9e-4
#: (1e-4 beyond 20); the 1-point rule errs by O(1) on single half pairs whose vectors are
#: nearly orthogonal. What matters is the whole matrix: against degrees (5, 4, 2) switching at
#: 4 and 10, the levels below (degree 4 up to 3, degree 2 up to 25, then 1 point) change the
#: DC loop inductance of a 30 x 20 mm plate (2.9k triangles) by -1.0e-6, of a 30 x 20 mm rectangular loop of 0.5 mm trace (3.5k triangles) by -4.2e-6 and
#: of a pair of 20 x 10 mm planes 0.2 mm apart (10k triangles) by -5.1e-7, for 28 % less time.
FAR_LEVELS = ((3.0, 4), (25.0, 2), (math.inf, 1))
#: Gauss-Legendre points per panel and panel length in the polar variable w. Measured on 540
#: near pairs of a plate mesh (self, edge-, vertex-sharing and other near pairs; same layer,
#: layers 0.1 mm apart and touching layers) against 12 points on panels of 0.5: moments agree
#: to 5e-8 of S0 (8 points on panels of 1.0: 5e-14, at twice the cost).
N_W, W_PANEL = 6, 2.0


def _check_halves(n_tri, half_branch, half_tri, half_vertex, half_sign, n_branches):
    h = len(half_branch)
    for name, arr, shape in (("half_tri", half_tri, (h,)), ("half_vertex", half_vertex, (h, 2)),
                             ("half_sign", half_sign, (h,))):
        if np.shape(arr) != shape:
            raise ValueError(f"{name} has shape {np.shape(arr)}, expected {shape}")
    if h and (np.min(half_branch) < 0 or np.max(half_branch) >= n_branches):
        raise ValueError(f"half_branch must lie in [0, {n_branches}), got "
                         f"[{np.min(half_branch)}, {np.max(half_branch)}]")
    if h and (np.min(half_tri) < 0 or np.max(half_tri) >= n_tri):
        raise ValueError(f"half_tri must lie in [0, {n_tri}), got [{np.min(half_tri)}, {np.max(half_tri)}]")


def _triangle_geometry(points, triangles):
    verts = np.ascontiguousarray(np.asarray(points, dtype=np.float64)[triangles])
    d1 = verts[:, 1] - verts[:, 0]
    d2 = verts[:, 2] - verts[:, 0]
    area = 0.5 * (d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0])
    if np.any(area <= 0):
        raise ValueError(f"{int(np.sum(area <= 0))} triangles are not counter-clockwise or are degenerate")
    cent = verts.mean(axis=1)
    edges = verts[:, [1, 2, 0]] - verts
    diam = np.sqrt((edges**2).sum(-1)).max(axis=1)
    return verts, cent, area, diam


def _layer_params(tri_z):
    tri_z = np.asarray(tri_z, dtype=np.float64)
    uz, zi = np.unique(tri_z, axis=0, return_inverse=True)
    zpar = np.empty((len(uz), len(uz), N_PAIR_PARAMS))
    for i, za in enumerate(uz):
        for j, zb in enumerate(uz):
            zpar[i, j] = pair_params(za[0], za[1], zb[0], zb[1])
    return zpar, zi.ravel().astype(np.int64), 0.5 * tri_z.sum(axis=1)


def _near_pairs(cent, zmid, diam):
    """Near pairs, each unordered pair once (CSR over the owner).

    Pair ``{a, b}`` belongs to the triangle from which the other lies ``k = 1 .. n/2`` steps
    ahead cyclically (see :func:`_fill_pairs`); each owner lists itself first, then its near
    partners in that cyclic order.
    """
    n = len(cent)
    xyz = np.column_stack([cent, zmid])
    tree = cKDTree(xyz)
    pairs = tree.query_pairs(NEAR_FACTOR * diam.max(), output_type="ndarray").astype(np.int64)
    if len(pairs):
        d = np.linalg.norm(xyz[pairs[:, 0]] - xyz[pairs[:, 1]], axis=1)
        pairs = pairs[d < NEAR_FACTOR * np.maximum(diam[pairs[:, 0]], diam[pairs[:, 1]])]
    lo, hi = pairs.min(axis=1), pairs.max(axis=1)
    mine = 2 * (hi - lo) <= n                     # lo owns the pair, else hi does
    owner = np.where(mine, lo, hi)
    other = np.where(mine, hi, lo)
    owner = np.concatenate([np.arange(n), owner])
    other = np.concatenate([np.arange(n), other])
    step = (other - owner) % n
    order = np.lexsort((step, owner))
    owner, other = owner[order], other[order]
    ptr = np.searchsorted(owner, np.arange(n + 1)).astype(np.int64)
    return ptr, np.ascontiguousarray(other)


def _colour(n_tri, h_tri, h_branch):
    """Greedy colouring of the triangles so that no two of one colour carry the same branch.

    Returns
    -------
    ptr, tri : ndarray of int64
        The triangles of colour ``c`` are ``tri[ptr[c]:ptr[c + 1]]``.
    """
    by_branch = np.argsort(h_branch, kind="stable")
    hb, ht = h_branch[by_branch], h_tri[by_branch]
    start = np.flatnonzero(np.r_[True, hb[1:] != hb[:-1]])
    stop = np.r_[start[1:], len(hb)]
    nbrs = [[] for _ in range(n_tri)]
    for s0, s1 in zip(start[stop - start > 1], stop[stop - start > 1]):
        tris = ht[s0:s1]
        for t in tris:
            nbrs[t].extend(int(u) for u in tris if u != t)
    colour = np.empty(n_tri, np.int64)
    for t in range(n_tri):
        taken = {colour[u] for u in nbrs[t] if u < t}
        c = 0
        while c in taken:
            c += 1
        colour[t] = c
    tri = np.argsort(colour, kind="stable").astype(np.int64)
    ptr = np.searchsorted(colour[tri], np.arange(colour.max(initial=-1) + 2)).astype(np.int64)
    return ptr, tri


def _outer_rules():
    rules = [triangle_rule(6), subdivided_rule(6, 1), edge_graded_rule(6, 6)]
    nmax = max(len(w) for _, w in rules)
    obary = np.zeros((3, nmax, 3))
    ow = np.zeros((3, nmax))
    nrule = np.zeros(3, dtype=np.int64)
    for c, (b, w) in enumerate(rules):
        obary[c, :len(w)] = b
        ow[c, :len(w)] = w
        nrule[c] = len(w)
    return obary, ow, nrule


def _far_rules(verts, cent, area):
    """Gauss points relative to the centroids (L, M, n, 2) and weights (L, M, n), per level."""
    nmax = max(len(triangle_rule(d)[1]) for _, d in FAR_LEVELS)
    nlev = len(FAR_LEVELS)
    pts = np.zeros((nlev, len(cent), nmax, 2))
    wts = np.zeros((nlev, len(cent), nmax))
    npts = np.zeros(nlev, dtype=np.int64)
    for i, (_, deg) in enumerate(FAR_LEVELS):
        bary, w = triangle_rule(deg)
        pts[i, :, :len(w)] = np.einsum("qk,mkd->mqd", bary, verts) - cent[:, None, :]
        wts[i, :, :len(w)] = w[None, :] * area[:, None]
        npts[i] = len(w)
    return pts, wts, npts


@njit(cache=True, fastmath=FASTMATH)
def _scatter(out, a, b, weight, mom, th_ptr, h_pt, h_coef, h_branch):
    for h in range(th_ptr[a], th_ptr[a + 1]):
        m = h_branch[h]
        ch = weight * h_coef[h]
        for k in range(th_ptr[b], th_ptr[b + 1]):
            out[m, h_branch[k]] += ch * h_coef[k] * half_pair(mom, h_pt[h, 0], h_pt[h, 1],
                                                              h_pt[k, 0], h_pt[k, 1])


@njit(parallel=True, cache=True, fastmath=FASTMATH)
def _fill_pairs(nb, col_ptr, col_tri, th_ptr, h_pt, h_coef, h_branch, cent, zmid, diam, tri_zi,
                zpar, near_ptr, near_idx, near_mom, far_pts, far_wts, far_n, far_q):
    """Half of ``L`` / (mu0/4pi): every unordered triangle pair once, ``L = X + X^T``.

    Triangle ``a`` owns the pairs ``{a, a + k mod n}`` for ``k = 1 .. n/2`` (``k = n/2``
    only for ``a < n/2`` when ``n`` is even), so every thread does the same work, and its self
    pair with weight 1/2. It adds into the rows of its own branches only; the triangles of one
    colour share no branch, so the threads of one colour never write the same row.
    """
    n = cent.shape[0]
    half = n // 2
    out = np.zeros((nb, nb))
    for c in range(col_ptr.size - 1):
        for i in prange(col_ptr[c], col_ptr[c + 1]):
            a = col_tri[i]
            mom = np.empty(6)
            ptr = near_ptr[a]
            end = near_ptr[a + 1]
            _scatter(out, a, a, 0.5, near_mom[ptr], th_ptr, h_pt, h_coef, h_branch)
            ptr += 1
            last = half if (2 * half != n or a < half) else half - 1
            for k in range(1, last + 1):
                b = a + k
                if b >= n:
                    b -= n
                if ptr < end and near_idx[ptr] == b:
                    _scatter(out, a, b, 1.0, near_mom[ptr], th_ptr, h_pt, h_coef, h_branch)
                    ptr += 1
                    continue
                dx = cent[a, 0] - cent[b, 0]
                dy = cent[a, 1] - cent[b, 1]
                dz = zmid[a] - zmid[b]
                q = math.sqrt(dx * dx + dy * dy + dz * dz) / max(diam[a], diam[b])
                lev = 0
                while q >= far_q[lev]:
                    lev += 1
                nq = far_n[lev]
                far_moments(dx, dy, far_pts[lev, a, :nq], far_wts[lev, a, :nq],
                            far_pts[lev, b, :nq], far_wts[lev, b, :nq],
                            zpar[tri_zi[a], tri_zi[b]], mom)
                _scatter(out, a, b, 1.0, mom, th_ptr, h_pt, h_coef, h_branch)
    return out


@njit(parallel=True, cache=True)
def _symmetrise(x, scale):
    """``x <- scale (x + x^T)`` in place, by tiles."""
    nb = x.shape[0]
    tile = 64
    nt = (nb + tile - 1) // tile
    for bi in prange(nt):
        i0 = bi * tile
        i1 = min(nb, i0 + tile)
        for bj in range(bi, nt):
            j0 = bj * tile
            j1 = min(nb, j0 + tile)
            for i in range(i0, i1):
                for j in range(max(j0, i), j1):
                    s = scale * (x[i, j] + x[j, i])
                    x[i, j] = s
                    x[j, i] = s


def inductance_matrix(points, triangles, tri_z, half_branch, half_tri, half_vertex, half_sign,
                      n_branches):
    """Dense partial-inductance matrix of the branch currents.

    Parameters
    ----------
    points : ndarray, shape (N, 2)
        Node coordinates in metres.
    triangles : ndarray of int64, shape (M, 3)
        Node indices, counter-clockwise.
    tri_z : ndarray, shape (M, 2)
        ``(z0, z1)`` of each triangle's copper in metres.
    half_branch, half_tri : ndarray of int64, shape (H,)
        Branch and triangle of each RWG half.
    half_vertex : ndarray, shape (H, 2)
        Free vertex of each half in metres.
    half_sign : ndarray, shape (H,)
        +1 or -1.
    n_branches : int
        Number of branch currents.

    Returns
    -------
    ndarray, shape (n_branches, n_branches)
        Symmetric partial inductances in henry.
    """
    triangles = np.asarray(triangles, dtype=np.int64)
    half_branch = np.asarray(half_branch, dtype=np.int64)
    half_tri = np.asarray(half_tri, dtype=np.int64)
    _check_halves(len(triangles), half_branch, half_tri, half_vertex, half_sign, n_branches)
    if np.shape(tri_z) != (len(triangles), 2):
        raise ValueError(f"tri_z has shape {np.shape(tri_z)}, expected ({len(triangles)}, 2)")
    # keep only the triangles that carry current
    used, h_tri = np.unique(half_tri, return_inverse=True)
    h_tri = h_tri.ravel().astype(np.int64)
    tris = triangles[used]
    verts, cent, area, diam = _triangle_geometry(points, tris)
    zpar, tri_zi, zmid = _layer_params(np.asarray(tri_z)[used])

    order = np.argsort(h_tri, kind="stable")
    h_tri = np.ascontiguousarray(h_tri[order])
    h_branch = np.ascontiguousarray(half_branch[order])
    h_pt = np.ascontiguousarray(np.asarray(half_vertex, dtype=np.float64)[order] - cent[h_tri])
    h_coef = np.asarray(half_sign, dtype=np.float64)[order] / (2.0 * area[h_tri])
    th_ptr = np.searchsorted(h_tri, np.arange(len(used) + 1)).astype(np.int64)
    col_ptr, col_tri = _colour(len(used), h_tri, h_branch)

    near_ptr, near_idx = _near_pairs(cent, zmid, diam)
    obary, ow, nrule = _outer_rules()
    glx, glw = np.polynomial.legendre.leggauss(N_W)
    sbary, sw = triangle_rule(SMOOTH_DEGREE)
    near_mom = near_table(verts, tris, cent, area, diam, tri_zi, zpar, near_ptr, near_idx, obary,
                          ow, nrule, glx, glw, W_PANEL, sbary, sw, float(SMOOTH_SEPARATION))
    far_pts, far_wts, far_n = _far_rules(verts, cent, area)
    far_q = np.array([q for q, _ in FAR_LEVELS])
    out = _fill_pairs(int(n_branches), col_ptr, col_tri, th_ptr, h_pt, h_coef, h_branch, cent,
                      zmid, diam, tri_zi, zpar, near_ptr, near_idx, near_mom, far_pts, far_wts,
                      far_n, far_q)
    _symmetrise(out, MU0 / (4.0 * math.pi))
    return out


def resistance_matrix(points, triangles, tri_sheet_resistance, half_branch, half_tri,
                      half_vertex, half_sign, n_branches):
    """Sparse partial-resistance matrix of the branch currents (exact).

    ``int_T (r - p).(r - q) dS = A (c - p).(c - q) + (A/12) sum_i |v_i - c|^2`` with ``c`` the
    centroid and ``v_i`` the vertices (second moment of the triangle about its centroid).

    Parameters
    ----------
    points, triangles : ndarray
        As :func:`inductance_matrix`.
    tri_sheet_resistance : ndarray, shape (M,)
        ``1/(sigma t)`` of each triangle's copper in ohm per square.
    half_branch, half_tri, half_vertex, half_sign, n_branches
        As :func:`inductance_matrix`.

    Returns
    -------
    scipy.sparse.csr_matrix, shape (n_branches, n_branches)
        Symmetric partial resistances in ohm.
    """
    triangles = np.asarray(triangles, dtype=np.int64)
    half_branch = np.asarray(half_branch, dtype=np.int64)
    half_tri = np.asarray(half_tri, dtype=np.int64)
    _check_halves(len(triangles), half_branch, half_tri, half_vertex, half_sign, n_branches)
    if np.shape(tri_sheet_resistance) != (len(triangles),):
        raise ValueError(f"tri_sheet_resistance has shape {np.shape(tri_sheet_resistance)}, "
                         f"expected ({len(triangles)},)")
    verts = np.asarray(points, dtype=np.float64)[triangles[half_tri]]
    cent = verts.mean(axis=1)
    d1, d2 = verts[:, 1] - verts[:, 0], verts[:, 2] - verts[:, 0]
    area = np.abs(0.5 * (d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]))
    spread = ((verts - cent[:, None, :]) ** 2).sum(axis=(1, 2)) / 12.0
    pc = np.asarray(half_vertex, dtype=np.float64) - cent
    coef = (np.asarray(half_sign, dtype=np.float64) / (2.0 * area)
            * np.sqrt(np.asarray(tri_sheet_resistance, dtype=np.float64)[half_tri] * area))
    order = np.argsort(half_tri, kind="stable")
    start = np.searchsorted(half_tri[order], half_tri[order], side="left")
    stop = np.searchsorted(half_tri[order], half_tri[order], side="right")
    rows, cols, vals = [], [], []
    for off in range(int((stop - start).max(initial=0))):
        ok = start + off < stop
        i = order[ok]
        j = order[(start + off)[ok]]
        rows.append(half_branch[i])
        cols.append(half_branch[j])
        # (1/(sigma t)) int (r-p).(r-q) / (4 A^2) * s_p s_q, with A folded into coef
        vals.append(coef[i] * coef[j] * ((pc[i] * pc[j]).sum(axis=1) + spread[i]))
    if rows:
        rows, cols, vals = map(np.concatenate, (rows, cols, vals))
    return sp.csr_matrix((vals, (rows, cols)), shape=(n_branches, n_branches))
