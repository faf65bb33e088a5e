"""Benchmark: mesh, assemble and solve one case at four mesh sizes.

For each size prints current unknowns, loop unknowns, assembly seconds, solve seconds per
frequency, peak memory and the port inductance at the lowest and highest frequency. Each size
runs in its own process so that the peak memory is its own.

    python scripts/bench.py [CASE] [--scales 2 1.4 1 0.7] [--freqs 10] [--method auto]

The mesh of the case is scaled: ``max_edge`` and ``min_edge`` times each scale.
"""
from __future__ import annotations

import argparse
import dataclasses
import json
import resource
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def run_one(case_path, scale, n_freqs, method):
    """Solve one mesh size in this process and return the measurements as a dict."""
    import numpy as np

    from copperpath.geometry.case import load_case
    from copperpath.geometry.meshing import triangulate
    from copperpath.solver.solve.sweep import solve
    from copperpath.solver.solve.system import assemble

    case = load_case(case_path)
    opts = dataclasses.replace(case.mesh, max_edge=case.mesh.max_edge * scale,
                               min_edge=case.mesh.min_edge * scale)
    freqs = np.concatenate([[0.0], np.logspace(3, 8, n_freqs - 1)])
    t = time.perf_counter()
    mesh = triangulate(case.layout, opts)
    t_mesh = time.perf_counter() - t
    t = time.perf_counter()
    system = assemble(mesh, case.layout, case.ports, case.lumped, n_freqs=len(freqs), f_max=freqs[-1])
    t_asm = time.perf_counter() - t
    result = solve(system, freqs, keep_currents=False, method=method)
    per = result.info["timing_s"]["solve_per_frequency"]
    return {
        "scale": scale, "triangles": mesh.n_triangles, "unknowns": system.network.n_branches,
        "loops": system.n_loops, "mesh_s": t_mesh, "assemble_s": t_asm,
        "reduce_s": result.info["timing_s"]["reduce"], "solve_s_per_freq": float(np.mean(per[1:])),
        "solve_s_total": float(sum(per)), "method": result.info["method"],
        "peak_mib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
        "L_dc_nH": float(result.inductance[0, 0, 0] * 1e9),
        "L_top_nH": float(result.inductance[-1, 0, 0] * 1e9),
        "R_dc_mohm": float(result.resistance[0, 0, 0] * 1e3),
    }


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("case", nargs="?", default=str(ROOT / "cases" / "two_layer_pour.toml"))
    p.add_argument("--scales", type=float, nargs="+", default=[2.0, 1.4, 1.0, 0.75])
    p.add_argument("--freqs", type=int, default=10, help="frequencies: DC plus log-spaced 1 kHz..100 MHz")
    p.add_argument("--method", default="auto", choices=["auto", "dense", "fast"])
    p.add_argument("--one", type=float, help=argparse.SUPPRESS)
    args = p.parse_args(argv)
    if args.one is not None:
        print(json.dumps(run_one(args.case, args.one, args.freqs, args.method)))
        return 0
    head = (f"{'scale':>5} {'tri':>7} {'unknowns':>8} {'loops':>6} {'method':>9} {'mesh s':>7} "
            f"{'asm s':>7} {'reduce s':>8} {'s/freq':>7} {'peak MiB':>8} {'L_dc nH':>8} {'L_top nH':>8}")
    print(f"case {args.case}, {args.freqs} frequencies")
    print(head)
    for scale in args.scales:
        out = subprocess.run([sys.executable, __file__, args.case, "--one", str(scale),
                              "--freqs", str(args.freqs), "--method", args.method],
                             capture_output=True, text=True, cwd=ROOT)
        if out.returncode != 0:
            print(f"{scale:5.2f} failed: {out.stderr.strip().splitlines()[-1]}")
            continue
        r = json.loads(out.stdout.strip().splitlines()[-1])
        print(f"{r['scale']:5.2f} {r['triangles']:7d} {r['unknowns']:8d} {r['loops']:6d} {r['method']:>9} "
              f"{r['mesh_s']:7.2f} {r['assemble_s']:7.1f} {r['reduce_s']:8.1f} {r['solve_s_per_freq']:7.2f} "
              f"{r['peak_mib']:8.0f} {r['L_dc_nH']:8.4f} {r['L_top_nH']:8.4f}", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
