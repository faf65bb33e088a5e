"""Thickness-averaged 1/r kernel of two copper layers and its closed-form radial integrals.

A layer occupies ``z`` in ``[a0, a1]`` (thickness ``ta``), the other ``[b0, b1]`` (``tb``).
With the current uniform through both thicknesses, the partial-inductance kernel is

    K(rho) = 1/(ta tb) int_{a0}^{a1} int_{b0}^{b1} dz dz' / sqrt(rho^2 + (z - z')^2)

in metres^-1, ``rho`` the in-plane distance. With ``G2(u) = u asinh(u/rho) - sqrt(rho^2 + u^2)``
(so that ``d^2 G2/du^2 = 1/sqrt(rho^2 + u^2)``)

    K = [G2(a1-b0) - G2(a0-b0) - G2(a1-b1) + G2(a0-b1)] / (ta tb).

The four differences ``u_i`` and signs ``c = (+1, -1, -1, +1)`` are the "corners". The kernel
is log-singular at ``rho -> 0`` when the z-ranges overlap (same layer) and finite otherwise.
Far away (``R = sqrt(rho^2 + d^2)`` beyond :data:`SWITCH_THICKNESSES` thicknesses, ``d`` the
centre-to-centre offset) the corner sum cancels; there the kernel is the expectation of
``f(d + s) = 1/sqrt(rho^2 + (d + s)^2)`` over the symmetric offset ``s``, whose Taylor series
about ``d`` is, with ``f^(n)(d) = n! P_n(d/R) / R^(n+1)`` (Legendre polynomials),

    K = (1/R) [1 + P2(x) <s^2>/R^2 + P4(x) <s^4>/R^4 + P6(x) <s^6>/R^6],   x = d/R,
    <s^2> = (ta^2 + tb^2)/12,  <s^4> = ta^4/80 + tb^4/80 + ta^2 tb^2/24,
    <s^6> = (ta^6 + tb^6)/448 + (ta^4 tb^2 + ta^2 tb^4)/64.

The neglected term is below 1e-12 relative at the switch.

Radial integrals for the polar near-field quadrature, in closed form:
``P1(R) = int_0^R rho K drho`` (m) and ``P2(R) = int_0^R rho^2 K drho`` (m^2). Per corner,
with ``S = sqrt(R^2 + u^2)``, the antiderivatives of ``rho G2`` and ``rho^2 G2`` are

    A1 = (R^2/2) u asinh(u/R) - R^2 S/3 + u^2 S/6,                      A1(u, 0) = |u|^3/6,
    A2 = (R^3/3) u asinh(u/R) + (7/24) u^2 R S - R S^3/4 - (u^4/24) asinh(R/|u|),   A2(u, 0) = 0.

The parts ``-R^3/3`` and ``-R^4/4`` that do not depend on ``u`` drop out of the corner sum; they
are subtracted analytically (:func:`radial_p12`) so that the sum does not cancel.

The per-layer-pair constants live in a small float64 array (:func:`pair_params`) so that the
numba loops of :mod:`copperpath.solver.elements.quadrature` can call :func:`kernel_value`, :func:`radial_p1` and
:func:`radial_p2` on scalars.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

#: LLVM fast-math flags for the numba loops: reassociation and contraction, but infinities and
#: NaNs keep their meaning (the closed form is ``inf`` at zero distance in one layer).
FASTMATH = {"nsz", "arcp", "contract", "afn", "reassoc"}

#: Far-series switch: R beyond this many times the larger thickness.
SWITCH_THICKNESSES = 20.0

# Layout of the pair-parameter vector: the four corners, constants, then the merged corners.
_U0, _U1, _U2, _U3, _INV_TT, _D, _M2, _M4, _M6, _RSW2, _OVERLAP, _NC = range(12)
_CU, _CC, _GAP = 12, 16, 20
N_PAIR_PARAMS = 21
_SIGNS = (1.0, -1.0, -1.0, 1.0)


def pair_params(a0, a1, b0, b1):
    """Constants of the averaged kernel between z-ranges ``[a0, a1]`` and ``[b0, b1]``.

    Parameters
    ----------
    a0, a1, b0, b1 : float
        Bottom and top of the two conductors in metres (``a1 > a0``, ``b1 > b0``).

    Returns
    -------
    ndarray, shape (N_PAIR_PARAMS,)
        Corner offsets ``u_i`` (m), ``1/(ta tb)`` (m^-2), centre offset ``d`` (m), the
        moments ``<s^2>, <s^4>, <s^6>``, the squared switch radius (m^2), an overlap flag,
        and the corners merged by ``|u_i|`` (the corner terms are even in ``u``): their
        number, up to four ``|u|`` (m) and up to four summed signs; last the vertical gap
        between the two conductors (m, 0 where they overlap or touch, :func:`pair_gap`).
    """
    ta, tb = a1 - a0, b1 - b0
    if not (ta > 0 and tb > 0):
        raise ValueError(f"pair_params: thicknesses must be positive, got {ta!r} and {tb!r}")
    p = np.empty(N_PAIR_PARAMS)
    p[_U0:_U3 + 1] = (a1 - b0, a0 - b0, a1 - b1, a0 - b1)
    p[_INV_TT] = 1.0 / (ta * tb)
    p[_D] = 0.5 * (a0 + a1) - 0.5 * (b0 + b1)
    p[_M2] = (ta**2 + tb**2) / 12.0
    p[_M4] = ta**4 / 80.0 + tb**4 / 80.0 + ta**2 * tb**2 / 24.0
    p[_M6] = (ta**6 + tb**6) / 448.0 + (ta**4 * tb**2 + ta**2 * tb**4) / 64.0
    p[_RSW2] = (SWITCH_THICKNESSES * max(ta, tb)) ** 2
    p[_OVERLAP] = 1.0 if (a0 < b1 and b0 < a1) else 0.0
    # every corner term is even in u: merge equal |u| (the same layer has two, +-t and 0)
    merged = {}
    for u, c in zip(p[_U0:_U3 + 1], _SIGNS):
        key = min(merged, key=lambda k: abs(k - abs(u)), default=None)
        if key is not None and abs(key - abs(u)) <= 1e-12 * max(ta, tb):
            merged[key] += c
        else:
            merged[abs(u)] = c
    corners = [(u, c) for u, c in merged.items() if c != 0.0]
    p[_NC] = len(corners)
    p[_CU:_CC + 4] = 0.0
    for i, (u, c) in enumerate(corners):
        p[_CU + i], p[_CC + i] = u, c
    p[_GAP] = max(0.0, max(a0, b0) - min(a1, b1))
    return p


@njit(cache=True)
def pair_gap(par):
    """Vertical gap between the two conductors of ``par`` in metres (0 if they overlap or touch)."""
    return par[_GAP]


@njit(cache=True, fastmath=FASTMATH)
def kernel_series(rho2, par):
    """Far series of the averaged kernel (1/m) at squared in-plane distance ``rho2`` (m^2)."""
    d = par[_D]
    r2 = rho2 + d * d
    x2 = d * d / r2
    p2 = 0.5 * (3.0 * x2 - 1.0)
    p4 = (35.0 * x2 * x2 - 30.0 * x2 + 3.0) / 8.0
    p6 = (231.0 * x2 * x2 * x2 - 315.0 * x2 * x2 + 105.0 * x2 - 5.0) / 16.0
    inv = 1.0 / r2
    return (1.0 + inv * (p2 * par[_M2] + inv * (p4 * par[_M4] + inv * p6 * par[_M6]))) / math.sqrt(r2)


@njit(cache=True, fastmath=FASTMATH)
def kernel_closed(rho2, par):
    """Closed-form averaged kernel (1/m); ``inf`` at ``rho2 = 0`` for overlapping z-ranges."""
    rho = math.sqrt(rho2)
    acc = 0.0
    nc = int(par[_NC])
    if rho > 0.0:
        for i in range(nc):
            u = par[_CU + i]
            acc += par[_CC + i] * (u * math.asinh(u / rho) - math.sqrt(rho2 + u * u))
    else:
        if par[_OVERLAP] != 0.0:
            return math.inf
        for i in range(nc):
            u = par[_CU + i]
            if u > 0.0:
                acc += par[_CC + i] * (u * math.log(2.0 * u) - u)
    return acc * par[_INV_TT]


@njit(cache=True, fastmath=FASTMATH)
def kernel_value(rho2, par):
    """Averaged kernel (1/m): far series beyond the switch radius, closed form inside."""
    if rho2 + par[_D] * par[_D] > par[_RSW2]:
        return kernel_series(rho2, par)
    return kernel_closed(rho2, par)


@njit(cache=True, fastmath=FASTMATH)
def radial_p12(r, par):
    """``(P1(R), P2(R))`` in metres and square metres, sharing the work of each corner.

    Per merged corner ``|u|`` the terms ``A1(u, R) + R^3/3 - A1(u, 0)`` and
    ``A2(u, R) + R^4/4 - A2(u, 0)``, written without cancellation.
    """
    if r <= 0.0:
        return 0.0, 0.0
    acc1 = 0.0
    acc2 = 0.0
    r2 = r * r
    for i in range(int(par[_NC])):
        au = par[_CU + i]
        if au == 0.0:
            continue
        c = par[_CC + i]
        u2 = au * au
        s = math.sqrt(r2 + u2)
        ua = au * math.asinh(au / r)
        sr = s + r
        acc1 += c * r2 * (0.5 * ua - u2 / (3.0 * sr) + u2 / (6.0 * (s + au)))
        acc2 += c * (r2 * r / 3.0 * ua + 7.0 / 24.0 * u2 * r * s
                     - r * u2 * (s * s + s * r + r2) / (4.0 * sr)
                     - u2 * u2 / 24.0 * math.asinh(r / au))
    return acc1 * par[_INV_TT], acc2 * par[_INV_TT]


@njit(cache=True)
def radial_p1(r, par):
    """P1(R) = int_0^R rho K(rho) drho in metres (0 at R = 0)."""
    return radial_p12(r, par)[0]


@njit(cache=True)
def radial_p2(r, par):
    """P2(R) = int_0^R rho^2 K(rho) drho in square metres (0 at R = 0)."""
    return radial_p12(r, par)[1]


@njit(cache=True)
def _apply(kind, rho, par, out):
    for i in range(rho.size):
        if kind == 0:
            out[i] = kernel_value(rho[i] * rho[i], par)
        elif kind == 1:
            out[i] = kernel_closed(rho[i] * rho[i], par)
        elif kind == 2:
            out[i] = kernel_series(rho[i] * rho[i], par)
        elif kind == 3:
            out[i] = radial_p1(rho[i], par)
        else:
            out[i] = radial_p2(rho[i], par)


def _vectorised(kind, rho, z_a, z_b):
    rho = np.asarray(rho, dtype=np.float64)
    par = pair_params(float(z_a[0]), float(z_a[1]), float(z_b[0]), float(z_b[1]))
    flat = np.ascontiguousarray(rho.ravel())
    out = np.empty_like(flat)
    _apply(kind, flat, par, out)
    return out.reshape(rho.shape)


def averaged_kernel(rho, z_a, z_b, *, branch="auto"):
    """Thickness-averaged 1/r kernel between two conductors.

    Parameters
    ----------
    rho : array_like
        In-plane distances in metres.
    z_a, z_b : tuple of float
        ``(z0, z1)`` of the two conductors in metres.
    branch : {"auto", "closed", "series"}
        ``"auto"`` picks the series beyond :data:`SWITCH_THICKNESSES` thicknesses.

    Returns
    -------
    ndarray
        Kernel in 1/m, same shape as ``rho``.

    Examples
    --------
    >>> round(float(averaged_kernel(1.0, (0.0, 1e-6), (0.0, 1e-6))), 9)  # thin layer: ~1/rho
    1.0
    """
    kinds = {"auto": 0, "closed": 1, "series": 2}
    if branch not in kinds:
        raise ValueError(f"Invalid branch {branch!r}, should be one of {sorted(kinds)}")
    return _vectorised(kinds[branch], rho, z_a, z_b)


def radial_integrals(radius, z_a, z_b):
    """Closed-form ``P1(R) = int_0^R rho K drho`` (m) and ``P2(R) = int_0^R rho^2 K drho`` (m^2).

    Parameters
    ----------
    radius : array_like
        Upper limits ``R`` in metres.
    z_a, z_b : tuple of float
        ``(z0, z1)`` of the two conductors in metres.

    Returns
    -------
    p1, p2 : ndarray
        Same shape as ``radius``.
    """
    return _vectorised(3, radius, z_a, z_b), _vectorised(4, radius, z_a, z_b)
