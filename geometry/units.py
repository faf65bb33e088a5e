"""Length units of case files and their size in metres, and how a frequency is shown.

A case file states its unit once (``units = "mil"``); the reader converts every length
to metres with :func:`to_si` and keeps the unit only to show numbers back to the user.
"""
from __future__ import annotations

from decimal import Decimal

import numpy as np

def format_frequency(f, sep=" "):
    """``0 -> "DC"``, ``1e6 -> "1 MHz"``, ``2.5e3 -> "2.5 kHz"`` (three significant digits).

    Examples
    --------
    >>> format_frequency(1e6), format_frequency(0), format_frequency(2.5e3, sep="")
    ('1 MHz', 'DC', '2.5kHz')
    """
    if f == 0:
        return "DC"
    for scale, prefix in ((1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, "")):
        if abs(f) >= scale:
            return f"{f / scale:.3g}{sep}{prefix}Hz"
    return f"{f:.3g}{sep}Hz"


def format_length(x):
    """A length in metres with the nearest of m, mm, um, nm (three significant digits).

    Examples
    --------
    >>> format_length(40.0), format_length(0.035), format_length(3.5e-8)
    ('40 m', '35 mm', '35 nm')
    """
    for scale, name in ((1.0, "m"), (1e-3, "mm"), (1e-6, "um")):
        if abs(x) >= scale:
            return f"{x / scale:.3g} {name}"
    return f"{x / 1e-9:.3g} nm"


#: Metres per unit. ``mil`` is a thousandth of an inch; the inch is exactly 25.4 mm
#: (international yard and pound agreement, 1959).
UNITS = {
    "mm": 1e-3,
    "um": 1e-6,
    "mil": 25.4e-6,
    "inch": 25.4e-3,
    "m": 1.0,
}


#: The same sizes as exact decimals, for :func:`to_si`.
EXACT = {"mm": Decimal("0.001"), "um": Decimal("0.000001"), "mil": Decimal("0.0000254"),
         "inch": Decimal("0.0254"), "m": Decimal(1)}


def unit_scale(unit):
    """Return the size of one ``unit`` in metres.

    Parameters
    ----------
    unit : str
        One of ``"mm"``, ``"um"``, ``"mil"``, ``"inch"``, ``"m"``.

    Returns
    -------
    float
        Metres per unit.

    Raises
    ------
    ValueError
        If ``unit`` is not in :data:`UNITS`; the message lists the allowed ones.

    Examples
    --------
    >>> unit_scale("mil")
    2.54e-05
    """
    try:
        return UNITS[unit]
    except (KeyError, TypeError):
        allowed = ", ".join(repr(u) for u in UNITS)
        raise ValueError(f"unknown unit {unit!r}, expected one of {allowed}") from None


def to_si(value, unit):
    """Convert a length (or an array of lengths) from ``unit`` to metres, exactly rounded.

    Each value is read as the shortest decimal that prints it (what the case file says),
    multiplied by the unit's exact decimal size, and rounded once to the nearest float. So
    equal lengths give equal floats whatever the unit: ``1.5`` mm, ``1500`` um and ``0.0015``
    m all give the float nearest to 0.0015 (a plain ``1500 * 1e-6`` is one ulp off), and the
    same case in other units meshes identically.

    Parameters
    ----------
    value : float or array_like
        Length(s) in ``unit``.
    unit : str
        Unit of ``value`` (see :data:`UNITS`).

    Returns
    -------
    float or numpy.ndarray
        Length(s) in metres; a float for a scalar input.

    Examples
    --------
    >>> to_si(1.6, "mm")
    0.0016
    >>> to_si(1500, "um") == to_si(1.5, "mm") == 0.0015
    True
    >>> to_si([10, 20], "mil").tolist()
    [0.000254, 0.000508]
    """
    unit_scale(unit)                                    # the message for an unknown unit
    size = EXACT[unit]
    if np.ndim(value) == 0:
        return _exact(float(value), size)
    a = np.asarray(value, dtype=float)
    return np.array([_exact(x, size) for x in a.ravel()], float).reshape(a.shape)


def _exact(x, size):
    if not np.isfinite(x) or x == 0.0:
        return x * float(size)
    return float(Decimal(repr(float(x))) * size)
