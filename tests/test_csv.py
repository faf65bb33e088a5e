"""impedance.csv: headers, exact values, inductance column and the DC point."""
import csv
import math

import numpy as np

from copperpath.solver.output.exports.csv import column_names, write_impedance_csv
from copperpath.solver.solve.result import Result

F = np.array([0.0, 1e3, 1e6, 1e8])


def two_port(dc_inductance=True):
    """Two coupled loops with a skin-effect-like R(f) and falling L(f) (synthetic)."""
    r = np.array([[2e-3, 5e-4], [5e-4, 3e-3]])
    ell = np.array([[12e-9, 4e-9], [4e-9, 20e-9]])
    growth = 1 + np.sqrt(F / 1e5)
    fall = 1 - 0.3 * F / (F + 1e6)
    z = r * growth[:, None, None] + 2j * np.pi * F[:, None, None] * ell * fall[:, None, None]
    return Result("pair", ("hot", "gate"), F, z,
                  dc_inductance=ell if dc_inductance else None)


def read(path):
    with open(path, newline="") as fh:
        rows = list(csv.reader(fh))
    return rows[0], [[float(v) for v in row] for row in rows[1:]]


def test_headers_and_exact_values(tmp_path):
    r = two_port()
    header, rows = read(write_impedance_csv(tmp_path / "impedance.csv", r))
    assert header[:5] == ["frequency_hz", "R_hot_hot_ohm", "L_hot_hot_h", "Zre_hot_hot_ohm",
                          "Zim_hot_hot_ohm"]
    assert header[5:9] == ["R_hot_gate_ohm", "L_hot_gate_h", "Zre_hot_gate_ohm", "Zim_hot_gate_ohm"]
    assert len(header) == 1 + 4 * 4
    assert [row[0] for row in rows] == list(F)
    col = {name: k for k, name in enumerate(header)}
    for k, f in enumerate(F):
        z = r.impedance[k, 1, 0]
        assert rows[k][col["Zre_gate_hot_ohm"]] == z.real  # shortest repr round-trips exactly
        assert rows[k][col["Zim_gate_hot_ohm"]] == z.imag
        assert rows[k][col["R_gate_hot_ohm"]] == z.real
        # L = Im Z / (2 pi f) for f > 0, the DC-limit inductance at f = 0 (DESIGN.md section 5)
        expected = 4e-9 if f == 0 else z.imag / (2 * math.pi * f)
        assert math.isclose(rows[k][col["L_gate_hot_h"]], expected, rel_tol=1e-12)
    assert [p.name for p in tmp_path.iterdir()] == ["impedance.csv"]


def test_missing_dc_inductance_is_nan(tmp_path):
    header, rows = read(write_impedance_csv(tmp_path / "impedance.csv", two_port(False)))
    assert math.isnan(rows[0][header.index("L_hot_hot_h")])
    assert not math.isnan(rows[1][header.index("L_hot_hot_h")])


def test_colliding_names_fall_back_to_port_numbers():
    # "a_b" + "c" and "a" + "b_c" would both give "a_b_c".
    names = column_names(("a_b", "c", "a", "b_c"))
    assert len(set(names)) == len(names)
    assert "R_1_4_ohm" in names and "L_4_4_h" in names
