"""Reference: the two-dimensional eddy-current problem in the cross-section of a long conductor,
solved with scikit-fem (a general-purpose finite-element library), independent of copperpath.

Magneto-quasi-statics with ``E_z = E0 - j w A_z`` in a straight conductor along z (``E0`` the
applied field, uniform over the cross-section; Ramo, Whinnery & Van Duzer 1994, *Fields and
Waves in Communication Electronics*, sec. 5.5):

    -div(grad A) / mu0 + j w sigma A = sigma E0      (conductor)
    -div(grad A) / mu0 = 0                            (air)

on a disk of radius ``r_outer`` around the conductor with ``A = 0`` on its rim. The conductor
carries net current, so the far field is a monopole ``A = (mu0 I / 2 pi) ln(r_outer / r)`` plus
multipoles that the rim reflects with relative size ``(a / r_outer)^2`` or less; the rim only
adds a constant to ``A``, which changes the external inductance, not the current distribution.
With ``E0 = 1 V/m`` the current is ``I = sigma (S - j w int A dS)`` and the per-unit-length
impedance is ``Z' = 1 / I`` (ohm/m). Quadratic Lagrange elements (P2) on a Triangle mesh
(Shewchuk 1996) with a uniform size limit inside the conductor.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse.linalg as spla
import triangle
from skfem import Basis, BilinearForm, ElementTriP2, LinearForm, MeshTri
from skfem.helpers import dot, grad

MU0 = 4e-7 * np.pi


def _disk_ring(r, n):
    a = 2 * np.pi * np.arange(n) / n
    return np.stack([r * np.cos(a), r * np.sin(a)], axis=1)


def cross_section_mesh(outline, h, r_outer, n_rim=96):
    """Triangle mesh of a conductor outline inside an air disk.

    Parameters
    ----------
    outline : ndarray, shape (K, 2)
        Conductor polygon (counter-clockwise, about the origin), metres.
    h : float
        Target edge length inside the conductor, metres.
    r_outer : float
        Radius of the air disk, metres.

    Returns
    -------
    (skfem.MeshTri, ndarray of int)
        The mesh and the indices of its conductor triangles.
    """
    k, n = len(outline), n_rim
    verts = np.concatenate([outline, _disk_ring(r_outer, n)])
    seg = np.concatenate([np.stack([np.arange(k), (np.arange(k) + 1) % k], 1),
                          k + np.stack([np.arange(n), (np.arange(n) + 1) % n], 1)])
    inside = outline.mean(axis=0)
    area = 0.43 * h * h                      # equilateral triangle of edge h
    regions = [[inside[0], inside[1], 1, area], [0.0, 0.999 * r_outer, 0, -1]]
    out = triangle.triangulate({"vertices": verts, "segments": seg, "regions": regions}, "pq30aA")
    attr = out["triangle_attributes"][:, 0].round().astype(int)
    mesh = MeshTri(out["vertices"].T.copy(), out["triangles"].T.copy())
    return mesh, np.flatnonzero(attr == 1)


def rectangle(width, height):
    """Counter-clockwise rectangle centred on the origin, shape (4, 2)."""
    w, t = 0.5 * width, 0.5 * height
    return np.array([[-w, -t], [w, -t], [w, t], [-w, t]])


def polygon_disk(radius, n):
    """Regular ``n``-gon inscribed in a circle, counter-clockwise, shape (n, 2)."""
    return _disk_ring(radius, n)


@BilinearForm
def _stiffness(u, v, w):
    return dot(grad(u), grad(v)) / MU0


@BilinearForm
def _mass(u, v, w):
    return u * v


@LinearForm
def _load(v, w):
    return v


def impedance_per_length(mesh, conductor, sigma, frequencies):
    """Per-unit-length impedance of the conductor carrying its own current (return at the rim).

    Parameters
    ----------
    mesh : skfem.MeshTri
    conductor : ndarray of int
        Conductor triangles.
    sigma : float
        Conductivity, S/m.
    frequencies : array_like
        Hz (0 allowed).

    Returns
    -------
    ndarray of complex, shape (F,)
        ``Z' = R' + j w L'`` in ohm/m.
    """
    basis = Basis(mesh, ElementTriP2())
    cond = Basis(mesh, ElementTriP2(), elements=conductor)
    K = _stiffness.assemble(basis).tocsr()
    M = _mass.assemble(cond).tocsr()
    b = _load.assemble(cond)
    area = float(b.sum())                     # int_cond 1 dS (P2 shape functions sum to 1)
    free = np.setdiff1d(np.arange(basis.N), basis.get_dofs().all())
    Kf, Mf, bf = K[free][:, free], M[free][:, free], b[free]
    out = []
    for f in np.asarray(frequencies, float):
        w = 2 * np.pi * f
        a = spla.spsolve((Kf + 1j * w * sigma * Mf).tocsc(), sigma * bf.astype(complex))
        current = sigma * (area - 1j * w * (bf @ a))
        out.append(1.0 / current)
    return np.array(out)


def round_wire_impedance(radius, sigma, f):
    """Exact internal impedance per length of a round wire, ohm/m.

    ``Z' = kappa J0(kappa a) / (2 pi a sigma J1(kappa a))``, ``kappa = (1 - j) / delta``
    (Ramo, Whinnery & Van Duzer 1994, sec. 5.5; Wheeler 1942).
    """
    from scipy.special import jv
    if f == 0:
        return 1.0 / (sigma * np.pi * radius**2) + 0j
    kappa = np.sqrt(-1j * 2 * np.pi * f * MU0 * sigma)
    ka = kappa * radius
    return kappa * jv(0, ka) / (2 * np.pi * radius * sigma * jv(1, ka))
