"""Excellon (NC drill) reader: drill hits and slots in metres.

Follows the Excellon format as written by PCB layout tools (IPC-NC-349 conventions and the
Excellon command set, cited from memory):

- header ``M48`` ... ``%`` or ``M95``; ``METRIC`` / ``INCH`` with ``LZ`` / ``TZ`` and an
  optional digit pattern (``METRIC,TZ,000.000``); ``M71`` / ``M72`` switch units; the
  comment ``;FILE_FORMAT=3:3`` sets the digits; ``FMAT``, ``VER``, ``DETECT``, ``ATC`` and
  similar header switches are ignored;
- tool table ``T1C0.300`` (other tool parameters such as F, S, B, H, Z are ignored), tools
  may also be defined in the body; ``T0`` unloads the tool;
- drill hits ``X..Y..`` with modal coordinates, either with a decimal point or as integers
  in the file's digit format; ``R<n>X..Y..`` repeats a hit n times with that step;
- ``G85`` slots (``X..Y..G85X..Y..``) and routed slots (``G00`` move, ``M15`` tool down,
  ``G01`` cuts, ``M16``/``M17`` tool up, ``G05`` back to drilling); ``G90``, ``G93``
  (origin shift) and ``G05`` are honoured; ``M30`` or ``M00`` ends the program.

Zeros: ``LZ`` means leading zeros are kept (trailing ones may be dropped, the digits are
read from the left); ``TZ`` means trailing zeros are kept (digits read from the right).
Integer coordinates in a file that states neither are read as ``TZ`` with a warning.
Without a digit pattern, metric files use 3.3 and inch files 2.4 digits (common practice).

Plating, in order of precedence: a per-tool ``; #@! TA.AperFunction,Plated|NonPlated,...``
comment before the tool definition (X2 attribute written as a comment) or an Altium-style
``;TYPE=PLATED|NON_PLATED`` comment; the file attribute
``; #@! TF.FileFunction,Plated|NonPlated,a,b,...`` (``MixedPlating`` leaves it to the tools);
a file name containing ``NPTH``,
``non-plated``, ``nonplated`` or ``unplated`` (case-insensitive) means non-plated; otherwise
holes are plated.

Not supported (InputError naming the line): incremental coordinates (``G91``, ``ICI,ON``),
routed arcs (``G02``/``G03``), canned cycles and text (``M97``/``M98``, ``G81``...).
"""
from __future__ import annotations

import io  # noqa: F401 (used by the doctests)
import re
from dataclasses import dataclass, field
from typing import NamedTuple

import numpy as np

from copperpath.geometry.errors import input_error
from copperpath.geometry.formats.gerber import load_text
from copperpath.geometry.limits import BOARD_EXTENT, MAX_DRILL_HITS, coordinate_ok, size_ok

__all__ = ["Drills", "Slot", "read", "read_text"]

_UNITS = {"METRIC": (1e-3, "mm", (3, 3)), "INCH": (25.4e-3, "inch", (2, 4))}
_COORD = re.compile(r"(?:X([+-]?[\d.]+))?(?:Y([+-]?[\d.]+))?\Z")
_TOOL = re.compile(r"T(\d+)((?:[A-Z][+-]?[\d.]+)*)\Z")
_ATTR = re.compile(r";\s*#@!\s*(T[FAOD])\s*\.?([^,]*)(.*)\Z")
_SPAN = re.compile(r"[0-9]{1,6}")
_NPTH_NAME = re.compile(r"npth|non-?plated|unplated", re.I)
_MAX_REPEAT = 100_000
#: Allowed digits before and after the decimal point of integer coordinates.
_INT_DIGITS, _DEC_DIGITS = range(0, 10), range(0, 10)


class Slot(NamedTuple):
    """A slot: a straight cut of ``diameter`` from ``start`` to ``end`` (metres)."""

    start: tuple[float, float]
    end: tuple[float, float]
    diameter: float
    plated: bool


@dataclass(frozen=True)
class Drills:
    """Holes of one drill file.

    Attributes
    ----------
    xy : numpy.ndarray
        (n, 2) hit centres in metres.
    diameter : numpy.ndarray
        (n,) hole diameters in metres.
    plated : numpy.ndarray
        (n,) bool, True for plated holes.
    slots : tuple of Slot
        Slots in file order (start, end, diameter in metres, plated).
    file_attributes : dict of str to tuple of str
        X2 file attributes from ``; #@! TF.`` comments, e.g.
        ``{"FileFunction": ("Plated", "1", "4", "PTH")}``.
    units : str or None
        ``"mm"`` or ``"inch"``.
    source : str
        File name used in messages.
    warnings : tuple of str
        Non-fatal findings, one line each.
    """

    xy: np.ndarray
    diameter: np.ndarray
    plated: np.ndarray
    slots: tuple[Slot, ...] = ()
    file_attributes: dict = field(default_factory=dict)
    units: str | None = None
    source: str = ""
    warnings: tuple[str, ...] = ()

    @property
    def span(self) -> tuple[int, int] | None:
        """Copper layers ``(a, b)`` the holes join, from ``.FileFunction``, or None."""
        ff = self.file_attributes.get("FileFunction", ())
        if len(ff) >= 3 and ff[0] in ("Plated", "NonPlated", "MixedPlating") and _SPAN.fullmatch(ff[1]) and _SPAN.fullmatch(ff[2]):
            return int(ff[1]), int(ff[2])
        return None


def read(path_or_buffer, *, name: str | None = None) -> Drills:
    """Read an Excellon drill file.

    Parameters
    ----------
    path_or_buffer : str, os.PathLike or file-like
        File name, or an open text or binary file.
    name : str, optional
        Name used in messages (and for the NPTH file-name hint); default the path.

    Returns
    -------
    Drills

    Raises
    ------
    copperpath.geometry.errors.InputError
        One line ``"<file>:<line>: <what was wrong, what was expected>"``.

    Examples
    --------
    >>> d = read(io.StringIO("M48\\nMETRIC\\nT1C0.300\\n%\\nT1\\nX1.0Y2.0\\nM30\\n"))
    >>> d.xy.tolist(), d.diameter.tolist(), d.plated.tolist()
    ([[0.001, 0.002]], [0.0003], [True])
    """
    text, label = load_text(path_or_buffer, name)
    return read_text(text, name=label)


def read_text(text: str, *, name: str = "<string>") -> Drills:
    """Read Excellon data given as a string; see :func:`read`."""
    return _Reader(name).run(text)


@dataclass
class _Tool:
    diameter: float
    plated: bool | None


class _Reader:
    def __init__(self, name):
        self.name = name
        self.unit = self.unit_name = None
        self.digits = None
        self.zeros = None               # "LZ", "TZ" or None
        self.tools, self.tool = {}, None
        self.x = self.y = 0.0
        self.origin = (0.0, 0.0)
        self.route = None               # None: drilling; "G00" / "G01" in route mode
        self.down = False
        self.pending_plated = None      # plating for the next tool definition
        self.attrs, self.warnings = {}, []
        self.hits, self.slots = [], []
        self.zero_warned = False

    def error(self, line, message):
        return input_error(f"{self.name}:{line}", None, message)

    def run(self, text):
        header = False
        for n, raw in enumerate(text.splitlines(), start=1):
            line = raw.strip()
            if not line:
                continue
            try:
                if line.startswith(";"):
                    self.comment(n, line)
                elif line == "M48":
                    header = True
                elif header and line in ("%", "M95"):
                    header = False
                elif header:
                    self.header(n, line)
                elif line in ("M30", "M00", "M0"):
                    break
                else:
                    self.body(n, line)
            except (ValueError, OverflowError) as exc:
                raise self.error(n, f"cannot interpret {line[:40]!r}: {exc}") from None
        return self.result()

    def result(self):
        file_plated = self.file_plated()
        xy = np.array([h[0] for h in self.hits], dtype=float).reshape(-1, 2)
        tools = [h[1] for h in self.hits]
        diameter = np.array([t.diameter for t in tools], dtype=float)
        plated = np.array([file_plated if t.plated is None else t.plated for t in tools], dtype=bool)
        slots = tuple(Slot(s, e, t.diameter, file_plated if t.plated is None else t.plated)
                      for s, e, t in self.slots)
        return Drills(xy, diameter, plated, slots, dict(self.attrs), self.unit_name, self.name,
                      tuple(self.warnings))

    def file_plated(self):
        ff = self.attrs.get("FileFunction", ())
        if ff and ff[0] in ("Plated", "NonPlated"):
            return ff[0] == "Plated"
        return not _NPTH_NAME.search(self.name.replace("\\", "/").rsplit("/", 1)[-1])

    # ----------------------------------------------------------- comments and header

    def comment(self, n, line):
        m = _ATTR.match(line)
        if m:
            kind, key, rest = m.groups()
            values = tuple(v.strip() for v in rest.split(",")[1:])
            if kind == "TF" and key:
                self.attrs[key.strip()] = values
            elif kind == "TA" and key.strip() == "AperFunction" and values:
                self.pending_plated = {"Plated": True, "NonPlated": False}.get(values[0])
            elif kind == "TD":
                self.pending_plated = None
            return
        m = re.match(r";\s*FILE_FORMAT\s*=\s*(\d+):(\d+)", line)
        if m:
            self.set_digits(n, int(m.group(1)), int(m.group(2)), line)
            return
        m = re.match(r";\s*TYPE\s*=\s*(PLATED|NON_PLATED)", line, re.I)
        if m:
            self.pending_plated = m.group(1).upper() == "PLATED"

    def header(self, n, line):
        fields = line.split(",")
        if fields[0] in _UNITS:
            self.set_unit(fields[0])
            for f in fields[1:]:
                if f in ("LZ", "TZ"):
                    self.zeros = f
                elif re.fullmatch(r"0+\.0+", f):
                    a, b = f.split(".")
                    self.set_digits(n, len(a), len(b), f)
                elif f:
                    raise self.error(n, f"unknown field {f[:20]!r} after {fields[0]}; "
                                        "expected LZ, TZ or a digit pattern like 000.000")
        elif line in ("M71", "M72"):
            self.set_unit("METRIC" if line == "M71" else "INCH")
        elif line.startswith("T") and line[1:2].isdigit():
            self.define_tool(n, line, select=False)
        elif fields[0] == "ICI" and fields[1:] == ["ON"]:
            raise self.error(n, "incremental coordinates (ICI,ON) are not supported")
        elif line in ("G90", "G05"):
            pass
        elif line == "G91":
            raise self.error(n, "incremental coordinates (G91) are not supported; expected absolute (G90)")
        elif not re.fullmatch(r"[A-Z][A-Z0-9_]*(,[^;]*)?", line):
            raise self.error(n, f"unknown header line {line[:40]!r}; "
                                "expected METRIC/INCH, a tool like T1C0.300, or '%'")

    def set_digits(self, n, n_int, n_dec, text):
        if n_int not in _INT_DIGITS or n_dec not in _DEC_DIGITS or n_int + n_dec == 0:
            raise self.error(n, f"digit format {text[:40]!r} has {n_int}:{n_dec} digits; expected "
                                "0 to 9 digits before and after the decimal point (e.g. 3:3)")
        self.digits = (n_int, n_dec)

    def set_unit(self, unit):
        self.unit, self.unit_name, default = _UNITS[unit]
        if self.digits is None:
            self.digits = default

    def define_tool(self, n, line, select):
        m = _TOOL.match(line)
        if m is None:
            raise self.error(n, f"malformed tool {line[:40]!r}; expected e.g. T1C0.300")
        number = int(m.group(1))
        params = dict(re.findall(r"([A-Z])([+-]?[\d.]+)", m.group(2)))
        if "C" not in params:
            if select and not params:
                return self.select(n, number)
            raise self.error(n, f"tool T{number} has no diameter; expected e.g. T{number}C0.300")
        if self.unit is None:
            raise self.error(n, f"tool T{number} defined before the units; expected METRIC or INCH in the header")
        d = float(params["C"])
        if not (d == 0 or size_ok(d * self.unit)):
            raise self.error(n, f"tool T{number} diameter {params['C'][:20]} must be 0 or a positive size "
                                f"up to {BOARD_EXTENT / self.unit:g} {self.unit_name}")
        self.tools[number] = _Tool(d * self.unit, self.pending_plated)
        if select:
            self.tool = self.tools[number]

    def select(self, n, number):
        if number == 0:
            self.tool = None
        elif number not in self.tools:
            raise self.error(n, f"tool T{number} used before definition in the tool table")
        else:
            self.tool = self.tools[number]

    # ----------------------------------------------------------- body

    def body(self, n, line):
        if line.startswith("T") and line[1:2].isdigit():
            self.define_tool(n, line, select=True)
        elif line in ("M15", "M16", "M17"):
            self.down = line == "M15"
        elif line in ("G90", "M71", "M72", "G05", "M95", "%"):
            if line in ("M71", "M72"):
                self.set_unit("METRIC" if line == "M71" else "INCH")
            if line == "G05":
                self.route, self.down = None, False
        elif line.startswith(("METRIC", "INCH")):
            self.header(n, line)
        elif re.match(r"G0?[01](?!\d)", line):
            m = re.match(r"G0?([01])(.*)\Z", line)
            self.route = "G0" + m.group(1)
            self.routed(n, m.group(2))
        elif line.startswith("G93"):
            self.origin = self.step(n, line[3:])
        elif "G85" in line:
            a, _, b = line.partition("G85")
            self.x, self.y = self.point(n, a)
            start = (self.x, self.y)
            self.x, self.y = self.point(n, b)
            self.count(n, 1)
            self.slots.append((start, (self.x, self.y), self.need_tool(n)))
        elif line.startswith("R"):
            m = re.match(r"R(\d+)(.*)\Z", line)
            count = int(m.group(1)) if m else -1
            if not 0 < count <= _MAX_REPEAT:
                raise self.error(n, f"malformed repeat {line[:40]!r}; expected R<count>X<step>Y<step>")
            dx, dy = self.step(n, m.group(2))
            tool = self.need_tool(n)
            self.count(n, count)
            end = (self.x + count * dx, self.y + count * dy)
            if not (coordinate_ok(end[0]) and coordinate_ok(end[1])):
                raise self.error(n, f"repeat {line[:40]!r} ends outside the board extent "
                                    f"({BOARD_EXTENT * 1e3:g} mm from the origin)")
            for _ in range(count):
                self.x, self.y = self.x + dx, self.y + dy
                self.hits.append(((self.x, self.y), tool))
        elif line[0] in "XY":
            if self.route is not None:
                self.routed(n, line)
            else:
                self.x, self.y = self.point(n, line)
                self.count(n, 1)
                self.hits.append(((self.x, self.y), self.need_tool(n)))
        elif line.startswith(("G02", "G03", "G2", "G3")):
            raise self.error(n, "routed arcs (G02/G03) are not supported; expected straight routes (G01)")
        elif line == "G91":
            raise self.error(n, "incremental coordinates (G91) are not supported; expected absolute (G90)")
        else:
            raise self.error(n, f"unknown or unsupported command {line[:40]!r}")

    def routed(self, n, rest):
        start = (self.x, self.y)
        if rest:
            self.x, self.y = self.point(n, rest)
        if self.route == "G01" and self.down:
            self.count(n, 1)
            self.slots.append((start, (self.x, self.y), self.need_tool(n)))

    def count(self, n, more):
        if len(self.hits) + len(self.slots) + more > MAX_DRILL_HITS:
            raise self.error(n, f"more than {MAX_DRILL_HITS} drill hits and slots (repeats expanded); "
                                "expected a board's drill file")

    def need_tool(self, n):
        if self.tool is None:
            raise self.error(n, "drill hit or slot before a tool was selected; expected e.g. T1 first")
        return self.tool

    def number(self, n, text, axis):
        """Convert one coordinate to metres (no origin shift)."""
        if self.unit is None:
            raise self.error(n, "coordinates before the units; expected METRIC or INCH in the header")
        if "." in text:
            value = float(text)
        else:
            n_int, n_dec = self.digits
            digits = text.lstrip("+-")
            if not re.fullmatch("[0-9]+", digits):
                raise self.error(n, f"malformed {axis} coordinate {text[:20]!r}")
            if len(digits) > n_int + n_dec:
                raise self.error(n, f"{axis} coordinate {text[:20]} has more digits than the format "
                                    f"{n_int}:{n_dec}; expected at most {n_int + n_dec}")
            if self.zeros is None and len(digits) != n_int + n_dec and not self.zero_warned:
                self.warnings.append(f"{self.name}:{n}: integer coordinates without LZ/TZ; read as TZ "
                                     "(trailing zeros kept)")
                self.zero_warned = True
            if self.zeros == "LZ":
                digits = digits.ljust(n_int + n_dec, "0")
            value = int(digits) * 10.0 ** -n_dec * (-1 if text.startswith("-") else 1)
        value *= self.unit
        if not coordinate_ok(value):
            raise self.error(n, f"{axis} coordinate {text[:20]} lies outside the board extent "
                                f"({BOARD_EXTENT * 1e3:g} mm from the origin)")
        return value

    def point(self, n, text):
        """Modal point: a missing X or Y keeps the previous value."""
        m = _COORD.match(text)
        if m is None or not text:
            raise self.error(n, f"cannot parse coordinates {text[:40]!r}; expected X<number>Y<number>")
        x = self.number(n, m.group(1), "X") + self.origin[0] if m.group(1) is not None else self.x
        y = self.number(n, m.group(2), "Y") + self.origin[1] if m.group(2) is not None else self.y
        if not (coordinate_ok(x) and coordinate_ok(y)):
            raise self.error(n, f"point {text[:40]!r} after the origin shift (G93) lies outside the "
                                f"board extent ({BOARD_EXTENT * 1e3:g} mm from the origin)")
        return x, y

    def step(self, n, text):
        m = _COORD.match(text)
        if m is None or not text:
            raise self.error(n, f"cannot parse the repeat step {text[:40]!r}; expected X<step>Y<step>")
        dx = self.number(n, m.group(1), "X") if m.group(1) is not None else 0.0
        dy = self.number(n, m.group(2), "Y") if m.group(2) is not None else 0.0
        return dx, dy
