"""Touchstone v1.1 files (``.s<P>p``) of the port impedance matrix, or of S computed from it.

Layout of a v1.1 file: ``!`` comment lines, one option line ``# HZ Z RI R 50`` (frequency unit,
parameter, real/imaginary format, reference resistance), then one record per frequency:
the frequency in Hz followed by the matrix entries as real/imaginary pairs.

- Z (and Y) data of a version 1 file are **normalized** to the reference resistance: the file
  holds ``Z / R``, and a reader multiplies by ``R``. With ``R 50`` a 1 mohm loop is written as
  ``2e-5``.
- 1- and 2-port records are one line; a 2-port record is ordered ``N11 N21 N12 N22`` (a rule
  of the format). From 3 ports on every matrix row starts a new line, row by row, with at most
  four pairs per line.
- A record at ``f = 0`` (DC) is allowed by the format and is kept.

Port names are written as ``! Port[n] = name`` comments, which common readers pick up.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

from copperpath.solver.output.files import write_text

PARAMETERS = ("Z", "S")


def s_from_z(impedance, reference_ohm):
    """Scattering matrix ``S = (Z - Z0 I)(Z + Z0 I)^-1`` for one real reference impedance.

    Parameters
    ----------
    impedance : ndarray of complex, shape (F, P, P)
        Ohm.
    reference_ohm : float
        Reference impedance ``Z0`` of every port, ohm.

    Returns
    -------
    ndarray of complex, shape (F, P, P)

    Examples
    --------
    >>> float(abs(s_from_z(np.array([[[50.0 + 0j]]]), 50.0)[0, 0, 0]))
    0.0
    """
    eye = np.eye(impedance.shape[-1]) * reference_ohm
    # (Z - Z0)(Z + Z0)^-1 == (Z + Z0)^-1 (Z - Z0): both factors are polynomials in Z.
    return np.linalg.solve(impedance + eye, impedance - eye)


def write_touchstone(path, result, *, parameter="Z", reference_ohm=50.0):
    """Write the result as a Touchstone v1.1 file.

    Parameters
    ----------
    path : str or os.PathLike
        Target file; its suffix must be ``.s<P>p`` with ``P`` the number of ports
        (e.g. ``loop.s1p``), as readers infer the port count from it.
    result : copperpath.solver.solve.result.Result
    parameter : {"Z", "S"}
        ``"Z"``: the impedance matrix, normalized to ``reference_ohm`` as version 1 requires.
        ``"S"``: scattering parameters computed from Z with ``reference_ohm`` at every port.
    reference_ohm : float
        Reference resistance in ohm, written on the option line.

    Returns
    -------
    pathlib.Path
        The file written (through a temporary name and a rename).
    """
    n_ports = len(result.ports)
    if parameter not in PARAMETERS:
        raise ValueError(f"parameter must be one of {PARAMETERS}, got {parameter!r}")
    if Path(path).suffix.lower() != f".s{n_ports}p":
        raise ValueError(f"a {n_ports}-port Touchstone file must end in '.s{n_ports}p', got {str(path)!r}")
    if not (np.isfinite(reference_ohm) and reference_ohm > 0):
        raise ValueError(f"reference_ohm must be a positive number of ohm, got {reference_ohm!r}")
    z = np.asarray(result.impedance, dtype=complex)
    data = z / reference_ohm if parameter == "Z" else s_from_z(z, reference_ohm)
    lines = _header(result, parameter, reference_ohm)
    for f, matrix in zip(result.frequencies, data):
        lines += _record(float(f), matrix)
    write_text(path, "\n".join(lines) + "\n")
    return Path(path)


def _header(result, parameter, reference_ohm):
    r = f"{reference_ohm:g}"
    what = (f"Z-parameters normalized to R = {r} ohm (Z in ohm = value * {r})" if parameter == "Z"
            else f"S-parameters computed from Z, reference impedance {r} ohm at every port")
    lines = [f"! {result.title}",
             "! generator: copperpath (PCB copper parasitic extraction), Touchstone v1.1",
             f"! {what}",
             "! frequencies in Hz; a record at f = 0 (DC) is kept, as the format allows"]
    lines += [f"! Port[{k}] = {name}" for k, name in enumerate(result.ports, start=1)]
    lines.append(f"# HZ {parameter} RI R {r}")
    return lines


def _record(f, matrix):
    """Lines of one frequency record, in the order of the format."""
    n = matrix.shape[0]
    if n <= 2:
        return [" ".join([_num(f)] + [_pair(v) for v in matrix.T.ravel()])]
    lines = []
    for i, row in enumerate(matrix):
        for start in range(0, n, 4):
            lead = _num(f) if i == 0 and start == 0 else " " * 23
            lines.append(" ".join([lead] + [_pair(v) for v in row[start:start + 4]]))
    return lines


def _num(x):
    return f"{x:23.16e}"


def _pair(v):
    return f"{_num(v.real)} {_num(v.imag)}"
