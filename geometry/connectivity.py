"""Which copper is joined to which: islands, and bodies of islands joined by conductors.

An *island* is one connected polygon of one layer's copper. Islands are joined into
*bodies* by vias (a via joins the islands under its pad on every layer in
``Via.connects``), by terminals (a terminal is equipotential, so every island it covers
belongs to one body) and by lumped branches (a branch joins its two terminals).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components

from copperpath.geometry.layout import shares_area
from copperpath.geometry.shapes import circle


@dataclass(frozen=True, eq=False)
class Bodies:
    """Islands of all layers and the body each belongs to.

    Attributes
    ----------
    islands : tuple of (str, shapely.Polygon)
        ``(layer name, polygon in metres)``, layers top down, parts in layout order.
    label : numpy.ndarray of int64, shape (n_islands,)
        Body index of each island, ``0 .. n_bodies - 1``.
    terminal_body : dict of str to int
        Body of each terminal.
    """

    islands: tuple
    label: np.ndarray
    terminal_body: dict

    @property
    def n_bodies(self):
        """Number of separate bodies."""
        return int(self.label.max()) + 1 if len(self.label) else 0

    def joined(self, a, b):
        """Whether terminals ``a`` and ``b`` belong to the same body."""
        return self.terminal_body[a] == self.terminal_body[b]


def islands(layout):
    """Every island of the layout.

    Parameters
    ----------
    layout : copperpath.geometry.model.Layout

    Returns
    -------
    list of (str, shapely.Polygon)
        Layers top down; within a layer the parts of its MultiPolygon in order.
    """
    return [(layer.name, poly) for layer in layout.layers
            for poly in layout.copper[layer.name].geoms]


def _overlapping(trees, offsets, layer, shape):
    """Global indices of the islands of ``layer`` that share an area with ``shape``."""
    tree = trees[layer]
    hits = tree.query(shape, predicate="intersects")
    return [offsets[layer] + int(k) for k in hits if shares_area(tree.geometries[k], shape)]


def _under_pad(trees, offsets, layer, via):
    """Islands of ``layer`` under the pad ring of ``via``.

    A point on the ring's mid-radius finds the island quickly; the whole pad disk is the
    fallback (e.g. where the window cuts through the pad).
    """
    probe = shapely.Point(via.x + 0.25 * (via.drill + via.pad), via.y)
    hits = trees[layer].query(probe, predicate="within")
    if len(hits) == 1:
        return [offsets[layer] + int(hits[0])]
    return _overlapping(trees, offsets, layer, circle((via.x, via.y), 0.5 * via.pad))


def bodies(layout, lumped=()):
    """Group the islands into bodies joined by vias, terminals and lumped branches.

    Parameters
    ----------
    layout : copperpath.geometry.model.Layout
    lumped : sequence of copperpath.geometry.model.Lumped
        Branches; each joins the bodies of its two terminals.

    Returns
    -------
    Bodies

    Raises
    ------
    KeyError
        If a lumped branch names a terminal the layout lacks.

    Examples
    --------
    >>> from copperpath.geometry.model import Layer, Lumped, Terminal
    >>> from copperpath.geometry.layout import CopperShape, build_layout
    >>> from copperpath.geometry.shapes import rect
    >>> lay = build_layout([Layer("L1", 0.0, 35e-6)],
    ...     [CopperShape("L1", rect(0, 0, 1e-3, 1e-3)), CopperShape("L1", rect(2e-3, 0, 3e-3, 1e-3))],
    ...     terminals=[Terminal("a", "L1", rect(0, 0, 1e-3, 1e-3)),
    ...                Terminal("b", "L1", rect(2e-3, 0, 3e-3, 1e-3))])
    >>> bodies(lay).joined("a", "b"), bodies(lay, [Lumped("R", ("a", "b"))]).joined("a", "b")
    (False, True)
    """
    isl = islands(layout)
    trees, offsets, start = {}, {}, 0
    for layer in layout.layers:
        parts = list(layout.copper[layer.name].geoms)
        shapely.prepare(parts)
        trees[layer.name] = shapely.STRtree(parts)
        offsets[layer.name] = start
        start += len(parts)
    groups = []
    term_islands = {}
    for t in layout.terminals:          # a name on several layers (a through-hole pad) is one terminal
        term_islands.setdefault(t.name, []).extend(_overlapping(trees, offsets, t.layer, t.shape))
    groups += list(term_islands.values())
    for v in layout.vias:
        groups.append([k for layer in v.connects for k in _under_pad(trees, offsets, layer, v)])
    for branch in lumped:
        a, b = branch.between
        groups.append(term_islands[a][:1] + term_islands[b][:1])
    rows = [g[0] for g in groups for _ in g[1:]]
    cols = [k for g in groups for k in g[1:]]
    n = len(isl)
    if n == 0:
        return Bodies(islands=(), label=np.zeros(0, dtype=np.int64), terminal_body={})
    graph = coo_matrix((np.ones(len(rows)), (rows, cols)), shape=(n, n))
    _, label = connected_components(graph, directed=False)
    label = label.astype(np.int64)
    terminal_body = {name: int(label[ks[0]]) for name, ks in term_islands.items() if ks}
    return Bodies(islands=tuple(isl), label=label, terminal_body=terminal_body)


def floating_islands(found, terminals):
    """Indices of the islands whose body holds none of the given terminals.

    Parameters
    ----------
    found : Bodies
    terminals : iterable of str
        Terminal names, e.g. the plus and minus of every port.

    Returns
    -------
    list of int
        Indices into ``found.islands``.
    """
    used = {found.terminal_body[t] for t in terminals if t in found.terminal_body}
    return [k for k, body in enumerate(found.label) if int(body) not in used]
