"""Readers for fabrication data: Gerber artwork and Excellon drill files.

One module per format; this registry tells them apart by content (and by suffix only when
the content says nothing):

- Gerber: a ``%FS``, ``%MO``, ``%TF`` or ``%AD`` extended command near the start;
- Excellon: an ``M48`` line, or a ``METRIC``/``INCH`` line next to a ``T<n>C<d>`` tool.
"""
from __future__ import annotations

import io  # noqa: F401 (used by the doctests)
import re

from copperpath.geometry.errors import input_error
from copperpath.geometry.formats import excellon, gerber
from copperpath.geometry.formats.excellon import Drills
from copperpath.geometry.formats.gerber import DEFAULT_CHORD, Artwork, load_text

__all__ = ["FORMATS", "SUFFIXES", "detect", "read_artwork", "read_drills", "Artwork", "Drills"]

FORMATS = {"gerber": gerber.read_text, "excellon": excellon.read_text}
"""Reader of each format, taking ``(text, *, name)``."""

SUFFIXES = {
    "gerber": (".gbr", ".ger", ".gtl", ".gbl", ".gto", ".gbo", ".gts", ".gbs", ".gtp", ".gbp",
               ".gm1", ".gko", ".art", ".pho") + tuple(f".g{k}" for k in range(1, 31)),
    "excellon": (".drl", ".xln", ".exc", ".drd", ".txt", ".nc", ".tap"),
}
"""Customary file suffixes, used only when the content is not recognised."""

_GERBER = re.compile(r"%\s*(FS[LTD]?[AI]|MO(MM|IN)|TF\.|AD\s*D\d)")
_EXCELLON_M48 = re.compile(r"^\s*M48\s*$", re.M)
_EXCELLON_UNITS = re.compile(r"^\s*(METRIC|INCH)\b", re.M)
_EXCELLON_TOOL = re.compile(r"^\s*T\d+[A-Z0-9.]*C[\d.]+", re.M)


def detect(text: str, name: str = "") -> str | None:
    """Return ``"gerber"``, ``"excellon"`` or None for the given file content.

    Parameters
    ----------
    text : str
        The file content (the first 64 kB are enough).
    name : str, optional
        File name; its suffix decides only when the content is not recognised.

    Examples
    --------
    >>> detect("%FSLAX26Y26*%%MOMM*%"), detect("M48\\nMETRIC\\n"), detect("hello", "a.txt")
    ('gerber', 'excellon', None)
    """
    head = text[:65536]
    if _GERBER.search(head):
        return "gerber"
    if _EXCELLON_M48.search(head) or (_EXCELLON_UNITS.search(head) and _EXCELLON_TOOL.search(head)):
        return "excellon"
    if "*" in head and re.search(r"[XY][+-]?\d+.*D0?[123]\*", head):
        return "gerber"
    return None


def read_artwork(path_or_buffer, *, chord: float = DEFAULT_CHORD, name: str | None = None,
                 clip: tuple[float, float, float, float] | None = None) -> Artwork:
    """Read a copper artwork file, checking first that it is Gerber.

    Parameters
    ----------
    path_or_buffer : str, os.PathLike or file-like
    chord : float, optional
        Chord tolerance in metres (see :mod:`copperpath.geometry.formats.gerber`).
    name : str, optional
        Name used in messages.
    clip : tuple of float, optional
        ``(x0, y0, x1, y1)`` in metres: only the image inside this rectangle (see
        :func:`copperpath.geometry.formats.gerber.read`).

    Returns
    -------
    Artwork

    Examples
    --------
    >>> art = read_artwork(io.StringIO("%FSLAX26Y26*%%MOMM*%%ADD10R,1X2*%D10*X0Y0D03*M02*"))
    >>> round(art.geometry.area * 1e6, 6)
    2.0
    """
    text, label = load_text(path_or_buffer, name)
    kind = detect(text, label)
    if kind == "excellon":
        raise input_error(label, None, "this is an Excellon drill file; expected Gerber artwork")
    if kind is None and not label.lower().endswith(SUFFIXES["gerber"]):
        raise input_error(label, None, "not a Gerber file (no %FS, %MO, %TF or %AD command found)")
    return gerber.read_text(text, name=label, chord=chord, clip=clip)


def read_drills(path_or_buffer, *, name: str | None = None) -> Drills:
    """Read a drill file, checking first that it is Excellon.

    Examples
    --------
    >>> len(read_drills(io.StringIO("M48\\nINCH\\nT1C0.01\\n%\\nT1\\nX1.0Y1.0\\nX2.0\\nM30\\n")).xy)
    2
    """
    text, label = load_text(path_or_buffer, name)
    kind = detect(text, label)
    if kind == "gerber":
        raise input_error(label, None, "this is a Gerber file; expected an Excellon drill file")
    if kind is None and not label.lower().endswith(SUFFIXES["excellon"]):
        raise input_error(label, None, "not an Excellon file (no M48 header or METRIC/INCH with tools found)")
    return excellon.read_text(text, name=label)
