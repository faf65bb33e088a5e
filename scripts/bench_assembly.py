"""Time the dense partial-inductance assembly on a 30 mm x 20 mm plate at four mesh sizes.

For each size the plate (a wide strip with full-width terminals at both ends) is meshed, the
network is built and :func:`copperpath.solver.elements.partial.inductance_matrix` is timed after a warm-up call that
compiles the numba loops. The DC current of the plate is uniform, so its loop inductance
``I^T L I`` (``I`` from the sparse resistive system) must equal the exact partial self-inductance
of the bar between the terminals' inner edges (Hoer & Love 1965, "Exact inductance equations
for rectangular conductors with applications to more complicated geometries", J. Res. NBS 69C).

Usage::

    python scripts/bench_assembly.py [--sizes 1000 3000 7000 11000] [--threads N]
"""
from __future__ import annotations

import argparse
import math
import os
import sys
import time

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))

from copperpath.geometry import gallery  # noqa: E402
from copperpath.geometry.meshing import triangulate  # noqa: E402
from copperpath.geometry.model import MeshOptions  # noqa: E402
from copperpath.solver.elements import partial  # noqa: E402
from copperpath.solver.graph.network import build_network  # noqa: E402
from tests.validation.references import bar_self_inductance  # noqa: E402

LENGTH, WIDTH, THICKNESS = 30e-3, 20e-3, 35e-6
TERMINAL = 2e-3


def _plate_mesh(n_triangles):
    """Mesh the plate with about ``n_triangles`` triangles (equilateral area 0.433 h^2)."""
    lay = gallery.strip(LENGTH, WIDTH, THICKNESS, terminal_length=TERMINAL)
    h = math.sqrt(LENGTH * WIDTH / n_triangles / 0.433 * 1.8)  # edge refinement adds ~80 %
    mesh = triangulate(lay, MeshOptions(max_edge=h, min_edge=0.5 * h))
    return lay, mesh


def _args(mesh, net):
    sheets = mesh.triangles[net.sheet_tri]
    n_edges = int((net.branch_kind == 0).sum())
    return (mesh.points, sheets, net.sheet_z, net.half_branch, net.half_tri, net.half_vertex,
            net.half_sign, n_edges)


def _dc_currents(mesh, net, args):
    """Branch currents of 1 A from terminal A to B at DC (sparse KKT system, node B grounded)."""
    R = partial.resistance_matrix(mesh.points, args[1], net.sheet_resistance, *args[3:])
    D = net.incidence
    a, b = net.terminal_node("A"), net.terminal_node("B")
    keep = np.setdiff1d(np.arange(net.n_nodes), [b])
    Dk = D[keep]
    kkt = sp.bmat([[R, -Dk.T], [Dk, None]], format="csc")
    rhs = np.zeros(kkt.shape[0])
    rhs[net.n_branches + np.searchsorted(keep, a)] = 1.0
    return spla.spsolve(kkt, rhs)[:net.n_branches]


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[1000, 3000, 7000, 11000])
    ns = ap.parse_args(argv)
    ref = bar_self_inductance(LENGTH - 2 * TERMINAL, WIDTH, THICKNESS)
    lay, mesh = _plate_mesh(200)
    partial.inductance_matrix(*_args(mesh, build_network(mesh, lay)))   # compile
    print(f"load: {os.getloadavg()[0]:.2f}  reference (Hoer & Love) L = {ref * 1e9:.6f} nH")
    print(f"{'target':>7} {'triangles':>9} {'branches':>8} {'seconds':>8} {'cpu s':>7} {'L (nH)':>11} {'rel err':>9}")
    for n in ns.sizes:
        lay, mesh = _plate_mesh(n)
        net = build_network(mesh, lay)
        args = _args(mesh, net)
        t, c = time.perf_counter(), time.process_time()
        L = partial.inductance_matrix(*args)
        dt, dc = time.perf_counter() - t, time.process_time() - c
        cur = _dc_currents(mesh, net, args)
        loop = float(cur @ L @ cur)
        print(f"{n:7d} {len(mesh.triangles):9d} {args[-1]:8d} {dt:8.2f} {dc:7.1f} {loop * 1e9:11.6f} "
              f"{loop / ref - 1:9.2e}", flush=True)
        del L


if __name__ == "__main__":
    main()
