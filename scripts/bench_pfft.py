"""Benchmark of the compressed sheet inductance (pre-corrected FFT) against mesh size.

A four-layer board section of our own (30 x 20 mm: a hot loop on top, ground, supply and
ground pours below, stitching vias) is meshed at a sequence of edge lengths; for each size,
in a process of its own, it prints the unknowns, the grid, the operator's build time per stage,
one real product and one complex two-column product, the bytes the operator holds, the peak
memory of the process and, where the dense matrix fits (``--dense-max``), the relative error of
``L @ X`` against :func:`copperpath.solver.elements.partial.inductance_matrix` for random ``X``.

    python scripts/bench_pfft.py [--edges 1.0 0.5 0.3 ...] [--tolerance 1e-4] [--dense-max 12000]

Edge lengths in mm (``max_edge``; ``min_edge`` is a third of it).
"""
from __future__ import annotations

import argparse
import json
import resource
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
MM = 1e-3


def board_section():
    """Four copper layers, 30 x 20 mm, with pours, a hot loop and stitching vias (metres)."""
    import shapely
    from shapely.geometry import box

    from copperpath.geometry.gallery import _with_vias
    from copperpath.geometry.model import Layer, Layout, Terminal, Via

    t = 35e-6
    layers = (Layer("top", 1.565 * MM, t), Layer("gnd", 1.265 * MM, t),
              Layer("pwr", 0.3 * MM, t), Layer("bottom", 0.0, t))
    board = box(0, 0, 30 * MM, 20 * MM)
    loop = shapely.union_all([box(4 * MM, 4 * MM, 18 * MM, 7 * MM), box(15 * MM, 4 * MM, 18 * MM, 14 * MM),
                              box(4 * MM, 11 * MM, 18 * MM, 14 * MM)])
    top = shapely.union_all([loop, box(22 * MM, 2 * MM, 28 * MM, 18 * MM)])
    pwr = board.difference(box(8 * MM, 8.5 * MM, 26 * MM, 9.5 * MM))
    bottom = board.difference(box(12 * MM, 0, 13 * MM, 12 * MM))
    vias = []
    for i, x in enumerate(range(2, 30, 4)):
        for j, y in enumerate((1, 19)):
            vias.append(Via(f"S{i}_{j}", x * MM, y * MM, 0.3 * MM, 25e-6, 0.6 * MM,
                            ("top", "bottom"), ("gnd", "bottom")))
    vias.append(Via("R1", 16.5 * MM, 12.5 * MM, 0.3 * MM, 25e-6, 0.6 * MM, ("top", "bottom"),
                    ("top", "gnd")))
    copper = _with_vias({"top": top, "gnd": board, "pwr": pwr, "bottom": bottom}, vias)
    terms = (Terminal("P", "top", box(4 * MM, 4 * MM, 5 * MM, 7 * MM)),
             Terminal("N", "top", box(4 * MM, 11 * MM, 5 * MM, 14 * MM)))
    copper = {k: shapely.MultiPolygon(shapely.get_parts(v).tolist()) for k, v in copper.items()}
    return Layout(layers=layers, copper=copper, vias=tuple(vias), terminals=terms)


def run_one(edge_mm, tolerance, dense_max):
    """One mesh size in this process; the measurements as a dict."""
    import numpy as np

    from copperpath.geometry.meshing import triangulate
    from copperpath.geometry.model import MeshOptions
    from copperpath.solver.elements import partial
    from copperpath.solver.elements import pfft
    from copperpath.solver.graph.network import build_network

    layout = board_section()
    t = time.perf_counter()
    mesh = triangulate(layout, MeshOptions(edge_mm * MM, edge_mm * MM / 3))
    net = build_network(mesh, layout)
    t_mesh = time.perf_counter() - t
    args = (mesh.points, mesh.triangles[net.sheet_tri], net.sheet_z, net.half_branch,
            net.half_tri, net.half_vertex, net.half_sign, net.n_branches)
    t = time.perf_counter()
    op = pfft.build_sheet_operator(*args, tolerance=tolerance)
    t_build = time.perf_counter() - t
    rng = np.random.default_rng(0)
    x = rng.standard_normal((net.n_branches, 2))
    op @ x[:, 0]                                    # warm-up (numba compilation)
    t = time.perf_counter()
    op @ x[:, 0]
    t_mv = time.perf_counter() - t
    z = x[:, 0] + 1j * x[:, 1]
    t = time.perf_counter()
    op @ np.stack([z, z.conj()], 1)
    t_mv2 = time.perf_counter() - t
    out = {"edge_mm": edge_mm, "triangles": mesh.n_triangles, "unknowns": net.n_branches,
           "spacing_um": op.spacing * 1e6, "grid": list(op.grid), "padded": list(op.padded),
           "near_nnz_per_row": op._corr.nnz / net.n_branches, "build_s": t_build,
           "stages_s": {k: round(v, 2) for k, v in op.timing.items()}, "mesh_s": t_mesh,
           "matvec_s": t_mv, "matvec_complex2_s": t_mv2, "operator_mib": op.nbytes / 2**20,
           "peak_mib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}
    if net.n_branches <= dense_max:
        y = op @ x
        t = time.perf_counter()
        L = partial.inductance_matrix(*args)
        out["dense_s"] = time.perf_counter() - t
        out["err_vs_dense"] = float(np.linalg.norm(y - L @ x) / np.linalg.norm(L @ x))
    return out


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--edges", type=float, nargs="+", default=[1.0, 0.6, 0.4, 0.25, 0.16, 0.11])
    p.add_argument("--tolerance", type=float, default=1e-4)
    p.add_argument("--dense-max", type=int, default=12000)
    p.add_argument("--one", type=float, help=argparse.SUPPRESS)
    a = p.parse_args(argv)
    if a.one is not None:
        print(json.dumps(run_one(a.one, a.tolerance, a.dense_max)))
        return
    for e in a.edges:
        r = subprocess.run([sys.executable, __file__, "--one", str(e), "--tolerance", str(a.tolerance),
                            "--dense-max", str(a.dense_max)], capture_output=True, text=True)
        if r.returncode:
            print(f"edge {e} mm failed:\n{r.stderr[-2000:]}", flush=True)
            break
        print(r.stdout.strip().splitlines()[-1], flush=True)


if __name__ == "__main__":
    main()
