"""Read a case file (TOML, DESIGN.md section 4) into a :class:`~geometry.model.Case` in SI units.

Every problem raises :class:`~geometry.errors.InputError` with one line
``<file>: <table/item>: <what was wrong and what was expected>``; numbers are quoted in the
units of the file that holds them, items are counted from 1 in their file or named by
their ``name``.

Decisions not spelled out in the design:

- ``units`` of a variant (``extends``) that does not state its own is inherited from its
  base; each file's lengths are converted with that file's unit.
- Default names are ``<table><k>`` (``via3``: the third via of the merged list, skipping
  names already taken); ``remove = true`` may name an item by its default name.
- Via defaults: ``pad = drill + 0.3 mm``; ``plating = 0.025 mm`` (25 um, about the
  minimum average hole-wall copper of IPC-6012 class 3, from memory); span: all layers.
- A via or drill ``layers`` list names the span's layers; the span is every layer from the
  highest to the lowest one named.
- Without ``[mesh]`` (or for a key it leaves out) the sizes are chosen from the geometry and
  the top frequency (:mod:`geometry.mesh_defaults`); the note says how. A layer's
  ``sublayers`` defaults to ``"auto"`` (chosen by the solver from the top solved frequency).
- ``[sweep]`` ``start/stop/points`` is log-spaced and needs ``start > 0``; frequencies are
  sorted and repeated values dropped. Without ``[sweep]`` the sweep is DC only.
- ``[circuit]``: ``current`` + ``rise_time`` set ``di_dt = current / rise_time``; ``port``
  defaults to the only port.
- Fabrication data (see :mod:`geometry.formats.board` for holes, slots and spans): a
  layer's ``artwork`` Gerber file adds its copper to that layer; a ``[[drill]]`` file adds
  a via for each plated hole (span: the table's ``layers``, else the file's X2 span, else
  all layers); ``[fabrication] source`` gives copper layer ``n`` to the ``n``-th layer from
  the top unless that layer names its own artwork, and vias for the plated holes of its
  drill files (a drill file that a ``[[drill]]`` table names is read only once). What went
  where is in ``Case.notes``; the readers' findings and skipped holes in ``Case.warnings``.
  Errors in these files name the file and line.
"""
from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from geometry import shapes
from geometry.connectivity import bodies, floating_islands
from geometry.errors import input_error
from geometry.formats import board
from geometry.formats import read_artwork as read_gerber
from geometry.formats import read_drills
from geometry.formats.fabrication import scan
from geometry.layout import CopperShape, build_layout, via_array
from geometry.mesh_defaults import default_mesh
from geometry.model import (Case, CircuitOptions, Layer, Lumped, MeshOptions, Port,
                            SolverOptions, Terminal, Via)
from geometry.units import UNITS, unit_scale

ARRAY_TABLES = ("layer", "copper", "via", "drill", "terminal", "port", "lumped")
SINGLE_TABLES = ("sweep", "mesh", "window", "solver", "circuit", "fabrication")
TOP_KEYS = ("title", "units", "extends") + ARRAY_TABLES + SINGLE_TABLES

#: Speed of light in vacuum, m/s (exact, SI 2019).
C0 = 299_792_458.0
#: Relative permittivity of FR-4 used for the quasi-static check (about 4.5, common practice).
EPS_R_FR4 = 4.5
#: Default barrel plating in metres (see the module docstring).
DEFAULT_PLATING = 25e-6
#: Default pad diameter minus drill diameter in metres.
DEFAULT_ANNULUS = 0.3e-3
#: Island warnings written per layer before they are summarised.
MAX_ISLAND_WARNINGS = 10

_MISSING = object()


# ----------------------------------------------------------------------------- items
@dataclass
class _Item:
    """One table of one file, before conversion."""

    table: str
    data: dict
    source: Path
    unit: str
    index: int = 0
    name: str | None = None
    named: bool = False

    @property
    def label(self):
        if self.table in SINGLE_TABLES:
            return f"[{self.table}]"
        return f"[[{self.table}]] '{self.name}'" if self.named else f"[[{self.table}]] #{self.index}"


def _show(value):
    """A TOML value as the user wrote it (about)."""
    if isinstance(value, str):
        return repr(value)
    if isinstance(value, bool):
        return "true" if value else "false"
    return str(value)


def _is_number(v):
    return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)


class _Fields:
    """Typed access to one table's keys; every failure is an InputError naming the item."""

    def __init__(self, item, allowed):
        self.item, self.data = item, item.data
        self.scale = unit_scale(item.unit)
        unknown = [k for k in self.data if k not in allowed]
        if unknown:
            raise self.fail(f"unknown key '{unknown[0]}', expected one of "
                            + ", ".join(f"'{k}'" for k in allowed))

    def fail(self, message):
        return input_error(self.item.source, self.item.label, message)

    def show(self, si_length):
        """A length in metres quoted in the file's unit."""
        return f"{si_length / self.scale:g}"

    def raw(self, key, default=_MISSING):
        if key in self.data:
            return self.data[key]
        if default is _MISSING:
            raise self.fail(f"missing required key '{key}'")
        return default

    def number(self, key, default=_MISSING, *, lower=None, strict=True, what="a number"):
        if key not in self.data:
            return self.raw(key, default)
        v = self.data[key]
        ok = _is_number(v) and (lower is None or (v > lower if strict else v >= lower))
        if not ok:
            raise self.fail(f"'{key}' must be {what}, got {_show(v)}")
        return float(v)

    def length(self, key, default=_MISSING, *, positive=False):
        """A length in metres; ``default`` is already in metres."""
        if key not in self.data:
            return self.raw(key, default)
        what = "a positive length" if positive else "a length (a number)"
        return self.number(key, lower=0 if positive else None, what=what) * self.scale

    def integer(self, key, default=_MISSING, *, lower=1):
        if key not in self.data:
            return self.raw(key, default)
        v = self.data[key]
        if not (isinstance(v, int) and not isinstance(v, bool) and v >= lower):
            raise self.fail(f"'{key}' must be an integer >= {lower}, got {_show(v)}")
        return v

    def string(self, key, default=_MISSING, choices=None):
        if key not in self.data:
            return self.raw(key, default)
        v = self.data[key]
        if not isinstance(v, str) or (choices and v not in choices):
            expected = ("one of " + ", ".join(f"'{c}'" for c in choices)) if choices else "a string"
            raise self.fail(f"'{key}' must be {expected}, got {_show(v)}")
        return v

    def boolean(self, key, default):
        v = self.raw(key, default)
        if not isinstance(v, bool):
            raise self.fail(f"'{key}' must be true or false, got {_show(v)}")
        return v

    def numbers(self, key, value, n):
        """``value`` as a list of exactly ``n`` numbers (file units)."""
        if not (isinstance(value, list) and len(value) == n and all(_is_number(x) for x in value)):
            raise self.fail(f"'{key}' must be a list of {n} numbers, got {_show(value)}")
        return [float(x) for x in value]

    def points(self, key, value, least):
        """``value`` as an (N, 2) array of points (file units), N >= ``least``."""
        if not (isinstance(value, list) and all(isinstance(p, list) and len(p) == 2
                                                and all(_is_number(c) for c in p) for p in value)):
            raise self.fail(f"'{key}' must be a list of [x, y] points, got {_show(value)}")
        if len(value) < least:
            raise self.fail(f"'{key}' must have at least {least} points, got {len(value)}")
        return np.asarray(value, dtype=float).reshape(-1, 2)

    def inline(self, key, allowed):
        """An inline table whose keys are all in ``allowed`` and all given."""
        v = self.data[key]
        if not isinstance(v, dict):
            raise self.fail(f"'{key}' must be an inline table {{{', '.join(allowed)}}}, got {_show(v)}")
        for k in v:
            if k not in allowed:
                raise self.fail(f"'{key}' has unknown key '{k}', expected "
                                + ", ".join(f"'{a}'" for a in allowed))
        for k in allowed:
            if k not in v:
                raise self.fail(f"'{key}' is missing '{k}'")
        return v

    def path(self, key, default=_MISSING):
        if key not in self.data:
            return self.raw(key, default)
        v = self.string(key)
        p = self.item.source.parent / v
        if not p.exists():
            raise self.fail(f"'{key}' names a file that does not exist: '{v}' (looked for {p})")
        return p


# ----------------------------------------------------------------------------- reading
def _read_toml(path, referrer=None):
    try:
        with open(path, "rb") as f:
            return tomllib.load(f)
    except FileNotFoundError:
        if referrer is not None:
            raise input_error(referrer, None, f"'extends' file not found: {path}") from None
        raise input_error(path, None, "file not found") from None
    except tomllib.TOMLDecodeError as exc:
        raise input_error(path, None, f"TOML syntax error: {exc}") from None
    except OSError as exc:
        raise input_error(path, None, f"cannot read the file: {exc.strerror}") from None


def _assign_default_names(items):
    taken = {it.name for it in items if it.name is not None}
    for pos, it in enumerate(items, start=1):
        if it.name is None:
            k = pos
            while f"{it.table}{k}" in taken:
                k += 1
            it.name = f"{it.table}{k}"
            taken.add(it.name)


def _load_doc(path, chain=()):
    """Load ``path`` and its ``extends`` chain; return the merged top keys, items and tables."""
    data = _read_toml(path, chain[-1] if chain else None)
    for key in data:
        if key not in TOP_KEYS:
            raise input_error(path, None, f"unknown top-level key '{key}', expected one of "
                              + ", ".join(f"'{k}'" for k in TOP_KEYS))
    for key in ("title", "units", "extends"):
        if key in data and not isinstance(data[key], str):
            raise input_error(path, None, f"'{key}' must be a string, got {_show(data[key])}")
    doc = {"title": None, "unit": "mm", "arrays": {t: [] for t in ARRAY_TABLES}, "singles": {}}
    if "extends" in data:
        base = path.parent / data["extends"]
        here = [p.resolve() for p in (*chain, path)]
        if base.resolve() in here:
            loop = " -> ".join(str(p) for p in (*chain, path, base))
            raise input_error(path, None, f"'extends' loop: {loop}")
        doc = _load_doc(base, (*chain, path))
    if "units" in data:
        if data["units"] not in UNITS:
            raise input_error(path, None, "'units' must be one of "
                              + ", ".join(f"'{u}'" for u in UNITS) + f", got {_show(data['units'])}")
        doc["unit"] = data["units"]
    doc["title"] = data.get("title", doc["title"])
    for table in SINGLE_TABLES:
        if table in data:
            if not isinstance(data[table], dict):
                raise input_error(path, f"[{table}]", f"must be a table, got {_show(data[table])}")
            doc["singles"][table] = _Item(table, data[table], path, doc["unit"])
    for table in ARRAY_TABLES:
        if table in data:
            _merge_array(doc["arrays"][table], table, data[table], path, doc["unit"])
    return doc


def _merge_array(items, table, entries, path, unit):
    """Append the file's ``[[table]]`` entries to ``items``; apply ``remove = true``."""
    if not (isinstance(entries, list) and all(isinstance(e, dict) for e in entries)):
        raise input_error(path, f"[[{table}]]", f"must be an array of tables, got {_show(entries)}")
    new = []
    for index, entry in enumerate(entries, start=1):
        item = _Item(table, entry, path, unit, index)
        name = entry.get("name")
        if name is not None and not isinstance(name, str):
            raise input_error(path, item.label, f"'name' must be a string, got {_show(name)}")
        item.name, item.named = name, name is not None
        remove = entry.get("remove", False)
        if not isinstance(remove, bool):
            raise input_error(path, item.label, f"'remove' must be true or false, got {_show(remove)}")
        if not remove:
            new.append(item)
            continue
        extra = [k for k in entry if k not in ("name", "remove")]
        if name is None or extra:
            raise input_error(path, item.label, "an item with 'remove = true' takes only a 'name'")
        hits = [k for k, it in enumerate(items) if it.name == name]
        if not hits:
            raise input_error(path, item.label, f"'remove = true' names '{name}', "
                              f"but the base has no [[{table}]] of that name")
        del items[hits[0]]
    items.extend(new)
    _assign_default_names(items)


def _check_unique(items):
    seen = {}
    for it in items:
        if it.name in seen:
            first = seen[it.name]
            raise input_error(it.source, it.label, f"duplicate name '{it.name}' (first used by "
                              f"[[{first.table}]] #{first.index} in {first.source})")
        seen[it.name] = it


# ----------------------------------------------------------------------------- tables
def _layer(item):
    f = _Fields(item, ("name", "z", "thickness", "conductivity", "sublayers", "artwork"))
    sub = f.raw("sublayers", "auto")
    if sub != "auto" and not (isinstance(sub, int) and not isinstance(sub, bool) and sub >= 1):
        raise f.fail(f"'sublayers' must be an integer >= 1 or \"auto\", got {_show(sub)}")
    return Layer(name=item.name, z=f.length("z"), thickness=f.length("thickness", positive=True),
                 conductivity=f.number("conductivity", 5.8e7, lower=0, what="a positive number (S/m)"),
                 sublayers=sub, artwork=f.path("artwork", None))


def _check_stackup(path, layers, items):
    if not layers:
        raise input_error(path, None, "no [[layer]]: at least one copper layer is required")
    order = sorted(zip(layers, items), key=lambda p: -p[0].z)
    for (upper, _), (lower, it) in zip(order, order[1:]):
        if lower.z_top > upper.z * (1 + 1e-12) + 1e-15:
            f = _Fields(it, it.data.keys())
            raise f.fail(f"layer '{lower.name}' (z {f.show(lower.z)} to {f.show(lower.z_top)}) "
                         f"overlaps layer '{upper.name}' (z from {f.show(upper.z)})")


def _shape(f, keys):
    """The one shape key of a copper or terminal item, as a polygon in metres."""
    given = [k for k in keys if k in f.data]
    if len(given) != 1:
        raise f.fail("expected exactly one shape key of " + ", ".join(f"'{k}'" for k in keys)
                     + (f", got {len(given)}: " + ", ".join(given) if given else ", got none"))
    kind, s = given[0], f.scale
    if "holes" in f.data and kind != "polygon":
        raise f.fail("'holes' goes only with 'polygon'")
    if kind == "rect":
        x0, y0, x1, y1 = f.numbers("rect", f.data["rect"], 4)
        if x0 == x1 or y0 == y1:
            raise f.fail(f"'rect' must have x0 != x1 and y0 != y1, got {_show(f.data['rect'])}")
        return shapes.rect(x0 * s, y0 * s, x1 * s, y1 * s)
    if kind == "polygon":
        shell = f.points("polygon", f.data["polygon"], 3)
        holes = f.raw("holes", [])
        if not isinstance(holes, list):
            raise f.fail(f"'holes' must be a list of polygons, got {_show(holes)}")
        holes = [f.points("holes", h, 3) for h in holes]
        problem = shapes.polygon_problem(shell, holes)
        if problem:
            raise f.fail(f"'polygon' {problem}")
        return shapes.polygon(shell * s, [h * s for h in holes])
    if kind == "circle":
        c = f.inline("circle", ("center", "radius"))
        center = f.numbers("circle.center", c["center"], 2)
        if not (_is_number(c["radius"]) and c["radius"] > 0):
            raise f.fail(f"'circle' radius must be a positive length, got {_show(c['radius'])}")
        return shapes.circle((center[0] * s, center[1] * s), c["radius"] * s)
    t = f.inline("trace", ("path", "width"))
    path = f.points("trace.path", t["path"], 2)
    if not (_is_number(t["width"]) and t["width"] > 0):
        raise f.fail(f"'trace' width must be a positive length, got {_show(t['width'])}")
    if len(np.unique(path, axis=0)) < 2:
        raise f.fail("'trace' path must have at least two distinct points")
    return shapes.trace(path * s, t["width"] * s)


def _layer_name(f, key, names):
    name = f.string(key)
    if name not in names:
        raise f.fail(f"'{key}' names unknown layer '{name}', expected one of "
                     + ", ".join(f"'{n}'" for n in names))
    return name


def _copper(item, names):
    f = _Fields(item, ("name", "layer", "rect", "polygon", "holes", "circle", "trace", "clear"))
    layer = _layer_name(f, "layer", names)
    return CopperShape(layer, _shape(f, ("rect", "polygon", "circle", "trace")), f.boolean("clear", False))


def _span(f, layers):
    """The via or drill span: every layer from the highest to the lowest one named."""
    names = [layer.name for layer in layers]          # top down
    given = f.raw("layers", names)
    if not (isinstance(given, list) and given and all(isinstance(n, str) for n in given)):
        raise f.fail(f"'layers' must be a list of layer names, got {_show(given)}")
    for n in given:
        if n not in names:
            raise f.fail(f"'layers' names unknown layer '{n}', expected one of "
                         + ", ".join(f"'{m}'" for m in names))
    idx = [names.index(n) for n in given]
    return tuple(names[min(idx):max(idx) + 1])


def _vias(item, layers):
    f = _Fields(item, ("name", "at", "drill", "plating", "pad", "layers", "array"))
    x, y = f.numbers("at", f.raw("at"), 2)
    drill = f.length("drill", positive=True)
    pad = f.length("pad", drill + DEFAULT_ANNULUS, positive=True)
    if pad <= drill:
        raise f.fail(f"'pad' {f.show(pad)} must exceed 'drill' {f.show(drill)}")
    via = Via(name=item.name, x=x * f.scale, y=y * f.scale, drill=drill,
              plating=f.length("plating", DEFAULT_PLATING, positive=True), pad=pad,
              span=_span(f, layers))
    if "array" not in f.data:
        return (via,)
    a = f.inline("array", ("pitch", "count"))
    pitch = f.numbers("array.pitch", a["pitch"], 2)
    count = a["count"]
    if not (isinstance(count, list) and len(count) == 2
            and all(isinstance(c, int) and not isinstance(c, bool) and c >= 1 for c in count)):
        raise f.fail(f"'array' count must be two integers >= 1, got {_show(count)}")
    for axis, p, n in zip("xy", pitch, count):
        if n > 1 and abs(p) * f.scale < drill:
            raise f.fail(f"'array' pitch {p:g} along {axis} is less than the drill "
                         f"{f.show(drill)}: holes would overlap")
    return via_array(via, (pitch[0] * f.scale, pitch[1] * f.scale), tuple(count))


def _drill(item, layers):
    f = _Fields(item, ("name", "file", "layers", "plating"))
    return {"name": item.name, "file": f.path("file"),
            "span": _span(f, layers) if "layers" in f.data else None,
            "plating": f.length("plating", DEFAULT_PLATING, positive=True)}


def _terminal(item, names):
    f = _Fields(item, ("name", "layer", "rect", "circle", "polygon", "holes"))
    layer = _layer_name(f, "layer", names)
    return Terminal(item.name, layer, _shape(f, ("rect", "circle", "polygon")))


def _terminal_name(f, key, value, terminals):
    if not isinstance(value, str):
        raise f.fail(f"'{key}' must be a terminal name, got {_show(value)}")
    if value not in terminals:
        raise f.fail(f"'{key}' names unknown terminal '{value}'")
    return value


def _port(item, terminals):
    f = _Fields(item, ("name", "plus", "minus"))
    plus = _terminal_name(f, "plus", f.raw("plus"), terminals)
    minus = _terminal_name(f, "minus", f.raw("minus"), terminals)
    if plus == minus:
        raise f.fail(f"'plus' and 'minus' must differ, both are '{plus}'")
    return Port(item.name, plus, minus)


def _lumped(item, terminals):
    f = _Fields(item, ("name", "between", "resistance", "inductance"))
    between = f.raw("between")
    if not (isinstance(between, list) and len(between) == 2):
        raise f.fail(f"'between' must be a list of two terminal names, got {_show(between)}")
    a, b = (_terminal_name(f, "between", t, terminals) for t in between)
    if a == b:
        raise f.fail(f"'between' must name two different terminals, got '{a}' twice")
    return Lumped(item.name, (a, b),
                  resistance=f.number("resistance", 0.0, lower=0, strict=False, what="a number >= 0 (ohm)"),
                  inductance=f.number("inductance", 0.0, lower=0, strict=False, what="a number >= 0 (henry)"))


def _sweep(item):
    if item is None:
        return np.array([0.0])
    f = _Fields(item, ("frequencies", "start", "stop", "points"))
    ranged = [k for k in ("start", "stop", "points") if k in f.data]
    if "frequencies" in f.data and ranged:
        raise f.fail("give either 'frequencies' or 'start', 'stop' and 'points', not both")
    if "frequencies" in f.data:
        v = f.data["frequencies"]
        if not (isinstance(v, list) and v and all(_is_number(x) for x in v)):
            raise f.fail(f"'frequencies' must be a non-empty list of numbers (Hz), got {_show(v)}")
        if min(v) < 0:
            raise f.fail(f"'frequencies' must be >= 0 Hz, got {_show(min(v))}")
        return np.unique(np.asarray(v, dtype=float))
    if not ranged:
        raise f.fail("expected 'frequencies' or 'start', 'stop' and 'points'")
    start = f.number("start", lower=0, what="a positive frequency (Hz; the sweep is log-spaced)")
    stop = f.number("stop", lower=start, what=f"a frequency above 'start' ({start:g} Hz)")
    points = f.integer("points", lower=2)
    return np.geomspace(start, stop, points)


def _mesh(item, default):
    """``[mesh]``; a missing key (or table) takes the size chosen from the geometry."""
    if item is None:
        return default
    f = _Fields(item, ("max_edge", "min_edge"))
    max_edge = f.length("max_edge", max(default.max_edge, f.length("min_edge", 0.0)), positive=True)
    min_edge = f.length("min_edge", min(default.min_edge, max_edge), positive=True)
    if min_edge > max_edge:
        raise f.fail(f"'min_edge' {f.show(min_edge)} must not exceed 'max_edge' {f.show(max_edge)}")
    under = default.under_edges and not {"max_edge", "min_edge"} <= set(f.data)
    return MeshOptions(max_edge=max_edge, min_edge=min_edge, under_edges=under,
                       grading=default.grading if under else None)


def _window(item):
    if item is None:
        return None
    f = _Fields(item, ("rect",))
    x0, y0, x1, y1 = f.numbers("rect", f.raw("rect"), 4)
    if x0 == x1 or y0 == y1:
        raise f.fail(f"'rect' must have x0 != x1 and y0 != y1, got {_show(f.data['rect'])}")
    s = f.scale
    return (min(x0, x1) * s, min(y0, y1) * s, max(x0, x1) * s, max(y0, y1) * s)


def _solver(item):
    if item is None:
        return SolverOptions()
    f = _Fields(item, ("method", "tolerance"))
    tol = f.number("tolerance", SolverOptions().tolerance, lower=0, what="a number between 0 and 1")
    if tol >= 1:
        raise f.fail(f"'tolerance' must be a number between 0 and 1, got {_show(tol)}")
    return SolverOptions(method=f.string("method", "auto", ("auto", "dense", "fast")), tolerance=tol)


def _circuit(item, ports):
    if item is None:
        return None
    f = _Fields(item, ("port", "di_dt", "current", "rise_time", "output_capacitance", "input_voltage"))
    names = [p.name for p in ports]
    if "port" in f.data:
        port = f.string("port")
        if port not in names:
            raise f.fail(f"'port' names unknown port '{port}'")
    elif len(names) == 1:
        port = names[0]
    else:
        raise f.fail(f"'port' must name the port to use, one of {len(names)} in the case")
    pos = dict(lower=0, what="a positive number (SI)")
    di_dt = f.number("di_dt", None, **pos)
    current, rise = f.number("current", None, **pos), f.number("rise_time", None, **pos)
    if di_dt is not None and (current is not None or rise is not None):
        raise f.fail("give either 'di_dt' or 'current' and 'rise_time', not both")
    if (current is None) != (rise is None):
        raise f.fail("'current' and 'rise_time' go together")
    if current is not None:
        di_dt = current / rise
    return CircuitOptions(port=port, di_dt=di_dt, current=current, rise_time=rise,
                          output_capacitance=f.number("output_capacitance", None, **pos),
                          input_voltage=f.number("input_voltage", None, **pos))


def _fabrication(item):
    if item is None:
        return None
    return _Fields(item, ("source",)).path("source")


# ----------------------------------------------------------------------------- fabrication data
def _layer_artwork(path, layer, read, window, scale, unit):
    """The copper of a layer's artwork file, its note and warnings."""
    art = read(layer.artwork) if read is not None else read_gerber(layer.artwork, clip=window)
    geom = getattr(art, "geometry", art)              # an Artwork, or a bare geometry
    warnings = list(getattr(art, "warnings", ()))
    function = getattr(art, "file_function", None)
    where = f"{path}: layer '{layer.name}': artwork {layer.artwork.name}"
    if function and function[0] != "Copper":
        warnings.append(f"{where} has X2 FileFunction {','.join(function)}, not Copper")
    if geom.is_empty:
        warnings.append(f"{where} holds no copper")
    inside = " inside the window" if window is not None else ""
    note = (f"layer '{layer.name}' <- {layer.artwork.name} (artwork, "
            f"{geom.area / scale ** 2:g} {unit}^2 of copper{inside})")
    return geom, note, warnings


def _board_inputs(path, layers, drills, fabrication, read, window, scale, unit):
    """Artwork copper per layer, vias of the drill files, notes and warnings."""
    names = [la.name for la in layers]
    artwork, vias, notes, warnings = {}, [], [], []
    for la in layers:
        if la.artwork is not None:
            artwork[la.name], note, warns = _layer_artwork(path, la, read, window, scale, unit)
            notes.append(note)
            warnings += warns
    for d in drills:
        data = read_drills(d["file"])
        label = f"[[drill]] '{d['name']}' {d['file'].name}"
        span, note = (d["span"], None) if d["span"] else board.file_span(data.span, names, label)
        if note:
            notes.append(note)
        if not span:
            continue
        made, note, warns = board.drill_vias(data, span, plating=d["plating"], annulus=DEFAULT_ANNULUS,
                                             prefix=d["name"], label=label, scale=scale, unit=unit)
        vias += made
        notes.append(note)
        warnings += [f"{path}: {w}" for w in warns]
    if fabrication is not None:
        fab = board.fabrication_inputs(scan(fabrication), names, own_artwork=set(artwork),
                                       drill_files={d["file"].resolve() for d in drills},
                                       plating=DEFAULT_PLATING, annulus=DEFAULT_ANNULUS,
                                       clip=window, scale=scale, unit=unit)
        artwork.update(fab.artwork)
        vias += fab.vias
        notes += fab.notes
        warnings += [f"{path}: {w}" for w in fab.warnings]
    return artwork, vias, notes, warnings


# ----------------------------------------------------------------------------- checks
def _check_ports(layout, ports, lumped, port_items):
    found = bodies(layout, lumped)
    for port, item in zip(ports, port_items):
        if not found.joined(port.plus, port.minus):
            raise input_error(item.source, item.label,
                              f"'plus' terminal '{port.plus}' and 'minus' terminal '{port.minus}' "
                              "are not joined by copper, vias or lumped branches")
    return found


def _island_warnings(path, found, ports, scale, unit):
    if not ports:
        return [f"{path}: no [[port]] given: nothing to solve"]
    lines, per_layer = [], {}
    for k in floating_islands(found, [t for p in ports for t in (p.plus, p.minus)]):
        layer, poly = found.islands[k]
        per_layer.setdefault(layer, []).append(poly)
    for layer, polys in per_layer.items():
        for poly in polys[:MAX_ISLAND_WARNINGS]:
            c = poly.representative_point()
            lines.append(f"{path}: layer '{layer}': island near ({c.x / scale:g}, {c.y / scale:g}) {unit} "
                         f"({poly.area / scale ** 2:g} {unit}^2) is joined to no port; "
                         "kept (it carries eddy currents)")
        if len(polys) > MAX_ISLAND_WARNINGS:
            lines.append(f"{path}: layer '{layer}': {len(polys) - MAX_ISLAND_WARNINGS} more islands "
                         "are joined to no port")
    return lines


def quasi_static_limit(layout):
    """Highest frequency for which the quasi-static model holds (common practice).

    The largest modelled dimension ``D`` (diagonal of the copper's bounding box, with the
    stackup height) should stay below a tenth of the wavelength in FR-4.

    Parameters
    ----------
    layout : geometry.model.Layout

    Returns
    -------
    tuple of float
        ``(f_max, D)``: ``c0 / (10 sqrt(4.5) D)`` in Hz and ``D`` in metres; ``(inf, 0)``
        for a layout without copper.

    Examples
    --------
    >>> from geometry.layout import CopperShape, build_layout
    >>> from geometry.model import Layer
    >>> from geometry.shapes import rect
    >>> lay = build_layout([Layer("L1", 0.0, 35e-6)], [CopperShape("L1", rect(0, 0, 0.1, 1e-3))])
    >>> f_max, d = quasi_static_limit(lay)
    >>> round(f_max / 1e6), round(d, 4)  # 100 mm of copper: about 141 MHz
    (141, 0.1)
    """
    boxes = [cu.bounds for cu in layout.copper.values() if not cu.is_empty]
    if not boxes:
        return math.inf, 0.0
    b = np.asarray(boxes)
    dz = max(la.z_top for la in layout.layers) - min(la.z for la in layout.layers)
    d = math.sqrt((b[:, 2].max() - b[:, 0].min()) ** 2 + (b[:, 3].max() - b[:, 1].min()) ** 2 + dz ** 2)
    return C0 / (10.0 * math.sqrt(EPS_R_FR4) * d), d


# ----------------------------------------------------------------------------- entry
def load_case(path, *, read_artwork=None):
    """Read, merge (``extends``), check and convert a case file.

    Parameters
    ----------
    path : str or os.PathLike
        The case file; relative paths inside it resolve against its folder.
    read_artwork : callable, optional
        ``read_artwork(path)`` returns the copper of a layer's ``artwork`` file: a
        :class:`geometry.formats.gerber.Artwork` or a shapely geometry in metres. Default
        :func:`geometry.formats.read_artwork` (Gerber RS-274X/X2).

    Returns
    -------
    geometry.model.Case
        Everything in SI units, the layout built and checked.

    Raises
    ------
    geometry.errors.InputError
        For any problem in the file or in the artwork, drill and fabrication files it
        names, with a one-line message.
    """
    path = Path(path)
    doc = _load_doc(path)
    arrays, singles = doc["arrays"], doc["singles"]
    for items in arrays.values():
        _check_unique(items)
    layers = [_layer(it) for it in arrays["layer"]]
    _check_stackup(path, layers, arrays["layer"])
    layers = sorted(layers, key=lambda la: -la.z)
    names = [la.name for la in layers]
    copper = [_copper(it, names) for it in arrays["copper"]]
    vias = [v for it in arrays["via"] for v in _vias(it, layers)]
    drills = tuple(_drill(it, layers) for it in arrays["drill"])
    terminals = [_terminal(it, names) for it in arrays["terminal"]]
    term_names = {t.name for t in terminals}
    ports = tuple(_port(it, term_names) for it in arrays["port"])
    lumped = tuple(_lumped(it, term_names) for it in arrays["lumped"])
    frequencies = _sweep(singles.get("sweep"))
    window = _window(singles.get("window"))
    solver = _solver(singles.get("solver"))
    circuit = _circuit(singles.get("circuit"), ports)
    fabrication = _fabrication(singles.get("fabrication"))
    scale = unit_scale(doc["unit"])
    artwork, more_vias, notes, warnings = _board_inputs(path, layers, drills, fabrication, read_artwork,
                                                        window, scale, doc["unit"])
    vias += more_vias
    labels = {("terminal", it.name): (it.source, it.label) for it in arrays["terminal"]}
    layout = build_layout(layers, copper, vias, terminals, window=window, artwork=artwork,
                          source=path, labels=labels)
    if len(layout.vias) < len(vias):
        notes.append(f"[window]: {len(vias) - len(layout.vias)} of {len(vias)} vias lie outside "
                     "the window and are dropped")
    auto_mesh, note = default_mesh(layout, float(frequencies.max()), scale, doc["unit"])
    mesh = _mesh(singles.get("mesh"), auto_mesh)
    given = singles["mesh"].data if "mesh" in singles else {}
    if not {"max_edge", "min_edge"} <= set(given):
        notes.append(note if not given else f"{note} (the [mesh] table sets "
                     + ", ".join(sorted(k for k in given if k in ("max_edge", "min_edge"))) + ")")
    found = _check_ports(layout, ports, lumped, arrays["port"])
    warnings += _island_warnings(path, found, ports, scale, doc["unit"])
    f_lim, d = quasi_static_limit(layout)
    if frequencies.max() > f_lim:
        warnings.append(f"{path}: [sweep]: top frequency {frequencies.max():g} Hz exceeds the "
                        f"quasi-static limit c0/(10 sqrt({EPS_R_FR4:g}) D) = {f_lim:.3g} Hz for the "
                        f"largest modelled dimension D = {d / scale:g} {doc['unit']}")
    return Case(path=path, title=doc["title"] or path.stem, unit=doc["unit"], unit_scale=scale,
                layout=layout, ports=ports, lumped=lumped, frequencies=frequencies,
                mesh=mesh, solver=solver, circuit=circuit, window=window,
                warnings=tuple(warnings), drills=drills, fabrication=fabrication, notes=tuple(notes))
