"""Primitive copper shapes as shapely polygons: rectangle, polygon with holes, circle, trace.

All functions take and return lengths in one consistent unit (the layout uses metres).
Circles and the round ends and joints of traces are polygonised deterministically: the
number of segments per full turn is the smallest multiple of 4 whose chord deviates from
the true arc by at most :data:`CHORD_TOL` (the sagitta ``r (1 - cos(pi / n))``), clipped to
``[MIN_SEGMENTS, MAX_SEGMENTS]``. Vertices lie on the true circle (the polygon is
inscribed), starting at angle 0 and running counter-clockwise.
"""
from __future__ import annotations

import math

import numpy as np
import shapely
from shapely.geometry import LineString, Polygon

#: Largest distance in metres between a polygonised arc and the true arc (2 um: well below
#: a typical etching tolerance of about 20 um, common practice).
CHORD_TOL = 2e-6
#: Fewest segments per full circle, also for tiny circles.
MIN_SEGMENTS = 16
#: Most segments per full circle; above a radius of about 26 mm the chord error exceeds
#: :data:`CHORD_TOL` (at 256 segments the sagitta is 7.5e-5 r).
MAX_SEGMENTS = 256


def n_segments(radius, *, tol=CHORD_TOL):
    """Number of polygon segments per full circle of ``radius``.

    Parameters
    ----------
    radius : float
        Circle radius in metres (> 0).
    tol : float, optional
        Largest allowed sagitta in metres.

    Returns
    -------
    int
        A multiple of 4 in ``[MIN_SEGMENTS, MAX_SEGMENTS]``.

    Examples
    --------
    >>> n_segments(0.15e-3), n_segments(1e-3), n_segments(1.0)
    (20, 52, 256)
    """
    if tol >= radius:
        return MIN_SEGMENTS
    n = math.ceil(math.pi / math.acos(1.0 - tol / radius))
    n = 4 * math.ceil(n / 4)
    return int(min(max(n, MIN_SEGMENTS), MAX_SEGMENTS))


def rect(x0, y0, x1, y1):
    """Axis-aligned rectangle between two opposite corners.

    Parameters
    ----------
    x0, y0, x1, y1 : float
        Corner coordinates in metres, in any order.

    Returns
    -------
    shapely.Polygon

    Raises
    ------
    ValueError
        If the rectangle has zero width or height.

    Examples
    --------
    >>> round(rect(2, 1, 0, 0).area, 12)
    2.0
    """
    if x0 == x1 or y0 == y1:
        raise ValueError(f"rectangle [{x0}, {y0}, {x1}, {y1}] has zero width or height")
    return shapely.box(min(x0, x1), min(y0, y1), max(x0, x1), max(y0, y1))


def polygon_problem(shell, holes=()):
    """Say what is wrong with a polygon, or return ``None`` when it is valid.

    Works in whatever unit the coordinates are given, so messages can quote the file's
    numbers.

    Parameters
    ----------
    shell : array_like, shape (N, 2)
        Outline; closing the ring is optional.
    holes : sequence of array_like, shape (K, 2)
        Hole outlines.

    Returns
    -------
    str or None

    Examples
    --------
    >>> polygon_problem([[0, 0], [1, 1], [1, 0], [0, 1]])
    'self-intersecting near (0.5, 0.5)'
    >>> polygon_problem([[0, 0], [1, 0], [1, 1]]) is None
    True
    """
    rings = [shell, *holes]
    for k, ring in enumerate(rings):
        n = len(np.unique(np.asarray(ring, dtype=float).reshape(-1, 2), axis=0))
        if n < 3:
            what = "outline" if k == 0 else f"hole {k}"
            return f"{what} has {n} distinct points, expected at least 3"
    poly = Polygon(shell, holes)
    reason = shapely.is_valid_reason(poly)
    if reason == "Valid Geometry":
        return None if poly.area > 0 else "has zero area"
    kind, _, where = reason.partition("[")
    where = where.rstrip("]").split()
    at = f" near ({', '.join(f'{float(c):g}' for c in where)})" if where else ""
    if "Self-intersection" in kind:
        return f"self-intersecting{at}"
    return f"{kind.strip().lower()}{at}"


def polygon(shell, holes=()):
    """Polygon from an outline and optional holes.

    Parameters
    ----------
    shell : array_like, shape (N, 2)
        Outline in metres, N >= 3 distinct points, either orientation.
    holes : sequence of array_like, shape (K, 2)
        Hole outlines in metres.

    Returns
    -------
    shapely.Polygon
        Oriented counter-clockwise outside, clockwise holes.

    Raises
    ------
    ValueError
        If the polygon is degenerate or invalid (see :func:`polygon_problem`).

    Examples
    --------
    >>> polygon([[0, 0], [4, 0], [4, 4], [0, 4]], [[[1, 1], [2, 1], [2, 2], [1, 2]]]).area
    15.0
    """
    problem = polygon_problem(shell, holes)
    if problem:
        raise ValueError(f"polygon {problem}")
    return shapely.orient_polygons(Polygon(shell, holes))


def circle(center, radius, *, tol=CHORD_TOL):
    """Inscribed regular polygon approximating a circle.

    Parameters
    ----------
    center : array_like, shape (2,)
        Centre in metres.
    radius : float
        Radius in metres (> 0).
    tol : float, optional
        Chord tolerance in metres (see :func:`n_segments`).

    Returns
    -------
    shapely.Polygon
        ``n_segments(radius)`` vertices on the circle, the first at angle 0.

    Examples
    --------
    >>> c = circle((0, 0), 1e-3)
    >>> len(c.exterior.coords) - 1
    52
    """
    if not radius > 0:
        raise ValueError(f"circle radius must be positive, got {radius}")
    n = n_segments(radius, tol=tol)
    t = 2.0 * np.pi * np.arange(n) / n
    x0, y0 = float(center[0]), float(center[1])
    return Polygon(np.column_stack([x0 + radius * np.cos(t), y0 + radius * np.sin(t)]))


def trace(path, width, *, tol=CHORD_TOL):
    """A track of constant width along a polyline, with round ends and round joints.

    Parameters
    ----------
    path : array_like, shape (N, 2)
        Centre line in metres, N >= 2, not all points equal.
    width : float
        Track width in metres (> 0).
    tol : float, optional
        Chord tolerance of the rounded ends and joints in metres.

    Returns
    -------
    shapely.Polygon
        The centre line buffered by ``width / 2``; the round parts use
        ``n_segments(width / 2) / 4`` segments per quarter turn.

    Examples
    --------
    >>> t = trace([[0, 0], [10e-3, 0]], 1e-3)
    >>> round(t.area / (10e-3 * 1e-3 + np.pi * 0.25e-6), 3)  # a stadium's area
    1.0
    """
    if not width > 0:
        raise ValueError(f"trace width must be positive, got {width}")
    line = LineString(np.asarray(path, dtype=float).reshape(-1, 2))
    if line.length == 0:
        raise ValueError("trace path must have at least two distinct points")
    quad_segs = n_segments(0.5 * width, tol=tol) // 4
    return line.buffer(0.5 * width, quad_segs=quad_segs, cap_style="round", join_style="round")
