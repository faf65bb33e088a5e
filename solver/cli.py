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

import numpy as np

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


def _stage(label):
    """A callback that shows the current stage on one terminal line (quiet when piped);
    ``say(None)`` clears the line."""
    if label is None or not sys.stderr.isatty():
        return lambda text: None

    def say(text):
        sys.stderr.write("\r\033[K" + (f"{label}: {text} ..." if text else ""))
        sys.stderr.flush()

    return say


def _load(path, *, named=False):
    """Load a case and print its notes (stdout) and warnings (stderr), prefixed with the file
    name when ``named`` (several cases)."""
    from geometry.case import load_case

    case = load_case(path)
    prefix = f"{Path(case.path).name}: " if named else ""
    for line in case.notes:
        print(f"note: {prefix}{line}")
    for line in case.warnings:
        print(f"warning: {prefix}{line}", file=sys.stderr)
    return case


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

    frequencies = np.asarray(freqs if freqs else case.frequencies, float)
    say = _stage(None if quiet else Path(case.path).stem)
    timing = {}
    t = time.perf_counter()
    say("meshing")
    mesh = triangulate(case.layout, case.mesh)
    timing["mesh"] = time.perf_counter() - t
    say(f"assembling ({mesh.n_triangles} triangles)")
    t = time.perf_counter()
    system = assemble(mesh, case.layout, case.ports, case.lumped, n_freqs=len(frequencies),
                      f_max=float(frequencies.max(initial=0.0)), method=case.solver.method,
                      tolerance=case.solver.tolerance)
    timing["assemble"] = time.perf_counter() - t
    t = time.perf_counter()
    result = solve(system, frequencies, title=case.title,
                   progress=None if quiet else _progress(Path(case.path).stem))
    timing["solve"] = time.perf_counter() - t
    checks = result.info["checks"]
    if checks["min_port_resistance_ohm"] is not None and checks["min_port_resistance_ohm"] <= 0:
        print(f"warning: {Path(case.path).name}: a port resistance is not positive "
              f"({checks['min_port_resistance_ohm']:.3g} ohm): the mesh is too coarse or the "
              f"case is degenerate", file=sys.stderr)
    if checks["max_reciprocity_error"] > max(1e-6, 10 * case.solver.tolerance):
        print(f"warning: {Path(case.path).name}: Z_ij and Z_ji differ by "
              f"{checks['max_reciprocity_error']:.2g} (relative); lower [solver] tolerance",
              file=sys.stderr)
    say("writing maps, exports and report")
    summary = write_outputs(case, mesh, system, result, out, timing=timing) if write else None
    say(None)
    return result, mesh, system, summary


def _cmd_solve(args):
    from solver.outputs import format_table

    if args.freq and not all(np.isfinite(f) and f >= 0 for f in args.freq):
        raise InputError(f"--freq: frequencies must be finite and >= 0 Hz, got {args.freq}")
    case = _load(args.case)
    out = _out_dir(args, args.case)
    result, mesh, system, summary = run_case(case, out, freqs=sorted(set(args.freq or [])))
    print(format_table(case, result, summary))
    print(f"wrote {out}/")
    return 0


def _cmd_inspect(args):
    case = _load(args.case)

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


def _side_by_side(out, solved, comparison):
    """Current-density maps of the compared port, one panel per case, one colour scale, on every
    layer that the port's plus terminal or any case's copper uses; returns (path, caption) pairs."""
    from solver import post
    from solver.maps import map_frequencies, safe_name
    from solver.plot import format_frequency, side_by_side_map

    panels, layers, freq = [], [], None
    for case, mesh, system, result in solved:
        k = list(result.ports).index(comparison.port)
        _, fmap, _, _ = map_frequencies(mesh, case, result)
        fi = fmap if fmap is not None else 0
        maps = post.port_maps(mesh, system, result, freq_index=fi, port_index=k,
                              layout=case.layout, lumped=case.lumped)
        freq = result.frequencies[fi] if freq is None else freq
        j = np.abs(maps.current_density)
        magnitude = np.sqrt((j ** 2).sum(axis=1)) * 1e-3          # A/m -> A/mm
        panels.append((f"{case.title}\n{format_frequency(result.frequencies[fi])}", mesh, case,
                       magnitude, maps.current_density))
        layers += [name for k, name in enumerate(mesh.layer_names)
                   if name not in layers and (mesh.tri_layer == k).any()]
    images = []
    for layer in layers:
        path = Path(out) / "maps" / f"compare_{safe_name(comparison.port)}_{safe_name(layer)}_J.png"
        side_by_side_map(path, panels, layer=layer,
                         title=f"Port {comparison.port}, layer {layer}: sheet current density |J| "
                               f"(one colour scale for all variants)",
                         label="|J| (A/mm per A of port current)")
        images.append((path, f"Layer {layer}: |J| of port {comparison.port} in each variant, "
                             f"one shared logarithmic colour scale."))
    return images


def compare_cases(case_paths, out, *, port=None, quiet=False):
    """Solve each case into ``out/<case name>/`` and compare them; returns the comparison."""
    from solver.compare import compare, comparison_sections, format_comparison
    from solver.report import write_comparison_report

    cases = [_load(p, named=True) for p in case_paths]
    stems = [Path(c.path).stem for c in cases]
    if len(set(stems)) != len(stems):
        raise InputError("compare: two cases share a file name; their outputs would overwrite "
                         "each other (rename one)")
    solved, triples = [], []
    for case in cases:
        if not quiet:
            print(f"solving {Path(case.path).name} ...", flush=True)
        result, mesh, system, summary = run_case(case, Path(out) / Path(case.path).stem, quiet=quiet)
        solved.append((case, mesh, system, result))
        triples.append((case, result, summary))
    comparison = compare(triples, port=port)
    text = format_comparison(comparison)
    images = _side_by_side(out, solved, comparison)
    write_comparison_report(out, f"Layout variants compared on port {comparison.port}",
                            comparison_sections(comparison), images)
    return comparison, text


def _cmd_compare(args):
    out = Path(args.out) if args.out else Path("out") / "compare"
    _, text = compare_cases(args.cases, out, port=args.port)
    print(text)
    print(f"wrote {out}/report.html (each variant's own outputs in its folder)")
    return 0


DEMO_CASES = ("buck_baseline.toml", "buck_cap_near.toml", "buck_pour.toml")


def bundled_cases():
    """Folder of the bundled cases: the checkout's ``cases/``, else the installed copy."""
    for root in (Path(__file__).resolve().parents[1] / "cases",
                 Path(sys.prefix) / "share" / "copperpath" / "cases"):
        if all((root / name).is_file() for name in DEMO_CASES):
            return root
    raise InputError(f"demo: the bundled cases ({', '.join(DEMO_CASES)}) are not installed; "
                     f"install copperpath from its source tree (`pip install -e .`)")


def _cmd_demo(args):
    paths = [bundled_cases() / name for name in DEMO_CASES]
    out = Path(args.out) if args.out else Path("out") / "demo"
    print("copperpath demo: a 24 V to 5 V, 8 A synchronous buck stage on a four-layer board; "
          "three variants of its hot loop.")
    _, text = compare_cases(paths, out)
    print(text)
    print(f"wrote {out}/report.html (open it in a browser); each variant's maps and exports lie "
          f"in its own folder there")
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
    p = sub.add_parser("compare", help="solve layout variants and compare them side by side")
    p.add_argument("cases", nargs="+", metavar="CASE", help="case files; the first is the reference")
    p.add_argument("--port", help="port to compare (default: the first case's [circuit] port or first port)")
    p.add_argument("--out", help="output folder (default: out/compare)")
    p.set_defaults(func=_cmd_compare)
    p = sub.add_parser("demo", help="the bundled buck-converter scenario: solve, compare, report")
    p.add_argument("--out", help="output folder (default: out/demo)")
    p.set_defaults(func=_cmd_demo)
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
