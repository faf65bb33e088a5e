"""Physical constants and the quasi-static validity rule, each defined once for the whole package.

``MU0`` is the classical defined value ``4e-7 pi`` H/m (the 2019 SI value differs by 5.5e-10
relative); ``C0`` is exact (SI 2019).
"""
from __future__ import annotations

import math

import numpy as np

#: Vacuum permeability in H/m, the classical defined value.
MU0 = 4e-7 * math.pi
#: Speed of light in vacuum, m/s (exact, SI 2019).
C0 = 299_792_458.0
#: Relative permittivity of the board material for the quasi-static rule (FR-4, about 4.5;
#: common practice).
EPS_R_BOARD = 4.5


def quasi_static_frequency(d):
    """Highest frequency in Hz at which copper of largest dimension ``d`` (m) is quasi-static.

    The rule (common practice): ``d`` stays below a tenth of the wavelength in the board
    material, ``f = c0 / (10 sqrt(eps_r) d)``; ``inf`` for ``d = 0``.

    Examples
    --------
    >>> round(quasi_static_frequency(0.1) / 1e6)    # 100 mm of copper on FR-4
    141
    """
    return math.inf if d <= 0 else C0 / (10.0 * math.sqrt(EPS_R_BOARD) * d)


def skin_depth(f, sigma):
    """Skin depth ``1 / sqrt(pi f mu0 sigma)`` in metres (``inf`` at DC); ``f`` in Hz (a number or
    an array), ``sigma`` in S/m (classical; e.g. Ramo, Whinnery & Van Duzer).

    Examples
    --------
    >>> round(float(skin_depth(1e8, 5.8e7)) * 1e6, 2)   # copper at 100 MHz, um
    6.61
    """
    f = np.asarray(f, float)
    with np.errstate(divide="ignore"):
        return 1.0 / np.sqrt(np.pi * f * MU0 * sigma)
