"""Read a case file (TOML, DESIGN.md section 4) into a :class:`~copperpath.geometry.model.Case` in SI units.

Every problem raises :class:`~copperpath.geometry.errors.InputError` with one line
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
  the top frequency (:mod:`copperpath.geometry.mesh_defaults`); the note says how. A layer's
  ``sublayers`` defaults to ``"auto"`` (chosen by the solver from the top solved frequency).
- ``[sweep]`` ``start/stop/points`` is log-spaced and needs ``start > 0``; frequencies are
  sorted and repeated values dropped. Without ``[sweep]`` the sweep is DC only.
- ``[circuit]``: ``current`` + ``rise_time`` set ``di_dt = current / rise_time``; ``port``
  defaults to the only port.
- Fabrication data (see :mod:`copperpath.geometry.formats.board` for holes, slots and spans): a
  layer's ``artwork`` Gerber file adds its copper to that layer; a ``[[drill]]`` file adds
  a via for each plated hole (span: the table's ``layers``, else the file's X2 span, else
  all layers); ``[fabrication] source`` gives copper layer ``n`` to the ``n``-th layer from
  the top unless that layer names its own artwork, and vias for the plated holes of its
  drill files (a drill file that a ``[[drill]]`` table names is read only once). What went
  where is in ``Case.notes``; the readers' findings and skipped holes in ``Case.warnings``.
  Errors in these files name the file and line.
- Real-board inputs (Gerber X2 object attributes and the job file, see
  :mod:`copperpath.geometry.formats.x2` and :mod:`copperpath.geometry.formats.gerber_job`):
  ``[[terminal]] pad = "U4.8"`` takes the pad's copper from every fabrication copper layer
  that has it (a through-hole pad: one terminal on all of them; ``layer`` picks one); a drawn
  terminal's ``layer`` may be a list (the same shape on each: one terminal across them); a
  ``pad`` terminal without a ``name`` is named after the pad. A port or lumped branch may
  name a pad instead of a terminal: the pad's terminal (the ``[[terminal]]`` that names it,
  else a new terminal named after the pad). Unknown pads and nets are input errors that name
  the closest matches. ``[fabrication] nets`` / ``others`` filter the copper by net (see
  :mod:`copperpath.geometry.formats.board`). ``[fabrication] stackup = "job"`` makes layers ``L1`` ..
  ``Ln`` (top down) from the job file; a ``[[layer]]`` table of the same name overrides the
  keys it gives, one of another name adds a layer.
"""
from __future__ import annotations

import difflib
import math
import tomllib
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np
import shapely

from copperpath.geometry import shapes, unit_check
from copperpath.geometry.connectivity import bodies, floating_islands
from copperpath.geometry.errors import InputError, input_error
from copperpath.geometry.formats import board
from copperpath.geometry.formats import read_artwork as read_gerber
from copperpath.geometry.formats import read_drills
from copperpath.geometry.formats.board import BoardContents
from copperpath.geometry.formats.fabrication import scan
from copperpath.geometry.limits import (BOARD_EXTENT, RANGES, MAX_CASE_BYTES, MAX_FREQUENCIES, MAX_SUBLAYERS, MAX_VIAS,
                             MIN_LENGTH, as_float, coordinate_ok, in_range, range_text, read_regular,
                             size_ok, text_problem)
from copperpath.geometry.layout import CopperShape, build_layout, via_array
from copperpath.geometry.mesh_defaults import default_mesh
from copperpath.geometry.model import (Case, CircuitOptions, Layer, Lumped, MeshOptions, Port,
                            SolverOptions, Terminal, Via)
from copperpath.geometry.physics import EPS_R_BOARD, quasi_static_frequency
from copperpath.geometry.units import UNITS, to_si, unit_scale

ARRAY_TABLES = ("layer", "copper", "via", "drill", "terminal", "port", "lumped")
SINGLE_TABLES = ("sweep", "mesh", "window", "solver", "circuit", "fabrication")
TOP_KEYS = ("title", "units", "extends") + ARRAY_TABLES + SINGLE_TABLES
#: The keys each table accepts (``remove`` is also accepted in array tables of a variant).
TABLE_KEYS = {
    "layer": ("name", "z", "thickness", "conductivity", "sublayers", "artwork"),
    "copper": ("name", "layer", "rect", "polygon", "holes", "circle", "trace", "clear"),
    "via": ("name", "at", "drill", "plating", "pad", "layers", "array"),
    "drill": ("name", "file", "layers", "plating"),
    "terminal": ("name", "layer", "rect", "circle", "polygon", "holes", "pad"),
    "port": ("name", "plus", "minus"),
    "lumped": ("name", "between", "resistance", "inductance"),
    "sweep": ("frequencies", "start", "stop", "points"),
    "mesh": ("max_edge", "min_edge"),
    "window": ("rect",),
    "solver": ("method", "tolerance"),
    "circuit": ("port", "di_dt", "current", "rise_time", "output_capacitance", "input_voltage"),
    "fabrication": ("source", "nets", "others", "stackup"),
}
#: The keys of the inline tables ``circle``, ``trace`` and ``array`` (all required).
INLINE_KEYS = {
    "circle": ("center", "radius"),
    "trace": ("path", "width"),
    "array": ("pitch", "count"),
}

#: Default barrel plating in metres (see the module docstring).
DEFAULT_PLATING = 25e-6
#: Default pad diameter minus drill diameter in metres.
DEFAULT_ANNULUS = 0.3e-3
#: Island warnings written per layer before they are summarised.
MAX_ISLAND_WARNINGS = 10

_MISSING = object()
#: Highest frequency of a sweep in Hz (see :data:`copperpath.geometry.limits.RANGES`).
_FMAX = RANGES["frequency"][1]


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
        text = repr(value)
    elif isinstance(value, bool):
        text = "true" if value else "false"
    elif isinstance(value, int) and abs(value) > 10 ** 15:
        text = f"an integer of {len(str(abs(value)))} digits"
    else:
        text = str(value)
    return text if len(text) <= 60 else text[:57] + "..."


def _is_number(v):
    return as_float(v) is not None


class _Fields:
    """Typed access to one table's keys; every failure is an InputError naming the item."""

    def __init__(self, item, allowed):
        self.item, self.data = item, item.data
        self.scale = unit_scale(item.unit)
        self.unit = item.unit
        unknown = [k for k in self.data if k not in allowed]
        if unknown:
            raise self.fail(f"unknown key '{unknown[0]}', expected one of "
                            + ", ".join(f"'{k}'" for k in allowed))

    def fail(self, message):
        return input_error(self.item.source, self.item.label, message)

    def si(self, value):
        """A length or array of lengths in the file's unit, in metres
        (:func:`copperpath.geometry.units.to_si`: equal lengths in any unit give equal floats)."""
        return to_si(value, self.unit)

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
        x = as_float(v)
        ok = x is not None and (lower is None or (x > lower if strict else x >= lower))
        if not ok:
            raise self.fail(f"'{key}' must be {what}, got {_show(v)}")
        return x

    def ranged(self, key, default, what, *, length=False):
        """A positive value in :data:`copperpath.geometry.limits.RANGES` (``length``: in file units)."""
        if key not in self.data:
            return self.raw(key, default)
        scale, unit = (self.scale, self.item.unit) if length else (1.0, "")
        x = self.number(key, lower=0, what=what)
        x = self.si(x) if length else x
        if not in_range(key, x):
            raise self.fail(f"'{key}' must be {what} from {range_text(key, scale, unit)}, "
                            f"got {_show(self.data[key])}")
        return x

    def length(self, key, default=_MISSING, *, positive=False):
        """A length in metres; ``default`` is already in metres.

        A positive length is a size (``MIN_LENGTH`` to ``BOARD_EXTENT``); any other length
        is a coordinate (inside the board extent).
        """
        if key not in self.data:
            return self.raw(key, default)
        what = "a positive length" if positive else "a length (a number)"
        x = self.si(self.number(key, lower=0 if positive else None, what=what))
        if positive:
            self.check_size(key, x, self.data[key])
        elif not coordinate_ok(x):
            raise self.fail(f"'{key}' {_show(self.data[key])} lies outside the board extent "
                            f"(within {self.show(BOARD_EXTENT)} {self.item.unit} of the origin)")
        return x

    def check_size(self, key, si, shown):
        """Raise unless the size ``si`` (metres) lies in ``[MIN_LENGTH, BOARD_EXTENT]``."""
        if not size_ok(si):
            raise self.fail(f"'{key}' must be a positive length from {self.show(MIN_LENGTH)} to "
                            f"{self.show(BOARD_EXTENT)} {self.item.unit}, got {_show(shown)}")

    def coordinates(self, key, values):
        """Raise unless every coordinate (file units) lies inside the board extent."""
        bad = [v for v in np.ravel(values) if not coordinate_ok(v * self.scale)]
        if bad:
            raise self.fail(f"'{key}' coordinate {bad[0]:g} lies outside the board extent "
                            f"(within {self.show(BOARD_EXTENT)} {self.item.unit} of the origin)")

    def integer(self, key, default=_MISSING, *, lower=1, upper=10**6):
        if key not in self.data:
            return self.raw(key, default)
        v = self.data[key]
        if not (isinstance(v, int) and not isinstance(v, bool) and lower <= v <= upper):
            raise self.fail(f"'{key}' must be an integer from {lower} to {upper}, got {_show(v)}")
        return v

    def string(self, key, default=_MISSING, choices=None):
        if key not in self.data:
            return self.raw(key, default)
        v = self.data[key]
        if not isinstance(v, str) or (choices and v not in choices):
            expected = ("one of " + ", ".join(f"'{c}'" for c in choices)) if choices else "a string"
            raise self.fail(f"'{key}' must be {expected}, got {_show(v)}")
        problem = text_problem(v)
        if problem:
            raise self.fail(f"'{key}' {problem}; expected printable text")
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
        out = [float(x) for x in value]
        self.coordinates(key, out)
        return out

    def points(self, key, value, least):
        """``value`` as an (N, 2) array of points (file units), N >= ``least``."""
        if not (isinstance(value, list) and all(isinstance(p, list) and len(p) == 2
                                                and all(_is_number(c) for c in p) for p in value)):
            raise self.fail(f"'{key}' must be a list of [x, y] points, got {_show(value)}")
        if len(value) < least:
            raise self.fail(f"'{key}' must have at least {least} points, got {len(value)}")
        out = np.asarray(value, dtype=float).reshape(-1, 2)
        self.coordinates(key, out)
        return out

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
    if not path.exists():
        if referrer is not None:
            raise input_error(referrer, None, f"'extends' file not found: {path}") from None
        raise input_error(path, None, "file not found") from None
    data = read_regular(path, max_bytes=MAX_CASE_BYTES)
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise input_error(path, None, f"not UTF-8 text (byte 0x{data[exc.start]:02x} at offset "
                          f"{exc.start}); expected a TOML case file") from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise input_error(path, None, f"TOML syntax error: {exc}") from None
    except RecursionError:
        raise input_error(path, None, "TOML nested too deeply; expected a case file") from None


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
        problem = text_problem(data[key]) if key in data else None
        if problem:
            raise input_error(path, None, f"'{key}' {problem}; expected printable text")
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
        problem = text_problem(name) if name is not None else None
        if problem or name == "":
            raise input_error(path, item.label, f"'name' {problem or 'is empty'}; expected printable text")
        item.name, item.named = name, name is not None
        if name is None and table == "terminal" and isinstance(entry.get("pad"), str):
            item.name = entry["pad"]                    # a pad terminal is named after its pad
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
    f = _Fields(item, TABLE_KEYS["layer"])
    sub = f.raw("sublayers", "auto")
    if sub != "auto" and not (isinstance(sub, int) and not isinstance(sub, bool) and 1 <= sub <= MAX_SUBLAYERS):
        raise f.fail(f"'sublayers' must be an integer >= 1 or \"auto\", got {_show(sub)} "
                     f"(at most {MAX_SUBLAYERS})")
    return Layer(name=item.name, z=f.length("z"),
                 thickness=f.ranged("thickness", _MISSING, "a positive length", length=True),
                 conductivity=f.ranged("conductivity", 5.8e7, "a positive number (S/m)"),
                 sublayers=sub, artwork=f.path("artwork", None))


def _check_stackup(path, layers, items):
    if not layers:
        raise input_error(path, None, "no [[layer]]: at least one copper layer is required "
                          "(or [fabrication] stackup = \"job\" with a Gerber job file)")
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
    kind, s = given[0], f.si
    if "holes" in f.data and kind != "polygon":
        raise f.fail("'holes' goes only with 'polygon'")
    if kind == "rect":
        x0, y0, x1, y1 = f.numbers("rect", f.data["rect"], 4)
        if x0 == x1 or y0 == y1:
            raise f.fail(f"'rect' must have x0 != x1 and y0 != y1, got {_show(f.data['rect'])}")
        f.check_size("rect width", abs(s(x1) - s(x0)), abs(x1 - x0))
        f.check_size("rect height", abs(s(y1) - s(y0)), abs(y1 - y0))
        return shapes.rect(s(x0), s(y0), s(x1), s(y1))
    if kind == "polygon":
        shell = f.points("polygon", f.data["polygon"], 3)
        holes = f.raw("holes", [])
        if not isinstance(holes, list):
            raise f.fail(f"'holes' must be a list of polygons, got {_show(holes)}")
        holes = [f.points("holes", h, 3) for h in holes]
        problem = shapes.polygon_problem(shell, holes)
        if problem:
            raise f.fail(f"'polygon' {problem}")
        return shapes.polygon(s(shell), [s(h) for h in holes])
    if kind == "circle":
        c = f.inline("circle", INLINE_KEYS["circle"])
        center = f.numbers("circle.center", c["center"], 2)
        if not (_is_number(c["radius"]) and c["radius"] > 0):
            raise f.fail(f"'circle' radius must be a positive length, got {_show(c['radius'])}")
        f.check_size("circle.radius", s(c["radius"]), c["radius"])
        return shapes.circle((s(center[0]), s(center[1])), s(c["radius"]))
    t = f.inline("trace", INLINE_KEYS["trace"])
    path = f.points("trace.path", t["path"], 2)
    if not (_is_number(t["width"]) and t["width"] > 0):
        raise f.fail(f"'trace' width must be a positive length, got {_show(t['width'])}")
    f.check_size("trace.width", s(t["width"]), t["width"])
    if len(np.unique(path, axis=0)) < 2:
        raise f.fail("'trace' path must have at least two distinct points")
    return shapes.trace(s(path), s(t["width"]))


def _layer_name(f, key, names):
    name = f.string(key)
    if name not in names:
        raise f.fail(f"'{key}' names unknown layer '{name}', expected one of "
                     + ", ".join(f"'{n}'" for n in names))
    return name


def _copper(item, names):
    f = _Fields(item, TABLE_KEYS["copper"])
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
    f = _Fields(item, TABLE_KEYS["via"])
    x, y = f.numbers("at", f.raw("at"), 2)
    drill = f.length("drill", positive=True)
    pad = f.length("pad", drill + DEFAULT_ANNULUS, positive=True)
    if pad <= drill:
        raise f.fail(f"'pad' {f.show(pad)} must exceed 'drill' {f.show(drill)}")
    via = Via(name=item.name, x=f.si(x), y=f.si(y), drill=drill,
              plating=f.ranged("plating", DEFAULT_PLATING, "a positive length", length=True), pad=pad,
              span=_span(f, layers))
    if "array" not in f.data:
        return (via,)
    a = f.inline("array", INLINE_KEYS["array"])
    pitch = f.numbers("array.pitch", a["pitch"], 2)
    count = a["count"]
    if not (isinstance(count, list) and len(count) == 2
            and all(isinstance(c, int) and not isinstance(c, bool) and c >= 1 for c in count)):
        raise f.fail(f"'array' count must be two integers >= 1, got {_show(count)}")
    if count[0] * count[1] > MAX_VIAS:
        raise f.fail(f"'array' count {count[0]} x {count[1]} makes {count[0] * count[1]} vias, more than "
                     f"the limit of {MAX_VIAS} vias in a case")
    for axis, v0, p, n in zip("xy", (x, y), pitch, count):
        f.coordinates(f"array (last via along {axis})", [v0 + p * (n - 1)])
    for axis, p, n in zip("xy", pitch, count):
        if n > 1 and abs(f.si(p)) < drill:
            raise f.fail(f"'array' pitch {p:g} along {axis} is less than the drill "
                         f"{f.show(drill)}: holes would overlap")
    return via_array(via, (f.si(pitch[0]), f.si(pitch[1])), tuple(count))


def _drill(item, layers):
    f = _Fields(item, TABLE_KEYS["drill"])
    return {"name": item.name, "file": f.path("file"),
            "span": _span(f, layers) if "layers" in f.data else None,
            "plating": f.ranged("plating", DEFAULT_PLATING, "a positive length", length=True)}


class _Pads:
    """Pads of the fabrication copper, and the terminals made from them."""

    def __init__(self, by_layer, window, nets, others):
        self.by_layer = by_layer            # layer name -> {pad name -> Pad}
        self.names = sorted({n for pads in by_layer.values() for n in pads})
        self.window, self.nets, self.others = window, nets, others
        self.alias = {}                     # pad name -> name of its terminal
        self.implicit = []                  # terminals made for pads named by ports / branches

    def closest(self, name, extra=()):
        return difflib.get_close_matches(name, sorted(set(self.names) | set(extra)), n=5, cutoff=0.5)

    def terminals(self, f, key, pad, name, layer=None):
        """Terminals named ``name`` on the copper of ``pad`` (every layer, or ``layer``)."""
        if not self.by_layer:
            raise f.fail(f"'{key}' names pad '{pad}', but there are no fabrication copper files with "
                         "X2 pad attributes (%TO.P); expected [fabrication] source")
        found = [(la, pads[pad]) for la, pads in self.by_layer.items()
                 if pad in pads and (layer is None or la == layer)]
        if not found:
            close = self.closest(pad)
            on = f" on layer '{layer}'" if layer is not None and pad in self.names else ""
            hint = ("; closest: " + ", ".join(repr(c) for c in close)) if close else ""
            raise f.fail(f"'{key}' names pad '{pad}', which the fabrication files do not have{on}{hint}")
        net = found[0][1].net
        if self.nets is not None and self.others == "drop" and net not in self.nets:
            raise f.fail(f"'{key}' names pad '{pad}' on net {net!r}, which [fabrication] 'nets' drops; "
                         "add the net to 'nets' or set others = \"float\"")
        if self.window is not None:
            box = shapely.box(*self.window)
            if not any(p.geometry.intersects(box) for _, p in found):
                raise f.fail(f"'{key}' names pad '{pad}', which lies outside the [window]")
        self.alias.setdefault(pad, name)
        return [Terminal(name, la, p.geometry) for la, p in found]


def _terminal(item, names, pads):
    f = _Fields(item, TABLE_KEYS["terminal"])
    if "pad" in f.data:
        drawn = [k for k in ("rect", "circle", "polygon", "holes") if k in f.data]
        if drawn:
            raise f.fail(f"give either 'pad' or '{drawn[0]}', not both (a pad terminal takes its "
                         "copper from the fabrication files)")
        layer = _layer_name(f, "layer", names) if "layer" in f.data else None
        return pads.terminals(f, "pad", f.string("pad"), item.name, layer)
    shape = _shape(f, ("rect", "circle", "polygon"))
    if isinstance(f.data.get("layer"), list):           # one terminal across several layers
        given = f.data["layer"]
        if not given or not all(isinstance(n, str) for n in given) or len(set(given)) < len(given):
            raise f.fail(f"'layer' must be a layer name or a list of distinct layer names, got {_show(given)}")
        for n in given:
            if n not in names:
                raise f.fail(f"'layer' names unknown layer '{n}', expected one of "
                             + ", ".join(f"'{m}'" for m in names))
        return [Terminal(item.name, n, shape) for n in given]
    return [Terminal(item.name, _layer_name(f, "layer", names), shape)]


def _terminal_name(f, key, value, terminals, pads):
    """The terminal that ``value`` names: a terminal name, or a pad (see the module docstring)."""
    if not isinstance(value, str):
        raise f.fail(f"'{key}' must be a terminal name, got {_show(value)}")
    if value in terminals:
        return value
    if value in pads.alias:
        return pads.alias[value]
    if value in pads.names:
        pads.implicit += pads.terminals(f, key, value, value)
        terminals.add(value)
        return value
    close = pads.closest(value, terminals)
    hint = ("; closest: " + ", ".join(repr(c) for c in close)) if close else ""
    raise f.fail(f"'{key}' names unknown terminal '{value}'{hint}")


def _port(item, terminals, pads):
    f = _Fields(item, TABLE_KEYS["port"])
    plus = _terminal_name(f, "plus", f.raw("plus"), terminals, pads)
    minus = _terminal_name(f, "minus", f.raw("minus"), terminals, pads)
    if plus == minus:
        raise f.fail(f"'plus' and 'minus' must differ, both are '{plus}'")
    return Port(item.name, plus, minus)


def _lumped(item, terminals, pads):
    f = _Fields(item, TABLE_KEYS["lumped"])
    between = f.raw("between")
    if not (isinstance(between, list) and len(between) == 2):
        raise f.fail(f"'between' must be a list of two terminal names, got {_show(between)}")
    a, b = (_terminal_name(f, "between", t, terminals, pads) for t in between)
    if a == b:
        raise f.fail(f"'between' must name two different terminals, got '{a}' twice")
    return Lumped(item.name, (a, b),
                  resistance=_bounded(f, "resistance", "a number >= 0 (ohm)"),
                  inductance=_bounded(f, "inductance", "a number >= 0 (henry)"))


def _bounded(f, key, what, range_key=None, default=0.0):
    """A number in ``RANGES[range_key or key]`` (zero allowed where the range starts at 0)."""
    range_key = range_key or key
    v = f.number(key, default, lower=0, strict=False, what=what)
    if v is not None and not in_range(range_key, v):
        raise f.fail(f"'{key}' must be {what} from {range_text(range_key)}, got {_show(f.data[key])}")
    return v


def _sweep(item):
    if item is None:
        return np.array([0.0])
    f = _Fields(item, TABLE_KEYS["sweep"])
    ranged = [k for k in ("start", "stop", "points") if k in f.data]
    if "frequencies" in f.data and ranged:
        raise f.fail("give either 'frequencies' or 'start', 'stop' and 'points', not both")
    if "frequencies" in f.data:
        v = f.data["frequencies"]
        if not (isinstance(v, list) and v and all(_is_number(x) for x in v)):
            raise f.fail(f"'frequencies' must be a non-empty list of numbers (Hz), got {_show(v)}")
        if min(v) < 0:
            raise f.fail(f"'frequencies' must be >= 0 Hz, got {_show(min(v))}")
        if len(v) > MAX_FREQUENCIES or max(v) > _FMAX:
            raise f.fail(f"'frequencies' must hold at most {MAX_FREQUENCIES} frequencies from "
                         f"{range_text('frequency')} Hz, got {len(v)} up to {_show(max(v))}")
        return np.unique(np.asarray(v, dtype=float))
    if not ranged:
        raise f.fail("expected 'frequencies' or 'start', 'stop' and 'points'")
    start = f.number("start", lower=0, what="a positive frequency (Hz; the sweep is log-spaced)")
    stop = f.number("stop", lower=start, what=f"a frequency above 'start' ({start:g} Hz)")
    if stop > _FMAX:
        raise f.fail(f"'stop' must be at most {_FMAX:g} Hz, got {_show(f.data['stop'])}")
    points = f.integer("points", lower=2, upper=MAX_FREQUENCIES)
    return np.geomspace(start, stop, points)


def _mesh(item, default):
    """``[mesh]``; a missing key (or table) takes the size chosen from the geometry."""
    if item is None:
        return default
    f = _Fields(item, TABLE_KEYS["mesh"])
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
    f = _Fields(item, TABLE_KEYS["window"])
    x0, y0, x1, y1 = f.numbers("rect", f.raw("rect"), 4)
    if not (x0 < x1 and y0 < y1):
        raise f.fail(f"'rect' must be [x0, y0, x1, y1] with x0 < x1 and y0 < y1 (lower left, then "
                     f"upper right corner), got {_show(f.data['rect'])}")
    f.check_size("rect width", f.si(x1) - f.si(x0), x1 - x0)
    f.check_size("rect height", f.si(y1) - f.si(y0), y1 - y0)
    s = f.si
    return (s(x0), s(y0), s(x1), s(y1))


def _solver(item):
    if item is None:
        return SolverOptions()
    f = _Fields(item, TABLE_KEYS["solver"])
    tol = f.number("tolerance", SolverOptions().tolerance, lower=0, what="a number between 0 and 1")
    if tol >= 1:
        raise f.fail(f"'tolerance' must be a number between 0 and 1, got {_show(tol)}")
    return SolverOptions(method=f.string("method", "auto", ("auto", "dense", "fast")), tolerance=tol)


def _circuit(item, ports):
    if item is None:
        return None
    f = _Fields(item, TABLE_KEYS["circuit"])
    names = [p.name for p in ports]
    if "port" in f.data:
        port = f.string("port")
        if port not in names:
            raise f.fail(f"'port' names unknown port '{port}'")
    elif len(names) == 1:
        port = names[0]
    else:
        raise f.fail(f"'port' must name the port to use, one of {len(names)} in the case")
    def pos(key):
        v = f.number(key, None, lower=0, what="a positive number (SI)")
        if v is not None and not in_range("circuit", v):
            raise f.fail(f"'{key}' must be a positive number (SI) from {range_text('circuit')}, "
                         f"got {_show(f.data[key])}")
        return v
    di_dt = pos("di_dt")
    current, rise = pos("current"), pos("rise_time")
    if di_dt is not None and (current is not None or rise is not None):
        raise f.fail("give either 'di_dt' or 'current' and 'rise_time', not both")
    if (current is None) != (rise is None):
        raise f.fail("'current' and 'rise_time' go together")
    if current is not None:
        di_dt = current / rise
    return CircuitOptions(port=port, di_dt=di_dt, current=current, rise_time=rise,
                          output_capacitance=pos("output_capacitance"), input_voltage=pos("input_voltage"))


def _fabrication(item):
    """``[fabrication]`` as a dict: source (Path), nets (tuple or None), others, stackup."""
    if item is None:
        return None
    f = _Fields(item, TABLE_KEYS["fabrication"])
    nets = f.raw("nets", None)
    if nets is not None:
        if not (isinstance(nets, list) and nets and all(isinstance(n, str) for n in nets)):
            raise f.fail(f"'nets' must be a non-empty list of net names, got {_show(nets)}")
        nets = tuple(dict.fromkeys(nets))
    if "others" in f.data and nets is None:
        raise f.fail("'others' goes only with 'nets'")
    return {"source": f.path("source"), "nets": nets, "others": f.string("others", "drop", ("drop", "float")),
            "stackup": f.string("stackup", None, ("job",))}


def _job_layers(path, items, fab, opts, unit):
    """``[[layer]]`` items from the job file's stackup, merged with the explicit ones by name."""
    if opts is None or opts["stackup"] is None:
        return items, [], []
    job = fab.read_job()
    if job is None:
        raise input_error(path, "[fabrication]", "stackup = \"job\" needs a Gerber job file (*.gbrjob) "
                          f"in 'source' ({opts['source']}); none found")
    explicit = {it.name: it for it in items}
    out, notes = [], []
    for c in job.copper:
        name = f"L{c.number}"
        it = explicit.pop(name, None)
        s = unit_scale(it.unit if it is not None else unit)
        data = {"name": name, "z": c.z / s, "thickness": c.thickness / s}
        what = f"z {c.z / s:g}, thickness {c.thickness / s:g} {it.unit if it else unit}"
        if it is not None:
            data.update(it.data)
            what += "; [[layer]] '" + name + "' sets " + ", ".join(k for k in it.data if k != "name")
        out.append(_Item("layer", data, it.source if it else path, it.unit if it else unit,
                         it.index if it else c.number, name, True))
        notes.append(f"stackup: layer '{name}' <- {Path(job.source).name} copper '{c.name}' ({what})")
    for it in explicit.values():
        out.append(it)
        notes.append(f"stackup: layer '{it.name}' from its [[layer]] table (not in the job file)")
    more, warnings = _job_files_check(job, fab)
    return out, notes + more, [f"{path}: [fabrication]: {w}" for w in warnings]


def _job_files_check(job, fab):
    """Notes and warnings comparing the job file's FilesAttributes with the scan's copper files."""
    listed = {path.replace("\\", "/").rsplit("/", 1)[-1]: int(ff[1][1:]) for path, ff in job.files.items()
              if len(ff) >= 2 and ff[0] == "Copper" and ff[1][1:].isdigit()}
    name = Path(job.source).name
    lines, warnings = [], []
    if listed and len(listed) != len(job.copper):
        warnings.append(f"{name} lists {len(listed)} copper files but its "
                     f"MaterialStackup has {len(job.copper)} copper layers")
    for number, label in fab.copper.items():
        short = label.replace("\\", "/").rsplit("/", 1)[-1].rsplit("!", 1)[-1]
        if short in listed and listed[short] != number:
            warnings.append(f"{name} lists {short} as copper L{listed[short]}, "
                         f"its own FileFunction says L{number}; the file's attribute is used")
        elif short not in listed and listed:
            lines.append(f"stackup: {short} (copper L{number}) is not in {name}'s FilesAttributes")
    if listed and not lines and not warnings:
        lines.append(f"stackup: {name} FilesAttributes agree with the copper files' X2 layers "
                     f"(L1..L{len(listed)})")
    return lines, warnings


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


def _board_inputs(path, layers, drills, fab, opts, read, window, scale, unit):
    """Artwork copper per layer, vias of the drill files, notes, warnings and the board contents."""
    names = [la.name for la in layers]
    artwork, vias, notes, warnings, contents = {}, [], [], [], None
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
    if fab is not None:
        got = board.fabrication_inputs(fab, names, own_artwork=set(artwork),
                                       drill_files={d["file"].resolve() for d in drills},
                                       plating=DEFAULT_PLATING, annulus=DEFAULT_ANNULUS,
                                       clip=window, scale=scale, unit=unit, nets=opts["nets"],
                                       others=opts["others"], where=(path, "[fabrication]"))
        artwork.update(got.artwork)
        vias += got.vias
        notes += got.notes
        warnings += [f"{path}: {w}" for w in got.warnings]
        contents = BoardContents(got.pads, got.net_area, fab.read_job() if fab.job else None,
                                 opts["nets"], opts["others"], window is not None)
    return artwork, vias, notes, warnings, contents


# ----------------------------------------------------------------------------- checks
def _check_via_count(path, n, where):
    if n > MAX_VIAS:
        raise input_error(path, where, f"{n} vias in all, more than the limit of {MAX_VIAS} vias in a case")

def _check_ports(layout, ports, lumped, port_items):
    found = bodies(layout, lumped)
    for port, item in zip(ports, port_items):
        if not found.joined(port.plus, port.minus):
            raise input_error(item.source, item.label,
                              f"'plus' terminal '{port.plus}' and 'minus' terminal '{port.minus}' "
                              "are not joined by copper, vias or lumped branches")
    return found


def _via_warnings(path, layout, scale, unit):
    """One line per via that joins fewer than two layers' copper (it carries no current)."""
    lonely = [v for v in layout.vias if len(v.connects) < 2]
    lines = []
    for v in lonely[:MAX_ISLAND_WARNINGS]:
        where = f"only layer '{v.connects[0]}'" if v.connects else "no copper on any layer"
        lines.append(f"{path}: via '{v.name}' at ({v.x / scale:g}, {v.y / scale:g}) {unit} "
                     f"touches {where} of its span {v.span[0]}-{v.span[-1]}: it joins nothing "
                     "and carries no current (is it placed over copper?)")
    if len(lonely) > MAX_ISLAND_WARNINGS:
        lines.append(f"{path}: {len(lonely) - MAX_ISLAND_WARNINGS} more vias join fewer than two "
                     "layers and carry no current")
    return lines


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
    layout : copperpath.geometry.model.Layout

    Returns
    -------
    tuple of float
        ``(f_max, D)``: ``c0 / (10 sqrt(4.5) D)`` in Hz and ``D`` in metres; ``(inf, 0)``
        for a layout without copper.

    Examples
    --------
    >>> from copperpath.geometry.layout import CopperShape, build_layout
    >>> from copperpath.geometry.model import Layer
    >>> from copperpath.geometry.shapes import rect
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
    return quasi_static_frequency(d), d


# ----------------------------------------------------------------------------- entry
def load_case(path, *, read_artwork=None):
    """Read, merge (``extends``), check and convert a case file.

    Parameters
    ----------
    path : str or os.PathLike
        The case file; relative paths inside it resolve against its folder.
    read_artwork : callable, optional
        ``read_artwork(path)`` returns the copper of a layer's ``artwork`` file: a
        :class:`copperpath.geometry.formats.gerber.Artwork` or a shapely geometry in metres. Default
        :func:`copperpath.geometry.formats.read_artwork` (Gerber RS-274X/X2).

    Returns
    -------
    copperpath.geometry.model.Case
        Everything in SI units, the layout built and checked.

    Raises
    ------
    copperpath.geometry.errors.InputError
        For any problem in the file or in the artwork, drill and fabrication files it
        names, with a one-line message.
    """
    path = Path(path)
    doc = _load_doc(path)
    hint = _units_hint(doc)
    try:
        case = _build_case(path, doc, read_artwork)
    except InputError as exc:
        if hint:
            raise InputError(f"{exc}; {hint}") from None
        raise
    if hint:
        case = replace(case, warnings=case.warnings + (f"{path}: {hint}",))
    return case


def _units_hint(doc):
    """:func:`copperpath.geometry.unit_check.suspicion` for the merged items (file units)."""
    arrays, unit = doc["arrays"], doc["unit"]
    to_main = lambda it: unit_scale(it.unit) / unit_scale(unit)  # noqa: E731
    thick = [x * to_main(it) for it in arrays["layer"] for x in unit_check.raw_sizes([it.data], [])[0]]
    shapes_ = [it for table in ("copper", "terminal", "via") for it in arrays[table]]
    _, span = unit_check.raw_sizes([], [it.data for it in shapes_ if it.unit == unit])
    return unit_check.suspicion(unit, thick, span)


def _build_case(path, doc, read_artwork):
    """The body of :func:`load_case` after the files are read and merged."""
    arrays, singles = doc["arrays"], doc["singles"]
    for items in arrays.values():
        _check_unique(items)
    opts = _fabrication(singles.get("fabrication"))
    fab = scan(opts["source"]) if opts is not None else None
    layer_items, stack_notes, stack_warnings = _job_layers(path, arrays["layer"], fab, opts, doc["unit"])
    layers = [_layer(it) for it in layer_items]
    _check_stackup(path, layers, layer_items)
    layers = sorted(layers, key=lambda la: -la.z)
    names = [la.name for la in layers]
    copper = [_copper(it, names) for it in arrays["copper"]]
    vias = []
    for it in arrays["via"]:
        vias += _vias(it, layers)
        _check_via_count(path, len(vias), it.label)
    drills = tuple(_drill(it, layers) for it in arrays["drill"])
    frequencies = _sweep(singles.get("sweep"))
    window = _window(singles.get("window"))
    solver = _solver(singles.get("solver"))
    scale = unit_scale(doc["unit"])
    artwork, more_vias, notes, warnings, contents = _board_inputs(
        path, layers, drills, fab, opts, read_artwork, window, scale, doc["unit"])
    notes, warnings = stack_notes + notes, stack_warnings + warnings
    vias += more_vias
    _check_via_count(path, len(vias), "vias of the drill and fabrication files")
    pads = _Pads(contents.pads if contents else {}, window, opts and opts["nets"], opts and opts["others"])
    terminals = [t for it in arrays["terminal"] for t in _terminal(it, names, pads)]
    term_names = {t.name for t in terminals}
    ports = tuple(_port(it, term_names, pads) for it in arrays["port"])
    lumped = tuple(_lumped(it, term_names, pads) for it in arrays["lumped"])
    terminals += pads.implicit
    circuit = _circuit(singles.get("circuit"), ports)
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
    warnings += _via_warnings(path, layout, scale, doc["unit"])
    warnings += _island_warnings(path, found, ports, scale, doc["unit"])
    f_lim, d = quasi_static_limit(layout)
    if frequencies.max() > f_lim:
        warnings.append(f"{path}: [sweep]: top frequency {frequencies.max():g} Hz exceeds the "
                        f"quasi-static limit c0/(10 sqrt({EPS_R_BOARD:g}) D) = {f_lim:.3g} Hz for the "
                        f"largest modelled dimension D = {d / scale:g} {doc['unit']}")
    return Case(path=path, title=doc["title"] or path.stem, unit=doc["unit"], unit_scale=scale,
                layout=layout, ports=ports, lumped=lumped, frequencies=frequencies,
                mesh=mesh, solver=solver, circuit=circuit, window=window,
                warnings=tuple(warnings), drills=drills, fabrication=opts and opts["source"],
                notes=tuple(notes), board=contents)
