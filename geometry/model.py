"""Plain data objects that describe a case, all lengths in metres (SI).

The case reader (:mod:`copperpath.geometry.case`) builds them; the mesher and the solver read them.
They are frozen: a stage that changes something returns a new object.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np


@dataclass(frozen=True)
class Layer:
    """One copper layer of the stackup.

    Attributes
    ----------
    name : str
    z : float
        Elevation of the copper's bottom face in metres.
    thickness : float
        Copper thickness in metres.
    conductivity : float
        Conductivity in S/m.
    sublayers : int or str
        Number of sublayers across the thickness (1: uniform current), or ``"auto"``.
    artwork : pathlib.Path or None
        Gerber file that adds copper to this layer.
    """

    name: str
    z: float
    thickness: float
    conductivity: float = 5.8e7
    sublayers: int | str = 1
    artwork: Path | None = None

    @property
    def z_top(self) -> float:
        """Elevation of the top face in metres."""
        return self.z + self.thickness

    @property
    def z_mid(self) -> float:
        """Elevation of the mid-plane in metres."""
        return self.z + 0.5 * self.thickness


@dataclass(frozen=True)
class Via:
    """A plated through, blind or buried via.

    Attributes
    ----------
    name : str
    x, y : float
        Centre in metres.
    drill : float
        Finished hole diameter in metres.
    plating : float
        Barrel wall thickness in metres.
    pad : float
        Pad diameter in metres.
    span : tuple of str
        Layers the barrel passes, ordered from the top (highest z) down.
    connects : tuple of str
        Layers of the span where copper covers the via, top down; filled in by the
        layout builder. The barrel joins the pad nodes of these layers.
    """

    name: str
    x: float
    y: float
    drill: float
    plating: float
    pad: float
    span: tuple[str, ...]
    connects: tuple[str, ...] = ()

    @property
    def barrel_radius(self) -> float:
        """Mid-wall radius of the plated barrel, ``(drill + plating) / 2``, in metres."""
        return 0.5 * (self.drill + self.plating)


@dataclass(frozen=True)
class Terminal:
    """An equipotential contact region, e.g. a component pad.

    Attributes
    ----------
    name : str
    layer : str
    shape : shapely.Polygon or shapely.MultiPolygon
        Region in metres (already intersected with the layer's copper).
    """

    name: str
    layer: str
    shape: object


@dataclass(frozen=True)
class Port:
    """A 1 A current source from the ``plus`` terminal through the copper to ``minus``."""

    name: str
    plus: str
    minus: str


@dataclass(frozen=True)
class Lumped:
    """A series R-L branch between two terminals (a FET that is on, a capacitor's ESR/ESL).

    Attributes
    ----------
    resistance : float
        Ohm.
    inductance : float
        Henry.
    """

    name: str
    between: tuple[str, str]
    resistance: float = 0.0
    inductance: float = 0.0


@dataclass(frozen=True)
class MeshOptions:
    """Target triangle edge lengths in metres.

    ``under_edges``: also refine a layer's copper under the edges of a neighbouring layer's
    copper, where the return current gathers (the sizes chosen for a case without ``[mesh]``
    do; a ``[mesh]`` table that gives both sizes does not). ``grading``: growth of the edge
    length per unit distance from a refined feature (``None``: the mesher's 0.4).
    """

    max_edge: float = 0.5e-3
    min_edge: float = 0.05e-3
    under_edges: bool = False
    grading: float | None = None


@dataclass(frozen=True)
class SolverOptions:
    """``method`` is ``"auto"``, ``"dense"`` or ``"fast"``; ``tolerance`` is relative."""

    method: str = "auto"
    tolerance: float = 1e-4


@dataclass(frozen=True)
class CircuitOptions:
    """What the extracted loop means for the converter (all SI; ``None`` when not given)."""

    port: str | None = None
    di_dt: float | None = None
    current: float | None = None
    rise_time: float | None = None
    output_capacitance: float | None = None
    input_voltage: float | None = None


@dataclass(frozen=True)
class Layout:
    """The copper to model.

    Attributes
    ----------
    layers : tuple of Layer
        Stackup ordered from the top (highest z) down.
    copper : dict of str to shapely.MultiPolygon
        Copper of each layer in metres: shapes united, ``clear`` shapes and via drill
        holes cut out, pads of connected vias added, cropped to the window.
    vias : tuple of Via
    terminals : tuple of Terminal
    """

    layers: tuple[Layer, ...]
    copper: dict
    vias: tuple[Via, ...] = ()
    terminals: tuple[Terminal, ...] = ()

    def layer(self, name: str) -> Layer:
        """Return the layer called ``name``."""
        for layer in self.layers:
            if layer.name == name:
                return layer
        raise KeyError(name)


@dataclass(frozen=True)
class Case:
    """Everything a case file says, in SI units.

    Attributes
    ----------
    path : pathlib.Path
        The case file (for messages and relative paths).
    title : str
    unit : str
        Length unit of the file (``"mm"``, ``"um"``, ``"mil"``, ``"inch"``, ``"m"``).
    unit_scale : float
        Metres per unit; lengths are shown to the user divided by it.
    layout : Layout
    ports : tuple of Port
    lumped : tuple of Lumped
    frequencies : numpy.ndarray
        Swept frequencies in Hz, ascending.
    mesh : MeshOptions
    solver : SolverOptions
    circuit : CircuitOptions or None
    window : tuple of float or None
        ``(x0, y0, x1, y1)`` in metres.
    warnings : tuple of str
        Non-fatal findings, one line each.
    drills : tuple of dict
        ``[[drill]]`` entries: ``{"name": str, "file": Path, "span": tuple of str or None
        (None: the file's X2 span, else all layers), "plating": float (m)}``; their plated
        holes are among the layout's vias.
    fabrication : pathlib.Path or None
        ``[fabrication] source``: a folder or zip of Gerber X2 and Excellon files.
    notes : tuple of str
        What the artwork, drill and fabrication files gave (which file went to which layer,
        how many vias, what was skipped), one line each; informative, unlike ``warnings``.
    board : copperpath.geometry.formats.board.BoardContents or None
        What the ``[fabrication]`` files hold (pads, nets, job file), for ``inspect``.
    """

    path: Path
    title: str
    unit: str
    unit_scale: float
    layout: Layout
    ports: tuple[Port, ...] = ()
    lumped: tuple[Lumped, ...] = ()
    frequencies: np.ndarray = field(default_factory=lambda: np.array([0.0]))
    mesh: MeshOptions = MeshOptions()
    solver: SolverOptions = SolverOptions()
    circuit: CircuitOptions | None = None
    window: tuple[float, float, float, float] | None = None
    warnings: tuple[str, ...] = ()
    drills: tuple[dict, ...] = ()
    fabrication: Path | None = None
    notes: tuple[str, ...] = ()
    board: object = None

    @property
    def default_port(self) -> str | None:
        """The port a study looks at when none is named: the ``[circuit]`` port, else the
        first ``[[port]]``, else ``None`` (the one rule for every command)."""
        if self.circuit is not None and self.circuit.port:
            return self.circuit.port
        return self.ports[0].name if self.ports else None
