"""Refuse to write a non-finite number: the check that runs before any output file is written.

A NaN or an infinity in ``result.json``, ``impedance.csv``, Touchstone or SPICE would be read by
other tools as a number; a solve that produced one is refused with the most likely cause named
(a layer whose thickness or conductivity lies far outside what copper on a board can be).
"""
from __future__ import annotations

import numpy as np

from copperpath.geometry.errors import InputError

PLAUSIBLE_THICKNESS_M = (1e-7, 1e-2)
"""Copper thicknesses outside this range (0.1 um to 10 mm) are named as a likely cause."""
PLAUSIBLE_CONDUCTIVITY_S_PER_M = (1e3, 1e9)
"""Conductivities outside this range are named as a likely cause (copper: 5.8e7 S/m)."""


def implausible_layers(layers):
    """Lines naming the layers whose thickness or conductivity is implausible for board copper.

    Examples
    --------
    >>> from copperpath.geometry.model import Layer
    >>> implausible_layers([Layer("L1", 0.0, 1e-300, 5.8e7)])
    ['layer L1: thickness 1e-300 m']
    """
    out = []
    for la in layers:
        lo, hi = PLAUSIBLE_THICKNESS_M
        if not lo <= la.thickness <= hi:
            out.append(f"layer {la.name}: thickness {la.thickness:.3g} m")
        lo, hi = PLAUSIBLE_CONDUCTIVITY_S_PER_M
        if not lo <= la.conductivity <= hi:
            out.append(f"layer {la.name}: conductivity {la.conductivity:.3g} S/m")
    return out


def require_finite(result, layers=(), *, source="the solve"):
    """Raise :class:`InputError` when any impedance or inductance of ``result`` is not finite.

    Parameters
    ----------
    result : copperpath.solver.solve.result.Result
    layers : sequence of copperpath.geometry.model.Layer
        The stackup, to name a likely cause.
    source : str
        What produced the result (the case file), for the message.
    """
    z = result.impedance
    ell = result.inductance
    dc = result.frequencies == 0
    if result.dc_inductance is None:        # no DC-limit inductance: NaN by convention, never written
        ell = ell[~dc]
    bad_z = ~np.isfinite(z)
    if not bad_z.any() and np.isfinite(ell).all():
        return
    k = int(np.argwhere(bad_z.any(axis=(1, 2)))[0, 0]) if bad_z.any() else None
    where = f" at {result.frequencies[k]:.4g} Hz" if k is not None else ""
    causes = implausible_layers(layers)
    cause = (f"; likely cause: {', '.join(causes)}" if causes else
             "; the mesh or the case is degenerate (check [mesh] and the copper)")
    raise InputError(f"{source}: the solve gave a non-finite R or L{where} (nothing was written)"
                     f"{cause}")
