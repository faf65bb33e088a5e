"""Skin depth and sublayers: how many a layer gets, and up to which frequency they resolve it.

A layer split into ``n`` sublayers (boundaries :func:`sublayer_bounds`, thin at both faces)
carries a uniform current in each. It *resolves* skin effect at frequency ``f`` while its
outer sublayers are no thicker than the skin depth ``delta(f) = 1 / sqrt(pi f mu0 sigma)``
(``RESOLVED_OUTER``). Checked against the exact solution of a conductor slab with the field on
one face (``Z_s = k / (sigma tanh(k t))``, ``k = sqrt(j w mu0 sigma)``; Ramo, Whinnery & Van
Duzer 1994, *Fields and Waves in Communication Electronics*, sec. 5.5) in
``tests/validation/test_sublayer_rule.py``: with the same sublayers the slab's resistance is
within 8 % (one sublayer) and 6 % (three to eight) at every frequency up to that limit, and
three sublayers already read 11 % low at 1.75 times it (outer sublayer 1.32 skin depths).

``sublayers = "auto"`` (the case-file default) picks the fewest sublayers (1, then 3 to
``MAX_SUBLAYERS``; two equal halves of a lone conductor would carry equal currents) that
resolve the highest solved frequency, and lowers them again, all ``"auto"`` layers together,
while the mesh would exceed ``AUTO_UNKNOWN_BUDGET`` current unknowns (sized for the fast
path); every layer then left unresolved at a solved frequency where it is thicker
than two skin depths is named in a warning.
"""
from __future__ import annotations

import math

import numpy as np

from copperpath.geometry.physics import MU0, skin_depth
from copperpath.geometry.units import format_frequency

RESOLVED_OUTER = 1.0
"""Outer sublayer thickness, in skin depths, up to which skin effect counts as resolved."""
MAX_SUBLAYERS = 8
"""Most sublayers ``"auto"`` gives a layer."""
AUTO_UNKNOWN_BUDGET = 60_000
"""Current unknowns that ``"auto"`` sublayers may raise a mesh to (sized for the fast path: a
strip over a plane peaked at 3.2 GB with 32k; its default mesh at 30 mm with four sublayers has
53k, DEVELOPERS.md, "Accuracy at default settings")."""
WARN_THICKNESS = 2.0
"""An unresolved layer thicker than this many skin depths at a solved frequency is warned about."""


def sublayer_bounds(n):
    """Fractions of the thickness at the sublayer boundaries, graded toward both faces.

    ``u_k = (1 - cos(pi k / n)) / 2`` for ``k = 0..n``: thin sublayers at the faces, where the
    current crowds at high frequency, thick ones in the middle.

    Examples
    --------
    >>> sublayer_bounds(3).round(3).tolist()
    [0.0, 0.25, 0.75, 1.0]
    """
    return 0.5 * (1.0 - np.cos(np.pi * np.arange(n + 1) / n))


def resolved_up_to(layer, n):
    """Highest frequency in Hz at which ``n`` sublayers of ``layer`` resolve skin effect.

    The frequency whose skin depth equals the outer sublayer's thickness divided by
    ``RESOLVED_OUTER``.

    Examples
    --------
    >>> from copperpath.geometry.model import Layer
    >>> round(resolved_up_to(Layer("L1", 0.0, 35e-6), 4) / 1e6)   # outer 5.1 um: MHz
    166
    """
    outer = layer.thickness * sublayer_bounds(n)[1] / RESOLVED_OUTER
    return 1.0 / (math.pi * MU0 * layer.conductivity * outer ** 2)


def _choices():
    return [1] + list(range(3, MAX_SUBLAYERS + 1))


def auto_sublayers(layer, f_max):
    """Fewest sublayers (1, or 3 to ``MAX_SUBLAYERS``) that resolve skin effect at ``f_max``.

    Examples
    --------
    >>> from copperpath.geometry.model import Layer
    >>> [auto_sublayers(Layer("L1", 0.0, 35e-6), f) for f in (0.0, 1e6, 1e8, 2e8)]
    [1, 1, 4, 5]
    """
    for n in _choices():
        if f_max <= resolved_up_to(layer, n):
            return n
    return MAX_SUBLAYERS


def choose_sublayers(layers, edge_counts, f_max, other_unknowns=0, budget=None):
    """Sublayers of every layer: the layer's own integer, or the ``"auto"`` choice.

    Parameters
    ----------
    layers : sequence of copperpath.geometry.model.Layer
    edge_counts : sequence of int
        Edge branches of each layer with one sublayer.
    f_max : float
        Highest solved frequency, Hz.
    other_unknowns : int
        Barrel and lumped branches.
    budget : int, optional
        Current unknowns that ``"auto"`` may reach (``AUTO_UNKNOWN_BUDGET`` when not given);
        above it every ``"auto"`` layer is held to one fewer sublayer at a time (8, 7, ..., 3,
        then 1); a user's integer never changes.

    Returns
    -------
    list of int
    """
    budget = AUTO_UNKNOWN_BUDGET if budget is None else budget
    auto = [not isinstance(la.sublayers, int) for la in layers]
    n = [auto_sublayers(la, f_max) if a else la.sublayers for la, a in zip(layers, auto)]

    def total():
        return other_unknowns + sum(k * e for k, e in zip(n, edge_counts))

    wanted = list(n)
    for cap in reversed(_choices()[:-1]):
        if total() <= budget:
            break
        n = [min(k, cap) if a else k for k, a in zip(wanted, auto)]
    return n


def skin_rows(layers, n_sub, frequencies):
    """Per layer: ``(layer, sublayers, resolved up to Hz, t / delta at the top frequency)``."""
    f_top = float(np.max(frequencies, initial=0.0))
    rows = []
    for layer, n in zip(layers, n_sub):
        ratio = layer.thickness / skin_depth(f_top, layer.conductivity) if f_top > 0 else 0.0
        rows.append((layer, int(n), resolved_up_to(layer, n), float(ratio)))
    return rows


def needed_sublayers(layer, f, most=32):
    """Fewest sublayers (1, or 3 to ``most``) that resolve ``layer`` at ``f`` Hz; ``None`` if
    none does (``most``: the case file's limit).

    Examples
    --------
    >>> from copperpath.geometry.model import Layer
    >>> needed_sublayers(Layer("L1", 0.0, 35e-6), 5e9)
    12
    """
    for n in [1] + list(range(3, most + 1)):
        if f <= resolved_up_to(layer, n):
            return n
    return None


def _reason(layer, n, f_top):
    """Why the layer has ``n`` sublayers, in words."""
    if isinstance(layer.sublayers, int):
        return "set by the case"
    wanted = auto_sublayers(layer, f_top)
    if n < wanted:
        return (f"\"auto\" lowered them from {wanted} to keep the mesh within "
                f"{AUTO_UNKNOWN_BUDGET:,} unknowns")
    return f"the most \"auto\" gives is {MAX_SUBLAYERS}"


def skin_warnings(layers, n_sub, frequencies, *, source=""):
    """One warning per cause: the layers that do not resolve skin effect at a solved frequency
    where they are thicker than ``WARN_THICKNESS`` skin depths, grouped when they share the
    copper, the sublayers used, the reason and the remedy.

    Each line says what was used (sublayers and why), what it means (from which frequency R
    reads low and L high) and what would resolve it (the integer ``sublayers`` to set).

    Parameters
    ----------
    layers : sequence of copperpath.geometry.model.Layer
    n_sub : sequence of int
        Sublayers used for each layer.
    frequencies : array_like
        Solved frequencies in Hz.
    source : str
        Prefix of each line (the case file).

    Returns
    -------
    list of str
    """
    prefix = f"{source}: " if source else ""
    freqs = np.asarray(frequencies, float)
    groups = {}
    for layer, n, f_res, _ in skin_rows(layers, n_sub, freqs):
        bad = freqs[(freqs > f_res)
                    & (layer.thickness > WARN_THICKNESS * skin_depth(np.maximum(freqs, 1e-300),
                                                                     layer.conductivity))]
        if not len(bad):
            continue
        f_top = float(freqs.max())
        key = (layer.thickness, layer.conductivity, int(n), _reason(layer, n, f_top),
               needed_sublayers(layer, f_top), float(bad.min()), f_res)
        groups.setdefault(key, []).append(layer.name)
    out = []
    for (t, sigma, n, why, need, f, f_res), names in groups.items():
        f_top = float(freqs.max())
        who = ("layer " if len(names) == 1 else "layers ") + ", ".join(f"'{m}'" for m in names)
        used = f"{n} sublayers" if n > 1 else "one sublayer"
        fix = (f"sublayers = {need} would resolve it up to {format_frequency(f_top)}" if need
               else f"no sublayer count up to 32 resolves {format_frequency(f_top)}; lower the top frequency")
        out.append(f"{prefix}{who}: {t * 1e6:.3g} um copper, {used} ({why}): skin effect resolved up "
                   f"to {format_frequency(f_res)}, but the copper is "
                   f"{t / float(skin_depth(f, sigma)):.1f} skin depths thick at {format_frequency(f)}: "
                   f"from there up, R reads low and L high; {fix}")
    return out
