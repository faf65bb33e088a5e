"""Length units of case files and their size in metres.

A case file states its unit once (``units = "mil"``); the reader converts every length
to metres with :func:`to_si` and keeps the unit only to show numbers back to the user.
"""
from __future__ import annotations

import numpy as np

#: Metres per unit. ``mil`` is a thousandth of an inch; the inch is exactly 25.4 mm
#: (international yard and pound agreement, 1959).
UNITS = {
    "mm": 1e-3,
    "um": 1e-6,
    "mil": 25.4e-6,
    "inch": 25.4e-3,
    "m": 1.0,
}


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
    """Convert a length (or an array of lengths) from ``unit`` to metres.

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
    >>> to_si([10, 20], "mil").tolist()
    [0.000254, 0.000508]
    """
    scale = unit_scale(unit)
    if np.ndim(value) == 0:
        return float(value) * scale
    return np.asarray(value, dtype=float) * scale
