"""Build the :class:`~copperpath.geometry.model.Layout`: per-layer copper, vias and terminals in metres.

Order of operations on each layer (all boolean operations snap to ``grid_size``, 1 nm by
default, which keeps the result clean and reproducible):

1. start from the layer's artwork copper (if any), cropped to the window first (so that only
   the window's part of a large board is processed); it is snapped to the grid by the
   first boolean operation that follows (or on its own when none does);
2. apply the ``[[copper]]`` shapes **in file order**: a shape adds copper, a ``clear``
   shape cuts it out; a later added shape puts copper back where an earlier one cleared it
   (runs of consecutive additions or clears are united first, which gives the same result);
3. crop to the window (vias whose centre lies outside the window are dropped);
4. vias: on each layer of a via's span whose copper overlaps the pad disk (a shared area,
   not just a touching point), the whole pad disk (diameter ``pad``) is added and the layer
   is recorded in ``Via.connects`` (top down); a pad that the copper already covers to
   within the polygon tolerance of the shapes (:data:`copperpath.geometry.shapes.CHORD_TOL`: the pad
   flashed in artwork, drawn with other chords) is not added again; then the drill hole
   (diameter ``drill``) of every via is cut from every layer of its span, connected or
   not, all holes of a layer at once; the result is cropped to the window again;
5. terminals: each terminal's shape is intersected with the final copper of its layer.
"""
from __future__ import annotations

import itertools
from dataclasses import dataclass, replace

import numpy as np
import shapely
from shapely.geometry import GeometryCollection, MultiPolygon, Polygon

from copperpath.geometry.errors import input_error
from copperpath.geometry.model import Layout, Terminal
from copperpath.geometry.shapes import CHORD_TOL, circle

#: Precision grid of the copper in metres (1 nm).
GRID = 1e-9


@dataclass(frozen=True)
class CopperShape:
    """One ``[[copper]]`` shape.

    Attributes
    ----------
    layer : str
        Layer name.
    shape : shapely.Polygon or shapely.MultiPolygon
        Region in metres.
    clear : bool
        ``True`` cuts the shape out instead of adding it.
    """

    layer: str
    shape: object
    clear: bool = False


def as_multipolygon(geom):
    """The polygonal part of any shapely geometry as a MultiPolygon.

    Lines and points (e.g. from polygons that only touch) are dropped.

    Parameters
    ----------
    geom : shapely geometry or None

    Returns
    -------
    shapely.MultiPolygon
        Possibly empty.

    Examples
    --------
    >>> g = shapely.box(0, 0, 1, 1).intersection(shapely.box(1, 0, 2, 1))
    >>> as_multipolygon(g).is_empty
    True
    """
    parts = []
    if geom is not None:
        for g in shapely.get_parts(geom):
            if isinstance(g, Polygon) and not g.is_empty:
                parts.append(g)
            elif isinstance(g, (MultiPolygon, GeometryCollection)):
                parts.extend(as_multipolygon(g).geoms)
    return MultiPolygon(parts)


def shares_area(a, b):
    """Whether geometries ``a`` and ``b`` overlap in an area (not just along a line or a point).

    ``a`` may be a large prepared geometry (a pour); ``b`` a small one (a pad).

    Examples
    --------
    >>> shares_area(shapely.box(0, 0, 1, 1), shapely.box(1, 0, 2, 1))
    False

    ``b`` may also be an array of geometries (the answer is then a bool array). Two areas
    share an area exactly when their interiors meet: they intersect and do not merely
    touch (DE-9IM; predicates only, fast on a prepared ``a``).
    """
    share = shapely.intersects(a, b) & ~shapely.touches(a, b)
    return share if isinstance(share, np.ndarray) else bool(share)


def via_array(via, pitch, count):
    """Expand one via into a grid of vias that starts at the via's centre.

    Parameters
    ----------
    via : copperpath.geometry.model.Via
        The first via (its centre is the grid's first point).
    pitch : tuple of float
        ``(dx, dy)`` spacing in metres (may be negative to grow left or down).
    count : tuple of int
        ``(nx, ny)`` number of vias along x and y (>= 1).

    Returns
    -------
    tuple of copperpath.geometry.model.Via
        ``nx * ny`` vias named ``"<name>[i,j]"`` (i along x, j along y, from 0), ordered
        with i running fastest.

    Examples
    --------
    >>> from copperpath.geometry.model import Via
    >>> v = Via("g", 0.0, 0.0, 0.3e-3, 25e-6, 0.6e-3, ("L1", "L2"))
    >>> [(w.name, w.x) for w in via_array(v, (1e-3, 0.0), (2, 1))]
    [('g[0,0]', 0.0), ('g[1,0]', 0.001)]
    """
    (dx, dy), (nx, ny) = pitch, count
    return tuple(
        replace(via, name=f"{via.name}[{i},{j}]", x=via.x + i * dx, y=via.y + j * dy)
        for j in range(ny)
        for i in range(nx)
    )


def _apply_shapes(base, shapes, grid_size):
    """Add and clear shapes in order (runs of equal ``clear`` united first)."""
    current = base
    for clear, run in itertools.groupby(shapes, key=lambda s: s.clear):
        run_geom = shapely.union_all([s.shape for s in run])     # snapped when applied
        if clear:
            current = shapely.difference(current, run_geom, grid_size=grid_size)
        else:
            current = shapely.union_all([current, run_geom], grid_size=grid_size)
        current = as_multipolygon(current)
    return current


def drill_hole(via):
    """The hole cut for a via: a regular octagon through the drill circle.

    Where copper covers a via the hole lies inside the via's pad, an equipotential region, so
    its outline does not enter R or L; elsewhere it lies in a clearance. A fine circle would
    only force tiny triangles around every via.
    """
    return shapely.Point(via.x, via.y).buffer(0.5 * via.drill, quad_segs=2)


def _add_vias(copper, layers, vias, grid_size):
    """Add the pads of connected vias and cut every drill hole; fill ``Via.connects``."""
    pads = np.array([circle((v.x, v.y), 0.5 * v.pad) for v in vias], dtype=object)
    cores = np.array([circle((v.x, v.y), max(0.5 * v.pad - CHORD_TOL, 0.5 * v.drill)) for v in vias],
                     dtype=object)
    holes = np.array([drill_hole(v) for v in vias], dtype=object)
    connects = [[] for _ in vias]
    out = {}
    for layer in layers:
        cu = copper[layer.name]
        shapely.prepare(cu)
        on = np.array([k for k, v in enumerate(vias) if layer.name in v.span], dtype=int)
        touching = on[shares_area(cu, pads[on])] if len(on) else on
        for k in touching:
            connects[k].append(layer.name)
        outside = touching[~shapely.contains_properly(cu, cores[touching])] if len(touching) else touching
        if len(outside):
            cu = shapely.union(cu, shapely.union_all(pads[outside]), grid_size=grid_size)
        if len(on):
            cut = shapely.union_all(holes[on])                      # snapped when applied
            cu = shapely.difference(cu, cut, grid_size=grid_size)
        out[layer.name] = cu
    return out, tuple(replace(v, connects=tuple(c)) for v, c in zip(vias, connects))


def _crop(geom, box, grid_size):
    """``geom`` cropped to the window ``box`` (None: no window); skipped when it lies inside.

    Only the polygonal part is kept: copper that meets the window along an edge leaves a line,
    and a polygon-and-line collection is refused by the next overlay.
    """
    if box is None or geom.is_empty:
        return geom
    x0, y0, x1, y1 = geom.bounds
    b0, c0, b1, c1 = box.bounds
    if b0 <= x0 and c0 <= y0 and x1 <= b1 and y1 <= c1:
        return geom
    return as_multipolygon(shapely.intersection(geom, box, grid_size=grid_size))


def _artwork_base(geom, box, grid_size):
    """Artwork copper cropped to the window; united on the grid only if it is not valid."""
    if geom is None:
        return Polygon()
    if box is not None:
        geom = as_multipolygon(shapely.clip_by_rect(geom, *box.bounds))
    if shapely.is_valid(geom):
        return geom                         # a large layer: snapped by the next operation
    return shapely.union_all([geom], grid_size=grid_size)


def _terminal(term, copper, source, labels):
    """Intersect a terminal's shape with its layer's copper, or raise InputError."""
    where, item = labels.get(("terminal", term.name), (source, f"[[terminal]] '{term.name}'"))
    if term.layer not in copper:
        raise input_error(where, item, f"unknown layer '{term.layer}'")
    cu = copper[term.layer]
    if cu.is_empty:
        raise input_error(where, item, f"layer '{term.layer}' has no copper to place the terminal on")
    shape = as_multipolygon(shapely.intersection(term.shape, cu, grid_size=GRID))
    if shape.is_empty:
        raise input_error(where, item, f"does not lie on the copper of layer '{term.layer}'")
    if len(shape.geoms) == 1:
        shape = shape.geoms[0]
    return Terminal(term.name, term.layer, shape)


def _check_disjoint(terms, source, labels):
    """Raise InputError if two terminals of one layer share an area."""
    for i, a in enumerate(terms):
        for b in terms[i + 1:]:
            if a.layer == b.layer and shares_area(a.shape, b.shape):
                where, item = labels.get(("terminal", b.name), (source, f"[[terminal]] '{b.name}'"))
                raise input_error(where, item, f"overlaps terminal '{a.name}' on layer '{a.layer}'; "
                                  "terminals must be disjoint")


def build_layout(layers, shapes=(), vias=(), terminals=(), *, window=None, artwork=None,
                 grid_size=GRID, source="layout", labels=None):
    """Unite, cut, crop and drill the copper of every layer (see the module docstring).

    Parameters
    ----------
    layers : sequence of copperpath.geometry.model.Layer
        The stackup, any order; the layout holds it top (highest z) first.
    shapes : sequence of CopperShape
        ``[[copper]]`` shapes in file order, lengths in metres.
    vias : sequence of copperpath.geometry.model.Via
        Vias (arrays already expanded, see :func:`via_array`); ``connects`` is ignored
        and filled in here.
    terminals : sequence of copperpath.geometry.model.Terminal
        Terminals with their drawn shapes.
    window : tuple of float, optional
        ``(x0, y0, x1, y1)`` in metres: only copper inside is kept.
    artwork : dict of str to shapely geometry, optional
        Copper read from artwork per layer name, in metres; the shapes apply on top.
    grid_size : float, optional
        Precision grid of all boolean operations in metres.
    source : str, optional
        File named in error messages.
    labels : dict, optional
        ``(table, name) -> (file, item)`` for messages, e.g.
        ``("terminal", "C1.1") -> ("cases/x.toml", "[[terminal]] 'C1.1'")``.

    Returns
    -------
    copperpath.geometry.model.Layout
        Copper as one normalised MultiPolygon per layer.

    Raises
    ------
    copperpath.geometry.errors.InputError
        If a shape or terminal names an unknown layer, a terminal does not lie on
        copper, or two terminals of one layer overlap.

    Examples
    --------
    >>> from copperpath.geometry.model import Layer
    >>> from copperpath.geometry.shapes import rect
    >>> lay = build_layout([Layer("L1", 0.0, 35e-6)],
    ...                    [CopperShape("L1", rect(0, 0, 4e-3, 1e-3)),
    ...                     CopperShape("L1", rect(1e-3, 0, 2e-3, 1e-3), clear=True)])
    >>> round(lay.copper["L1"].area * 1e6, 6), len(lay.copper["L1"].geoms)
    (3.0, 2)
    """
    labels = labels or {}
    layers = tuple(sorted(layers, key=lambda layer: -layer.z))
    artwork = artwork or {}
    names = {layer.name for layer in layers}
    for k, s in enumerate(shapes, start=1):
        if s.layer not in names:
            raise input_error(source, f"[[copper]] #{k}", f"unknown layer '{s.layer}'")
    box = shapely.box(*window) if window is not None else None
    copper = {}
    for layer in layers:
        base = _artwork_base(artwork.get(layer.name), box, grid_size)
        cu = _apply_shapes(base, [s for s in shapes if s.layer == layer.name], grid_size)
        copper[layer.name] = _crop(cu, box, grid_size)
    if box is not None:
        vias = [v for v in vias if box.contains(shapely.Point(v.x, v.y))]
    copper, vias = _add_vias(copper, layers, tuple(vias), grid_size)
    untouched = set(artwork) - {s.layer for s in shapes} - {name for v in vias for name in v.span}
    for name, cu in copper.items():
        if name in untouched:
            cu = shapely.set_precision(cu, grid_size)
        copper[name] = shapely.normalize(as_multipolygon(_crop(cu, box, grid_size)))
    terms = tuple(_terminal(t, copper, source, labels) for t in terminals)
    _check_disjoint(terms, source, labels)
    return Layout(layers=layers, copper=copper, vias=vias, terminals=terms)
