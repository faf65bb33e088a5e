"""Which feature of the artwork drives the size of a mesh.

The size field (:mod:`copperpath.geometry.meshing`) never asks for edges below
``FACING_FRACTION * min_edge``. Triangles much smaller than that are forced by the artwork
itself: Triangle's minimum-angle bound grades the mesh away from a feature narrower than the
edge it was given (a sliver terminal, two shapes that nearly touch, a near-tangent circle), and
one 10 nm sliver turns a 1k-triangle mesh into 500k. :func:`size_warnings` says so and names
the feature.
"""
from __future__ import annotations

import numpy as np
import shapely

from copperpath.geometry.meshing import FACING_FRACTION

SMALL_FRACTION = 0.25
"""A triangle whose longest edge is under this fraction of the smallest edge the size field asks
for is "forced by the artwork"."""
WARN_SHARE = 0.25
"""Warn when forced triangles are more than this fraction of the mesh ..."""
WARN_COUNT = 1000
"""... and more than this many."""


def size_warnings(mesh, layout, options, *, unit_scale=1e-3, unit="mm", source=""):
    """Lines of warning when most of the mesh is forced by a feature far below ``min_edge``.

    Parameters
    ----------
    mesh : copperpath.geometry.mesh.Mesh
    layout : copperpath.geometry.model.Layout
    options : copperpath.geometry.model.MeshOptions
    unit_scale : float
        Metres per display unit.
    unit : str
    source : str
        Prefix of the line (the case file).

    Returns
    -------
    list of str
        Empty, or one line naming the feature (terminal, via pad or copper), its layer and
        place, its size and how many triangles it forced.
    """
    if mesh.n_triangles == 0:
        return []
    p = mesh.points[mesh.triangles]
    longest = np.linalg.norm(p - np.roll(p, 1, axis=1), axis=2).max(axis=1)
    floor = FACING_FRACTION * options.min_edge
    small = longest < SMALL_FRACTION * floor
    n_small = int(small.sum())
    if n_small <= max(WARN_COUNT, WARN_SHARE * mesh.n_triangles):
        return []
    k = int(np.argmin(longest))
    layer = mesh.layer_names[int(mesh.tri_layer[k])]
    x, y = mesh.centroids[k]
    feature = _feature_at(mesh, layout, k, layer, x, y, 10 * longest[k])
    s = unit_scale
    head = f"{source}: " if source else ""
    return [f"{head}the mesh has {mesh.n_triangles:,} triangles, {n_small:,} of them far smaller "
            f"than [mesh] min_edge {options.min_edge / s:g} {unit} asks for: they are forced by "
            f"{feature} on layer {layer} near ({x / s:.6g}, {y / s:.6g}) {unit}, a feature about "
            f"{longest[k] / s:.2g} {unit} across (a sliver or shapes that nearly touch); widen "
            f"or remove it"]


def _feature_at(mesh, layout, k, layer, x, y, reach):
    """Name of the terminal, via pad or copper that holds or borders triangle ``k``."""
    region = int(mesh.tri_region[k])
    if region >= 0:
        return _describe(mesh.region_names[region])
    point = shapely.Point(x, y)
    for term in layout.terminals:
        if term.layer == layer and term.shape.distance(point) <= reach:
            return f"terminal '{term.name}'"
    for via in layout.vias:
        if layer in via.span and np.hypot(via.x - x, via.y - y) <= 0.5 * via.pad + reach:
            return f"the pad of via '{via.name}'"
    return "the copper outline"


def _describe(region_name):
    kind, _, name = region_name.partition(":")
    if kind == "terminal":
        return f"terminal '{name}'"
    return f"the pad of via '{name.split('@')[0]}'" if kind == "via" else region_name
