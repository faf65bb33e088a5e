"""Limits of the input readers and the checks that apply them where values are read.

One rule for coordinates and sizes: finite, and within :data:`BOARD_EXTENT` of the origin
(2 m: far beyond any circuit board, far below the magnitudes where the shapely/GEOS
geometry engine and the 1 nm precision grid lose meaning). Further limits keep a reader
from expanding a small file into more objects than fit in memory or time (the numbers are
ours, chosen about ten times above the largest boards we expect; see DEVELOPERS.md,
"Reader limits").

Every check raises :class:`~copperpath.geometry.errors.InputError` through a caller-supplied
``fail(message)`` so that the message names the file and item in the caller's format.
"""
from __future__ import annotations

import math
import os
import stat
import unicodedata

from copperpath.geometry.errors import input_error

#: Largest absolute coordinate and largest size (diameter, width, radius) in metres.
BOARD_EXTENT = 2.0
#: Smallest positive length in metres: the 1 nm precision grid of the layout
#: (:data:`copperpath.geometry.layout.GRID`); anything smaller vanishes on the grid.
MIN_LENGTH = 1e-9
#: Most vias in a case (arrays expanded, drill files included).
MAX_VIAS = 100_000
#: Most graphics objects in one Gerber file after step-and-repeat and block flashes.
MAX_GERBER_OBJECTS = 2_000_000
#: Most polygon vertices of one Gerber image before it is united (about 1.6 GB of coordinates).
MAX_GERBER_VERTICES = 100_000_000
#: Most rings of a moire macro primitive.
MAX_MACRO_RINGS = 100
#: Most drill hits plus slots in one Excellon file after repeat commands (twice the via limit:
#: non-plated holes are not vias).
MAX_DRILL_HITS = 200_000
#: Largest Gerber or Excellon file in bytes (100 MiB).
MAX_FILE_BYTES = 100 * 2**20
#: Largest case file in bytes (4 MiB).
MAX_CASE_BYTES = 4 * 2**20
#: Highest copper layer number of fabrication data (X2 ``Copper,L<n>``, drill spans).
MAX_LAYER_NUMBER = 100

#: Allowed ranges ``(low, high)`` of physical values, in SI units, inclusive.
RANGES = {
    "thickness": (1e-8, 0.01),          # copper thickness, m: 10 nm to 10 mm
    "plating": (1e-8, 0.01),            # barrel wall, m
    "conductivity": (1e3, 1e9),         # S/m: silver 6.3e7, copper 5.8e7, resistive alloys 1e6
    "frequency": (0.0, 1e12),           # Hz
    "resistance": (0.0, 1e9),           # ohm (lumped branch)
    "inductance": (0.0, 1.0),           # henry (lumped branch)
    "circuit": (1e-30, 1e30),           # di/dt, current, rise time, capacitance, voltage (SI)
}
#: Most frequencies of a sweep.
MAX_FREQUENCIES = 10_000
#: Most sublayers of a layer.
MAX_SUBLAYERS = 32


def in_range(key, value):
    """Whether ``value`` lies in ``RANGES[key]``.

    Examples
    --------
    >>> in_range("conductivity", 5.8e7), in_range("thickness", 1e-300)
    (True, False)
    """
    low, high = RANGES[key]
    return math.isfinite(value) and low <= value <= high


def range_text(key, scale=1.0, unit=""):
    """The range of ``key`` as text, lengths shown in ``unit`` (``scale`` metres per unit).

    Examples
    --------
    >>> range_text("thickness", 1e-3, "mm")
    '1e-05 to 10 mm'
    """
    low, high = RANGES[key]
    return f"{low / scale:g} to {high / scale:g}" + (f" {unit}" if unit else "")


def coordinate_ok(value_m):
    """Whether a coordinate in metres is finite and inside the board extent."""
    return math.isfinite(value_m) and abs(value_m) <= BOARD_EXTENT


def size_ok(value_m):
    """Whether a positive size in metres lies in ``[MIN_LENGTH, BOARD_EXTENT]``."""
    return math.isfinite(value_m) and MIN_LENGTH <= value_m <= BOARD_EXTENT


def as_float(value):
    """``float(value)``, or ``None`` when it is not a finite number (bools are not numbers).

    Integers too large for a float give ``None`` instead of raising.

    Examples
    --------
    >>> as_float(3), as_float(10 ** 400), as_float(float("nan")), as_float(True)
    (3.0, None, None, None)
    """
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    try:
        v = float(value)
    except OverflowError:
        return None
    return v if math.isfinite(v) else None


def text_problem(text):
    """Say what is wrong with a name or a path given as text, or return ``None``.

    Control, format and unassigned characters (Unicode category C: NUL, escape, bidi
    overrides...) are refused: they garble terminal output and file names.

    Examples
    --------
    >>> text_problem("C1.1"), text_problem("A\\x07")
    (None, 'contains the control character U+0007')
    """
    for ch in text:
        if unicodedata.category(ch)[0] == "C":
            return f"contains the control character U+{ord(ch):04X}"
    return None


def read_regular(path, label=None, max_bytes=MAX_FILE_BYTES):
    """Read a regular file, refusing FIFOs, devices, folders and files above ``max_bytes``.

    The file is opened without blocking (a FIFO never hangs the reader) and its type
    checked on the open descriptor; at most ``max_bytes + 1`` bytes are read.

    Parameters
    ----------
    path : str or os.PathLike
    label : str, optional
        File name in messages; default ``path``.
    max_bytes : int, optional

    Returns
    -------
    bytes

    Raises
    ------
    copperpath.geometry.errors.InputError
    """
    label = str(path) if label is None else label
    try:
        if "\0" in os.fspath(path):
            raise input_error(label, None, "the file name contains a NUL character")
        st = os.stat(path)
        if not stat.S_ISREG(st.st_mode):
            raise input_error(label, None, f"not a regular file ({_kind(st.st_mode)}); expected a file")
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
        with os.fdopen(fd, "rb") as f:
            st = os.fstat(f.fileno())
            if not stat.S_ISREG(st.st_mode):
                raise input_error(label, None, f"not a regular file ({_kind(st.st_mode)}); expected a file")
            if st.st_size > max_bytes:
                raise input_error(label, None, f"{st.st_size} bytes, more than the limit of {max_bytes}")
            data = f.read(max_bytes + 1)
    except OSError as exc:
        raise input_error(label, None, f"cannot read the file: {exc.strerror or exc}") from None
    if len(data) > max_bytes:
        raise input_error(label, None, f"more than the limit of {max_bytes} bytes")
    return data


def _kind(mode):
    for test, name in ((stat.S_ISDIR, "a folder"), (stat.S_ISFIFO, "a FIFO"), (stat.S_ISCHR, "a character device"),
                       (stat.S_ISBLK, "a block device"), (stat.S_ISSOCK, "a socket")):
        if test(mode):
            return name
    return "not a regular file"
