"""Mesh sizes for a case without a ``[mesh]`` table, chosen from its geometry and top frequency.

At high frequency the current of a trace over return copper crowds toward the trace's edges
and the return current gathers under them, over a width of the order of the height ``h``
between the copper faces; a narrow trace needs a few triangles across its width ``w``. The
scale ``s = min(h, w / 4)`` sets the sizes (measured in ``scripts/default_accuracy.py``, see
DEVELOPERS.md, "Accuracy at default settings"):

- on copper edges that face a neighbouring layer's copper and on the copper under the edges of
  a neighbouring layer's copper, where the current density is singular: ``s / 2``
  (``FACING_FRACTION * min_edge`` in :mod:`copperpath.geometry.meshing`, with
  ``MeshOptions.under_edges``); the edge length there is what sets the error of ``L`` at high
  frequency (about linear in it), far more than the sizes away from the edges;
- ``min_edge = MIN_PER_SCALE * s`` at terminals and re-entrant corners (and the start of the
  width rule: a trace is at least two triangles across);
- ``max_edge = MAX_PER_SCALE * s``, at most ``MAX_EDGE_CAP``;
- growth ``GRADING`` per unit distance away from those features (the mesher's own is 0.4):
  the current density falls off over a few ``h``, and sublayers multiply every triangle.

Below the frequency where the current starts to crowd (the skin depth at the top frequency
larger than ``sqrt(2 t h)``: there ``w L' = R'`` for a trace of thickness ``t`` at height ``h``,
with ``L' ~ mu0 h / w``), the current follows the resistance and the edges need no refinement:
``min_edge = max_edge / DC_RATIO``.

``h`` is the smallest face-to-face gap between neighbouring layers whose copper overlaps (for a
single layer, or layers that do not overlap, ``w`` stands for it). ``w`` is the smallest of
``2 area / perimeter`` (of the outline, holes filled) over the copper pieces holding at least
``MIN_PIECE`` of their layer's copper (for a long trace: its width), so that a stray sliver
does not set the mesh of the board.
"""
from __future__ import annotations

import math

import shapely

from copperpath.geometry.meshing import FACING_FRACTION
from copperpath.geometry.model import Layout, MeshOptions

MU0 = 4e-7 * math.pi
MIN_PER_SCALE = 1.0
"""``min_edge`` as a multiple of ``s``; the facing edges get ``FACING_FRACTION`` of it."""
MAX_PER_SCALE = 10.0
"""``max_edge`` as a multiple of the edge length ``s`` where the current crowds."""
MAX_EDGE_CAP = 2e-3
"""Largest default ``max_edge`` in metres."""
GRADING = 0.8
"""Growth of the edge length per unit distance in the default mesh."""
DC_RATIO = 4.0
"""``max_edge / min_edge`` when the sweep stays below the crowding frequency."""
MIN_PIECE = 0.01
"""Copper pieces smaller than this fraction of their layer's copper do not set ``w``."""


def trace_width(layout: Layout) -> float:
    """Smallest ``2 area / perimeter`` of the copper pieces (see the module docstring), metres.

    Examples
    --------
    >>> from copperpath.geometry.model import Layer
    >>> from shapely.geometry import box
    >>> lay = Layout(layers=(Layer("L1", 0.0, 35e-6),), copper={"L1": box(0, 0, 30e-3, 1e-3)})
    >>> round(trace_width(lay) * 1e3, 3)
    0.968
    """
    widths = []
    for geom in layout.copper.values():
        if geom is None or geom.is_empty:
            continue
        total = geom.area
        for piece in shapely.get_parts(geom):
            if piece.area >= MIN_PIECE * total and piece.length > 0:
                outline = shapely.Polygon(piece.exterior)        # drill holes do not narrow it
                widths.append(2.0 * outline.area / outline.length)
    return min(widths) if widths else math.inf


def return_gap(layout: Layout) -> float:
    """Smallest face-to-face gap in metres between neighbouring layers whose copper overlaps
    (``inf`` if none)."""
    layers = sorted(layout.layers, key=lambda la: -la.z)
    gaps = []
    for upper, lower in zip(layers, layers[1:]):
        a, b = layout.copper.get(upper.name), layout.copper.get(lower.name)
        if a is None or b is None or a.is_empty or b.is_empty:
            continue
        if shapely.intersection(a, b).area > 0.0:
            gaps.append(upper.z - lower.z_top)
    return min(gaps) if gaps else math.inf


def crowding_frequency(layout: Layout, gap: float) -> float:
    """Frequency in Hz above which the current crowds: skin depth ``sqrt(2 t h)`` for the
    thickest, best-conducting layer at height ``gap`` (m) over its return."""
    t = max(la.thickness for la in layout.layers)
    sigma = max(la.conductivity for la in layout.layers)
    return 1.0 / (math.pi * MU0 * sigma * 2.0 * t * gap)


def default_mesh(layout: Layout, f_max: float, unit_scale: float = 1e-3, unit: str = "mm"):
    """Mesh sizes for ``layout`` swept up to ``f_max`` and the note that explains them.

    Parameters
    ----------
    layout : copperpath.geometry.model.Layout
    f_max : float
        Highest frequency of the sweep, Hz.
    unit_scale, unit : float, str
        Metres per unit of the case file and its name, for the note.

    Returns
    -------
    (MeshOptions, str)
    """
    w, gap = trace_width(layout), return_gap(layout)
    if not math.isfinite(w):
        return MeshOptions(), "[mesh]: no copper; built-in sizes"
    q = lambda x: f"{x / unit_scale:.3g} {unit}"  # noqa: E731
    if math.isfinite(gap):
        source = f"the narrowest trace {q(w)} and the height over the return copper {q(gap)}"
    else:
        source = f"the narrowest trace {q(w)} (no return copper on a neighbouring layer)"
    h = min(gap, w)
    s = min(h, 0.25 * w)
    max_edge = max(MIN_PER_SCALE * s, min(MAX_PER_SCALE * s, MAX_EDGE_CAP))
    f_c = crowding_frequency(layout, h)
    crowded = f_max > f_c
    if crowded:
        min_edge = MIN_PER_SCALE * s
        how = (f"the current crowds above {f_c:.3g} Hz (skin depth sqrt(2 t h)), below the top "
               f"frequency {f_max:.3g} Hz: with s = min(height, width / 4) = {q(s)}, "
               f"{q(FACING_FRACTION * min_edge)} on copper edges that face another layer and on "
               f"the copper under them, min_edge {MIN_PER_SCALE:g} s, max_edge {MAX_PER_SCALE:g} s "
               f"(at most {q(MAX_EDGE_CAP)}), growth {GRADING:g} per unit length")
    else:
        min_edge = max_edge / DC_RATIO
        how = (f"the sweep stays below {f_c:.3g} Hz, where the current starts to crowd: no edge "
               f"refinement (min_edge = max_edge / {DC_RATIO:g})")
    note = f"[mesh] not given: max_edge {q(max_edge)}, min_edge {q(min_edge)} from {source}; {how}"
    return (MeshOptions(max_edge=max_edge, min_edge=min_edge, under_edges=crowded,
                        grading=GRADING if crowded else None), note)
