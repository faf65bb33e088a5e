"""Measured peak memory of the dense path against copperpath.solver.solve.memory's estimate.

Each size runs in a child process (a fresh peak): mesh a strip over a plane, compile the
kernels on a tiny mesh, then assemble and solve three frequencies with the dense LU. Printed
per size: unknowns, the estimate (solve part and whole process), the tracemalloc peak of the
solve's own allocations and the process's peak resident size (ru_maxrss).

    python scripts/bench_memory.py            # scales 2.0 and 1.4 of the 0.5 / 0.05 mm mesh
    python scripts/bench_memory.py 1.0 2      # scale, sublayers
"""
from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

CHILD = r"""
import dataclasses, json, sys, tracemalloc
from copperpath.geometry import gallery
from copperpath.geometry.meshing import triangulate
from copperpath.geometry.model import MeshOptions, Port
from copperpath.solver.solve import memory
from copperpath.solver.solve.sweep import solve
from copperpath.solver.solve.system import assemble
MM = 1e-3
scale, subl = float(sys.argv[1]), int(sys.argv[2])
lay = gallery.strip_over_plane(10 * MM, 1 * MM, plane_width=4 * MM)
lay = dataclasses.replace(lay, layers=tuple(dataclasses.replace(l, sublayers=subl) for l in lay.layers))
small = triangulate(lay, MeshOptions(2 * MM, 1 * MM))
solve(assemble(small, lay, [Port("p", "S", "G")]), [0.0, 1e6])
mesh = triangulate(lay, MeshOptions(0.5 * MM * scale, 0.05 * MM * scale))
freqs = [0.0, 1e6, 1e8]
tracemalloc.start()
system = assemble(mesh, lay, [Port("p", "S", "G")], n_freqs=3, f_max=1e8)
solve(system, freqs, method="dense")
traced = tracemalloc.get_traced_memory()[1]
tracemalloc.stop()
est = memory.from_network(system.network, freqs=3)
print(json.dumps({"scale": scale, "sublayers": subl, "branches": est.branches, "loops": est.loops,
                  "estimate_solve": est.solve_bytes, "estimate_total": est.total,
                  "traced": traced, "rss": memory.peak_rss()}))
"""


def main(argv):
    runs = [(float(argv[0]), int(argv[1]) if len(argv) > 1 else 1)] if argv else [(2.0, 1), (1.4, 1)]
    root = Path(__file__).resolve().parents[1]
    print("| scale | sublayers | unknowns | loops | estimate MiB (solve / process) | traced MiB | "
          "peak RSS MiB | estimate / traced | process estimate / RSS |")
    print("|---|---|---|---|---|---|---|---|---|")
    for scale, subl in runs:
        out = subprocess.run([sys.executable, "-c", CHILD, str(scale), str(subl)], cwd=root,
                             capture_output=True, text=True, check=True,
                             env={"PYTHONPATH": str(root), "PATH": "/usr/bin:/bin"}).stdout
        d = json.loads(out.strip().splitlines()[-1])
        mib = 2**20
        print(f"| {scale} | {subl} | {d['branches']:,} | {d['loops']:,} | "
              f"{d['estimate_solve'] / mib:.0f} / {d['estimate_total'] / mib:.0f} | "
              f"{d['traced'] / mib:.0f} | {d['rss'] / mib:.0f} | "
              f"{d['estimate_solve'] / d['traced']:.3f} | {d['estimate_total'] / d['rss']:.3f} |")


if __name__ == "__main__":
    main(sys.argv[1:])
