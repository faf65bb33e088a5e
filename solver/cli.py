"""The ``copperpath`` command line: solve, inspect, compare, demo.

Exit status 0 on success, 2 on bad input (one line on stderr), 1 on an internal failure.
Only this module prints and picks exit codes.
"""
from __future__ import annotations

import argparse
import os
import sys
import time
import traceback
from pathlib import Path

from geometry.errors import InputError


def _progress(label):
    """A progress callback that redraws one line on a terminal and stays quiet when piped."""
    if not sys.stderr.isatty():
        return None

    def show(k, n, freq):
        width = 30
        done = int(width * k / n)
        sys.stderr.write(f"\r{label} [{'#' * done}{'.' * (width - done)}] {k}/{n}  {freq:.4g} Hz ")
        if k == n:
            sys.stderr.write("\n")
        sys.stderr.flush()

    return show


def _out_dir(args, case_path):
    return Path(args.out) if args.out else Path("out") / Path(case_path).stem


def run_case(case, out, *, freqs=None, quiet=False, write=True):
    """Mesh, assemble and solve one case, and write its outputs to ``out``.

    Returns
    -------
    tuple
        ``(result, mesh, system, summary)`` where ``summary`` is the ``result.json`` data.
    """
    from geometry.meshing import triangulate
    from solver.outputs import write_outputs
    from solver.sweep import solve
    from solver.system import assemble

    import numpy as np

    frequencies = np.asarray(freqs if freqs else case.frequencies, float)
    timing = {}
    t = time.perf_counter()
    mesh = triangulate(case.layout, case.mesh)
    timing["mesh"] = time.perf_counter() - t
    t = time.perf_counter()
    system = assemble(mesh, case.layout, case.ports, case.lumped, n_freqs=len(frequencies),
                      f_max=float(frequencies.max(initial=0.0)))
    timing["assemble"] = time.perf_counter() - t
    t = time.perf_counter()
    result = solve(system, frequencies, title=case.title,
                   progress=None if quiet else _progress(Path(case.path).stem))
    timing["solve"] = time.perf_counter() - t
    summary = write_outputs(case, mesh, system, result, out, timing=timing) if write else None
    return result, mesh, system, summary


def _cmd_solve(args):
    from geometry.case import load_case
    from solver.outputs import format_table

    case = load_case(args.case)
    for line in case.warnings:
        print(f"warning: {line}", file=sys.stderr)
    out = _out_dir(args, args.case)
    result, mesh, system, summary = run_case(case, out, freqs=args.freq)
    print(format_table(case, result, summary))
    print(f"wrote {out}/")
    return 0


def _cmd_inspect(args):
    from geometry.case import load_case

    case = load_case(args.case)
    for line in case.warnings:
        print(f"warning: {line}", file=sys.stderr)

    from geometry.meshing import triangulate
    from solver.inspect import write_inspect

    out = _out_dir(args, args.case)
    mesh = triangulate(case.layout, case.mesh)
    info = write_inspect(case.layout, mesh, out, unit_scale=case.unit_scale, unit=case.unit,
                         title=case.title, ports=case.ports)
    from solver.outputs import format_inspect
    print(format_inspect(case, info))
    print(f"wrote {out}/")
    return 0


def build_parser():
    """The argument parser of the ``copperpath`` command."""
    parser = argparse.ArgumentParser(
        prog="copperpath",
        description="Frequency-dependent R and L of PCB copper between named terminals "
                    "(quasi-static PEEC on triangle meshes).")
    sub = parser.add_subparsers(dest="command", required=True)
    p = sub.add_parser("solve", help="mesh, solve and report one case")
    p.add_argument("case", help="case file (TOML)")
    p.add_argument("--out", help="output folder (default: out/<case name>)")
    p.add_argument("--freq", type=float, nargs="+", metavar="F", help="frequencies in Hz (replace the sweep)")
    p.add_argument("--jobs", type=int, default=None, metavar="N", help="worker threads (default: all cores)")
    p.set_defaults(func=_cmd_solve)
    p = sub.add_parser("inspect", help="check geometry, connectivity and mesh; pictures and size estimate")
    p.add_argument("case", help="case file (TOML)")
    p.add_argument("--out", help="output folder (default: out/<case name>)")
    p.set_defaults(func=_cmd_inspect)
    return parser


def main(argv=None):
    """Run the command line; return the exit status."""
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:
        return int(exc.code or 0)
    if getattr(args, "jobs", None):
        if args.jobs < 1:
            print("copperpath: --jobs must be at least 1", file=sys.stderr)
            return 2
        os.environ["NUMBA_NUM_THREADS"] = str(args.jobs)
    try:
        return args.func(args)
    except InputError as err:
        print(f"copperpath: {err}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("copperpath: interrupted", file=sys.stderr)
        return 1
    except Exception as err:  # noqa: BLE001 -- the one place that turns failures into status 1
        if os.environ.get("COPPERPATH_DEBUG"):
            traceback.print_exc()
        print(f"copperpath: internal error: {type(err).__name__}: {err} "
              f"(set COPPERPATH_DEBUG=1 for the traceback)", file=sys.stderr)
        return 1


if __name__ == "__main__":
    sys.exit(main())
