"""Partial self and mutual inductance and resistance of plated via barrels (thin shells).

A barrel segment is a thin cylindrical shell of mid-wall radius ``r`` carrying a uniform axial
current. Two parallel axial filaments spanning ``z1 = (a0, a1)`` and ``z2 = (b0, b1)`` at
distance ``d`` have the mutual inductance (Grover 1946, general form with axial offsets)

    M = (mu0/4pi) sum_corners +-[u asinh(u/d) - sqrt(u^2 + d^2)],

which is ``(mu0/4pi) ta tb K(d)`` with the averaged kernel of :mod:`copperpath.solver.elements.kernels`. A shell is
the ring average of that over the angle ``phi`` between two points, at ``d = 2 r |sin(phi/2)|``
(equal radii). The ``-|u| ln d`` part of each corner averages in closed form (the mean of
``ln|2 r sin(phi/2)|`` is ``ln r``; for coaxial radii ``r1 != r2`` it is ``ln max(r1, r2)``) and
the mean of ``d`` is an elliptic integral; the rest is smooth and is integrated by scipy's
``quad``. Barrels on different axes use the filament form at the axis distance.
"""
from __future__ import annotations

import math

from scipy import integrate, special

from copperpath.solver.elements.kernels import averaged_kernel
from copperpath.geometry.physics import MU0

_SIGNS = (1.0, -1.0, -1.0, 1.0)


def _corners(z1, z2):
    (a0, a1), (b0, b1) = z1, z2
    return (a1 - b0, a0 - b0, a1 - b1, a0 - b1)


def _ring_mutual(r1, r2, z1, z2):
    """Ring-averaged filament mutual (H) of two coaxial shells."""
    def dist(phi):
        return math.sqrt(max(r1 * r1 + r2 * r2 - 2.0 * r1 * r2 * math.cos(phi), 0.0))

    mean_log = math.log(max(r1, r2))
    mean_d = 2.0 / math.pi * (r1 + r2) * special.ellipe(4.0 * r1 * r2 / (r1 + r2) ** 2)
    total = 0.0
    for s, u in zip(_SIGNS, _corners(z1, z2)):
        au = abs(u)
        if au == 0.0:
            total -= s * mean_d
            continue

        def smooth(phi, au=au):
            d = dist(phi)
            return au * math.log(au + math.sqrt(au * au + d * d)) - math.sqrt(au * au + d * d)

        val, _ = integrate.quad(smooth, 0.0, math.pi, epsabs=0.0, epsrel=1e-12, limit=200)
        total += s * (val / math.pi - au * mean_log)
    return float(MU0 / (4.0 * math.pi) * total)


def barrel_self_inductance(radius, length):
    """Partial self-inductance (H) of a thin cylindrical shell with uniform axial current.

    Parameters
    ----------
    radius : float
        Mid-wall radius in metres.
    length : float
        Segment length in metres.

    Returns
    -------
    float

    Examples
    --------
    >>> round(barrel_self_inductance(0.1625e-3, 1.6e-3) * 1e9, 3)  # nH
    0.673
    """
    if not (radius > 0 and length > 0):
        raise ValueError(f"radius and length must be positive, got {radius!r}, {length!r}")
    return float(_ring_mutual(radius, radius, (0.0, length), (0.0, length)))


def barrel_mutual_inductance(r1, z1, r2, z2, distance):
    """Partial mutual inductance (H) of two vertical barrel segments.

    Parameters
    ----------
    r1, r2 : float
        Mid-wall radii in metres.
    z1, z2 : tuple of float
        ``(lo, hi)`` of each segment in metres.
    distance : float
        Distance between the axes in metres; 0 for segments of one via (ring average).

    Returns
    -------
    float
    """
    if distance < 0:
        raise ValueError(f"distance must be >= 0, got {distance!r}")
    if distance == 0.0:
        return _ring_mutual(r1, r2, z1, z2)
    ta, tb = z1[1] - z1[0], z2[1] - z2[0]
    k = averaged_kernel(distance, z1, z2)
    return float(MU0 / (4.0 * math.pi) * ta * tb * k)


def barrel_resistance(drill, plating, length, conductivity):
    """Resistance (ohm) of the plated annulus, radii ``drill/2`` to ``drill/2 + plating``.

    Examples
    --------
    >>> round(barrel_resistance(0.3e-3, 25e-6, 1.6e-3, 5.8e7) * 1e3, 4)  # milliohm
    1.0807
    """
    r0 = 0.5 * drill
    area = math.pi * ((r0 + plating) ** 2 - r0 ** 2)
    return length / (conductivity * area)
