"""The DC potential (IR-drop map) of a strip against Ohm's law, point by point."""
import numpy as np
import pytest

from copperpath.geometry import gallery
from copperpath.geometry.meshing import triangulate
from copperpath.geometry.model import MeshOptions, Port
from copperpath.solver.analysis import post
from copperpath.solver.solve.sweep import solve
from copperpath.solver.solve.system import assemble

SIGMA = 5.8e7  # S/m, annealed copper (IEC 60028)


def test_dc_potential_falls_linearly_along_a_strip():
    length, width, t = 10e-3, 1e-3, 35e-6
    lay = gallery.strip(length, width, t)
    mesh = triangulate(lay, MeshOptions(0.5e-3, 0.1e-3))
    system = assemble(mesh, lay, [Port("p", "A", "B")])
    result = solve(system, [0.0])
    maps = post.port_maps(mesh, system, result, freq_index=0, port_index=0)
    tl = 0.1 * width
    # Ohm's law for 1 A: phi(x) = (x_B - x) / (sigma w t), x_B the inner edge of terminal B
    # (the minus terminal, at 0 V). The potential is constant per triangle; for a uniform
    # current the lowest-order Raviart-Thomas / piecewise-constant pair reproduces the linear
    # potential exactly at the centroids (a property of the mixed method), so the check is tight.
    bulk = mesh.tri_region < 0
    x = mesh.centroids[bulk, 0]
    expected = (length - tl - x) / (SIGMA * width * t)
    per_metre = 1.0 / (SIGMA * width * t)
    assert np.abs(maps.potential[bulk].real - expected).max() < 1e-9 * length * per_metre
    # the plus terminal sits at the full drop, which is the port's resistance
    plus = mesh.tri_region == mesh.region_index("terminal:A")
    assert maps.potential[plus].real == pytest.approx(result.resistance[0, 0, 0], rel=1e-9)
