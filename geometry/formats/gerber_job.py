"""Gerber job file (``*.gbrjob``, JSON): the stackup and which file is which layer.

Reads the parts of the Gerber Job Format (Ucamco, revision 2022.02; section names from memory)
that give the copper stackup:

- ``MaterialStackup``: the board's layers from the top down, each with ``Type``
  (``Copper``, ``Dielectric``, ``SolderMask``, ``Legend``, ...), ``Thickness`` (mm) and
  ``Name``; the k-th ``Copper`` entry is copper layer ``L<k>``;
- ``FilesAttributes``: ``Path`` and ``FileFunction`` (``"Copper,L1,Top"``) of each file;
- ``GeneralSpecs``: ``BoardThickness`` (mm) and ``LayerNumber``.

Lengths in the job file are millimetres (the format has no other unit). Elevations are
measured from the bottom face of the lowest copper layer (z = 0) upwards: a copper layer's
``z`` is the elevation of its bottom face, as in a case's ``[[layer]]`` table. Only what lies
between the top and the bottom copper layer enters the elevations (solder mask and legend
do not).
"""
from __future__ import annotations

import io  # noqa: F401 (used by the doctests)
import json
import math
from dataclasses import dataclass

from copperpath.geometry.errors import input_error
from copperpath.geometry.formats.gerber import load_text

__all__ = ["CopperLayer", "Job", "read", "read_text", "looks_like_job"]


@dataclass(frozen=True)
class CopperLayer:
    """One copper layer of the job file's stackup.

    Attributes
    ----------
    number : int
        Copper layer number, 1 = top.
    name : str
        The job file's name for it (may be empty).
    z : float
        Elevation of the bottom face in metres (0 at the bottom face of the lowest copper).
    thickness : float
        Metres.
    """

    number: int
    name: str
    z: float
    thickness: float


@dataclass(frozen=True)
class Job:
    """Result of :func:`read`.

    Attributes
    ----------
    source : str
        File name used in messages.
    copper : tuple of CopperLayer
        Top down.
    dielectrics : tuple of tuple
        ``(name, thickness in metres, material)`` of each layer between two copper layers,
        top down.
    files : dict of str to tuple of str
        ``FileFunction`` fields of each ``Path`` in ``FilesAttributes``.
    board_thickness : float or None
        ``GeneralSpecs.BoardThickness`` in metres.
    """

    source: str
    copper: tuple[CopperLayer, ...]
    dielectrics: tuple[tuple, ...]
    files: dict
    board_thickness: float | None = None


def looks_like_job(text: str, name: str = "") -> bool:
    """Whether a file is a Gerber job file (suffix ``.gbrjob``, or JSON naming its sections).

    Examples
    --------
    >>> looks_like_job('{"Header": {}, "FilesAttributes": []}'), looks_like_job("M48")
    (True, False)
    """
    if name.lower().endswith(".gbrjob"):
        return True
    head = text[:4096].lstrip()
    return head.startswith("{") and ('"FilesAttributes"' in head or '"MaterialStackup"' in text[:65536])


def read(path_or_buffer, *, name: str | None = None) -> Job:
    """Read a Gerber job file.

    Parameters
    ----------
    path_or_buffer : str, os.PathLike or file-like
    name : str, optional
        Name used in messages.

    Returns
    -------
    Job

    Raises
    ------
    copperpath.geometry.errors.InputError
        Not JSON, no ``MaterialStackup`` with copper, a thickness missing or not positive.
    """
    text, label = load_text(path_or_buffer, name)
    return read_text(text, name=label)


def read_text(text: str, *, name: str = "<string>") -> Job:
    """Read a job file given as a string; see :func:`read`.

    Examples
    --------
    >>> job = read_text(json.dumps({"MaterialStackup": [
    ...     {"Type": "Copper", "Thickness": 0.035, "Name": "F.Cu"},
    ...     {"Type": "Dielectric", "Thickness": 1.51},
    ...     {"Type": "Copper", "Thickness": 0.035, "Name": "B.Cu"}]}))
    >>> [(c.name, round(c.z * 1e3, 6), round(c.thickness * 1e3, 6)) for c in job.copper]
    [('F.Cu', 1.545, 0.035), ('B.Cu', 0.0, 0.035)]
    """
    try:
        doc = json.loads(text)
    except json.JSONDecodeError as exc:
        raise input_error(name, None, f"not a Gerber job file: JSON error at line {exc.lineno}: {exc.msg}") from None
    if not isinstance(doc, dict):
        raise input_error(name, None, "not a Gerber job file: expected a JSON object")
    stack = doc.get("MaterialStackup")
    if not isinstance(stack, list) or not all(isinstance(e, dict) for e in stack):
        raise input_error(name, "MaterialStackup", "missing or not a list of layers; the job file "
                          "does not state the stackup")
    layers = []
    for k, e in enumerate(stack, start=1):
        kind = e.get("Type")
        t = e.get("Thickness")
        if t is not None and not (isinstance(t, (int, float)) and not isinstance(t, bool)
                                  and math.isfinite(t) and t >= 0):
            raise input_error(name, f"MaterialStackup #{k}", f"'Thickness' must be a length in mm >= 0, got {t!r}")
        layers.append((str(kind), None if t is None else float(t) / 1000, str(e.get("Name", "")),
                       str(e.get("Material", "")), k))
    cu = [i for i, layer in enumerate(layers) if layer[0] == "Copper"]
    if not cu:
        raise input_error(name, "MaterialStackup", "has no layer of Type 'Copper'")
    inside = layers[cu[0]:cu[-1] + 1]
    for kind, t, lname, _, k in inside:
        if t is None or (kind == "Copper" and t <= 0):
            raise input_error(name, f"MaterialStackup #{k} '{lname}'",
                              f"{kind} layer needs a positive 'Thickness' (mm) to place the copper")
    z, copper, dielectrics = 0.0, [], []
    number = len(cu)
    for kind, t, lname, material, _ in reversed(inside):
        if kind == "Copper":
            copper.append(CopperLayer(number, lname, z, t))
            number -= 1
        else:
            dielectrics.append((lname, t, material))
        z += t
    files = {}
    for e in doc.get("FilesAttributes", []) or []:
        if isinstance(e, dict) and isinstance(e.get("Path"), str):
            files[e["Path"]] = tuple(f.strip() for f in str(e.get("FileFunction", "")).split(","))
    specs = doc.get("GeneralSpecs", {})
    bt = specs.get("BoardThickness") if isinstance(specs, dict) else None
    bt = float(bt) / 1000 if isinstance(bt, (int, float)) and not isinstance(bt, bool) else None
    return Job(name, tuple(reversed(copper)), tuple(reversed(dielectrics)), files, bt)
