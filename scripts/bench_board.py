"""Benchmark: a real board's case from its fabrication files, stage by stage.

Times reading the Gerber X2 copper with its object attributes (nets, pads), loading the case
(scan, job stackup, net filter, pads, layout), meshing, assembling and solving the sweep of
``cases/pic_programmer_loop.toml`` (or CASE), and prints the unknowns, the peak memory and the
port's L and R.

    python scripts/bench_board.py [CASE]
"""
from __future__ import annotations

import argparse
import resource
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("case", nargs="?", default=str(ROOT / "cases" / "pic_programmer_loop.toml"))
    args = p.parse_args(argv)

    from copperpath.geometry.case import load_case
    from copperpath.geometry.formats.fabrication import scan
    from copperpath.geometry.meshing import triangulate
    from copperpath.solver.solve.sweep import solve
    from copperpath.solver.solve.system import assemble

    case = load_case(args.case)                     # warm-up (imports, numba)
    fab = scan(case.fabrication)
    for n in fab.copper:
        t0, c0 = time.perf_counter(), time.process_time()
        art = fab.read_copper(n)
        print(f"read L{n} whole board: {time.perf_counter() - t0:.2f} s wall, "
              f"{time.process_time() - c0:.2f} s cpu; {len(art.nets)} nets, {len(art.pads)} pads")
    t0, c0 = time.perf_counter(), time.process_time()
    case = load_case(args.case)
    t_load, c_load = time.perf_counter() - t0, time.process_time() - c0
    t0, c0 = time.perf_counter(), time.process_time()
    mesh = triangulate(case.layout, case.mesh)
    t_mesh, c_mesh = time.perf_counter() - t0, time.process_time() - c0
    t0, c0 = time.perf_counter(), time.process_time()
    freqs = case.frequencies
    system = assemble(mesh, case.layout, case.ports, case.lumped, n_freqs=len(freqs), f_max=freqs[-1])
    t_asm, c_asm = time.perf_counter() - t0, time.process_time() - c0
    t0, c0 = time.perf_counter(), time.process_time()
    result = solve(system, freqs, keep_currents=False)
    t_solve, c_solve = time.perf_counter() - t0, time.process_time() - c0
    print(f"case {args.case}: {mesh.n_triangles} triangles, {system.network.n_branches} unknowns, "
          f"{system.n_loops} loops, {len(freqs)} frequencies, path {result.info['method']}")
    for what, wall, cpu in (("load", t_load, c_load), ("mesh", t_mesh, c_mesh),
                            ("assemble", t_asm, c_asm), ("solve", t_solve, c_solve)):
        print(f"  {what:9s} {wall:7.1f} s wall {cpu:7.1f} s cpu")
    total = t_load + t_mesh + t_asm + t_solve
    print(f"  total     {total:7.1f} s wall; peak {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f} MiB")
    for k, f in enumerate(freqs):
        print(f"  {f:10.3g} Hz  L {result.inductance[k, 0, 0] * 1e9:7.3f} nH  "
              f"R {result.resistance[k, 0, 0] * 1e3:7.3f} mohm")
    return 0


if __name__ == "__main__":
    sys.exit(main())
