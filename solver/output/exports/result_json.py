"""``result.json``: the solved port matrices in the schema ``copperpath.result/1``."""
from __future__ import annotations

import json

import numpy as np

from copperpath.solver.output.files import write_text

SCHEMA = "copperpath.result/1"


def result_dict(result, *, mesh_stats=None, bottlenecks=(), rankings=(), circuit=None, timing=None,
                length_unit="m"):
    """The result as plain JSON-ready data (SI units, matrices ``[frequency][i][j]``).

    Parameters
    ----------
    result : copperpath.solver.solve.result.Result
    mesh_stats : dict, optional
        ``triangles``, ``edges``, ``unknowns``, ``nodes``.
    bottlenecks : sequence of dict
        Ranked bottlenecks at the map frequency (lengths in the case's units).
    rankings : sequence of dict
        One ranking per reported frequency, ``{"frequency_hz", "bottlenecks"}``, written as
        ``bottlenecks_by_frequency`` (the maps number their markers from these lists).
    circuit : dict, optional
        Circuit estimates.
    timing : dict, optional
        Seconds per stage (``mesh``, ``assemble``, ``solve``).
    length_unit : str
        Unit of the lengths in ``bottlenecks`` (the case's ``units``), written as ``length_unit``.

    Returns
    -------
    dict
    """
    return {
        "schema": SCHEMA,
        "title": result.title,
        "ports": list(result.ports),
        "frequency_hz": result.frequencies.tolist(),
        "resistance_ohm": result.resistance.tolist(),
        "inductance_h": result.inductance.tolist(),
        "impedance_re_ohm": result.impedance.real.tolist(),
        "impedance_im_ohm": result.impedance.imag.tolist(),
        "mesh": dict(mesh_stats or {}),
        "length_unit": str(length_unit),
        "bottlenecks": list(bottlenecks),
        "bottlenecks_by_frequency": [dict(r) for r in rankings],
        "circuit": dict(circuit or {}),
        "timing_s": dict(timing or {}),
    }


def write_result_json(path, result, **kwargs):
    """Write ``result.json`` atomically; keyword arguments as :func:`result_dict`."""
    data = result_dict(result, **kwargs)
    write_text(path, json.dumps(data, indent=1, default=_plain) + "\n")
    return data


def _plain(value):
    if isinstance(value, np.generic):
        return value.item()
    if isinstance(value, np.ndarray):
        return value.tolist()
    raise TypeError(f"not JSON serialisable: {type(value).__name__}")
