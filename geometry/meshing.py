"""Conforming triangle meshes of the copper layers, with terminal and via-pad regions tagged.

The mesh of each layer is built polygon by polygon (one connected piece of copper at a
time) from a planar straight-line graph (PSLG): the copper rings and the boundaries of the
equipotential regions, noded with shapely on a 1 nm grid and deduplicated. Only
:func:`mesh_polygon` calls the ``triangle`` package, so another mesher can replace it.

Regions (see :func:`layout_regions`)
    Terminals and the pads of connected vias are equipotential nodes. On each layer,
    terminals and via pads that overlap (positive common area) form one region: a region
    holding a terminal is named ``"terminal:<name>"`` and covers the terminal plus the whole
    of every via pad overlapping it (the via then joins the terminal's node); a region of
    via pads alone is named ``"via:<first via>@<layer>"`` and covers all of its pads. Two
    terminals in one region (overlapping, or bridged by a pad) are an input error. A pad
    region is the copper inside the octagon circumscribed about the pad circle
    (:func:`via_pad_region`): it holds the layout's pad disk whatever its polygon, so no
    sliver of bulk copper is left between two nearly equal circles, and 45-degree traces
    tangent to the pad meet it along a side, not at a sliver angle.

Size field (see :class:`SizeField`)
    The target edge is ``min_edge`` on region boundaries inside the copper (where current
    enters an equipotential) and at re-entrant copper corners,
    about half the local width in traces and necks narrower than ``2 * max_edge`` (so a trace
    is about two triangles across), and grows away from these features at ``GRADING`` (edge
    growth per unit distance; ``MeshOptions.grading`` when given) up to ``max_edge``.
    Straight copper edges are not refined.
    The local width is measured by erosion: a copper point farther than ``2 r`` from the
    copper eroded by ``r`` lies in a feature narrower than ``2 r``. Inside a region the
    target is ``max_edge`` (an equipotential needs no resolution; Triangle's quality bound
    grades the triangles from the region's boundary inwards).

Quality
    Triangle's quality switch at ``MIN_ANGLE_DEG``; angles of the artwork itself smaller than
    that (sharp copper corners, near-tangent circles) stay as they are.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely
from scipy.spatial import cKDTree

from copperpath.geometry.errors import input_error
from copperpath.geometry.mesh import Mesh
from copperpath.geometry.model import Layout, MeshOptions

GRID = 1e-9
"""Snapping grid of the PSLG in metres."""
MIN_ANGLE_DEG = 30.0
"""Minimum angle asked of Triangle (its guarantee holds up to about 33 degrees)."""
GRADING = 0.4
"""Growth of the target edge length per unit distance from a feature."""
FACING_FRACTION = 0.5
"""Edge length on copper edges that face a neighbouring layer's copper, as a fraction of
``min_edge``: at high frequency the current density is singular there."""
REENTRANT_TURN_DEG = 30.0
"""A copper corner that turns away from the copper by more than this is refined."""
WIDTH_FACTOR = 1.0
"""Target edge in a feature narrower than ``2 r`` is ``WIDTH_FACTOR * r``."""
MAX_PASSES = 10
"""Refinement passes of the size-field loop."""


@dataclass(frozen=True)
class Region:
    """An equipotential region of one layer: a terminal and/or connected via pads.

    Attributes
    ----------
    name : str
        ``"terminal:<name>"`` or ``"via:<via name>@<layer>"``.
    layer : str
    shape : shapely.Polygon or shapely.MultiPolygon
        The copper of the region in metres, on the 1 nm grid.
    terminal : str or None
        The terminal in the region, if any.
    vias : tuple of str
        Vias whose barrels join this region (their pads overlap it), in layout order.
    """

    name: str
    layer: str
    shape: object
    terminal: str | None
    vias: tuple[str, ...]


def via_pad_region(via) -> shapely.Polygon:
    """Outline of a via's pad region (before clipping to copper), metres.

    The regular octagon circumscribed about the pad circle, with sides normal to the x and y
    axes and the diagonals. A trace routed at a multiple of 45 degrees and tangent to the pad
    then runs along a side instead of meeting the outline at a sliver angle, and the layout's
    polygon of the pad disk (vertices on the circle) lies inside it.

    Parameters
    ----------
    via : copperpath.geometry.model.Via

    Returns
    -------
    shapely.Polygon

    Examples
    --------
    >>> from copperpath.geometry.model import Via
    >>> pad = via_pad_region(Via("V", 0.0, 0.0, 0.3e-3, 25e-6, 0.6e-3, ("L1",)))
    >>> round(pad.area / 0.3e-3 ** 2, 4)  # 8 tan(22.5 deg)
    3.3137
    """
    r = 0.5 * via.pad
    t = math.sqrt(2.0) - 1.0  # tan(22.5 deg)
    unit = [(1, -t), (1, t), (t, 1), (-t, 1), (-1, t), (-1, -t), (-t, -1), (t, -1)]
    return shapely.Polygon([(via.x + r * cx, via.y + r * cy) for cx, cy in unit])


def layer_copper(layout: Layout, name: str):
    """Copper of layer ``name`` snapped to the 1 nm grid (empty geometry if none)."""
    geom = layout.copper.get(name)
    if geom is None or geom.is_empty:
        return shapely.MultiPolygon()
    return shapely.set_precision(geom, GRID)


def layout_regions(layout: Layout) -> tuple[Region, ...]:
    """The equipotential regions of every layer, in mesh order.

    Layers in stackup order; on each layer the regions holding a terminal first (in
    terminal order), then via-pad regions (in via order).

    Parameters
    ----------
    layout : copperpath.geometry.model.Layout

    Returns
    -------
    tuple of Region

    Raises
    ------
    copperpath.geometry.errors.InputError
        A terminal on an unknown layer or off the copper, or two terminals in one region.
    """
    names = [layer.name for layer in layout.layers]
    for term in layout.terminals:
        if term.layer not in names:
            raise input_error("layout", f"terminal '{term.name}'",
                              f"layer '{term.layer}' is not in the stackup {names}")
    out = []
    for name in names:
        out.extend(_layer_regions(layout, name))
    return tuple(out)


def _layer_regions(layout, name):
    copper = layer_copper(layout, name)
    items = []  # (terminal name or None, via name or None, shape)
    for term in layout.terminals:
        if term.layer == name:
            shape = shapely.intersection(term.shape, copper, grid_size=GRID)
            if shape.area <= 0.0:
                raise input_error("layout", f"terminal '{term.name}'",
                                  f"does not touch the copper of layer '{name}'")
            items.append((term.name, None, shape))
    for via in layout.vias:
        if name in via.connects:
            shape = shapely.intersection(via_pad_region(via), copper, grid_size=GRID)
            if shape.area > 0.0:
                items.append((None, via.name, shape))
    groups = _overlap_groups([shape for _, _, shape in items])
    regions = []
    for group in groups:
        terms = [items[i][0] for i in group if items[i][0] is not None]
        vias = tuple(items[i][1] for i in group if items[i][1] is not None)
        if len(terms) > 1:
            bridge = f" (joined by via pad '{vias[0]}')" if vias else ""
            raise input_error("layout", f"terminal '{terms[0]}'",
                              f"overlaps terminal '{terms[1]}' on layer '{name}'{bridge}; "
                              "terminals must be disjoint")
        shape = shapely.union_all([items[i][2] for i in group], grid_size=GRID)
        rname = f"terminal:{terms[0]}" if terms else f"via:{vias[0]}@{name}"
        regions.append(Region(rname, name, shape, terms[0] if terms else None, vias))
    # terminal regions first, each group already ordered by its first item
    return [r for r in regions if r.terminal] + [r for r in regions if not r.terminal]


def _overlap_groups(shapes):
    """Groups of indices of shapes connected by overlaps of positive area, in first-index order."""
    parent = list(range(len(shapes)))

    def root(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    if shapes:
        tree = shapely.STRtree(shapes)
        left, right = tree.query(shapes, predicate="intersects")
        for i, j in zip(left.tolist(), right.tolist()):
            if i < j and shapely.intersection(shapes[i], shapes[j]).area > 0.0:
                parent[max(root(i), root(j))] = min(root(i), root(j))
    groups = {}
    for i in range(len(shapes)):
        groups.setdefault(root(i), []).append(i)
    return [groups[k] for k in sorted(groups)]


@dataclass(frozen=True)
class SizeField:
    """Target triangle edge length over one layer, metres.

    ``h(x) = min(max_edge, min_s(h_s + grading * |x - p_s|))`` over the feature points
    ``p_s``, clipped to ``[min_edge, max_edge]``, and ``max_edge`` inside the regions. The
    features are the points of region boundaries inside the copper and of re-entrant corners
    (``h_s = min_edge``), and, for each width level ``r``, those of the evaluation points that
    lie in a feature narrower than ``2 r`` (``h_s = WIDTH_FACTOR * r``): nearer than ``r`` to
    the copper boundary and farther than ``2 r`` from the copper eroded by ``r``. Distances
    come from points sampled on the lines at a fraction of ``r``.

    Attributes
    ----------
    min_edge, max_edge : float
        Metres.
    features : scipy.spatial.cKDTree or None
        Points where the edge is ``min_edge``.
    boundary : scipy.spatial.cKDTree or None
        Points on the copper boundary.
    levels : tuple of (float, cKDTree or None)
        Per width level: ``r`` and points on the boundary of the copper eroded by ``r``
        (``None`` where the erosion is empty).
    regions : shapely geometry or None
        Union of the layer's regions (prepared).
    facing : scipy.spatial.cKDTree or None
        Points on copper edges that face a neighbouring layer's copper, where the edge is
        ``FACING_FRACTION * min_edge``.
    grading : float
        Growth of the edge length per unit distance from a feature.
    """

    min_edge: float
    max_edge: float
    features: object
    boundary: object
    levels: tuple
    regions: object
    facing: object = None
    grading: float = GRADING

    def __call__(self, xy: np.ndarray) -> np.ndarray:
        """Target edge length in metres at the points ``xy`` (K, 2) in metres, in copper."""
        xy = np.asarray(xy, float)
        h = np.full(len(xy), self.max_edge)
        if self.features is not None:
            d, _ = self.features.query(xy, distance_upper_bound=self._reach(self.min_edge))
            h = np.minimum(h, self.min_edge + self.grading * d)
        floor = self.min_edge
        if self.facing is not None:
            floor = FACING_FRACTION * self.min_edge
            d, _ = self.facing.query(xy, distance_upper_bound=self._reach(floor))
            h = np.minimum(h, floor + self.grading * d)
        if self.levels and self.boundary is not None:
            to_edge, _ = self.boundary.query(xy, distance_upper_bound=self.levels[-1][0])
            for r, eroded in self.levels:
                narrow = np.flatnonzero(to_edge < r)
                if eroded is not None and len(narrow):
                    d, _ = eroded.query(xy[narrow], distance_upper_bound=2.0 * r)
                    narrow = narrow[np.isinf(d)]
                h0 = WIDTH_FACTOR * r
                lower = np.flatnonzero(h > h0)
                if len(narrow) and len(lower):
                    d, _ = cKDTree(xy[narrow]).query(xy[lower], distance_upper_bound=self._reach(h0))
                    h[lower] = np.minimum(h[lower], h0 + self.grading * d)
        h = np.clip(h, floor, self.max_edge)
        if self.regions is not None:
            h[shapely.contains_xy(self.regions, xy[:, 0], xy[:, 1])] = self.max_edge
        return h

    def _reach(self, h0):
        """Distance beyond which a feature of edge ``h0`` no longer lowers ``max_edge``."""
        return max(self.max_edge - h0, 0.0) / self.grading


def size_field(copper, regions, options: MeshOptions, facing=None) -> SizeField:
    """Build the :class:`SizeField` of one layer.

    Parameters
    ----------
    copper : shapely geometry
        The layer's copper in metres.
    regions : sequence of Region
        The layer's regions.
    options : MeshOptions
    facing : shapely geometry, optional
        Copper of the neighbouring layers. Edges of this layer's copper that lie over it face
        another conductor: at high frequency the current crowds there, so they get
        ``FACING_FRACTION * min_edge`` (straight edges facing nothing are not refined); with
        ``options.under_edges`` so does this layer's copper under the edges of ``facing``,
        where the return current gathers.

    Returns
    -------
    SizeField
    """
    lo, hi = options.min_edge, options.max_edge
    tree = lambda line, step: cKDTree(shapely.get_coordinates(shapely.segmentize(line, step)))  # noqa: E731
    pts = [_reentrant_corners(copper)]
    union = None
    if regions:
        union = shapely.union_all([reg.shape for reg in regions])
        shapely.prepare(union)
        xy = shapely.get_coordinates(shapely.segmentize(shapely.boundary(union), 0.5 * lo))
        inner = shapely.buffer(copper, -0.05 * lo, quad_segs=2)
        pts.append(xy[shapely.contains_xy(inner, xy[:, 0], xy[:, 1])])
    facing_tree = None
    if facing is not None and not facing.is_empty and not copper.is_empty:
        xy = shapely.get_coordinates(shapely.segmentize(copper.boundary, 0.25 * lo))
        shapely.prepare(facing)
        xy = [xy[shapely.contains_xy(facing, xy[:, 0], xy[:, 1])]]
        if options.under_edges:
            under = shapely.get_coordinates(shapely.segmentize(facing.boundary, 0.25 * lo))
            shapely.prepare(copper)
            xy.append(under[shapely.contains_xy(copper, under[:, 0], under[:, 1])])
        xy = np.concatenate(xy)
        facing_tree = cKDTree(xy) if len(xy) else None
    pts = np.concatenate(pts)
    levels = []
    r = lo / WIDTH_FACTOR
    while WIDTH_FACTOR * r < hi:
        eroded = shapely.buffer(copper, -r, quad_segs=2)
        levels.append((r, None if eroded.is_empty else tree(eroded.boundary, 0.25 * r)))
        r *= math.sqrt(2.0)
    boundary = None if copper.is_empty else tree(copper.boundary, 0.25 * lo)
    return SizeField(lo, hi, cKDTree(pts) if len(pts) else None, boundary, tuple(levels), union,
                     facing_tree, options.grading or GRADING)


def _reentrant_corners(copper) -> np.ndarray:
    """Vertices (K, 2) where the copper boundary turns away from the copper by more than
    ``REENTRANT_TURN_DEG``."""
    out = [np.empty((0, 2))]
    for poly in shapely.get_parts(shapely.orient_polygons(copper)):
        for ring in (poly.exterior, *poly.interiors):
            p = np.asarray(ring.coords)[:-1]
            a = p - np.roll(p, 1, axis=0)
            b = np.roll(p, -1, axis=0) - p
            turn = np.arctan2(a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0], (a * b).sum(1))
            out.append(p[turn < -math.radians(REENTRANT_TURN_DEG)])
    return np.concatenate(out)


def triangulate(layout: Layout, options: MeshOptions = MeshOptions()) -> Mesh:
    """Mesh every copper layer of ``layout`` into conforming triangles.

    Parameters
    ----------
    layout : copperpath.geometry.model.Layout
        Copper, vias and terminals in metres.
    options : MeshOptions
        ``max_edge`` and ``min_edge`` in metres.

    Returns
    -------
    copperpath.geometry.mesh.Mesh
        Triangles tagged with their layer and region (regions as :func:`layout_regions`);
        identical arrays for identical input.

    Raises
    ------
    ValueError
        ``min_edge`` not positive or larger than ``max_edge``.
    copperpath.geometry.errors.InputError
        See :func:`layout_regions`.
    """
    if not 0.0 < options.min_edge <= options.max_edge:
        raise ValueError(f"MeshOptions: need 0 < min_edge <= max_edge, got {options}")
    regions = layout_regions(layout)
    points, tris, tri_layer, tri_region = [], [], [], []
    offset = 0
    coppers = [layer_copper(layout, layer.name) for layer in layout.layers]
    for index, layer in enumerate(layout.layers):
        copper = coppers[index]
        mine = [(k, r) for k, r in enumerate(regions) if r.layer == layer.name]
        neighbours = [coppers[k] for k in (index - 1, index + 1) if 0 <= k < len(coppers)]
        facing = shapely.union_all(neighbours) if neighbours else None
        field = size_field(copper, [r for _, r in mine], options, facing)
        for poly in shapely.get_parts(copper):
            if not isinstance(poly, shapely.Polygon) or poly.area <= 0.0:
                continue
            pslg = _pslg(poly, mine)
            p, t, tag = mesh_polygon(*pslg, field, max_edge=options.max_edge,
                                     min_edge=options.min_edge)
            points.append(p)
            tris.append(t + offset)
            tri_layer.append(np.full(len(t), index, dtype=np.int64))
            tri_region.append(tag)
            offset += len(p)
    cat = lambda xs, shape, dtype: np.concatenate(xs) if xs else np.empty(shape, dtype)  # noqa: E731
    triangles = cat(tris, (0, 3), np.int64)
    edges, edge_tris = interior_edges(triangles)
    return Mesh(points=cat(points, (0, 2), float), triangles=triangles,
                tri_layer=cat(tri_layer, (0,), np.int64), tri_region=cat(tri_region, (0,), np.int64),
                layer_names=tuple(layer.name for layer in layout.layers),
                region_names=tuple(r.name for r in regions), edges=edges, edge_tris=edge_tris)


def _pslg(poly, regions):
    """Vertices (V, 2), segments (S, 2), hole points (H, 2) and region seeds (R, 3) of one
    copper polygon; seeds are ``x, y, region index``."""
    lines = [poly.boundary]
    seeds = []
    for k, reg in regions:
        piece = shapely.intersection(reg.shape, poly, grid_size=GRID)
        for part in shapely.get_parts(piece):
            if isinstance(part, shapely.Polygon) and part.area > 0.0:
                lines.append(part.boundary)
                q = part.representative_point()
                seeds.append((q.x, q.y, k))
    noded = shapely.union_all(lines, grid_size=GRID)
    coords, owner = shapely.get_coordinates(shapely.get_parts(noded), return_index=True)
    grid = np.rint(coords / GRID).astype(np.int64)
    uniq, inverse = np.unique(grid, axis=0, return_inverse=True)
    inverse = inverse.ravel()
    same = owner[:-1] == owner[1:]
    seg = np.column_stack([inverse[:-1][same], inverse[1:][same]])
    seg = np.unique(np.sort(seg[seg[:, 0] != seg[:, 1]], axis=1), axis=0)
    holes = [shapely.Polygon(ring).representative_point() for ring in poly.interiors]
    holes = np.array([(h.x, h.y) for h in holes]).reshape(-1, 2)
    return uniq * GRID, seg, holes, np.array(seeds, dtype=float).reshape(-1, 3)


def mesh_polygon(vertices, segments, holes, seeds, edge_length, *, max_edge, min_edge,
                 min_angle=MIN_ANGLE_DEG):
    """Quality triangle mesh of one PSLG that follows a size field (the ``triangle`` package).

    Parameters
    ----------
    vertices : ndarray (V, 2)
        Distinct vertices in metres.
    segments : ndarray of int (S, 2)
        Non-crossing, noded segments (vertex indices).
    holes : ndarray (H, 2)
        A point inside each hole, metres.
    seeds : ndarray (R, 3)
        ``x, y, tag``: every triangle reachable from the point without crossing a segment
        gets the integer ``tag >= 0``.
    edge_length : callable
        Target edge length in metres at points (K, 2) in metres.
    max_edge, min_edge : float
        Largest edge in metres (first pass) and the smallest that ``edge_length`` returns.
    min_angle : float
        Minimum angle in degrees (at most about 33).

    Returns
    -------
    points : ndarray (N, 2)
    triangles : ndarray of int64 (M, 3), counter-clockwise
    tags : ndarray of int64 (M,), -1 where no seed reached
    """
    import triangle

    origin = vertices.min(axis=0)
    local = lambda xy: (np.asarray(xy, float) - origin) / max_edge  # noqa: E731
    unit = math.sqrt(3.0) / 4.0  # area of the equilateral triangle of unit edge
    data = {"vertices": local(vertices), "segments": np.asarray(segments, np.int32)}
    if len(holes):
        data["holes"] = local(holes)
    switches = f"pq{min_angle:g}"
    if len(seeds):
        data["regions"] = np.column_stack([local(seeds[:, :2]), seeds[:, 2] + 1.0,
                                           -np.ones(len(seeds))])
        switches += "A"
    mesh = triangle.triangulate(data, f"{switches}a{unit:.6f}")
    for _ in range(MAX_PASSES):
        p, t = mesh["vertices"], mesh["triangles"]
        area = _areas(p, t)
        check = np.flatnonzero(area > unit * (min_edge / max_edge) ** 2)
        h = edge_length(p[t[check]].mean(axis=1) * max_edge + origin) / max_edge
        max_area = np.full(len(t), -1.0)
        max_area[check] = np.where(area[check] > unit * h**2, unit * h**2, -1.0)
        if not (max_area > 0.0).any():
            break
        data = {"vertices": p, "triangles": t, "segments": mesh["segments"],
                "triangle_max_area": max_area}
        if "triangle_attributes" in mesh:
            data["triangle_attributes"] = mesh["triangle_attributes"]
        mesh = triangle.triangulate(data, f"rpq{min_angle:g}a")
    p, t = mesh["vertices"], mesh["triangles"].astype(np.int64)
    flip = _areas(p, t) < 0.0
    t[flip] = t[flip][:, ::-1]
    tags = np.rint(mesh["triangle_attributes"][:, 0]).astype(np.int64) - 1 \
        if "triangle_attributes" in mesh else np.full(len(t), -1, np.int64)
    return p * max_edge + origin, t, tags


def _areas(p, t):
    d1 = p[t[:, 1]] - p[t[:, 0]]
    d2 = p[t[:, 2]] - p[t[:, 0]]
    return 0.5 * (d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0])


def interior_edges(triangles: np.ndarray):
    """Edges shared by two triangles, and those triangles.

    Parameters
    ----------
    triangles : ndarray of int (M, 3)

    Returns
    -------
    edges : ndarray of int64 (E, 2)
        Node indices, lower first; rows sorted.
    edge_tris : ndarray of int64 (E, 2)
        The two triangles, lower index first.

    Raises
    ------
    ValueError
        An edge shared by more than two triangles (a non-conforming mesh).

    Examples
    --------
    >>> interior_edges(np.array([[0, 1, 2], [2, 1, 3]]))[0].tolist()
    [[1, 2]]
    """
    m = len(triangles)
    pairs = np.asarray(triangles, np.int64)[:, [0, 1, 1, 2, 2, 0]].reshape(-1, 2)
    pairs.sort(axis=1)
    owner = np.repeat(np.arange(m, dtype=np.int64), 3)
    key = pairs[:, 0] * (int(pairs.max(initial=0)) + 1) + pairs[:, 1]
    order = np.argsort(key, kind="stable")
    key, pairs, owner = key[order], pairs[order], owner[order]
    dup = key[1:] == key[:-1]
    if (dup[1:] & dup[:-1]).any():
        raise ValueError("mesh is not conforming: an edge is shared by more than two triangles")
    first = np.flatnonzero(dup)
    tris = np.sort(np.column_stack([owner[first], owner[first + 1]]), axis=1)
    return pairs[first], tris
