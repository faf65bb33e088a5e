"""Compressed partial inductance of the sheet (edge) branches: the pre-corrected FFT.

The thickness-averaged kernel of two sheet planes (a layer or sublayer, one z-range each)
depends only on the in-plane distance (:mod:`copperpath.solver.elements.kernels`), so one uniform 2-D grid of
spacing ``h`` serves every plane. The x and y components of the RWG current are two scalar
densities. Each triangle's current is carried to the ``p x p`` grid nodes around its centroid
by Lagrange interpolation weights evaluated at a degree-6 quadrature rule (``M0``, ``Mx``,
``My``: the weights of the density and of its first moments about the centroid, so a half's
charge is ``s/(2A) (Mx - (p - c)_x M0)``); the charges of every plane are convolved with the
kernel of every plane pair sampled on the grid (zero-padded real FFT, scipy.fft), and
interpolated back by the transposed weights. That far-field product is wrong for pairs closer
than a few grid spacings or triangle sizes; for those the exact entries replace the grid's
(pre-correction, :mod:`copperpath.solver.elements.nearfield`): ``L X = F X + (N_exact - N_grid) X``.

Phillips & White 1997, "A precorrected-FFT method for electrostatic analysis of complicated
3-D structures", IEEE TCAD 16(10), describe the method for the 3-D Laplace kernel; here it is
applied per pair of planes with the averaged kernel.
"""
from __future__ import annotations

import math
import time
from dataclasses import dataclass, field

import numpy as np
import scipy.fft
import scipy.sparse as sp
from numba import njit, prange
from scipy.signal import fftconvolve

from copperpath.solver.elements import nearfield, partial
from copperpath.solver.elements import taper as taper_mod
from copperpath.solver.elements.kernels import averaged_kernel
from copperpath.solver.elements.partial import (MU0, N_W, W_PANEL, FAR_LEVELS, _check_halves, _far_rules,
                            _layer_params, _outer_rules, _triangle_geometry)
from copperpath.solver.elements.quadrature import triangle_rule

#: FFT workers (the machine this runs on has two cores).
WORKERS = 2
#: Bytes of the grids of one block product; a product of more columns runs in chunks.
GRID_BLOCK_BYTES = 10**9


@dataclass(frozen=True)
class Accuracy:
    """Settings of the pre-corrected FFT for one tolerance.

    Attributes
    ----------
    stencil : int
        Grid nodes per direction of a triangle's interpolation stencil.
    near_spacings : float
        Near radius (3-D centroid distance) in grid spacings.
    near_diameters : float
        Near radius in (larger) triangle diameters.
    single : bool
        Grid arithmetic in float32 / complex64.
    """

    stencil: int
    near_spacings: float
    near_diameters: float
    single: bool


def accuracy_for(tolerance):
    """Grid settings for a relative tolerance of ``L @ X`` (2-norm), measured on meshes.

    See DEVELOPERS.md ("Compressed inductance") for the error each setting gave.
    """
    if not tolerance > 0:
        raise ValueError(f"tolerance must be positive, got {tolerance!r}")
    if tolerance >= 1e-2:
        return Accuracy(3, 2.5, 1.5, True)
    if tolerance >= 1e-3:
        return Accuracy(3, 3.0, 1.5, True)
    if tolerance >= 1e-4:
        return Accuracy(3, 5.0, 1.5, True)
    if tolerance >= 1e-5:
        return Accuracy(3, 8.0, 2.0, True)
    return Accuracy(3, 10.0, 2.5, False)


@dataclass(frozen=True, eq=False)
class SheetOperator:
    """Partial inductance of the sheet branches as a product (henry times ampere).

    Attributes
    ----------
    shape : tuple of int
        ``(B, B)``.
    spacing : float
        Grid spacing in metres.
    grid : tuple of int
        Nodes ``(nx, ny)`` of the grid; the FFTs run on ``padded``.
    padded : tuple of int
    n_planes : int
        Distinct sheet z-ranges.
    accuracy : Accuracy
    timing : dict
        Seconds spent per build stage.
    """

    shape: tuple
    spacing: float
    grid: tuple
    padded: tuple
    n_planes: int
    accuracy: Accuracy
    timing: dict
    _corr: sp.csr_matrix = field(repr=False)
    _exact: sp.csr_matrix = field(repr=False)
    _full: np.ndarray = field(repr=False)
    _coef: sp.csr_matrix = field(repr=False)
    _coef_t: sp.csr_matrix = field(repr=False)
    _plane_ptr: np.ndarray = field(repr=False)
    _plane_tri: np.ndarray = field(repr=False)
    _plane: np.ndarray = field(repr=False)
    _node_ptr: np.ndarray = field(repr=False)
    _nodes: np.ndarray = field(repr=False)
    _w: np.ndarray = field(repr=False)
    _khat: np.ndarray = field(repr=False)
    _key: np.ndarray = field(repr=False)
    _pos: np.ndarray = field(repr=False)

    @property
    def nbytes(self) -> int:
        """Bytes held by the operator."""
        n = self._corr.data.nbytes + self._exact.data.nbytes + self._full.nbytes
        n += self._corr.indices.nbytes + self._corr.indptr.nbytes
        for m in (self._coef, self._coef_t):
            n += m.data.nbytes + m.indices.nbytes + m.indptr.nbytes
        for a in (self._plane_ptr, self._plane_tri, self._plane, self._node_ptr, self._nodes,
                  self._w, self._khat, self._key, self._pos):
            n += a.nbytes
        return int(n)

    def diagonal(self):
        """Exact self inductances (B,) in henry (0 for non-sheet branches)."""
        return self._exact.diagonal()

    @property
    def near_radius(self):
        """Near radius of the correction (3-D centroid distance), metres."""
        return self.accuracy.near_spacings * self.spacing

    def positions(self):
        """Branch positions (B, 3), metres: mean centroid of each branch's triangles (NaN for
        branches with no half)."""
        return self._pos

    def near(self, taper=False):
        """Exact partial inductances of the near branch pairs, ``scipy.sparse.csr_matrix`` (B, B).

        A branch pair is in the pattern when all its triangle pairs are near pairs of the
        correction; there the entry equals the dense matrix's. Symmetric. With ``taper``,
        each entry is weighted by the positive-definite taper of
        :mod:`copperpath.solver.elements.taper` over :attr:`near_radius`.
        """
        keep = self._full
        kept = np.concatenate([[0], np.cumsum(keep)])
        indptr = kept[self._exact.indptr]
        near = sp.csr_matrix((self._exact.data[keep], self._exact.indices[keep], indptr),
                             shape=self.shape)
        return taper_mod.tapered(near, self._pos, self.near_radius) if taper else near

    def __matmul__(self, x):
        x = np.asarray(x)
        if x.shape[:1] != self.shape[1:] or x.ndim > 2:
            raise ValueError(f"SheetOperator @ X: X has shape {x.shape}, expected "
                             f"({self.shape[1]},) or ({self.shape[1]}, k)")
        x2 = x.reshape(self.shape[1], -1)
        k = x2.shape[1]
        if np.iscomplexobj(x2):
            r = np.concatenate([x2.real, x2.imag], axis=1)
        else:
            r = np.asarray(x2, dtype=np.float64)
        c = self._corr
        y = _csr_product(c.indptr, c.indices, c.data, np.ascontiguousarray(r)) + self._far(r)
        if np.iscomplexobj(x2):
            y = y[:, :k] + 1j * y[:, k:]
        return y.reshape(x.shape)

    def _far(self, r):
        """Grid (far-field) product of real columns ``r`` (B, k)."""
        v = self._node_ptr.shape[0] - 1
        a = np.asarray(self._coef @ r)                       # (3V, k): alpha, beta_x, beta_y
        out = np.empty((3 * v, r.shape[1]))
        nx, ny = self.grid
        nxp, nyp = self.padded
        dtype = np.float32 if self.accuracy.single else np.float64
        # columns per chunk: keep the grids under GRID_BLOCK_BYTES
        per_col = self.n_planes * 2 * nxp * (nyp // 2 + 1) * (16 if dtype == np.float64 else 8) * 3
        chunk = max(1, min(r.shape[1], int(GRID_BLOCK_BYTES // per_col)))
        for c0 in range(0, r.shape[1], chunk):
            c1 = min(r.shape[1], c0 + chunk)
            ca = np.ascontiguousarray(a[:, c0:c1].T.reshape(c1 - c0, 3, v))
            q = np.zeros((c1 - c0, self.n_planes, 2, nx, ny), dtype)
            _spread(ca, self._plane_ptr, self._plane_tri, self._node_ptr, self._nodes, self._w, q)
            qh = scipy.fft.rfft2(q, s=(nxp, nyp), workers=WORKERS)
            del q
            ph = _convolve(qh, self._khat, self._key)
            del qh
            phi = scipy.fft.irfft2(ph, s=(nxp, nyp), workers=WORKERS)
            del ph
            g = _gather(phi, self._plane, self._node_ptr, self._nodes, self._w)   # (kc, V, 4)
            out[:v, c0:c1] = (g[:, :, 1] + g[:, :, 3]).T
            out[v:2 * v, c0:c1] = -g[:, :, 0].T
            out[2 * v:, c0:c1] = -g[:, :, 2].T
        return self._coef_t @ out


@njit(parallel=True, cache=True)
def _csr_product(indptr, indices, data, x):
    """``A @ x`` for a CSR matrix and a dense block (n, k), parallel over rows."""
    n = indptr.size - 1
    k = x.shape[1]
    out = np.zeros((n, k))
    for i in prange(n):
        for p in range(indptr[i], indptr[i + 1]):
            j = indices[p]
            a = data[p]
            for c in range(k):
                out[i, c] += a * x[j, c]
    return out


@njit(parallel=True, cache=True)
def _spread(ca, plane_ptr, plane_tri, node_ptr, nodes, w, q):
    """Grid charges ``q`` (k, P, 2, nx, ny) of the triangle coefficients ``ca`` (k, 3, V)."""
    nk = ca.shape[0]
    npl = plane_ptr.size - 1
    for task in prange(nk * npl):
        c = task // npl
        pl = task % npl
        for t in range(plane_ptr[pl], plane_ptr[pl + 1]):
            tri = plane_tri[t]
            al, bx, by = ca[c, 0, tri], ca[c, 1, tri], ca[c, 2, tri]
            for n in range(node_ptr[tri], node_ptr[tri + 1]):
                i, j = nodes[n, 0], nodes[n, 1]
                m0 = w[0, n]
                q[c, pl, 0, i, j] += al * w[1, n] - bx * m0
                q[c, pl, 1, i, j] += al * w[2, n] - by * m0


@njit(parallel=True, cache=True)
def _convolve(qh, khat, key):
    """``phi_hat[t] = sum_s khat[key[t, s]] q_hat[s]`` per column and component."""
    nk, npl, nc, nfx, nfy = qh.shape
    out = np.zeros_like(qh)
    for fx in prange(nfx):
        for c in range(nk):
            for t in range(npl):
                for s in range(npl):
                    kk = khat[key[t, s], fx]
                    for comp in range(nc):
                        src = qh[c, s, comp, fx]
                        dst = out[c, t, comp, fx]
                        for fy in range(nfy):
                            dst[fy] += kk[fy] * src[fy]
    return out


@njit(parallel=True, cache=True)
def _gather(phi, plane, node_ptr, nodes, w):
    """Per triangle ``(sum M0 phi_x, sum Mx phi_x, sum M0 phi_y, sum My phi_y)`` (k, V, 4)."""
    nk = phi.shape[0]
    v = node_ptr.size - 1
    out = np.zeros((nk, v, 4))
    for tri in prange(v):
        pl = plane[tri]
        for c in range(nk):
            s0 = 0.0
            s1 = 0.0
            s2 = 0.0
            s3 = 0.0
            for n in range(node_ptr[tri], node_ptr[tri + 1]):
                fx = phi[c, pl, 0, nodes[n, 0], nodes[n, 1]]
                fy = phi[c, pl, 1, nodes[n, 0], nodes[n, 1]]
                s0 += w[0, n] * fx
                s1 += w[1, n] * fx
                s2 += w[0, n] * fy
                s3 += w[2, n] * fy
            out[c, tri, 0] = s0
            out[c, tri, 1] = s1
            out[c, tri, 2] = s2
            out[c, tri, 3] = s3
    return out


def _lagrange(t, p):
    """1-D Lagrange weights (n, p) of nodes ``0 .. p-1`` at local coordinates ``t`` (n,)."""
    out = np.ones((len(t), p))
    for i in range(p):
        for j in range(p):
            if j != i:
                out[:, i] *= (t - j) / (i - j)
    return out


def stencil_weights(verts, cent, area, origin, h, p):
    """Grid nodes and weights ``(M0, Mx, My)`` of each triangle.

    Every point of a degree-6 rule on the triangle is interpolated by the ``p x p`` Lagrange
    stencil around it; a triangle's nodes are the union of its points' stencils (``p x p`` for
    a triangle smaller than a spacing, up to ``12 p^2`` for a large one: a list, not the
    bounding block, so a pour triangle many spacings wide costs no more than a small one).
    ``M0`` distributes the triangle's area, ``Mx``/``My`` its first moments about the centroid,
    so every moment of the density up to degree ``p - 1`` about each point is kept exactly.

    Returns
    -------
    ptr : ndarray of int64, shape (V + 1,)
        Nodes of triangle ``t`` are ``ptr[t]:ptr[t + 1]``.
    nodes : ndarray of int64, shape (ptr[-1], 2)
        Grid indices of the nodes, each once per triangle.
    w : ndarray, shape (3, ptr[-1])
        ``M0`` (m^2), ``Mx``, ``My`` (m^3) per node.
    """
    bary, wq = triangle_rule(6)
    nq = len(wq)
    v = len(cent)
    pts = np.einsum("qk,vkd->vqd", bary, verts)                 # (V, nq, 2)
    u = (pts - origin) / h
    pstart = np.floor(u - 0.5 * (p - 1) + 0.5).astype(np.int64)   # (V, nq, 2)
    loc = u - pstart
    lx = _lagrange(loc[:, :, 0].ravel(), p).reshape(v, nq, p)
    ly = _lagrange(loc[:, :, 1].ravel(), p).reshape(v, nq, p)
    wa = wq[None, :] * area[:, None]                            # (V, nq)
    rel = pts - cent[:, None, :]
    f = np.stack([wa, wa * rel[:, :, 0], wa * rel[:, :, 1]])    # (3, V, nq)
    step = np.arange(p)
    ix = (pstart[:, :, 0, None, None] + step[:, None]).repeat(p, axis=3)      # (V, nq, p, p)
    iy = (pstart[:, :, 1, None, None] + step[None, :]).repeat(p, axis=2)
    lw = lx[:, :, :, None] * ly[:, :, None, :]                               # (V, nq, p, p)
    tri = np.broadcast_to(np.arange(v)[:, None, None, None], ix.shape)
    ny = int(iy.max()) + 1
    span = (int(ix.max()) + 1) * ny
    key, inv = np.unique((tri * span + ix * ny + iy).ravel(), return_inverse=True)
    inv = inv.ravel()
    w = np.stack([np.bincount(inv, (f[k][:, :, None, None] * lw).ravel(), len(key))
                  for k in range(3)])
    t_of = key // span
    nodes = np.stack([(key % span) // ny, key % ny], axis=1).astype(np.int64)
    ptr = np.searchsorted(t_of, np.arange(v + 1)).astype(np.int64)
    return ptr, nodes, w


def _kernel_keys(uz):
    """Index of the distinct kernels among the plane pairs: (P, P) int64 and their z-ranges."""
    npl = len(uz)
    key = np.empty((npl, npl), np.int64)
    seen = {}
    reps = []
    scale = float(np.max(np.abs(uz))) or 1.0
    for i in range(npl):
        for j in range(npl):
            ta, tb = uz[i, 1] - uz[i, 0], uz[j, 1] - uz[j, 0]
            d = abs(0.5 * (uz[i, 0] + uz[i, 1]) - 0.5 * (uz[j, 0] + uz[j, 1]))
            k = tuple(np.round(np.array([min(ta, tb), max(ta, tb), d]) / scale, 12))
            if k not in seen:
                seen[k] = len(reps)
                reps.append((i, j))
            key[i, j] = seen[k]
    return key, reps


def _sampled_kernel(za, zb, h, nx, ny):
    """The averaged kernel (1/m) at grid offsets ``(i h, j h)``, ``0 <= i < nx, 0 <= j < ny``.

    At zero offset of overlapping z-ranges (infinite) the value at half a spacing stands in:
    only corrected near pairs see it.
    """
    ix, iy = np.arange(nx) * h, np.arange(ny) * h
    rho = np.hypot(ix[:, None], iy[None, :])
    g = averaged_kernel(rho, za, zb)
    if not np.isfinite(g[0, 0]):
        g[0, 0] = float(averaged_kernel(0.5 * h, za, zb))
    return g


def _kernel_hat(quarter, nxp, nyp, dtype):
    """Real FFT (real-valued: the kernel is even) of the circulant embedding of ``quarter``."""
    nx, ny = quarter.shape
    ix = np.minimum(np.arange(nxp), nxp - np.arange(nxp))
    iy = np.minimum(np.arange(nyp), nyp - np.arange(nyp))
    ok_x, ok_y = ix < nx, iy < ny
    full = np.zeros((nxp, nyp))
    full[np.ix_(ok_x, ok_y)] = quarter[np.ix_(ix[ok_x], iy[ok_y])]
    return scipy.fft.rfft2(full, workers=WORKERS).real.astype(dtype)


def _near_count_estimate(cent, h, radius):
    """Rough number of centroid pairs closer than ``radius`` (cell histogram of spacing ``h``)."""
    lo = cent.min(axis=0)
    idx = np.floor((cent - lo) / h).astype(np.int64)
    shape = idx.max(axis=0) + 1
    hist = np.zeros(shape)
    np.add.at(hist, (idx[:, 0], idx[:, 1]), 1.0)
    r = int(math.ceil(radius / h))
    off = np.arange(-r, r + 1)
    disk = (np.hypot(off[:, None], off[None, :]) <= radius / h + 0.5).astype(float)
    near = fftconvolve(hist, disk, mode="same")
    return float((hist * near).sum())


def choose_spacing(cent, diam, n_planes, extent, acc):
    """Grid spacing (m) that balances the FFT work against the near-pair work.

    Candidates from 0.1 to 4 median triangle sizes; for each the cost of a product is modelled
    as the FFT work plus :data:`NEAR_WEIGHT` times the pairs within ``near_spacings * h``
    (counted on a centroid histogram; the pairs within ``near_diameters`` do not depend on
    ``h``), the grid kept under 2^24 padded points.
    """
    d_med = float(np.median(diam))
    cands = d_med * np.geomspace(0.1, 4.0, 17)
    best = None
    for h in cands:
        nxp = 2 * (extent[0] / h + acc.stencil + 2)
        nyp = 2 * (extent[1] / h + acc.stencil + 2)
        if nxp * nyp > 2**24:
            continue
        npts = nxp * nyp
        fft_cost = n_planes * npts * (4 * math.log2(npts) + n_planes)
        pairs = _near_count_estimate(cent, h, acc.near_spacings * h) * 0.5
        cost = fft_cost * FFT_WEIGHT + pairs * NEAR_WEIGHT
        if best is None or cost < best[0]:
            best = (cost, h)
    if best is None:
        raise ValueError("the layout is too large for the grid of the compressed operator")
    return best[1]


#: Relative cost weights of the spacing model: one FFT point-operation and one near triangle
#: pair (its branch entries in the sparse product, its moments in the build); a rough
#: estimate, not a fit.
FFT_WEIGHT, NEAR_WEIGHT = 1.0, 60.0


def build_sheet_operator(points, triangles, tri_z, half_branch, half_tri, half_vertex, half_sign,
                         n_branches, *, tolerance=1e-4, progress=None):
    """Compressed partial inductance of the sheet branches (pre-corrected FFT).

    Parameters
    ----------
    points, triangles, tri_z, half_branch, half_tri, half_vertex, half_sign, n_branches
        As :func:`copperpath.solver.elements.partial.inductance_matrix`.
    tolerance : float
        Relative 2-norm error of ``L @ X`` against the dense matrix that the settings aim at
        (:func:`accuracy_for`).
    progress : callable, optional
        Called with a short message after each build stage.

    Returns
    -------
    SheetOperator
        Rows and columns of branches with no half are zero.
    """
    timing = {}
    t0 = time.perf_counter()

    def stage(name):
        nonlocal t0
        timing[name] = time.perf_counter() - t0
        t0 = time.perf_counter()
        if progress is not None:
            progress(f"{name}: {timing[name]:.1f} s")

    acc = accuracy_for(tolerance)
    nb = int(n_branches)
    triangles = np.asarray(triangles, dtype=np.int64)
    half_branch = np.asarray(half_branch, dtype=np.int64)
    half_tri = np.asarray(half_tri, dtype=np.int64)
    _check_halves(len(triangles), half_branch, half_tri, half_vertex, half_sign, nb)
    if np.shape(tri_z) != (len(triangles), 2):
        raise ValueError(f"tri_z has shape {np.shape(tri_z)}, expected ({len(triangles)}, 2)")
    if len(half_branch) == 0:
        raise ValueError("build_sheet_operator: no sheet branches")
    used, h_tri = np.unique(half_tri, return_inverse=True)
    h_tri = h_tri.ravel().astype(np.int64)
    tris = triangles[used]
    verts, cent, area, diam = _triangle_geometry(points, tris)
    zpar, tri_zi, zmid = _layer_params(np.asarray(tri_z)[used])
    uz = np.unique(np.asarray(tri_z, dtype=np.float64)[used], axis=0)
    n_planes = len(uz)

    order = np.argsort(h_tri, kind="stable")
    h_tri = np.ascontiguousarray(h_tri[order])
    h_branch = np.ascontiguousarray(half_branch[order])
    h_pt = np.ascontiguousarray(np.asarray(half_vertex, dtype=np.float64)[order] - cent[h_tri])
    h_coef = np.asarray(half_sign, dtype=np.float64)[order] / (2.0 * area[h_tri])
    v = len(used)
    th_ptr = np.searchsorted(h_tri, np.arange(v + 1)).astype(np.int64)

    # grid
    p = acc.stencil
    lo, hi = verts.reshape(-1, 2).min(axis=0), verts.reshape(-1, 2).max(axis=0)
    h = choose_spacing(cent, diam, n_planes, hi - lo, acc)
    origin = lo - (p + 1) * h
    node_ptr, nodes, w = stencil_weights(verts, cent, area, origin, h, p)
    nx, ny = (int(n) for n in nodes.max(axis=0) + 2)
    nxp, nyp = scipy.fft.next_fast_len(2 * nx - 1, real=True), scipy.fft.next_fast_len(2 * ny - 1, real=True)
    stage("grid")

    # near pairs and their exact and grid moments
    near_ptr, near_other = nearfield.near_pair_list(cent, zmid, diam, acc.near_spacings * h,
                                                    acc.near_diameters)
    owner = np.repeat(np.arange(v), np.diff(near_ptr))
    lo_n = np.minimum.reduceat(nodes, node_ptr[:-1], axis=0)
    hi_n = np.maximum.reduceat(nodes, node_ptr[:-1], axis=0)
    dmax = int(np.max(np.maximum(hi_n[owner] - lo_n[near_other], hi_n[near_other] - lo_n[owner]),
                      initial=0)) + 1
    del owner, lo_n, hi_n
    key, reps = _kernel_keys(uz)
    quarters = [_sampled_kernel(tuple(uz[i]), tuple(uz[j]), h, max(nx, dmax), max(ny, dmax))
                for i, j in reps]
    gk = np.ascontiguousarray(np.stack([g[:dmax, :dmax] for g in quarters]))
    stage("kernels")
    obary, ow, nrule = _outer_rules()
    glx, glw = np.polynomial.legendre.leggauss(N_W)
    far_pts, far_wts, far_n = _far_rules(verts, cent, area)
    far_q = np.array([q for q, _ in FAR_LEVELS])
    sbary, sw = triangle_rule(partial.SMOOTH_DEGREE)
    exact, grid = nearfield.pair_tables(verts, tris, cent, area, diam, zmid, tri_zi, zpar,
                                        near_ptr, near_other, obary, ow, nrule, glx, glw, W_PANEL,
                                        sbary, sw, float(partial.SMOOTH_SEPARATION), far_pts,
                                        far_wts, far_n, far_q, node_ptr, nodes, w, tri_zi, gk, key)
    del far_pts, far_wts
    stage("near moments")
    flist = nearfield.symmetric_list(near_ptr, near_other)
    del near_ptr, near_other
    scale = MU0 / (4.0 * math.pi)
    indptr, indices, ex, gr, full = nearfield.branch_near_matrices(
        nb, h_tri, h_branch, h_pt, h_coef, th_ptr, flist, exact, grid, scale)
    del exact, grid, flist
    exact_m = sp.csr_matrix((ex, indices, indptr), shape=(nb, nb))
    corr = sp.csr_matrix((ex - gr, indices, indptr), shape=(nb, nb))
    del gr
    stage("near matrix")

    # far field: kernels in Fourier space, the branch -> triangle coefficients
    dtype = np.float32 if acc.single else np.float64
    khat = np.stack([_kernel_hat(scale * g[:nx, :ny], nxp, nyp, dtype) for g in quarters])
    del quarters
    rows = np.concatenate([h_tri, v + h_tri, 2 * v + h_tri])
    cols = np.concatenate([h_branch] * 3)
    vals = np.concatenate([h_coef, h_coef * h_pt[:, 0], h_coef * h_pt[:, 1]])
    coef = sp.csr_matrix((vals, (rows, cols)), shape=(3 * v, nb))
    plane_tri = np.argsort(tri_zi, kind="stable").astype(np.int64)
    plane_ptr = np.searchsorted(tri_zi[plane_tri], np.arange(n_planes + 1)).astype(np.int64)
    stage("fft kernels")
    return SheetOperator(shape=(nb, nb), spacing=float(h), grid=(nx, ny), padded=(nxp, nyp),
                         n_planes=n_planes, accuracy=acc, timing=timing, _corr=corr,
                         _exact=exact_m, _full=full, _coef=coef, _coef_t=coef.T.tocsr(),
                         _plane_ptr=plane_ptr, _plane_tri=plane_tri, _plane=tri_zi,
                         _node_ptr=node_ptr, _nodes=nodes, _w=w, _khat=khat, _key=key,
                         _pos=taper_mod.branch_positions(cent, zmid, h_tri, h_branch, nb))
