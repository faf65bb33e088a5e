"""Gerber X2 object attributes: which net, pad and component each piece of copper belongs to.

The Gerber Layer Format Specification (Ucamco, revision 2023.08, section 5, from memory)
attaches *object attributes* to the graphical objects that follow them:

- ``%TO.N,<net>[,<net>]*%``: the net(s) of the object (an empty value: not connected);
- ``%TO.P,<refdes>,<number>[,<function>]*%``: the component pad (pin) the object is part of;
- ``%TO.C,<refdes>*%``: the component the object belongs to;
- ``%TD*%`` deletes all object attributes, ``%TD.N*%`` (etc.) one of them.

Field values may carry ``\\uXXXX`` escapes (a UTF-16 code unit), decoded here. The reader
(:mod:`copperpath.geometry.formats.gerber`) keeps one :class:`ObjectAttributes` per file, starts a new
batch of objects whenever the (net, pad) *tag* changes and hands each finished batch of the
top level to :meth:`ObjectAttributes.add`; :meth:`ObjectAttributes.finish` unites them per
net and per pad. Objects inside step-and-repeat or block apertures are not tagged.

A net's copper is the union of its objects, cropped like the image (``clip``). When the file
uses clear polarity (``%LPC``), which may erase tagged copper, each net's copper is also
intersected with the final image; pads, which are kept for the whole file (a pad outside a
window is still found by name), are then intersected with the image only without a clip.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np
import shapely
from shapely.geometry import MultiPolygon

__all__ = ["Pad", "ObjectAttributes", "decode"]

_ESCAPE = re.compile(r"\\u([0-9A-Fa-f]{4})")


def decode(value: str) -> str:
    """Decode the ``\\uXXXX`` escapes of an attribute field.

    Examples
    --------
    >>> decode(r"Net\\u002C1"), decode("GND")
    ('Net,1', 'GND')
    """
    return _ESCAPE.sub(lambda m: chr(int(m.group(1), 16)), value)


@dataclass(frozen=True)
class Pad:
    """One component pad of one copper layer.

    Attributes
    ----------
    ref : str
        Reference designator, e.g. ``"U4"``.
    number : str
        Pad (pin) number, e.g. ``"8"``.
    function : str
        Pin function or name as the file gives it (may be empty).
    net : str or None
        Net of the pad's objects; None when the file does not say.
    geometry : shapely.MultiPolygon
        The pad's copper in metres.
    """

    ref: str
    number: str
    function: str
    net: str | None
    geometry: MultiPolygon

    @property
    def name(self) -> str:
        """``"<ref>.<number>"``, e.g. ``"U4.8"``: how a case names the pad."""
        return f"{self.ref}.{self.number}"


class ObjectAttributes:
    """Current object attributes of one Gerber file and the copper tagged with them."""

    def __init__(self):
        self.current = {}           # name without the dot -> tuple of decoded fields
        self.seen = False           # any %TO in the file
        self.cleared = False        # any clear-polarity object in the file
        self.components = set()     # reference designators from .C and .P
        self._batches = []          # (tag, array of geometries)
        self._functions = {}        # pad key -> function

    def set(self, fields):
        """Apply ``%TO<name>,<values>*%`` given as its comma-separated fields (name first)."""
        name = fields[0].lstrip(".")
        values = tuple(decode(f) for f in fields[1:])
        self.current[name] = values
        self.seen = True
        if name in ("C", "P") and values and values[0]:
            self.components.add(values[0])

    def delete(self, name):
        """Apply ``%TD*%`` (``name`` empty: delete all) or ``%TD<name>*%``."""
        if name:
            self.current.pop(name.lstrip("."), None)
        else:
            self.current.clear()

    @property
    def tag(self):
        """``(net, (ref, number))`` of the objects that follow; None when neither is set."""
        net = self.current.get("N")
        pin = self.current.get("P")
        key = (pin[0], pin[1]) if pin and len(pin) >= 2 else None
        if key is not None and key not in self._functions:
            self._functions[key] = pin[2] if len(pin) > 2 else ""
        if net is None and key is None:
            return None
        return (",".join(net) if net is not None else None, key)

    def add(self, tag, geoms):
        """Record a finished batch of dark objects of the top level."""
        if tag is not None and len(geoms):
            self._batches.append((tag, geoms))

    def finish(self, image, clip=None):
        """Copper per net and the pads.

        Parameters
        ----------
        image : shapely.MultiPolygon
            The file's final image (cropped to ``clip``).
        clip : tuple of float, optional
            ``(x0, y0, x1, y1)`` in metres, as given to the reader.

        Returns
        -------
        tuple
            ``(nets, pads)``: dict net -> MultiPolygon, dict ``"ref.number"`` -> Pad.
        """
        by_net, by_pad, pad_net = {}, {}, {}
        for (net, key), geoms in self._batches:
            if net is not None:
                by_net.setdefault(net, []).append(geoms)
            if key is not None:
                by_pad.setdefault(key, []).append(geoms)
                if net is not None:
                    pad_net[key] = net
        nets = {}
        for net, parts in sorted(by_net.items()):
            geoms = np.concatenate(parts)
            if clip is not None:
                b = shapely.bounds(geoms)
                x0, y0, x1, y1 = clip
                geoms = geoms[(b[:, 0] <= x1) & (b[:, 2] >= x0) & (b[:, 1] <= y1) & (b[:, 3] >= y0)]
            union = shapely.union_all(geoms) if len(geoms) else MultiPolygon()
            if clip is not None and not union.is_empty:
                union = shapely.clip_by_rect(union, *clip)
            if self.cleared:
                union = shapely.intersection(union, image)
            nets[net] = _multipolygon(union)
        pads = {}
        for key, parts in by_pad.items():
            union = shapely.union_all(np.concatenate(parts))
            if self.cleared and clip is None:
                union = shapely.intersection(union, image)
            pad = Pad(key[0], key[1], self._functions.get(key, ""), pad_net.get(key), _multipolygon(union))
            pads[pad.name] = pad
        return nets, dict(sorted(pads.items(), key=lambda kv: _natural(kv[0])))


def _multipolygon(geom):
    parts = [g for g in shapely.get_parts(geom) if isinstance(g, shapely.Polygon) and not g.is_empty]
    for g in shapely.get_parts(geom):
        if isinstance(g, (shapely.MultiPolygon, shapely.GeometryCollection)):
            parts += [p for p in shapely.get_parts(g) if isinstance(p, shapely.Polygon) and not p.is_empty]
    return MultiPolygon(parts)


def _natural(name):
    """Sort key that puts ``U4.10`` after ``U4.9``."""
    return [int(t) if t.isdigit() else t for t in re.split(r"(\d+)", name)]
