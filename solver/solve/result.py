"""The result of a frequency sweep: the N-port impedance matrix and the solved currents."""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np


@dataclass(frozen=True, eq=False)
class Result:
    """Port impedances over a sweep (SI units).

    Attributes
    ----------
    title : str
    ports : tuple of str
        Port names, in the order of the matrix rows and columns.
    frequencies : ndarray, shape (F,)
        Hz, ascending; may start at 0 (DC).
    impedance : ndarray of complex128, shape (F, P, P)
        ``Z[f, i, j]`` in ohm: voltage at port ``i`` per ampere driven into port ``j``.
    dc_inductance : ndarray, shape (P, P) or None
        DC-limit inductance ``I^T L I`` in henry where the sweep holds ``f = 0``.
    currents : ndarray of complex128, shape (F, P, B) or None
        Branch currents in ampere per ampere of port current, for each port driven.
    potentials : ndarray of complex128, shape (F, P, K) or None
        Node potentials in volt per ampere of port current.
    info : dict
        Mesh sizes, timings and notes.
    """

    title: str
    ports: tuple
    frequencies: np.ndarray
    impedance: np.ndarray
    dc_inductance: np.ndarray | None = None
    currents: np.ndarray | None = None
    potentials: np.ndarray | None = None
    info: dict = field(default_factory=dict)

    @property
    def resistance(self) -> np.ndarray:
        """``Re Z`` in ohm, shape (F, P, P)."""
        return self.impedance.real

    @property
    def inductance(self) -> np.ndarray:
        """Inductance in henry, shape (F, P, P): ``Im Z / (2 pi f)``, DC-limit at ``f = 0``."""
        f = self.frequencies
        out = np.empty(self.impedance.shape)
        pos = f > 0
        out[pos] = self.impedance[pos].imag / (2 * np.pi * f[pos])[:, None, None]
        if (~pos).any():
            out[~pos] = self.dc_inductance if self.dc_inductance is not None else np.nan
        return out

    def __repr__(self):
        lines = [f"Result({self.title!r}, ports={list(self.ports)})"]
        r, ell = self.resistance, self.inductance
        for k, name in enumerate(self.ports):
            lines.append(f"  port {name}:")
            for i, f in enumerate(self.frequencies):
                lines.append(f"    {f:12.4g} Hz  R = {r[i, k, k] * 1e3:10.4f} mohm"
                             f"  L = {ell[i, k, k] * 1e9:10.4f} nH")
        return "\n".join(lines)
