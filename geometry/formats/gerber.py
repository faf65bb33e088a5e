"""Gerber RS-274X / X2 reader for copper layers: artwork -> shapely MultiPolygon in metres.

Implements the part of the Gerber Layer Format Specification (Ucamco, revision 2023.08;
section numbers and rules cited from memory) that layout tools emit for copper:

- ``%FS`` (leading or trailing zero omission, absolute coordinates), ``%MO`` (MM, IN);
- ``%AD`` standard apertures C, R, O, P, each with an optional round hole, and macro
  apertures; ``%AM`` macros with primitives 0 (comment), 1 (circle), 2/20 (vector line),
  4 (outline), 5 (polygon), 6 (moire, deprecated), 7 (thermal), 21 (centre line),
  22 (lower-left line, deprecated), ``$n`` variables, ``$n=`` assignments, arithmetic
  ``+ - x / ( )`` with unary minus, exposure on/off applied in order, rotation about the
  macro origin;
- D01/D02/D03, G01/G02/G03, G74/G75, G36/G37 regions (several contours, arcs, cut-ins);
- ``%LP`` polarity applied in order (a clear object erases everything drawn before it),
  ``%LM``/``%LR``/``%LS`` (mirroring, then rotation, then scaling of apertures),
  ``%SR`` step and repeat, ``%AB`` block apertures (nested, with polarity);
- ``%TF`` file attributes (also as ``G04 #@! TF...`` comments); ``TO``/``TD`` object
  attributes give the copper of each net and each component pad (``.N``, ``.P``, ``.C``, see
  :mod:`copperpath.geometry.formats.x2`); ``TA`` is read and ignored; G04 comments; M02 (and M00) end
  the file.
- Deprecated codes are tolerated where they do not change the image: G54 (aperture select
  prefix), G55, G70/G71 (units when ``%MO`` is missing), G90, M01, ``%IPPOS``, ``%IR0``,
  ``%ASAXBY``, ``%MIA0B0``, ``%OFA0B0``, ``%SFA1B1``, ``%IN``, ``%LN``. Coordinate-only
  words repeat the previous D01/D02/D03.

Not supported (an :class:`~copperpath.geometry.errors.InputError` names the line): incremental
coordinates (``FS..I``, G91), negative image (``%IPNEG``), image rotation, mirroring,
offset or scaling other than the identity, draws with macro or block apertures.

Geometry conventions. Curves are replaced by chords whose sagitta is at most ``chord``
(default 1 um): circles and arcs are inscribed polygons (vertices on the true curve), so
an area is at most ``perimeter * chord`` too small. A full circle never gets more than
4096 chords (this limits only radii above about 3 m). Draws with a circle aperture are
buffered line strings (round ends and joints); draws with a rectangle, obround or polygon
aperture are the exact Minkowski sum (convex hull of the aperture at both ends of each
straight piece; arcs are swept piece by piece). Holes of apertures are ignored in draws
(the specification forbids them there). Contours of one region statement are filled each
and united; a contour that is not closed is closed with a straight line and a warning.
"""
from __future__ import annotations

import io  # noqa: F401 (used by the doctests)
import math
import os
import re
from dataclasses import dataclass, field

import numpy as np
import shapely
from shapely.errors import GEOSException
from shapely.geometry import MultiPolygon

from copperpath.geometry.errors import input_error
from copperpath.geometry.limits import (BOARD_EXTENT, MAX_FILE_BYTES, MAX_GERBER_OBJECTS, MAX_GERBER_VERTICES,
                             coordinate_ok, read_regular)
from copperpath.geometry.formats.gerber_macros import (MacroError, chord_count, compile_macro, disk_polygon,
                                            evaluate_macro, rect_polygon, regular_ngon,
                                            segments_per_quarter)
from copperpath.geometry.formats.x2 import ObjectAttributes

__all__ = ["Artwork", "read", "read_text", "DEFAULT_CHORD"]

DEFAULT_CHORD = 1e-6
"""Default chord tolerance in metres: the largest distance between a curve and its chords."""

_UNITS = {"MM": (1e-3, "mm"), "IN": (25.4e-3, "inch")}
_MAX_COPIES = 100_000       # step-and-repeat copies
_MAX_DEPTH = 64             # parentheses in macro expressions, nesting of SR/AB blocks

_TOKEN = re.compile(r"%([^%]*)%|([^%*]*)\*")
_SPACE = re.compile(r"\s*")
_OP = re.compile(r"(?:G0*(\d+))?(?:X([+-]?\d+))?(?:Y([+-]?\d+))?(?:I([+-]?\d+))?"
                 r"(?:J([+-]?\d+))?(?:D0*(\d+))?\Z")
_FS = re.compile(r"FS([LTD]?)([AI])(?:N\d)?(?:G\d)?X(\d)(\d)Y(\d)(\d)(?:D\d)?(?:M\d)?\Z")
_AD = re.compile(r"ADD0*(\d+)([A-Za-z_.$][A-Za-z0-9_.$-]*)(?:,(.*))?\Z", re.S)
_NAME = re.compile(r"[A-Za-z_.$][A-Za-z0-9_.$-]*\Z")
_SR = re.compile(r"SRX(\d+)Y(\d+)I([+-]?[\d.]+)J([+-]?[\d.]+)\Z")
_NUMBER = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)\Z")


@dataclass(frozen=True)
class Artwork:
    """The image of one Gerber file.

    Attributes
    ----------
    geometry : shapely.MultiPolygon
        Dark area of the image in metres, polarity resolved (may be empty).
    file_attributes : dict of str to tuple of str
        X2 file attributes (``%TF``) by name without the leading dot, e.g.
        ``{"FileFunction": ("Copper", "L1", "Top")}``.
    units : str or None
        Unit of the file, ``"mm"`` or ``"inch"``.
    source : str
        File name used in messages.
    warnings : tuple of str
        Non-fatal findings, one line each (``"file:line: text"``).
    nets : dict of str to shapely.MultiPolygon
        Copper of each net named by X2 object attributes (``%TO.N``), cropped like
        ``geometry``; empty when the file has none.
    pads : dict of str to copperpath.geometry.formats.x2.Pad
        Component pads (``%TO.P``) by ``"<ref>.<number>"``, whole file (not cropped).
    components : tuple of str
        Reference designators named by ``%TO.C`` or ``%TO.P``, sorted.
    object_attributes : bool
        True when the file carries X2 object attributes (``%TO``) at all.
    """

    geometry: MultiPolygon
    file_attributes: dict = field(default_factory=dict)
    units: str | None = None
    source: str = ""
    warnings: tuple[str, ...] = ()
    nets: dict = field(default_factory=dict)
    pads: dict = field(default_factory=dict)
    components: tuple[str, ...] = ()
    object_attributes: bool = False

    @property
    def file_function(self) -> tuple[str, ...] | None:
        """The ``.FileFunction`` attribute, e.g. ``("Copper", "L2", "Inr")``, or None."""
        return self.file_attributes.get("FileFunction")


def read(path_or_buffer, *, chord: float = DEFAULT_CHORD, name: str | None = None,
         clip: tuple[float, float, float, float] | None = None) -> Artwork:
    """Read a Gerber file.

    Parameters
    ----------
    path_or_buffer : str, os.PathLike or file-like
        File name, or an open text or binary file.
    chord : float, optional
        Chord tolerance in metres: the largest distance between an arc or circle and the
        straight pieces that replace it. Default 1e-6.
    name : str, optional
        Name used in messages; default the path or the buffer's ``name``.
    clip : tuple of float, optional
        ``(x0, y0, x1, y1)`` in metres: return only the image inside this rectangle. Objects
        whose bounding box misses it are dropped before the image is united, which makes a
        window of a large board fast. Default: the whole image.

    Returns
    -------
    Artwork

    Raises
    ------
    copperpath.geometry.errors.InputError
        One line ``"<file>:<line>: <what was wrong, what was expected>"``.

    Examples
    --------
    >>> art = read(io.StringIO("%FSLAX26Y26*%%MOMM*%%ADD10C,1*%D10*X0Y0D03*M02*"))
    >>> round(art.geometry.area * 1e6, 3)  # mm^2, a 1 mm disk less its chords
    0.783
    """
    text, label = load_text(path_or_buffer, name)
    return read_text(text, name=label, chord=chord, clip=clip)


def read_text(text: str, *, name: str = "<string>", chord: float = DEFAULT_CHORD,
              clip: tuple[float, float, float, float] | None = None) -> Artwork:
    """Read Gerber data given as a string; see :func:`read`."""
    if not (chord > 0 and math.isfinite(chord)):
        raise ValueError(f"chord must be a positive length in metres, got {chord!r}")
    return _Reader(name, chord, clip).run(text)


def load_text(path_or_buffer, name=None):
    """Return ``(text, label)`` for a path or an open file (bytes decoded as UTF-8).

    Only regular files are read, and at most :data:`copperpath.geometry.limits.MAX_FILE_BYTES`.
    """
    if isinstance(path_or_buffer, (str, os.PathLike)):
        label = name or str(path_or_buffer)
        data = read_regular(path_or_buffer, label, MAX_FILE_BYTES)
    else:
        label = name or str(getattr(path_or_buffer, "name", "<buffer>"))
        data = path_or_buffer.read(MAX_FILE_BYTES + 1)
        if len(data) > MAX_FILE_BYTES:
            raise input_error(label, None, f"more than the limit of {MAX_FILE_BYTES} bytes")
    if isinstance(data, bytes):
        data = data.decode("utf-8", errors="replace")
    nul = data.find("\0")
    if nul >= 0:
        raise input_error(label, None, f"binary data (a NUL byte at offset {nul}); expected a text file")
    return data, label


# --------------------------------------------------------------------------- tokens

def _words(text):
    """Yield ``(line, word, extended)``; an extended block yields a list of (line, word)."""
    pos, line, end = 0, 1, len(text)
    while True:
        m = _SPACE.match(text, pos)
        line += text.count("\n", pos, m.end())
        pos = m.end()
        if pos >= end:
            return
        m = _TOKEN.match(text, pos)
        if m is None:
            yield line, text[pos:pos + 40].split("\n")[0], None
            return
        if m.group(1) is not None:
            body = m.group(1)
            parts = body.split("*")
            if parts[-1].strip():
                yield line, parts[-1].strip()[:40], None
                return
            items, wline = [], line
            for part in parts[:-1]:
                lead = len(part) - len(part.lstrip())
                items.append((wline + part.count("\n", 0, lead), part.replace("\r", "").replace("\n", "").strip()))
                wline += part.count("\n")
            yield line, items, True
        else:
            word = m.group(2)
            lead = len(word) - len(word.lstrip())
            yield line + word.count("\n", 0, lead), word.replace("\r", "").replace("\n", "").strip(), False
        line += m.group(0).count("\n")
        pos = m.end()


# --------------------------------------------------------------------------- curves

def _arc_points(start, end, center, cw, tol, full):
    """Points from ``start`` to ``end`` around ``center`` (radius varies linearly)."""
    (sx, sy), (ex, ey), (cx, cy) = start, end, center
    r0, r1 = math.hypot(sx - cx, sy - cy), math.hypot(ex - cx, ey - cy)
    if r0 == 0 or r1 == 0:
        return np.array([start, end], dtype=float)
    a0, a1 = math.atan2(sy - cy, sx - cx), math.atan2(ey - cy, ex - cx)
    sweep = ((a0 - a1) if cw else (a1 - a0)) % (2 * math.pi)
    if full and start == end:
        sweep = 2 * math.pi
    n = chord_count(max(r0, r1), sweep, tol)
    t = np.linspace(0.0, 1.0, n + 1)
    ang = a0 + (-sweep if cw else sweep) * t
    rad = r0 + (r1 - r0) * t
    pts = np.column_stack([cx + rad * np.cos(ang), cy + rad * np.sin(ang)])
    pts[0], pts[-1] = start, end
    return pts


def _single_quadrant_center(start, end, i, j, cw):
    """Pick the centre of a G74 arc among start + (+-I, +-J); None if none spans <= 90 deg."""
    best = None
    for sx in (1, -1):
        for sy in (1, -1):
            c = (start[0] + sx * abs(i), start[1] + sy * abs(j))
            a0 = math.atan2(start[1] - c[1], start[0] - c[0])
            a1 = math.atan2(end[1] - c[1], end[0] - c[0])
            sweep = ((a0 - a1) if cw else (a1 - a0)) % (2 * math.pi)
            if sweep > math.pi / 2 + 1e-6:
                continue
            r0 = math.hypot(start[0] - c[0], start[1] - c[1])
            err = abs(r0 - math.hypot(end[0] - c[0], end[1] - c[1]))
            if err > 0.1 * r0:
                continue
            if best is None or err < best[0]:
                best = (err, c)
    return None if best is None else best[1]


# --------------------------------------------------------------------------- objects

class _Run:
    """Objects of one polarity, collected as raw data and turned into geometry in bulk."""

    def __init__(self, dark, tag=None):
        self.dark = dark
        self.tag = tag          # (net, pad) of the X2 object attributes, see copperpath.geometry.formats.x2
        self.flashes = {}       # template key -> (geometry, list of (x, y))
        self.lines = {}         # radius -> list of (k, 2) point arrays
        self.hulls = []         # (k, 2) point clouds; each convex hull is one object
        self.contours = []      # (k, 2) closed rings
        self.extra = []         # arrays of finished geometries

    def __bool__(self):
        return bool(self.flashes or self.lines or self.hulls or self.contours or self.extra)

    def geometries(self, tol):
        parts = list(self.extra)
        for template, xy in self.flashes.values():
            parts.append(_translate_many(template, np.asarray(xy, dtype=float)))
        for r, paths in self.lines.items():
            lines = _ragged(shapely.linestrings, paths)
            parts.append(shapely.buffer(lines, r, quad_segs=segments_per_quarter(r, tol)))
        if self.hulls:
            parts.append(shapely.convex_hull(_ragged(shapely.multipoints, self.hulls)))
        if self.contours:
            rings = [shapely.Polygon(c) for c in self.contours]
            parts.append(shapely.make_valid(np.array(rings, dtype=object), method="structure", keep_collapsed=False))
        return _polygonal(np.concatenate(parts) if parts else np.empty(0, dtype=object))


def _ragged(make, arrays):
    coords = np.concatenate(arrays)
    index = np.repeat(np.arange(len(arrays)), [len(a) for a in arrays])
    return make(coords, indices=index)


def _translate_many(template, xy):
    """Copies of ``template`` moved to each row of ``xy`` (one vectorised transform)."""
    n = shapely.count_coordinates(template)
    if n == 0 or len(xy) == 0:
        return np.empty(0, dtype=object)
    copies = np.full(len(xy), template, dtype=object)
    offsets = np.repeat(xy, n, axis=0)
    return shapely.transform(copies, lambda c: c + offsets)


def _polygonal(geoms):
    """Keep the non-empty polygonal parts of an array of geometries."""
    if len(geoms) == 0:
        return geoms
    parts = shapely.get_parts(geoms)
    keep = np.isin(shapely.get_type_id(parts), (3, 6)) & ~shapely.is_empty(parts)
    return parts[keep]


def _affine(geoms, matrix, offset):
    return shapely.transform(geoms, lambda c: c @ matrix.T + offset)


def _append(stream, dark, geoms):
    """Append objects of one polarity, merging with the previous item of the same polarity."""
    if len(geoms) == 0:
        return
    if stream and stream[-1][0] == dark:
        stream[-1] = (dark, np.concatenate([stream[-1][1], geoms]))
    else:
        stream.append((dark, geoms))


def _resolve(stream, clip=None):
    """Apply the objects in order (dark adds, clear erases) and return a MultiPolygon.

    A clear run is united once and cut only from the earlier dark objects whose bounding
    boxes meet it; the dark objects are united at the end. With ``clip`` (x0, y0, x1, y1)
    objects whose bounding box misses that rectangle are dropped first and the result is
    cropped to it.
    """
    dark_geoms, boxes, pending = np.empty(0, dtype=object), np.empty((0, 4)), []
    if clip is not None:
        stream = [(dark, geoms[_meets(shapely.bounds(geoms), clip)]) for dark, geoms in stream]
    for dark, geoms in stream:
        if dark:
            pending.append(geoms)
            continue
        if pending:
            dark_geoms = np.concatenate([dark_geoms] + pending)
            boxes = np.concatenate([boxes] + [shapely.bounds(g) for g in pending])
            pending = []
        clear = shapely.union_all(geoms)
        if clear.is_empty or len(dark_geoms) == 0:
            continue
        x0, y0, x1, y1 = clear.bounds
        near = np.nonzero((boxes[:, 0] <= x1) & (boxes[:, 2] >= x0) & (boxes[:, 1] <= y1) & (boxes[:, 3] >= y0))[0]
        if len(near) == 0:
            continue
        shapely.prepare(clear)
        hit = near[shapely.intersects(dark_geoms[near], clear)]
        dark_geoms[hit] = shapely.difference(dark_geoms[hit], clear)
    dark_geoms = _polygonal(np.concatenate([dark_geoms] + pending))
    if len(dark_geoms) == 0:
        return MultiPolygon()
    union = shapely.union_all(dark_geoms)
    if clip is not None:
        union = shapely.intersection(union, shapely.box(*clip))
    return MultiPolygon(list(_polygonal(np.array([union], dtype=object))))


def _meets(boxes, clip):
    """Which rows ``(x0, y0, x1, y1)`` of ``boxes`` meet the rectangle ``clip``."""
    x0, y0, x1, y1 = clip
    if len(boxes) == 0:
        return np.zeros(0, dtype=bool)
    return (boxes[:, 0] <= x1) & (boxes[:, 2] >= x0) & (boxes[:, 1] <= y1) & (boxes[:, 3] >= y0)


@dataclass
class _Aperture:
    kind: str                       # "C", "R", "O", "P", "macro" or "block"
    shape: object = None            # geometry at the origin, metres (None: a block with polarity)
    radius: float | None = None     # circle apertures: radius for round draws
    outline: np.ndarray | None = None   # convex outline for rectangle/obround/polygon draws
    stream: list | None = None      # blocks with clear objects: [(dark, geometries)]


@dataclass
class _Context:
    kind: str                       # "top", "SR" or "AB"
    data: tuple = ()
    line: int = 0
    stream: list = field(default_factory=list)
    run: _Run | None = None


# --------------------------------------------------------------------------- reader

class _Reader:
    """Interpreter state of one file; :meth:`run` returns the Artwork."""

    def __init__(self, name, chord, clip=None):
        self.name, self.tol, self.clip = name, chord, clip
        self.unit = None                # metres per file unit
        self.unit_name = None
        self.fs = None                  # (trailing, xint, xdec, yint, ydec)
        self.apertures, self.macros, self.templates = {}, {}, {}
        self.current = None             # selected D-code
        self.x = self.y = 0.0
        self.interp = 1                 # 1 linear, 2 clockwise, 3 counterclockwise
        self.multi = None               # True: G75, False: G74, None: not set
        self.last_op = None
        self.dark = True
        self.mirror, self.rotation, self.scale = "N", 0.0, 1.0
        self.region = None              # list of contours while in G36 mode
        self.contour = None
        self.stack = [_Context("top")]
        self.attrs, self.warnings = {}, []
        self.objects = ObjectAttributes()
        self.line = 0
        self.n_objects = 0              # graphics objects made, copies included
        self.vertices = 0               # their polygon vertices (about)

    def error(self, line, message):
        return input_error(f"{self.name}:{line}", None, message)

    def warn(self, line, message):
        self.warnings.append(f"{self.name}:{line}: {message}")

    def run(self, text):
        ended = False
        for line, word, ext in _words(text):
            self.line = line
            if ext is None:
                raise self.error(line, f"unterminated data {word!r}: every command must end with '*' "
                                       "and extended commands must be enclosed in '%...%'")
            try:
                if ext:
                    self.extended(line, word)
                elif self.word(line, word):
                    ended = True
                    break
            except (ValueError, OverflowError, ZeroDivisionError, GEOSException) as exc:
                raise self.error(line, f"cannot interpret the command: {exc}") from None
        if self.region is not None:
            raise self.error(self.line, "region (G36) not closed by G37 at the end of the file")
        while len(self.stack) > 1:
            ctx = self.stack[-1]
            if ctx.kind == "AB":
                raise self.error(ctx.line, f"block aperture D{ctx.data[0]} not closed by %AB*% at the end of the file")
            self.close_sr(self.line)
        if not ended:
            self.warn(self.line, "file does not end with M02")
        top = self.stack[0]
        self.flush(top)
        try:
            image = _resolve(top.stream, self.clip)
        except GEOSException as exc:
            raise self.error(self.line, f"the geometry engine could not unite the image: {exc}") from None
        if not image.is_empty and not all(coordinate_ok(b) for b in image.bounds):
            raise self.error(self.line, "the image reaches beyond the board extent "
                                        f"({BOARD_EXTENT * 1e3:g} mm from the origin in x and y)")
        nets, pads = self.objects.finish(image, self.clip)
        return Artwork(image, dict(self.attrs), self.unit_name, self.name, tuple(self.warnings),
                       nets=nets, pads=pads, components=tuple(sorted(self.objects.components)),
                       object_attributes=self.objects.seen)

    # ----------------------------------------------------------- normal words

    def word(self, line, word):
        """Execute one word; return True at the end of the file (M02)."""
        if not word:
            return False
        if word[0] == "G" and re.match(r"G0*4(?!\d)", word):
            m = re.search(r"#@!\s*(T[FAOD])(.*)", word)
            if m and m.group(1) == "TF":
                self.attribute(line, "TF" + m.group(2).strip())
            return False
        if word[0] == "M":
            if word in ("M02", "M2", "M00", "M0"):
                return True
            if word in ("M01", "M1"):
                return False
            raise self.error(line, f"unknown command {word[:40]!r}; expected M02 at the end of the file")
        m = _OP.match(word)
        if m is None:
            raise self.error(line, f"cannot parse {word[:40]!r}; expected G/X/Y/I/J/D codes such as 'X100Y200D01'")
        g, xs, ys, is_, js, d = m.groups()
        if g is not None:
            self.g_code(line, int(g))
        if d is not None and int(d) >= 10:
            if xs or ys or is_ or js:
                raise self.error(line, f"aperture selection D{int(d)} must not carry coordinates")
            code = int(d)
            if code not in self.apertures:
                raise self.error(line, f"aperture D{code} used before definition")
            self.current = code
            return False
        if d is None and xs is None and ys is None and is_ is None and js is None:
            return False
        if d is None:
            if self.last_op is None:
                raise self.error(line, f"coordinates without D01/D02/D03 in {word[:40]!r}")
            op = self.last_op
        else:
            op = int(d)
            if op not in (1, 2, 3):
                raise self.error(line, f"invalid D-code D{op}; expected D01, D02, D03 or D10 and up")
        self.last_op = op
        x = self.coord(line, xs, 1) if xs is not None else self.x
        y = self.coord(line, ys, 3) if ys is not None else self.y
        i = self.coord(line, is_, 1) if is_ is not None else 0.0
        j = self.coord(line, js, 3) if js is not None else 0.0
        if op == 1:
            self.interpolate(line, x, y, i, j)
        elif op == 2:
            if self.region is not None:
                self.end_contour(line)
        else:
            if self.region is not None:
                raise self.error(line, "flash (D03) inside a region (G36...G37)")
            self.flash(line, x, y)
        self.x, self.y = x, y
        return False

    def g_code(self, line, g):
        if g in (1, 2, 3):
            self.interp = g
        elif g == 74:
            self.multi = False
        elif g == 75:
            self.multi = True
        elif g == 36:
            if self.region is not None:
                raise self.error(line, "G36 inside a region; expected G37 first")
            self.region, self.contour = [], None
        elif g == 37:
            if self.region is None:
                raise self.error(line, "G37 without a preceding G36")
            self.end_contour(line)
            if self.region:
                self.current_run().contours.extend(self.region)
            self.region = None
        elif g in (54, 55, 90):
            pass
        elif g in (70, 71):
            if self.unit is None:
                self.unit, self.unit_name = (25.4e-3, "inch") if g == 70 else (1e-3, "mm")
        elif g == 91:
            raise self.error(line, "incremental coordinates (G91) are not supported; expected absolute (G90)")
        else:
            raise self.error(line, f"unknown or unsupported G-code G{g:02d}")

    def coord(self, line, text, axis):
        if self.fs is None:
            raise self.error(line, "coordinate data before the format specification %FS")
        if self.unit is None:
            raise self.error(line, "coordinate data before the unit %MO (MM or IN)")
        n_int, n_dec = self.fs[axis], self.fs[axis + 1]
        if self.fs[0]:
            digits = text.lstrip("+-")
            if len(digits) > n_int + n_dec:
                raise self.error(line, f"coordinate {text} has more than the {n_int + n_dec} digits of %FS")
            value = int(digits.ljust(n_int + n_dec, "0")) * (-1 if text.startswith("-") else 1)
        else:
            value = int(text)
        value = value * 10.0 ** -n_dec * self.unit
        if not coordinate_ok(value):
            raise self.error(line, f"coordinate {text[:20]} lies outside the board extent "
                                   f"({BOARD_EXTENT * 1e3:g} mm from the origin)")
        return value

    # ----------------------------------------------------------- graphics objects

    def current_run(self):
        ctx = self.stack[-1]
        tag = self.objects.tag
        if ctx.run is None or ctx.run.dark != self.dark or ctx.run.tag != tag:
            self.flush(ctx)
            ctx.run = _Run(self.dark, tag)
            self.objects.cleared |= not self.dark
        return ctx.run

    def flush(self, ctx):
        if ctx.run:
            geoms = ctx.run.geometries(self.tol)
            _append(ctx.stream, ctx.run.dark, geoms)
            if ctx.run.dark and ctx is self.stack[0]:
                self.objects.add(ctx.run.tag, geoms)
        ctx.run = None

    def path(self, line, x, y, i, j):
        """Points of the segment from the current point to (x, y)."""
        start, end = (self.x, self.y), (x, y)
        if self.interp == 1:
            return np.array([start, end], dtype=float)
        cw = self.interp == 2
        if self.multi is False or self.multi is None:
            if start == end:
                return np.array([start, end], dtype=float)
            center = _single_quadrant_center(start, end, i, j, cw)
            if center is None:
                raise self.error(line, "single-quadrant arc (G74) spans more than 90 degrees; "
                                       "expected G75 for larger arcs")
            return _arc_points(start, end, center, cw, self.tol, False)
        return _arc_points(start, end, (self.x + i, self.y + j), cw, self.tol, True)

    def interpolate(self, line, x, y, i, j):
        pts = self.path(line, x, y, i, j)
        if self.region is not None:
            if self.contour is None:
                self.contour = [pts[:1]]
            self.contour.append(pts[1:])
            return
        ap = self.selected(line, "D01")
        if ap.radius is not None:
            r = ap.radius * self.scale
            if r > 0:
                self.budget(line, 1, len(pts) + 4 * segments_per_quarter(r, self.tol))
                self.current_run().lines.setdefault(r, []).append(pts)
        elif ap.outline is not None:
            outline = ap.outline @ self.matrix().T
            self.budget(line, len(pts) - 1, (len(pts) - 1) * 2 * len(outline))
            run = self.current_run()
            for a, b in zip(pts[:-1], pts[1:]):
                run.hulls.append(np.concatenate([outline + a, outline + b]))
        else:
            raise self.error(line, f"draw (D01) with aperture D{self.current}, a {ap.kind} aperture; "
                                   "expected a circle, rectangle, obround or polygon aperture")

    def end_contour(self, line):
        if self.contour is None:
            return
        pts = np.concatenate(self.contour)
        self.contour = None
        if len(pts) < 3:
            return
        self.budget(line, 1, len(pts))
        if np.any(pts[0] != pts[-1]):
            gap = float(np.hypot(*(pts[0] - pts[-1])))
            if gap > 10 * self.tol:
                self.warn(line, f"region contour not closed (gap {gap * 1e3:.4g} mm); closed with a straight line")
            pts = np.vstack([pts, pts[:1]])
        self.region.append(pts)

    def selected(self, line, what):
        if self.current is None:
            raise self.error(line, f"{what} before any aperture was selected; expected a D10-style selection first")
        return self.apertures[self.current]

    def matrix(self):
        """Aperture transformation: mirror, then rotate, then scale."""
        mx = -1.0 if "X" in self.mirror else 1.0
        my = -1.0 if "Y" in self.mirror else 1.0
        a = math.radians(self.rotation)
        c, s = math.cos(a), math.sin(a)
        return self.scale * np.array([[c, -s], [s, c]]) @ np.diag([mx, my])

    def flash(self, line, x, y):
        ap = self.selected(line, "flash (D03)")
        if ap.shape is None:
            self.flash_block(ap, x, y)
            return
        key = (self.current, self.mirror, self.rotation, self.scale)
        template = self.templates.get(key)
        if template is None:
            template = ap.shape
            if key[1:] != ("N", 0.0, 1.0):
                template = _affine(template, self.matrix(), np.zeros(2))
            template = (template, shapely.count_coordinates(template))
            self.templates[key] = template
        template, n_vertices = template
        if template.is_empty:
            return
        self.budget(line, 1, n_vertices)
        self.current_run().flashes.setdefault(key, (template, []))[1].append((x, y))

    def flash_block(self, ap, x, y):
        ctx = self.stack[-1]
        self.flush(ctx)
        self.budget(self.line, sum(len(g) for _, g in ap.stream),
                    sum(int(shapely.count_coordinates(g)) for _, g in ap.stream))
        m, off = self.matrix(), np.array([x, y])
        for dark, geoms in ap.stream:
            placed = _affine(geoms, m, off)
            _append(ctx.stream, dark if self.dark else not dark, placed)
            if ctx is self.stack[0] and dark == self.dark:
                self.objects.add(self.objects.tag, placed)
            self.objects.cleared |= dark != self.dark

    # ----------------------------------------------------------- extended commands

    def extended(self, line, items):
        if items and items[0][1].startswith("AM"):
            self.macro(items)
            return
        for wline, word in items:
            self.line = wline
            if word:
                self.command(wline, word)

    def command(self, line, word):
        head = word[:2]
        if head == "FS":
            m = _FS.match(word)
            if m is None:
                raise self.error(line, f"malformed {word[:40]!r}; expected e.g. %FSLAX26Y26*%")
            if m.group(2) == "I":
                raise self.error(line, "incremental coordinates (FS..I) are not supported; expected FSLA")
            self.fs = (m.group(1) == "T",) + tuple(int(m.group(k)) for k in range(3, 7))
        elif head == "MO":
            if word[2:] not in _UNITS:
                raise self.error(line, f"unknown unit {word[2:]!r}; expected %MOMM*% or %MOIN*%")
            self.unit, self.unit_name = _UNITS[word[2:]]
        elif head == "AD":
            self.define(line, word)
        elif head == "LP":
            if word not in ("LPD", "LPC"):
                raise self.error(line, f"malformed {word[:40]!r}; expected %LPD*% or %LPC*%")
            self.dark = word == "LPD"
        elif head == "LM":
            if word[2:] not in ("N", "X", "Y", "XY"):
                raise self.error(line, f"malformed {word[:40]!r}; expected %LMN*%, %LMX*%, %LMY*% or %LMXY*%")
            self.mirror = word[2:]
        elif head == "LR":
            self.rotation = self.number(line, word[2:], "rotation in degrees")
        elif head == "LS":
            self.scale = self.number(line, word[2:], "scale factor")
            if self.scale <= 0:
                raise self.error(line, f"scale factor must be positive, got {word[2:]}")
        elif head == "SR":
            self.step_repeat(line, word)
        elif head == "AB":
            self.block(line, word)
        elif head == "TF":
            self.attribute(line, word)
        elif head == "TO":
            self.objects.set(word[2:].split(","))
        elif head == "TD":
            self.objects.delete(word[2:])
        elif head in ("TA", "IN", "LN"):
            pass
        elif not self.deprecated_identity(word):
            raise self.error(line, f"unknown or unsupported extended command %{word[:40]}*%")

    @staticmethod
    def deprecated_identity(word):
        head, rest = word[:2], word[2:]
        if head == "IP":
            return rest == "POS"
        if head == "IR":
            return rest == "0"
        if head == "AS":
            return rest == "AXBY"
        if head == "MI":
            return re.fullmatch(r"(A0)?(B0)?", rest) is not None
        if head == "OF":
            return re.fullmatch(r"(A[+-]?0*\.?0*)?(B[+-]?0*\.?0*)?", rest) is not None
        if head == "SF":
            return re.fullmatch(r"(A1(\.0*)?)?(B1(\.0*)?)?", rest) is not None
        return False

    def number(self, line, text, what):
        if not _NUMBER.match(text):
            raise self.error(line, f"expected a number ({what}), got {text[:40]!r}")
        value = float(text)
        if not abs(value) < 1e9:
            raise self.error(line, f"{what} out of range: {text[:40]}")
        return value

    def attribute(self, line, word):
        fields = word[2:].split(",")
        name = fields[0].lstrip(".")
        if not name:
            raise self.error(line, f"malformed attribute {word[:40]!r}; expected %TF.Name,value*%")
        self.attrs[name] = tuple(f.strip() for f in fields[1:])

    def macro(self, items):
        line, head = items[0]
        name = head[2:]
        if not _NAME.match(name):
            raise self.error(line, f"invalid macro name {name[:40]!r}")
        try:
            self.macros[name] = compile_macro(items[1:])
        except MacroError as exc:
            raise self.error(exc.line, f"macro {name}: {exc}") from None

    def define(self, line, word):
        m = _AD.match(word)
        if m is None:
            raise self.error(line, f"malformed aperture definition {word[:40]!r}; expected e.g. %ADD10C,0.5*%")
        code, kind, args = int(m.group(1)), m.group(2), m.group(3)
        if code < 10:
            raise self.error(line, f"aperture number D{code} is reserved; expected D10 or higher")
        if self.unit is None:
            raise self.error(line, "aperture definition before the unit %MO (MM or IN)")
        params = [self.number(line, p, f"D{code} parameter") for p in args.split("X")] if args else []
        if code in self.apertures:
            self.warn(line, f"aperture D{code} redefined")
        if kind in ("C", "R", "O", "P"):
            self.apertures[code] = self.standard(line, code, kind, params)
        elif kind in self.macros:
            try:
                shape = evaluate_macro(self.macros[kind], params, self.unit, self.tol)
            except MacroError as exc:
                raise self.error(line, f"aperture D{code} (macro {kind}, line {exc.line}): {exc}") from None
            self.apertures[code] = _Aperture("macro", shape)
        else:
            raise self.error(line, f"aperture macro {kind!r} used before definition (D{code})")
        shape = self.apertures[code].shape
        if not shape.is_empty and not all(abs(b) <= BOARD_EXTENT for b in shape.bounds):
            raise self.error(line, f"aperture D{code} is larger than the board extent "
                                   f"({BOARD_EXTENT * 1e3:g} mm)")
        self.templates = {k: v for k, v in self.templates.items() if k[0] != code}

    def standard(self, line, code, kind, p):
        counts = {"C": (1, 2), "R": (2, 3), "O": (2, 3), "P": (2, 4)}[kind]
        if not counts[0] <= len(p) <= counts[1]:
            raise self.error(line, f"aperture D{code} type {kind} takes {counts[0]} to {counts[1]} "
                                   f"parameters, got {len(p)}")
        u, tol = self.unit, self.tol
        hole = p[counts[0] if kind != "P" else 3] * u if len(p) > (counts[0] if kind != "P" else 3) else 0.0
        if any(v < 0 for v in p[:2]) or hole < 0:
            raise self.error(line, f"aperture D{code}: sizes must not be negative, got {p}")
        if kind == "C":
            d = p[0] * u
            ap = _Aperture("C", disk_polygon(0, 0, d / 2, tol), radius=d / 2)
        elif kind == "R":
            w, h = p[0] * u, p[1] * u
            ap = _Aperture("R", rect_polygon(0, 0, w, h), outline=np.array([[-w, -h], [w, -h], [w, h], [-w, h]]) / 2)
        elif kind == "O":
            w, h = p[0] * u, p[1] * u
            r = min(w, h) / 2
            half = np.array([max(w - h, 0), max(h - w, 0)]) / 2
            if r > 0:
                shape = shapely.LineString([-half, half]).buffer(r, quad_segs=segments_per_quarter(r, tol))
            else:
                shape = shapely.Polygon()
            ap = _Aperture("O", shape, outline=shapely.get_coordinates(shape) if r > 0 else None)
        else:
            n = p[1]
            if n != int(n) or not 3 <= n <= 12:
                raise self.error(line, f"aperture D{code} type P needs 3 to 12 vertices, got {n:g}")
            d = p[0] * u
            shape = regular_ngon(0, 0, d, int(n), p[2] if len(p) > 2 else 0.0)
            ap = _Aperture("P", shape, outline=shapely.get_coordinates(shape)[:-1])
        if hole > 0:
            ap.shape = ap.shape.difference(disk_polygon(0, 0, hole / 2, tol))
        return ap

    # ----------------------------------------------------------- blocks

    def push(self, line, kind, data):
        if len(self.stack) > _MAX_DEPTH:
            raise self.error(line, "SR/AB blocks nested too deeply")
        if self.region is not None:
            raise self.error(line, f"%{kind}% inside a region (G36...G37)")
        self.flush(self.stack[-1])
        self.stack.append(_Context(kind, data, line))

    def step_repeat(self, line, word):
        if self.stack[-1].kind == "SR":
            self.close_sr(line)
        if word == "SR":
            return
        m = _SR.match(word)
        if m is None:
            raise self.error(line, f"malformed {word[:40]!r}; expected e.g. %SRX3Y2I5.0J4.0*% or %SR*%")
        nx, ny = int(m.group(1)), int(m.group(2))
        if nx < 1 or ny < 1 or nx * ny > _MAX_COPIES:
            raise self.error(line, f"step and repeat counts X{nx} Y{ny} out of range (1 to {_MAX_COPIES} copies)")
        if self.unit is None:
            raise self.error(line, "step and repeat before the unit %MO (MM or IN)")
        dx = self.number(line, m.group(3), "step I") * self.unit
        dy = self.number(line, m.group(4), "step J") * self.unit
        self.push(line, "SR", (nx, ny, dx, dy))

    def close_sr(self, line):
        if self.region is not None:
            raise self.error(line, "%SR% inside a region (G36...G37)")
        ctx = self.stack.pop()
        self.flush(ctx)
        parent = self.stack[-1]
        nx, ny, dx, dy = ctx.data
        copies = nx * ny - 1
        self.budget(line, copies * sum(len(g) for _, g in ctx.stream),
                    copies * sum(int(shapely.count_coordinates(g)) for _, g in ctx.stream))
        offsets = [(ix * dx, iy * dy) for iy in range(ny) for ix in range(nx)]
        if all(dark for dark, _ in ctx.stream):
            for _dark, geoms in ctx.stream:     # one polarity: order of copies does not matter
                _append(parent.stream, True, np.concatenate(
                    [_affine(geoms, np.eye(2), np.array(o)) for o in offsets]))
            return
        for o in offsets:
            for dark, geoms in ctx.stream:
                _append(parent.stream, dark, _affine(geoms, np.eye(2), np.array(o)))

    def budget(self, line, objects, vertices):
        """Count new objects (copies included); refuse beyond the reader limits."""
        self.n_objects += objects
        self.vertices += vertices
        if self.n_objects > MAX_GERBER_OBJECTS:
            raise self.error(line, f"more than {MAX_GERBER_OBJECTS} graphics objects (after step and "
                                   "repeat and block flashes); expected a board-sized image")
        if self.vertices > MAX_GERBER_VERTICES:
            raise self.error(line, f"more than {MAX_GERBER_VERTICES} polygon vertices (after step and "
                                   "repeat and block flashes); expected a board-sized image")

    def block(self, line, word):
        if word == "AB":
            ctx = self.stack[-1]
            if ctx.kind != "AB":
                raise self.error(line, "%AB*% without an open block aperture")
            if self.region is not None:
                raise self.error(line, "%AB% inside a region (G36...G37)")
            self.flush(ctx)
            self.stack.pop()
            code = ctx.data[0]
            if all(dark for dark, _ in ctx.stream):
                geoms = [g for _, g in ctx.stream]
                shape = shapely.union_all(np.concatenate(geoms)) if geoms else shapely.Polygon()
                self.apertures[code] = _Aperture("block", shape)
            else:
                self.apertures[code] = _Aperture("block", None, stream=ctx.stream)
            self.templates = {k: v for k, v in self.templates.items() if k[0] != code}
            return
        m = re.fullmatch(r"ABD0*(\d+)", word)
        if m is None or int(m.group(1)) < 10:
            raise self.error(line, f"malformed {word[:40]!r}; expected %ABD10*% (D10 or higher) or %AB*%")
        self.push(line, "AB", (int(m.group(1)),))
