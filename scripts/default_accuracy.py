"""Accuracy at default settings: per-length loop inductance of a strip over a plane at 100 MHz.

The case file a new user writes (tests/validation/strip_case.py): no ``[mesh]`` table, no
``sublayers``; a 1 mm wide, 35 um strip 0.2 mm over a 10 mm wide plane, closed by a via at the
far end, port at the near end, DC and 100 MHz. Per-length values are the difference of a 30 mm
and a 20 mm strip (REFERENCES.md, "How to set a check up so that it is fair").

References: Hammerstad & Jensen 1980 (air microstrip, ``L' = Z0 / c0`` with its thickness
correction) is the external inductance of perfect conductors. Copper 5.3 skin depths thick adds
the inductance inside its skin layers; Wheeler's incremental-inductance rule (Wheeler 1942,
"Formulas for the skin effect", Proc. IRE 30) gives the total as the same formula with every
surface receded by ``delta / 2`` (``line_formulas.microstrip_inductance_with_skin``), and the
external part of the solver's result as ``L' - R' / omega``. Both comparisons are printed.

    python scripts/default_accuracy.py [--lengths 20 30] [--sublayers N]
        [--max-edge MM --min-edge MM] [--grading G --max-per-scale K --budget N] [--count]

``--grading``, ``--max-per-scale`` and ``--budget`` replace ``mesh_defaults.GRADING``,
``mesh_defaults.MAX_PER_SCALE`` and ``skin.AUTO_UNKNOWN_BUDGET`` for this run (the study of the
defaults); ``--count`` meshes and counts the unknowns without solving. Peak memory is this
process's (both lengths).
"""
from __future__ import annotations

import argparse
import math
import resource
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))     # the tests package

from tests.validation.line_formulas import (microstrip_inductance_per_length,
                                            microstrip_inductance_with_skin)
from tests.validation.strip_case import H, T, W, case_text

F = 1e8


def solve_length(length, folder, count=False, method=None, **kw):
    """(L, R at DC and 100 MHz, unknowns, triangles, case, solution) of one strip length; with
    ``count`` only the mesh and its unknowns (L, R and the solution ``None``)."""
    import copperpath
    from copperpath.geometry.case import load_case
    from copperpath.geometry.meshing import triangulate
    from copperpath.solver.graph.network import build_network

    path = Path(folder) / f"strip_{length:g}.toml"
    path.write_text(case_text(length, **kw))
    case = load_case(path)
    if count:
        mesh = triangulate(case.layout, case.mesh)
        net = build_network(mesh, case.layout, f_max=F)
        return None, None, net.n_branches, mesh.n_triangles, case, None
    sol = copperpath.solve(case, method=method)
    return (sol.result.inductance[:, 0, 0], sol.result.resistance[:, 0, 0],
            sol.system.network.n_branches, sol.mesh.n_triangles, case, sol)


def per_length(a, b, la, lb):
    return (b - a) / ((lb - la) * 1e-3)


def _override(args):
    """Replace the default-mesh and sublayer-budget constants for this run."""
    from copperpath.geometry import mesh_defaults
    from copperpath.solver.graph import skin

    if args.grading is not None:
        mesh_defaults.GRADING = args.grading
    if args.min_per_scale is not None:
        mesh_defaults.MIN_PER_SCALE = args.min_per_scale
    if args.max_per_scale is not None:
        mesh_defaults.MAX_PER_SCALE = args.max_per_scale
    if args.budget is not None:
        skin.AUTO_UNKNOWN_BUDGET = args.budget


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--sublayers", type=int)
    p.add_argument("--max-edge", type=float)
    p.add_argument("--min-edge", type=float)
    p.add_argument("--lengths", type=float, nargs=2, default=[20.0, 30.0])
    p.add_argument("--grading", type=float)
    p.add_argument("--max-per-scale", type=float)
    p.add_argument("--min-per-scale", type=float)
    p.add_argument("--method", choices=["auto", "dense", "fast"])
    p.add_argument("--budget", type=int)
    p.add_argument("--count", action="store_true", help="mesh and count only")
    args = p.parse_args(argv)
    _override(args)
    mesh = (args.max_edge, args.min_edge) if args.max_edge else None
    out = []
    with tempfile.TemporaryDirectory() as folder:
        for length in args.lengths:
            t = time.perf_counter()
            ell, r, n, tris, case, sol = solve_length(length, folder, count=args.count, method=args.method,
                                                      sublayers=args.sublayers, mesh=mesh)
            line = f"{length:g} mm: {tris} triangles, {n} unknowns"
            if sol is not None:
                out.append((ell, r))
                tm = sol.timing
                line += (f", {sol.system.method}, {time.perf_counter() - t:.0f} s (assembly "
                         f"{tm.get('assemble', 0.0):.0f} s, solve {tm.get('solve', 0.0):.0f} s), "
                         f"sublayers {sol.system.network.layer_sublayers}, "
                         f"L {ell[1] * 1e9:.4f} nH, R {r[1] * 1e3:.3f} mohm, peak "
                         f"{resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 2**20:.2f} GiB")
            print(line, flush=True)
    for note in case.notes:
        print("note:", note)
    if args.count:
        return 0
    (la, ra), (lb, rb) = out
    dl = per_length(la, lb, *args.lengths)
    dr = per_length(ra, rb, *args.lengths)
    ref = microstrip_inductance_per_length(W * 1e-3, H * 1e-3, T * 1e-3)
    total = microstrip_inductance_with_skin(W * 1e-3, H * 1e-3, T * 1e-3, F)
    ext = dl[1] - dr[1] / (2 * math.pi * F)
    print(f"L' DC {dl[0] * 1e9:.2f} nH/m; 100 MHz: L' {dl[1] * 1e9:.2f} nH/m, R' {dr[1]:.3f} ohm/m, "
          f"L' - R'/w {ext * 1e9:.2f} nH/m")
    print(f"Hammerstad & Jensen {ref * 1e9:.2f} nH/m, with Wheeler's rule {total * 1e9:.2f} nH/m "
          f"(R' {(total - ref) * 2 * math.pi * F:.3f} ohm/m)")
    print(f"L' against HJ + Wheeler: {100 * (dl[1] / total - 1):+.2f} %; L' - R'/w against HJ: "
          f"{100 * (ext / ref - 1):+.2f} %; L' against HJ alone: {100 * (dl[1] / ref - 1):+.2f} %")
    return 0


if __name__ == "__main__":
    sys.exit(main())
