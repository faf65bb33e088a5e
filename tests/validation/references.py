"""Reference formulas implemented from the published expressions (SI units).

- Exact partial self and mutual inductance of parallel rectangular bars with uniform current:
  Hoer & Love 1965, "Exact inductance equations for rectangular conductors with applications to
  more complicated geometries", J. Res. NBS 69C; Ruehli 1972, "Inductance calculations in a
  complex integrated circuit environment", IBM J. Res. Dev. 16. The sixfold integral of 1/r
  over two boxes is a 64-term corner sum of the antiderivative :func:`_hoer_love_f`. Evaluated
  in 40-digit arithmetic (mpmath) because the corner sum cancels.
- Rosa 1908 / Grover 1946 ("Inductance Calculations") approximation for a bar.
- Grover 1946 mutual inductance of parallel filaments, and its general form with axial offsets.
"""
import math

import mpmath as mp

MU0 = 4e-7 * math.pi  # classical defined value, as in copperpath.solver.elements.partial


def _xlog(x, y, z, r):
    """x ln(x + r), written without cancellation for negative x."""
    if x == 0:
        return mp.mpf(0)
    if x > 0:
        return x * mp.log(x + r)
    return x * mp.log((y * y + z * z) / (r - x))


def _xatan(c, a, b, zz, r):
    """c * atan(a b / (zz r)), zero when the factor c vanishes."""
    if c == 0:
        return mp.mpf(0)
    return c * mp.atan(a * b / (zz * r))


def _hoer_love_f(x, y, z):
    """Antiderivative with d^6 f / dx^2 dy^2 dz^2 = 1/sqrt(x^2+y^2+z^2) (Hoer & Love 1965)."""
    x, y, z = mp.mpf(x), mp.mpf(y), mp.mpf(z)
    r = mp.sqrt(x * x + y * y + z * z)
    if r == 0:
        return mp.mpf(0)
    x2, y2, z2 = x * x, y * y, z * z
    f = mp.mpf(0)
    cx = y2 * z2 / 4 - y2 * y2 / 24 - z2 * z2 / 24
    cy = x2 * z2 / 4 - x2 * x2 / 24 - z2 * z2 / 24
    cz = x2 * y2 / 4 - x2 * x2 / 24 - y2 * y2 / 24
    if cx != 0:
        f += cx * _xlog(x, y, z, r)
    if cy != 0:
        f += cy * _xlog(y, x, z, r)
    if cz != 0:
        f += cz * _xlog(z, x, y, r)
    f += (x2 * x2 + y2 * y2 + z2 * z2 - 3 * x2 * y2 - 3 * y2 * z2 - 3 * x2 * z2) * r / 60
    f -= _xatan(x * y * z2 * z / 6, x, y, z, r)
    f -= _xatan(x * y2 * y * z / 6, x, z, y, r)
    f -= _xatan(x2 * x * y * z / 6, y, z, x, r)
    return f


def _corners(a, b):
    """Corner offsets and signs of int_a int_b g(s - s') ds ds' for intervals a, b."""
    a0, a1 = map(mp.mpf, a)
    b0, b1 = map(mp.mpf, b)
    return ((a1 - b0, 1), (a0 - b0, -1), (a1 - b1, -1), (a0 - b1, 1))


def box_integral(box1, box2):
    """Sixfold integral of 1/|r - r'| over two boxes ((x0, x1), (y0, y1), (z0, z1)), m^5."""
    with mp.workdps(40):
        total = mp.mpf(0)
        for qx, sx in _corners(box1[0], box2[0]):
            for qy, sy in _corners(box1[1], box2[1]):
                for qz, sz in _corners(box1[2], box2[2]):
                    total += sx * sy * sz * _hoer_love_f(qx, qy, qz)
        return float(total)


def bar_mutual_inductance(box1, box2):
    """Partial mutual inductance (H) of two bars carrying uniform current along x (Hoer & Love 1965)."""
    a1 = (box1[1][1] - box1[1][0]) * (box1[2][1] - box1[2][0])
    a2 = (box2[1][1] - box2[1][0]) * (box2[2][1] - box2[2][0])
    return MU0 / (4 * math.pi) * box_integral(box1, box2) / (a1 * a2)


def bar_self_inductance(length, width, thickness):
    """Exact partial self-inductance (H) of a rectangular bar, uniform current (Hoer & Love 1965)."""
    box = ((0.0, length), (0.0, width), (0.0, thickness))
    return bar_mutual_inductance(box, box)


def rosa_grover_bar(length, width, thickness):
    """(mu0 l/2pi)[ln(2l/(w+t)) + 1/2 + 0.2235 (w+t)/l], Rosa 1908 / Grover 1946."""
    s = width + thickness
    return MU0 * length / (2 * math.pi) * (math.log(2 * length / s) + 0.5 + 0.2235 * s / length)


def grover_filament_mutual(length, distance):
    """(mu0/2pi)[l asinh(l/d) - sqrt(l^2+d^2) + d], equal parallel filaments, Grover 1946."""
    l, d = length, distance
    return MU0 / (2 * math.pi) * (l * math.asinh(l / d) - math.hypot(l, d) + d)


def grover_filament_mutual_offset(z1, z2, distance):
    """Parallel filaments spanning z1 = (lo, hi) and z2 = (lo, hi) at distance d (Grover 1946).

    M = (mu0/4pi) sum over the corners of +-[u asinh(u/d) - sqrt(u^2 + d^2)].
    """
    d = distance
    total = 0.0
    for u, s in _corners(z1, z2):
        u = float(u)
        total += s * (u * math.asinh(u / d) - math.hypot(u, d))
    return MU0 / (4 * math.pi) * total
