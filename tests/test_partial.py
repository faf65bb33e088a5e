"""Partial L and R of RWG branches against the exact bar formulas (Hoer & Love 1965) and Ohm's law."""
from collections import defaultdict

import numpy as np
import pytest

from copperpath.solver.elements.partial import inductance_matrix, resistance_matrix
from tests.validation.references import bar_mutual_inductance, bar_self_inductance

SIGMA = 5.8e7  # S/m, annealed copper (IEC 60028)


def _strip(l, w, x0=0.0, y0=0.0):
    """One row of w x w squares split by diagonals (two triangles across)."""
    n = int(round(l / w))
    xs = np.linspace(x0, x0 + l, n + 1)
    pts = np.array([(x, y) for x in xs for y in (y0, y0 + w)])
    tris = []
    for i in range(n):
        a, b, c, d = 2 * i, 2 * i + 2, 2 * i + 3, 2 * i + 1
        tris += [(a, b, c), (a, c, d)]
    return pts, np.array(tris, dtype=np.int64)


def _branches(pts, tris, field, offset=0):
    """RWG halves of every interior edge; one-sided halves on boundary edges that carry flux.

    Returns the halves and the branch currents of the uniform current density ``field`` (A/m).
    """
    e2t = defaultdict(list)
    for t, tri in enumerate(tris):
        for k in range(3):
            e2t[tuple(sorted((tri[k], tri[(k + 1) % 3])))].append((t, tri[(k + 2) % 3]))
    hb, ht, hv, hs, cur = [], [], [], [], []
    for (i, j), lst in e2t.items():
        t0, v0 = lst[0]
        tang = pts[j] - pts[i]
        n = np.array([tang[1], -tang[0]])
        if n @ ((pts[i] + pts[j]) / 2 - pts[tris[t0]].mean(0)) < 0:
            n = -n
        flux = field @ n
        if len(lst) == 1 and abs(flux) < 1e-12:
            continue
        b = offset + len(cur)
        hb.append(b), ht.append(t0), hv.append(pts[v0]), hs.append(1.0)
        if len(lst) == 2:
            hb.append(b), ht.append(lst[1][0]), hv.append(pts[lst[1][1]]), hs.append(-1.0)
        cur.append(flux)
    return (np.array(hb), np.array(ht), np.array(hv), np.array(hs)), np.array(cur)


@pytest.mark.parametrize("l,w,t", [(10e-3, 1e-3, 35e-6), (20e-3, 2e-3, 70e-6), (5e-3, 0.5e-3, 18e-6)])
def test_strip_matches_exact_bar(l, w, t):
    pts, tris = _strip(l, w)
    halves, cur = _branches(pts, tris, np.array([1.0 / w, 0.0]))
    L = inductance_matrix(pts, tris, np.tile([0.0, t], (len(tris), 1)), *halves, len(cur))
    # Hoer & Love 1965 exact partial self-inductance of a rectangular bar
    assert cur @ L @ cur == pytest.approx(bar_self_inductance(l, w, t), rel=1e-3)
    R = resistance_matrix(pts, tris, np.full(len(tris), 1.0 / (SIGMA * t)), *halves, len(cur))
    # Ohm's law, l / (sigma w t)
    assert cur @ (R @ cur) == pytest.approx(l / (SIGMA * w * t), rel=1e-9)


@pytest.mark.parametrize("placement", ["side", "stacked"])
def test_two_strips_mutual(placement):
    l, w, t = 10e-3, 1e-3, 35e-6
    dy, z2 = (1.5e-3, 0.0) if placement == "side" else (0.0, 0.3e-3)
    p1, t1 = _strip(l, w)
    p2, t2 = _strip(l, w, y0=dy)
    pts = np.vstack([p1, p2])
    tris = np.vstack([t1, t2 + len(p1)])
    tri_z = np.vstack([np.tile([0.0, t], (len(t1), 1)), np.tile([z2, z2 + t], (len(t2), 1))])
    h1, c1 = _branches(p1, t1, np.array([1.0 / w, 0.0]))
    h2, c2 = _branches(p2, t2, np.array([1.0 / w, 0.0]), offset=len(c1))
    halves = [np.concatenate([a, b]) for a, b in zip(h1, h2)]
    halves[1] = np.concatenate([h1[1], h2[1] + len(t1)])
    n = len(c1) + len(c2)
    L = inductance_matrix(pts, tris, tri_z, *halves, n)
    i1 = np.concatenate([c1, np.zeros(len(c2))])
    i2 = np.concatenate([np.zeros(len(c1)), c2])
    ref = bar_mutual_inductance(((0, l), (0, w), (0, t)), ((0, l), (dy, dy + w), (z2, z2 + t)))
    # Hoer & Love 1965 exact mutual partial inductance of parallel bars
    assert i1 @ L @ i2 == pytest.approx(ref, rel=1e-2)


def test_irregular_mesh_symmetric_positive_definite():
    import triangle as tr

    poly = {"vertices": np.array([[0, 0], [4e-3, 0], [4e-3, 1e-3], [2e-3, 3e-3], [0, 2e-3]]),
                "segments": np.array([[0, 1], [1, 2], [2, 3], [3, 4], [4, 0]])}
    mesh = tr.triangulate(poly, "q30a2e-7")
    pts, tris = mesh["vertices"], mesh["triangles"].astype(np.int64)
    halves, cur = _branches(pts, tris, np.zeros(2))  # interior edges only
    L = inductance_matrix(pts, tris, np.tile([0.0, 35e-6], (len(tris), 1)), *halves, len(cur))
    assert np.array_equal(L, L.T)
    assert np.linalg.eigvalsh(L).min() > 0
    # resistance: symmetric, positive definite on interior edges
    R = resistance_matrix(pts, tris, np.full(len(tris), 1e-3), *halves, len(cur)).toarray()
    assert np.allclose(R, R.T, rtol=1e-12, atol=0) and np.linalg.eigvalsh(R).min() > 0


def _irregular(max_area):
    import triangle as tr

    poly = {"vertices": np.array([[0, 0], [4e-3, 0], [4e-3, 1e-3], [2e-3, 3e-3], [0, 2e-3]]),
                "segments": np.array([[0, 1], [1, 2], [2, 3], [3, 4], [4, 0]])}
    mesh = tr.triangulate(poly, f"q30a{max_area:.12f}")
    return mesh["vertices"], mesh["triangles"].astype(np.int64)


@pytest.mark.parametrize("max_area,parity", [(2.5e-7, 1), (2e-7, 0)])
@pytest.mark.parametrize("near", ["all", "all, smooth pairs", "self only"])
def test_pair_once_assembly_matches_half_by_half_sum(monkeypatch, max_area, parity, near):
    # every unordered triangle pair is visited exactly once (odd and even triangle counts, the
    # near table and the far loop): the matrix equals the plain sum over all half pairs of
    # pair moments computed here one by one with the same rules; with "smooth pairs" the near
    # pairs sharing no vertex and at least SMOOTH_SEPARATION diameters apart (distance by
    # shapely) take product Gauss
    from shapely.geometry import Polygon

    from copperpath.solver.elements import partial
    from copperpath.solver.elements.kernels import pair_params
    from copperpath.solver.elements.quadrature import far_moments, near_moments, triangle_rule

    monkeypatch.setattr(partial, "NEAR_FACTOR", 0.0 if near == "self only" else 100.0)
    # (0.4999: this mesh has pairs exactly half a diameter apart, a tie within rounding)
    monkeypatch.setattr(partial, "SMOOTH_SEPARATION", 0.4999 if near == "all, smooth pairs" else np.inf)
    monkeypatch.setattr(partial, "FAR_LEVELS", ((np.inf, 6),))
    pts, tris = _irregular(max_area)
    assert len(tris) % 2 == parity
    halves, cur = _branches(pts, tris, np.zeros(2))  # interior edges only
    z = (0.0, 35e-6)
    L = inductance_matrix(pts, tris, np.tile(z, (len(tris), 1)), *halves, len(cur))
    hb, ht, hv, hs = halves
    n, verts = len(tris), pts[tris]
    cent = verts.mean(1)
    d1, d2 = verts[:, 1] - verts[:, 0], verts[:, 2] - verts[:, 0]
    area = 0.5 * (d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0])
    obary, ow, nrule = partial._outer_rules()
    glx, glw = np.polynomial.legendre.leggauss(partial.N_W)
    par = pair_params(*z, *z)
    bary6, w6 = triangle_rule(6)
    ref = np.zeros_like(L)
    n_smooth = 0
    for i in range(n):
        for j in range(i, n):
            step = (j - i) % n
            # the pair's owner goes first (its outer rule)
            a, b = (j, i) if 2 * step > n or (2 * step == n and i > j) else (i, j)
            mom = np.empty(6)
            c = min(2, len(set(tris[a]) & set(tris[b])))
            diam = max(np.linalg.norm(verts[t] - verts[t][[1, 2, 0]], axis=1).max() for t in (a, b))
            smooth = (near == "all, smooth pairs" and c == 0 and Polygon(verts[a]).distance(
                Polygon(verts[b])) >= partial.SMOOTH_SEPARATION * diam)
            if smooth:
                n_smooth += 1
            if (a == b or near != "self only") and not smooth:
                near_moments(verts[a], *cent[a], area[a], verts[b], *cent[b], par,
                             obary[c, :nrule[c]], ow[c, :nrule[c]], glx, glw, partial.W_PANEL, mom)
            else:
                far_moments(*(cent[a] - cent[b]), bary6 @ verts[a] - cent[a], w6 * area[a],
                            bary6 @ verts[b] - cent[b], w6 * area[b], par, mom)
            for h in np.flatnonzero(ht == a):
                for k in np.flatnonzero(ht == b):
                    pt, qt = hv[h] - cent[a], hv[k] - cent[b]
                    val = (mom[5] - qt @ mom[1:3] - pt @ mom[3:5] + (pt @ qt) * mom[0])
                    val *= hs[h] * hs[k] / (4 * area[a] * area[b]) * (0.5 if a == b else 1.0)
                    ref[hb[h], hb[k]] += val
                    ref[hb[k], hb[h]] += val
    np.testing.assert_allclose(L, 1e-7 * ref, rtol=1e-10, atol=1e-12 * np.abs(L).max())
    assert (n_smooth > n) == (near == "all, smooth pairs")  # a good share of the pairs


def test_colouring_separates_triangles_of_a_branch():
    from copperpath.solver.elements.partial import _colour

    pts, tris = _irregular(2e-7)
    (hb, ht, _, _), _ = _branches(pts, tris, np.zeros(2))
    ptr, order = _colour(len(tris), ht, hb)
    colour = np.empty(len(tris), np.int64)
    for c in range(len(ptr) - 1):
        colour[order[ptr[c]:ptr[c + 1]]] = c
    assert sorted(order) == list(range(len(tris))) and len(ptr) - 1 <= 4
    for b in np.unique(hb):
        t = ht[hb == b]
        assert len(set(colour[t])) == len(t)


def test_bad_shapes_raise():
    pts, tris = _strip(2e-3, 1e-3)
    with pytest.raises(ValueError, match="half_vertex"):
        inductance_matrix(pts, tris, np.tile([0, 1e-5], (4, 1)), [0], [0], np.zeros((2, 2)), [1.0], 1)
