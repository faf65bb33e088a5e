"""Small layouts with known answers, for tests and benchmarks (all lengths in metres).

Each function returns a :class:`copperpath.geometry.model.Layout` built directly with shapely. Via pads
follow the layout convention: on every layer in ``Via.connects`` the copper holds the pad
disk (``shapely.Point.buffer`` with its default 16 segments per quarter circle) minus the
drill hole. Terminals are named in each docstring; a port is the caller's choice.
"""
from __future__ import annotations

import shapely
from shapely.geometry import box

from copperpath.geometry.model import Layer, Layout, Terminal, Via

COPPER_35UM = 35e-6
"""1 oz copper thickness in metres (common practice)."""


def _layer(name, z, thickness, conductivity):
    return Layer(name=name, z=z, thickness=thickness, conductivity=conductivity)


def _with_vias(copper: dict, vias) -> dict:
    """Add each via's pad and cut its drill hole on the layers it connects."""
    out = dict(copper)
    for via in vias:
        centre = shapely.Point(via.x, via.y)
        pad, hole = centre.buffer(0.5 * via.pad), centre.buffer(0.5 * via.drill)
        for name in via.connects:
            out[name] = shapely.union_all([out[name], pad]).difference(hole)
    return out


def _terminal(name, layer, shape, copper):
    return Terminal(name=name, layer=layer, shape=shape.intersection(copper))


def strip(length=10e-3, width=1e-3, thickness=COPPER_35UM, *, terminal_length=None,
          conductivity=5.8e7, layer="L1", z=0.0) -> Layout:
    """A straight rectangular strip along x, from ``(0, 0)`` to ``(length, width)``.

    Terminals ``"A"`` (``x <= terminal_length``) and ``"B"`` (``x >= length -
    terminal_length``), ``terminal_length`` defaulting to ``width / 10``. Known answer: DC
    resistance between the terminals ``(length - 2 terminal_length) / (conductivity *
    width * thickness)``.

    Examples
    --------
    >>> lay = strip(10e-3, 1e-3)
    >>> round(lay.copper["L1"].area * 1e6, 9), [t.name for t in lay.terminals]
    (10.0, ['A', 'B'])
    """
    tl = 0.1 * width if terminal_length is None else terminal_length
    copper = box(0.0, 0.0, length, width)
    terms = (_terminal("A", layer, box(0.0, 0.0, tl, width), copper),
             _terminal("B", layer, box(length - tl, 0.0, length, width), copper))
    return Layout(layers=(_layer(layer, z, thickness, conductivity),),
                  copper={layer: shapely.MultiPolygon([copper])}, terminals=terms)


def two_strips(length=10e-3, width=1e-3, gap=1e-3, thickness=COPPER_35UM, *,
               terminal_length=None, conductivity=5.8e7, layer="L1") -> Layout:
    """Two parallel strips on one layer, ``gap`` apart edge to edge.

    Strip 1 spans ``0 <= y <= width``, strip 2 ``width + gap <= y <= 2 width + gap``.
    Terminals ``"A1"``, ``"B1"``, ``"A2"``, ``"B2"`` (``A`` at ``x = 0``). Known answer: the
    partial self and mutual inductances of parallel rectangular bars (Ruehli 1972; Grover
    1946).
    """
    tl = 0.1 * width if terminal_length is None else terminal_length
    y2 = width + gap
    s1, s2 = box(0.0, 0.0, length, width), box(0.0, y2, length, y2 + width)
    copper = shapely.MultiPolygon([s1, s2])
    terms = []
    for k, (y0, s) in enumerate(((0.0, s1), (y2, s2)), start=1):
        terms.append(_terminal(f"A{k}", layer, box(0.0, y0, tl, y0 + width), s))
        terms.append(_terminal(f"B{k}", layer, box(length - tl, y0, length, y0 + width), s))
    return Layout(layers=(_layer(layer, 0.0, thickness, conductivity),),
                  copper={layer: copper}, terminals=tuple(terms))


def plane_pair(length=20e-3, width=10e-3, separation=0.2e-3, thickness=COPPER_35UM, *,
               terminal_length=None, conductivity=5.8e7) -> Layout:
    """Two equal rectangular planes, ``"top"`` above ``"bottom"``, ``separation`` apart
    (dielectric between the copper faces).

    Terminals ``"A1"`` / ``"B1"`` on ``top`` and ``"A2"`` / ``"B2"`` on ``bottom`` at
    ``x = 0`` / ``x = length``. Known answer: shorted at the far end, the loop inductance
    approaches the parallel-plate value ``mu0 * (separation + thickness) * length / width``
    for ``width >> separation`` (e.g. Paul 2010, Inductance: Loop and Partial, ch. 5).
    """
    tl = 0.1 * width if terminal_length is None else terminal_length
    plate = box(0.0, 0.0, length, width)
    layers = (_layer("top", thickness + separation, thickness, conductivity),
              _layer("bottom", 0.0, thickness, conductivity))
    terms = []
    for k, layer in enumerate(layers, start=1):
        terms.append(_terminal(f"A{k}", layer.name, box(0.0, 0.0, tl, width), plate))
        terms.append(_terminal(f"B{k}", layer.name, box(length - tl, 0.0, length, width), plate))
    return Layout(layers=layers, copper={la.name: shapely.MultiPolygon([plate]) for la in layers},
                  terminals=tuple(terms))


def strip_over_plane(length=20e-3, width=1e-3, height=0.2e-3, plane_width=10e-3,
                     thickness=COPPER_35UM, *, drill=0.3e-3, plating=25e-6, pad=0.6e-3,
                     terminal_length=None, conductivity=5.8e7) -> Layout:
    """A strip on ``"top"`` over a plane on ``"bottom"``, shorted by via ``"V1"`` at the far end.

    The strip spans ``0 <= x <= length`` centred on ``y = 0``; the plane spans the same ``x``
    and ``|y| <= plane_width / 2``; ``height`` is the dielectric between the copper faces.
    The via sits at ``x = length - width / 2``. Terminals: ``"S"`` (strip, ``x <=
    terminal_length``) and ``"G"`` (plane under it, full plane width). Known answer: the loop
    inductance of a microstrip return path, ``L' * length`` with ``L'`` from Wheeler's
    formula for ``width / height`` (Wheeler 1977) plus the via.
    """
    tl = 0.1 * width if terminal_length is None else terminal_length
    layers = (_layer("top", thickness + height, thickness, conductivity),
              _layer("bottom", 0.0, thickness, conductivity))
    via = Via(name="V1", x=length - 0.5 * width, y=0.0, drill=drill, plating=plating, pad=pad,
              span=("top", "bottom"), connects=("top", "bottom"))
    copper = _with_vias({"top": box(0.0, -0.5 * width, length, 0.5 * width),
                         "bottom": box(0.0, -0.5 * plane_width, length, 0.5 * plane_width)},
                        [via])
    terms = (_terminal("S", "top", box(0.0, -0.5 * width, tl, 0.5 * width), copper["top"]),
             _terminal("G", "bottom", box(0.0, -0.5 * plane_width, tl, 0.5 * plane_width),
                       copper["bottom"]))
    return Layout(layers=layers, copper={k: shapely.MultiPolygon(shapely.get_parts(v).tolist())
                                         for k, v in copper.items()},
                  vias=(via,), terminals=terms)


def rect_loop(size_x=20e-3, size_y=10e-3, width=1e-3, gap=1e-3, thickness=COPPER_35UM, *,
              terminal_length=None, conductivity=5.8e7, layer="L1") -> Layout:
    """A rectangular loop of trace on one layer, open by a port gap in its bottom side.

    Outer size ``size_x`` by ``size_y`` from ``(0, 0)``; the gap of length ``gap`` is centred
    on ``x = size_x / 2`` in the bottom side. Terminals ``"P"`` (left of the gap) and ``"N"``
    (right of it), each ``terminal_length`` long (default ``width / 2``). Known answer: the
    inductance of a rectangular loop of rectangular conductor (Grover 1946, ch. 15).
    """
    tl = 0.5 * width if terminal_length is None else terminal_length
    ring = box(0.0, 0.0, size_x, size_y).difference(box(width, width, size_x - width, size_y - width))
    xc = 0.5 * size_x
    copper = ring.difference(box(xc - 0.5 * gap, -1.0, xc + 0.5 * gap, 2.0 * width))
    terms = (_terminal("P", layer, box(xc - 0.5 * gap - tl, 0.0, xc - 0.5 * gap, width), copper),
             _terminal("N", layer, box(xc + 0.5 * gap, 0.0, xc + 0.5 * gap + tl, width), copper))
    return Layout(layers=(_layer(layer, 0.0, thickness, conductivity),),
                  copper={layer: shapely.MultiPolygon([copper])}, terminals=terms)


def strip_with_neck(length=10e-3, width=2e-3, neck_width=0.4e-3, neck_length=1e-3,
                    thickness=COPPER_35UM, *, terminal_length=None, conductivity=5.8e7,
                    layer="L1") -> Layout:
    """A strip with a narrow rectangular neck in its middle.

    As :func:`strip` (terminals ``"A"`` and ``"B"``), with the copper narrowed to
    ``neck_width`` (centred) over ``neck_length`` at ``x = length / 2``. Known answer: the
    DC resistance lies above the series sum of the bar resistances of the three sections;
    the excess is the constriction (spreading) resistance at the two steps (Holm 1967,
    Electric Contacts; from memory).
    """
    base = strip(length, width, thickness, terminal_length=terminal_length,
                 conductivity=conductivity, layer=layer)
    x0, x1 = 0.5 * (length - neck_length), 0.5 * (length + neck_length)
    notch = 0.5 * (width - neck_width)
    copper = box(0.0, 0.0, length, width).difference(
        shapely.union_all([box(x0, -1.0, x1, notch), box(x0, width - notch, x1, width + 1.0)]))
    return Layout(layers=base.layers, copper={layer: shapely.MultiPolygon([copper])},
                  terminals=base.terminals)
