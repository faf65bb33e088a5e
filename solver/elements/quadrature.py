"""Triangle quadrature and the moments of the averaged kernel over a pair of triangles.

For triangles ``Ta`` (centroid ``ca``) and ``Tb`` (centroid ``cb``) the four moments

    S0  = int_Ta int_Tb K dS dS'                  (m^3)
    S1  = int_Ta int_Tb (r - ca) K dS dS'         (m^4, 2-vector)
    S1' = int_Ta int_Tb (r' - cb) K dS dS'        (m^4, 2-vector)
    S2  = int_Ta int_Tb (r - ca).(r' - cb) K      (m^5)

give every integral of two RWG halves on the pair (free vertices ``p``, ``q``, relative to the
centroids: ``pt = p - ca``, ``qt = q - cb``):

    int int (r - p).(r' - q) K = S2 - qt.S1 - pt.S1' + (pt.qt) S0       (:func:`half_pair`).

They are stored as ``(S0, S1x, S1y, S1'x, S1'y, S2)``. Coordinates relative to the centroids keep
the combination free of cancellation on a large board.

Far pairs use product Gauss rules (:func:`far_moments`). Near and self pairs use outer Gauss points
on ``Ta`` and, for each outer point ``r``, an exact-in-radius polar integral over ``Tb``
(:func:`inner_polar`): ``Tb`` is the signed sum of the three triangles (r, edge); each is
parametrised by the edge with ``R = h cosh(w)``, ``dtheta = dw / cosh(w)`` (``h`` the distance from
``r`` to the edge's line), which is smooth in ``w``; Gauss-Legendre panels in ``w`` and the
closed-form radial integrals ``P1``, ``P2`` of :mod:`copperpath.solver.elements.kernels` do the rest. With
``r' = r + rho u(theta)`` the first moment needs ``P2``.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from copperpath.solver.elements.kernels import FASTMATH, kernel_value, pair_gap, radial_p12

#: Rule classes of a near pair (:func:`pair_class`): polar quadrature with the outer rule of
#: class 0 (no shared vertex), 1 (one shared vertex) or 2 (a shared edge, or the self pair),
#: or product Gauss (:data:`SMOOTH`) for pairs far enough apart for it.
SMOOTH = 3

# Symmetric rules on the triangle (Dunavant 1985, "High degree efficient symmetrical Gaussian
# quadrature rules for the triangle", IJNME 21): orbits (a, b, weight) in barycentric
# coordinates, (a, b, 1-a-b) and its distinct permutations; weights sum to 1.
_DUNAVANT = {
    1: [((1 / 3, 1 / 3), 1.0)],
    2: [((1 / 6, 1 / 6), 1 / 3)],
    4: [((0.445948490915965, 0.445948490915965), 0.223381589678011),
        ((0.091576213509771, 0.091576213509771), 0.109951743655322)],
    5: [((1 / 3, 1 / 3), 0.225),
        ((0.470142064105115, 0.470142064105115), 0.132394152788506),
        ((0.101286507323456, 0.101286507323456), 0.125939180544827)],
    6: [((0.249286745170910, 0.249286745170910), 0.116786275726379),
        ((0.063089014491502, 0.063089014491502), 0.050844906370207),
        ((0.053145049844817, 0.310352451033784), 0.082851075618374)],
}


def triangle_rule(degree):
    """Symmetric Gauss rule on the triangle, exact for polynomials up to ``degree``.

    Parameters
    ----------
    degree : {1, 2, 4, 5, 6}

    Returns
    -------
    bary : ndarray, shape (n, 3)
        Barycentric coordinates of the points.
    weights : ndarray, shape (n,)
        Weights summing to 1 (multiply by the area).

    Examples
    --------
    >>> bary, w = triangle_rule(4)
    >>> bary.shape, round(float(w.sum()), 12)
    ((6, 3), 1.0)
    """
    if degree not in _DUNAVANT:
        raise ValueError(f"Invalid degree {degree!r}, should be one of {sorted(_DUNAVANT)}")
    pts, wts = [], []
    for (a, b), w in _DUNAVANT[degree]:
        c = 1.0 - a - b
        orbit = {tuple(round(x, 15) for x in o)
                 for o in ((a, b, c), (b, c, a), (c, a, b), (b, a, c), (a, c, b), (c, b, a))}
        for bc in sorted(orbit):
            pts.append(bc)
            wts.append(w)
    return np.array(pts), np.array(wts)


def edge_graded_rule(n_s, n_t):
    """Outer rule graded toward the three edges, for self and edge-adjacent pairs.

    The potential of a triangle is not smooth across its edges (``d ln d`` in the distance
    ``d`` to an edge), so plain Gauss points on a triangle that touches the source's edge
    converge slowly. Here the triangle is split into the three triangles (centroid, edge);
    each is mapped from the unit square by ``x = c + tau ((1 - s) v_i + s v_(i+1) - c)`` with
    ``tau = 1 - (1 - sigma)^2`` (which turns ``d ln d`` into ``sigma^3 ln sigma``) and
    ``s = 3 q^2 - 2 q^3`` (which grades toward the vertices), Gauss-Legendre in ``q`` (``n_s``
    points) and ``sigma`` (``n_t`` points). Measured on a self pair, an edge-adjacent and a
    vertex-adjacent pair: 6 x 6 (108 points) reaches 1e-5 or better on every moment.

    Returns
    -------
    bary, weights : ndarray
        As :func:`triangle_rule` (weights sum to 1).
    """
    xs, ws = np.polynomial.legendre.leggauss(n_s)
    xt, wt = np.polynomial.legendre.leggauss(n_t)
    q, ws = 0.5 * (xs + 1.0), 0.5 * ws
    s, ws = 3.0 * q**2 - 2.0 * q**3, ws * 6.0 * q * (1.0 - q)
    sig, wt = 0.5 * (xt + 1.0), 0.5 * wt
    tau = 1.0 - (1.0 - sig) ** 2
    jac = 2.0 * tau * 2.0 * (1.0 - sig) * wt / 3.0
    eye = np.eye(3)
    c = np.full(3, 1.0 / 3.0)
    pts, wts = [], []
    for i in range(3):
        edge_pt = np.outer(1.0 - s, eye[i]) + np.outer(s, eye[(i + 1) % 3])
        for k in range(n_t):
            pts.append(c + tau[k] * (edge_pt - c))
            wts.append(ws * jac[k])
    return np.concatenate(pts), np.concatenate(wts)


def subdivided_rule(degree, levels):
    """A triangle rule applied on the ``4**levels`` congruent sub-triangles of midpoint refinement.

    Parameters
    ----------
    degree : int
        Degree of the rule on each sub-triangle (see :func:`triangle_rule`).
    levels : int
        Number of midpoint refinements (0 returns the plain rule).

    Returns
    -------
    bary, weights : ndarray
        As :func:`triangle_rule`.
    """
    bary, w = triangle_rule(degree)
    tris = [np.eye(3)]
    for _ in range(levels):
        new = []
        for t in tris:
            m01, m12, m20 = (t[0] + t[1]) / 2, (t[1] + t[2]) / 2, (t[2] + t[0]) / 2
            new += [np.array([t[0], m01, m20]), np.array([m01, t[1], m12]),
                    np.array([m20, m12, t[2]]), np.array([m12, m20, m01])]
        tris = new
    pts = np.concatenate([bary @ t for t in tris])
    return pts, np.tile(w, len(tris)) / len(tris)


@njit(cache=True, fastmath=FASTMATH)
def half_pair(mom, ptx, pty, qtx, qty):
    """``int int (r - p).(r' - q) K`` (m^5) from the pair moments and centroid-relative vertices."""
    return (mom[5] - (qtx * mom[1] + qty * mom[2]) - (ptx * mom[3] + pty * mom[4])
            + (ptx * qtx + pty * qty) * mom[0])


@njit(cache=True, fastmath=FASTMATH)
def far_moments(dcx, dcy, xa, wa, xb, wb, par, out):
    """Product-Gauss pair moments (see module docstring) into ``out`` (6,).

    ``dc = ca - cb`` (m); ``xa``, ``xb`` (n, 2) Gauss points relative to the centroids (m);
    ``wa``, ``wb`` their weights (m^2); ``par`` the kernel's pair parameters.
    """
    for k in range(6):
        out[k] = 0.0
    for i in range(xa.shape[0]):
        ax, ay, w1 = xa[i, 0], xa[i, 1], wa[i]
        s0 = 0.0
        s1x = 0.0
        s1y = 0.0
        for j in range(xb.shape[0]):
            dx = dcx + ax - xb[j, 0]
            dy = dcy + ay - xb[j, 1]
            kw = wb[j] * kernel_value(dx * dx + dy * dy, par)
            s0 += kw
            s1x += kw * xb[j, 0]
            s1y += kw * xb[j, 1]
        out[0] += w1 * s0
        out[1] += w1 * ax * s0
        out[2] += w1 * ay * s0
        out[3] += w1 * s1x
        out[4] += w1 * s1y
        out[5] += w1 * (ax * s1x + ay * s1y)


@njit(cache=True, fastmath=FASTMATH)
def _segment_distance(px, py, ax, ay, bx, by):
    ex, ey = bx - ax, by - ay
    t = min(1.0, max(0.0, ((px - ax) * ex + (py - ay) * ey) / (ex * ex + ey * ey)))
    return math.hypot(px - ax - t * ex, py - ay - t * ey)


@njit(cache=True, fastmath=FASTMATH)
def _separated(ta, tb):
    """True if an edge line of either counter-clockwise triangle separates the two."""
    for side in range(2):
        t1 = ta if side == 0 else tb
        t2 = tb if side == 0 else ta
        for e in range(3):
            ax, ay = t1[e, 0], t1[e, 1]
            nx, ny = t1[(e + 1) % 3, 1] - ay, ax - t1[(e + 1) % 3, 0]   # outward normal
            low = math.inf
            for i in range(3):
                low = min(low, (t2[i, 0] - ax) * nx + (t2[i, 1] - ay) * ny)
            if low > 0.0:
                return True
    return False


@njit(cache=True, fastmath=FASTMATH)
def triangle_distance(ta, tb):
    """Smallest in-plane distance (m) between two counter-clockwise triangles, 0 if they overlap.

    Two convex polygons are disjoint exactly when an edge line of one separates them; then the
    distance is the smallest distance from a vertex of one to an edge of the other.
    """
    if not _separated(ta, tb):
        return 0.0
    d = math.inf
    for i in range(3):
        for e in range(3):
            f = (e + 1) % 3
            d = min(d, _segment_distance(ta[i, 0], ta[i, 1], tb[e, 0], tb[e, 1], tb[f, 0], tb[f, 1]),
                    _segment_distance(tb[i, 0], tb[i, 1], ta[e, 0], ta[e, 1], ta[f, 0], ta[f, 1]))
    return d


@njit(cache=True, fastmath=FASTMATH)
def pair_class(vid_a, vid_b, ta, tb, dmax, par, smooth):
    """Rule class of a near pair (see :data:`SMOOTH`).

    Pairs sharing vertices (``vid_a``, ``vid_b``: node indices) get the polar rule of their
    class. A pair sharing none gets product Gauss when its separation, ``sqrt(d^2 + g^2)`` with
    ``d`` the in-plane distance between the triangles and ``g`` the vertical gap between their
    copper (``par``), is at least ``smooth`` times ``dmax`` (the larger diameter, m).
    """
    shared = 0
    for i in range(3):
        for j in range(3):
            if vid_a[i] == vid_b[j]:
                shared += 1
    if shared:
        return min(shared, 2)
    gap = pair_gap(par)
    limit = smooth * dmax
    if gap >= limit or math.hypot(triangle_distance(ta, tb), gap) >= limit:
        return SMOOTH
    return 0


@njit(cache=True, fastmath=FASTMATH)
def smooth_moments(ta, cax, cay, area_a, tb, cbx, cby, area_b, par, bary, w, out):
    """Product-Gauss pair moments with the rule ``bary``, ``w`` on both triangles into ``out`` (6,)."""
    n = w.size
    xa = np.empty((n, 2))
    xb = np.empty((n, 2))
    for i in range(n):
        for k in range(2):
            xa[i, k] = bary[i, 0] * ta[0, k] + bary[i, 1] * ta[1, k] + bary[i, 2] * ta[2, k]
            xb[i, k] = bary[i, 0] * tb[0, k] + bary[i, 1] * tb[1, k] + bary[i, 2] * tb[2, k]
        xa[i, 0] -= cax
        xa[i, 1] -= cay
        xb[i, 0] -= cbx
        xb[i, 1] -= cby
    far_moments(cax - cbx, cay - cby, xa, w * area_a, xb, w * area_b, par, out)


@njit(cache=True, fastmath=FASTMATH)
def inner_polar(px, py, tb, cbx, cby, par, glx, glw, panel):
    """``int_Tb K dS'`` (m) and ``int_Tb (r' - cb) K dS'`` (m^2) about the point ``(px, py)``.

    Parameters
    ----------
    px, py : float
        The outer point in metres (inside, on or outside ``Tb``).
    tb : ndarray, shape (3, 2)
        Vertices of ``Tb`` in metres, counter-clockwise.
    cbx, cby : float
        Centroid of ``Tb``.
    par : ndarray
        Kernel pair parameters (:func:`copperpath.solver.elements.kernels.pair_params`).
    glx, glw : ndarray
        Gauss-Legendre nodes and weights on [-1, 1] for one panel in ``w``.
    panel : float
        Largest panel length in ``w``.

    Returns
    -------
    i0, ix, iy : float
    """
    i0 = 0.0
    ix = 0.0
    iy = 0.0
    rcx = px - cbx
    rcy = py - cby
    for e in range(3):
        ax, ay = tb[e, 0], tb[e, 1]
        bx, by = tb[(e + 1) % 3, 0], tb[(e + 1) % 3, 1]
        lx, ly = bx - ax, by - ay
        le = math.hypot(lx, ly)
        ex, ey = lx / le, ly / le
        # signed distance of the point to the edge line, positive on the inner (left) side
        sd = (ex * (py - ay) - ey * (px - ax))
        h = abs(sd)
        if h <= 1e-12 * le:
            continue
        sgn = 1.0 if sd > 0.0 else -1.0
        # unit normal from the point toward the line
        nx, ny = (ey, -ex) if sd > 0.0 else (-ey, ex)
        fx, fy = px + h * nx, py + h * ny
        wa = math.asinh(((ax - fx) * ex + (ay - fy) * ey) / h)
        wb = math.asinh(((bx - fx) * ex + (by - fy) * ey) / h)
        npan = int(math.ceil((wb - wa) / panel))
        if npan < 1:
            npan = 1
        dw = (wb - wa) / npan
        for k in range(npan):
            w0 = wa + k * dw
            for g in range(glx.size):
                ew = math.exp(w0 + 0.5 * dw * (glx[g] + 1.0))
                ch = 0.5 * (ew + 1.0 / ew)
                th = (ew - 1.0 / ew) / (ew + 1.0 / ew)
                wt = sgn * 0.5 * dw * glw[g] / ch
                p1, p2 = radial_p12(h * ch, par)
                ux = nx / ch + ex * th
                uy = ny / ch + ey * th
                i0 += wt * p1
                ix += wt * (rcx * p1 + ux * p2)
                iy += wt * (rcy * p1 + uy * p2)
    return i0, ix, iy


@njit(cache=True, fastmath=FASTMATH)
def near_moments(ta, cax, cay, area_a, tb, cbx, cby, par, obary, ow, glx, glw, panel, out):
    """Accurate pair moments (self, adjacent or near pairs, any layers) into ``out`` (6,).

    Outer points ``obary`` (barycentric, weights ``ow`` summing to 1) on ``Ta`` (area
    ``area_a``, m^2), inner integral over ``Tb`` by :func:`inner_polar`.
    """
    for k in range(6):
        out[k] = 0.0
    for i in range(ow.size):
        px = obary[i, 0] * ta[0, 0] + obary[i, 1] * ta[1, 0] + obary[i, 2] * ta[2, 0]
        py = obary[i, 0] * ta[0, 1] + obary[i, 1] * ta[1, 1] + obary[i, 2] * ta[2, 1]
        i0, ix, iy = inner_polar(px, py, tb, cbx, cby, par, glx, glw, panel)
        w = ow[i] * area_a
        rx, ry = px - cax, py - cay
        out[0] += w * i0
        out[1] += w * rx * i0
        out[2] += w * ry * i0
        out[3] += w * ix
        out[4] += w * iy
        out[5] += w * (rx * ix + ry * iy)


@njit(cache=True, fastmath=FASTMATH)
def class_moments(c, ta, cax, cay, area_a, tb, cbx, cby, area_b, par, obary, ow, nrule, glx,
                  glw, panel, sbary, sw, out):
    """Moments of a near pair by the rule of its class ``c`` (:func:`pair_class`) into ``out``.

    Polar quadrature with the outer rule ``obary[c, :nrule[c]]``, ``ow[c, :nrule[c]]``, or
    for :data:`SMOOTH` product Gauss with ``sbary``, ``sw`` on both triangles.
    """
    if c == SMOOTH:
        smooth_moments(ta, cax, cay, area_a, tb, cbx, cby, area_b, par, sbary, sw, out)
    else:
        near_moments(ta, cax, cay, area_a, tb, cbx, cby, par, obary[c, :nrule[c]],
                     ow[c, :nrule[c]], glx, glw, panel, out)


@njit(parallel=True, cache=True)
def near_table(verts, tri_vid, cent, area, diam, tri_zi, zpar, near_ptr, near_idx, obary, ow,
               nrule, glx, glw, panel, sbary, sw, smooth):
    """Moments of every listed near pair, (n_pairs, 6); parallel over the first triangle.

    ``near_ptr``/``near_idx`` list, per triangle ``a``, the triangles ``b`` treated as near;
    each pair's rule is that of its class (:func:`pair_class` with separation ``smooth``,
    :func:`class_moments`).
    """
    out = np.empty((near_idx.size, 6))
    for a in prange(cent.shape[0]):
        for k in range(near_ptr[a], near_ptr[a + 1]):
            b = near_idx[k]
            par = zpar[tri_zi[a], tri_zi[b]]
            c = pair_class(tri_vid[a], tri_vid[b], verts[a], verts[b], max(diam[a], diam[b]),
                           par, smooth)
            class_moments(c, verts[a], cent[a, 0], cent[a, 1], area[a], verts[b], cent[b, 0],
                          cent[b, 1], area[b], par, obary, ow, nrule, glx, glw, panel, sbary, sw,
                          out[k])
    return out


def pair_moments(ta, tb, z_a, z_b, *, method="near", degree=6, levels=0, n_w=8, panel=1.0):
    """Moments ``(S0, S1x, S1y, S1'x, S1'y, S2)`` of one triangle pair (a convenience for tests).

    Parameters
    ----------
    ta, tb : array_like, shape (3, 2)
        Vertices in metres, counter-clockwise.
    z_a, z_b : tuple of float
        ``(z0, z1)`` of each triangle's copper in metres.
    method : {"near", "far"}
        Polar near-field quadrature, or product Gauss of ``degree`` on both triangles.
    degree, levels : int
        Rule on ``Ta`` (outer rule for "near"), see :func:`subdivided_rule`.
    n_w : int
        Gauss-Legendre points per ``w`` panel; ``panel`` the panel length.

    Returns
    -------
    ndarray, shape (6,)
    """
    from copperpath.solver.elements.kernels import pair_params

    ta = np.ascontiguousarray(ta, dtype=np.float64)
    tb = np.ascontiguousarray(tb, dtype=np.float64)
    par = pair_params(z_a[0], z_a[1], z_b[0], z_b[1])
    ca, cb = ta.mean(0), tb.mean(0)
    area_a = _area(ta)
    bary, w = subdivided_rule(degree, levels)
    out = np.empty(6)
    if method == "near":
        glx, glw = np.polynomial.legendre.leggauss(n_w)
        near_moments(ta, ca[0], ca[1], area_a, tb, cb[0], cb[1], par, bary, w, glx, glw,
                     float(panel), out)
    elif method == "far":
        xa = bary @ ta - ca
        xb = bary @ tb - cb
        far_moments(ca[0] - cb[0], ca[1] - cb[1], xa, w * area_a, xb, w * _area(tb), par, out)
    else:
        raise ValueError(f"Invalid method {method!r}, should be one of 'far', 'near'")
    return out


def _area(t):
    return 0.5 * ((t[1, 0] - t[0, 0]) * (t[2, 1] - t[0, 1]) - (t[1, 1] - t[0, 1]) * (t[2, 0] - t[0, 0]))
