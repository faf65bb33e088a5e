"""``impedance.csv``: resistance, inductance and impedance of every port pair per frequency.

One row per swept frequency. Columns: ``frequency_hz``, then for each pair ``(i, j)`` of
ports, row by row (``i`` the port where the voltage is read, ``j`` the port driven):

- ``R_<i>_<j>_ohm``: ``Re Z_ij`` in ohm;
- ``L_<i>_<j>_h``: ``Im Z_ij / (2 pi f)`` in henry (the DC-limit inductance at ``f = 0``;
  ``nan`` where the result has none);
- ``Zre_<i>_<j>_ohm``, ``Zim_<i>_<j>_ohm``: real and imaginary part of ``Z_ij`` in ohm.

``<i>`` and ``<j>`` are the port names; should two pairs of names give the same column name
(names that contain ``_``), the 1-based port numbers are used instead. Numbers are written
with Python's shortest round-trip representation.
"""
from __future__ import annotations

import csv
import io
from pathlib import Path

from copperpath.solver.output.files import write_text


def column_names(ports):
    """Header of the file for these port names.

    Examples
    --------
    >>> column_names(("loop",))
    ['frequency_hz', 'R_loop_loop_ohm', 'L_loop_loop_h', 'Zre_loop_loop_ohm', 'Zim_loop_loop_ohm']
    """
    pairs = [f"{a}_{b}" for a in ports for b in ports]
    if len(set(pairs)) < len(pairs):
        n = range(1, len(ports) + 1)
        pairs = [f"{a}_{b}" for a in n for b in n]
    out = ["frequency_hz"]
    for p in pairs:
        out += [f"R_{p}_ohm", f"L_{p}_h", f"Zre_{p}_ohm", f"Zim_{p}_ohm"]
    return out


def write_impedance_csv(path, result):
    """Write ``result`` as a CSV table (see the module docstring for the columns).

    Parameters
    ----------
    path : str or os.PathLike
        Target file, conventionally ``OUT/impedance.csv``.
    result : copperpath.solver.solve.result.Result

    Returns
    -------
    pathlib.Path
        The file written (through a temporary name and a rename).
    """
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(column_names(result.ports))
    z, ell = result.impedance, result.inductance
    n = len(result.ports)
    for k, f in enumerate(result.frequencies):
        row = [repr(float(f))]
        for i in range(n):
            for j in range(n):
                zij = complex(z[k, i, j])
                row += [repr(zij.real), repr(float(ell[k, i, j])), repr(zij.real), repr(zij.imag)]
        writer.writerow(row)
    write_text(path, buf.getvalue())
    return Path(path)
