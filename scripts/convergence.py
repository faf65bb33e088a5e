"""Mesh convergence of the loop inductance at high frequency (current crowding at the edges).

A strip over a plane (6 x 1 mm, 0.2 mm gap), shorted to it by a via at the far end
(copperpath.geometry.gallery.strip_over_plane), solved at DC and 100 MHz for the default mesh settings scaled by each factor (2 = twice as
coarse, 0.5 = twice as fine). Prints a table for DEVELOPERS.md.

    python scripts/convergence.py [--scales 2 1.4 1 0.7 0.5]
"""
from __future__ import annotations

import argparse
import sys
import time

from copperpath.geometry import gallery
from copperpath.geometry.meshing import triangulate
from copperpath.geometry.model import MeshOptions, Port
from copperpath.solver.solve.sweep import solve
from copperpath.solver.solve.system import assemble


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--scales", type=float, nargs="+", default=[2.0, 1.4, 1.0, 0.7, 0.5])
    args = p.parse_args(argv)
    lay = gallery.strip_over_plane(6e-3, 1e-3, 0.2e-3, 6e-3, 35e-6)
    base = MeshOptions()
    rows = []
    print("strip 6 x 1 mm, 35 um, 0.2 mm over a 6 mm wide plane, via at the far end")
    print(f"{'scale':>5} {'max_edge mm':>11} {'min_edge mm':>11} {'triangles':>9} {'unknowns':>8} "
          f"{'L DC nH':>9} {'L 100MHz nH':>11} {'R 100MHz mohm':>13} {'seconds':>7}")
    for s in args.scales:
        opts = MeshOptions(base.max_edge * s, base.min_edge * s)
        t = time.perf_counter()
        mesh = triangulate(lay, opts)
        system = assemble(mesh, lay, [Port("p", "S", "G")], f_max=1e8)
        res = solve(system, (0.0, 1e8), keep_currents=False)
        rows.append((s, res.inductance[1, 0, 0]))
        print(f"{s:5.2f} {opts.max_edge * 1e3:11.3f} {opts.min_edge * 1e3:11.3f} {mesh.n_triangles:9d} "
              f"{system.network.n_branches:8d} {res.inductance[0, 0, 0] * 1e9:9.4f} "
              f"{res.inductance[1, 0, 0] * 1e9:11.4f} {res.resistance[1, 0, 0] * 1e3:13.4f} "
              f"{time.perf_counter() - t:7.1f}", flush=True)
    ref = dict(rows)
    if 1.0 in ref and 0.5 in ref:
        print(f"default vs twice as fine at 100 MHz: {100 * (ref[1.0] / ref[0.5] - 1):+.3f} %")
    return 0


if __name__ == "__main__":
    sys.exit(main())
