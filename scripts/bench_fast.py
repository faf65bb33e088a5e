"""Benchmark of the fast path on the four-layer board section (``cases/four_layer_section.toml``).

For each mesh scale (``max_edge`` and ``min_edge`` times the scale) prints the current
unknowns, the method, assembly seconds, seconds per frequency, GMRES iterations (most per
frequency), peak memory, L and R of the port at the lowest and highest frequency and, where
the dense path fits (up to ``--dense-max`` unknowns), the largest relative difference of R
and L from the dense path over the sweep. Each size runs in its own process (its own peak
memory); run the large sizes one at a time on a shared machine.

    python scripts/bench_fast.py [--scales 2.4 1.7 1.2 0.85 0.6 0.42 0.3] [--freqs 10]
    python scripts/bench_fast.py --scales 0.3 --hz 0 1e6 1e8      # large sizes: fewer points
    python scripts/bench_fast.py --scales 0.19 --hz 0 1e6 1e8     # 669k unknowns, 11 min, 7 GB
    python scripts/bench_fast.py --scales 0.15 --hz 0 1e6 1e8     # 1.0M unknowns, 17 min, 9.3 GB

Every layer gets one sublayer (``--sublayers``), so the unknowns grow with the mesh alone.

``total s`` is the whole sweep after meshing (assembly, reduction or coarse space, every
frequency); ``x dense`` the dense path's total over the fast one's.
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

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
CASE = ROOT / "cases" / "four_layer_section.toml"


def _solve(case, mesh, freqs, method):
    from copperpath.solver.solve.sweep import solve
    from copperpath.solver.solve.system import assemble

    t = time.perf_counter()
    system = assemble(mesh, case.layout, case.ports, case.lumped, n_freqs=len(freqs),
                      f_max=freqs[-1], method=method, tolerance=case.solver.tolerance,
                      keep_currents=False)
    t_asm = time.perf_counter() - t
    result = solve(system, freqs, keep_currents=False)
    return system, result, t_asm


def run_one(scale, freqs, method, dense_max, sublayers):
    """One mesh size in this process; the measurements as a dict."""
    from copperpath.geometry.case import load_case
    from copperpath.geometry.meshing import triangulate

    case = load_case(CASE)
    if sublayers is not None:
        layers = tuple(dataclasses.replace(la, sublayers=sublayers) for la in case.layout.layers)
        case = dataclasses.replace(case, layout=dataclasses.replace(case.layout, layers=layers))
    opts = dataclasses.replace(case.mesh, max_edge=case.mesh.max_edge * scale,
                               min_edge=case.mesh.min_edge * scale)
    freqs = np.asarray(freqs, float)
    mesh = triangulate(case.layout, opts)
    system, result, t_asm = _solve(case, mesh, freqs, method)
    timing = result.info["timing_s"]
    per = timing["solve_per_frequency"]
    it = result.info["gmres_iterations"]
    out = {
        "scale": scale, "unknowns": system.network.n_branches, "loops": system.n_loops,
        "method": result.info["method"], "assemble_s": t_asm,
        "reduce_s": timing["reduce"], "total_s": t_asm + timing["reduce"] + timing["solve"],
        "s_per_freq": float(np.mean(per[1:])), "max_iterations": max(it) if it else 0,
        "iterations": it, "coarse": result.info.get("coarse_size"),
        "peak_mib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
        "L_lo_nH": float(result.inductance[1, 0, 0] * 1e9),
        "L_hi_nH": float(result.inductance[-1, 0, 0] * 1e9),
        "R_lo_mohm": float(result.resistance[1, 0, 0] * 1e3),
        "R_hi_mohm": float(result.resistance[-1, 0, 0] * 1e3),
        "dR": None, "dL": None, "dense_s_per_freq": None, "dense_total_s": None,
    }
    if result.info["method"] == "fast" and system.network.n_branches <= dense_max:
        del system
        _, ref, t_dense = _solve(case, mesh, freqs, "dense")
        td = ref.info["timing_s"]
        out["dense_total_s"] = t_dense + td["reduce"] + td["solve"]
        out["dR"] = float(np.max(np.abs(result.resistance[:, 0, 0] / ref.resistance[:, 0, 0] - 1)))
        out["dL"] = float(np.max(np.abs(result.inductance[:, 0, 0] / ref.inductance[:, 0, 0] - 1)))
        out["dense_s_per_freq"] = float(np.mean(ref.info["timing_s"]["solve_per_frequency"][1:]))
    return out


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--scales", type=float, nargs="+", default=[2.4, 1.7, 1.2, 0.85, 0.6, 0.42, 0.3])
    p.add_argument("--freqs", type=int, default=10, help="DC plus log-spaced 1 kHz..100 MHz")
    p.add_argument("--hz", type=float, nargs="+", help="these frequencies instead (Hz)")
    p.add_argument("--coarse-min-loops", type=int,
                   help="override krylov.COARSE_MIN_LOOPS (0: coarse correction always)")
    p.add_argument("--method", default="fast", choices=["auto", "dense", "fast"])
    p.add_argument("--dense-max", type=int, default=20000)
    p.add_argument("--sublayers", default="1",
                   help='sublayers of every layer (default 1, so that the unknowns follow the mesh '
                        'alone; "auto": as the case file, which fills the auto sublayer budget)')
    p.add_argument("--one", type=float, help=argparse.SUPPRESS)
    args = p.parse_args(argv)
    freqs = args.hz or [0.0, *np.logspace(3, 8, args.freqs - 1)]
    extra = []
    if args.coarse_min_loops is not None:
        from copperpath.solver.solve import krylov
        krylov.COARSE_MIN_LOOPS = args.coarse_min_loops
        extra = ["--coarse-min-loops", str(args.coarse_min_loops)]
    if args.one is not None:
        sub = None if args.sublayers == "auto" else int(args.sublayers)
        print(json.dumps(run_one(args.one, freqs, args.method, args.dense_max, sub)))
        return 0
    print(f"{'scale':>5} {'unknowns':>8} {'loops':>7} {'method':>6} {'asm s':>7} {'red s':>6} "
          f"{'s/freq':>7} {'iter':>5} {'total s':>8} {'x dense':>7} {'peak MiB':>8} {'L lo nH':>8} "
          f"{'L hi nH':>8} {'R hi mohm':>9} {'dR':>8} {'dL':>8}", flush=True)
    for scale in args.scales:
        out = subprocess.run([sys.executable, __file__, "--one", str(scale), "--hz",
                              *map(str, freqs), "--method", args.method, "--dense-max",
                              str(args.dense_max), "--sublayers", args.sublayers, *extra],
                             capture_output=True, text=True,
                             cwd=ROOT)
        if out.returncode != 0:
            print(f"{scale:5.2f} failed: {(out.stderr.strip().splitlines() or ['?'])[-1]}")
            continue
        r = json.loads(out.stdout.strip().splitlines()[-1])
        dr = f"{r['dR']:.1e}" if r["dR"] is not None else "-"
        dl = f"{r['dL']:.1e}" if r["dL"] is not None else "-"
        xd = f"{r['dense_total_s'] / r['total_s']:.1f}" if r["dense_total_s"] else "-"
        print(f"{r['scale']:5.2f} {r['unknowns']:8d} {r['loops']:7d} {r['method']:>6} "
              f"{r['assemble_s']:7.1f} {r['reduce_s']:6.1f} {r['s_per_freq']:7.2f} "
              f"{r['max_iterations']:5d} {r['total_s']:8.1f} {xd:>7} {r['peak_mib']:8.0f} "
              f"{r['L_lo_nH']:8.4f} {r['L_hi_nH']:8.4f} {r['R_hi_mohm']:9.4f} {dr:>8} {dl:>8}",
              flush=True)
        print("      iterations per port and frequency:", r["iterations"], flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
