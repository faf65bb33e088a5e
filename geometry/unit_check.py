"""Is the case file's ``units`` plausible? A guess for errors and warnings.

A case whose ``units`` is wrong by a factor of 1000 (``"mm"`` written over values in
micrometres) gives a baffling error (copper outside the board extent, layers that overlap, a
thickness out of range) or, worse, a silent wrong answer. This module looks only at the
numbers as written (layer thicknesses and the coordinates of drawn copper, terminals and vias)
and says, in one clause, what looks wrong and which unit would make it plausible.

Plausible (common practice for PCBs): every copper layer between ``THICKNESS_RANGE`` thick
and the drawn copper within ``MAX_EXTENT`` across.
"""
from __future__ import annotations

import math

from copperpath.geometry.limits import as_float
from copperpath.geometry.units import UNITS, format_length

THICKNESS_RANGE = (1e-6, 1e-3)
"""Plausible copper thickness in metres: 1 um (thin films) to 1 mm (bus bars)."""
MAX_EXTENT = 1.0
"""Plausible largest span of the drawn copper in metres."""
TYPICAL_THICKNESS = 35e-6
"""1 oz copper: the guess prefers the unit that puts the thicknesses nearest to it."""

_POINT_KEYS = ("rect", "polygon", "holes", "circle", "trace", "at")


def _numbers(value):
    """Every finite number in a nested list / inline table (booleans excluded)."""
    x = as_float(value)
    if x is not None:
        yield x
    elif isinstance(value, list):
        for v in value:
            yield from _numbers(v)
    elif isinstance(value, dict):
        for k, v in value.items():
            if k not in ("width", "radius", "count"):
                yield from _numbers(v)


def raw_sizes(layer_tables, shape_tables):
    """Thicknesses and the largest coordinate span, as written (file units).

    Parameters
    ----------
    layer_tables : iterable of dict
        The ``[[layer]]`` tables as read from TOML.
    shape_tables : iterable of dict
        The ``[[copper]]``, ``[[terminal]]`` and ``[[via]]`` tables.

    Returns
    -------
    (list of float, float)
        The positive thicknesses and the span (0 without coordinates).
    """
    thick = [x for x in (as_float(t.get("thickness")) for t in layer_tables) if x is not None and x > 0]
    xs, ys = [], []
    for t in shape_tables:
        for key in _POINT_KEYS:
            if key in t:
                flat = list(_numbers(t[key]))          # x, y, x, y, ...
                xs += flat[0::2]
                ys += flat[1::2]
    span = max(max(xs) - min(xs), max(ys) - min(ys)) if len(xs) >= 2 else 0.0
    return thick, span


def _plausible(thick, span, scale):
    low, high = THICKNESS_RANGE
    return all(low <= t * scale <= high for t in thick) and span * scale <= MAX_EXTENT


def suspicion(unit, thick, span):
    """One clause naming what looks wrong for ``unit``, or ``None`` when it looks right.

    Parameters
    ----------
    unit : str
        The case file's unit.
    thick : list of float
        Layer thicknesses as written (file units).
    span : float
        Largest span of the drawn coordinates as written (file units).

    Returns
    -------
    str or None

    Examples
    --------
    >>> suspicion("mm", [35.0, 35.0], 40000.0)
    'copper spans 40 m and layers are 35 mm thick: is `units` right ("mm" given, values look like um)?'
    >>> suspicion("mm", [0.035], 40.0) is None
    True
    """
    scale = UNITS[unit]
    if (not thick and span == 0.0) or _plausible(thick, span, scale):
        return None
    what = []
    if span * scale > MAX_EXTENT:
        what.append(f"copper spans {format_length(span * scale)}")
    bad = [t for t in thick if not THICKNESS_RANGE[0] <= t * scale <= THICKNESS_RANGE[1]]
    if bad:
        shown = sorted({format_length(t * scale) for t in bad})
        what.append(("layers are " if len(thick) > 1 else "the layer is ") + " / ".join(shown) + " thick")
    fits = [u for u, s in UNITS.items() if u != unit and _plausible(thick, span, s)]
    if thick and fits:
        fits.sort(key=lambda u: abs(math.log(sorted(thick)[len(thick) // 2] * UNITS[u] / TYPICAL_THICKNESS)))
    guess = f"values look like {fits[0]}" if fits else "no unit makes them plausible"
    return f"{' and '.join(what)}: is `units` right (\"{unit}\" given, {guess})?"
