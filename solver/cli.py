"""The ``copperpath`` command line: solve, inspect, compare, demo.

Exit status 0 on success, 2 on bad input (one line on stderr), 1 on an internal failure.
Only this module prints and picks exit codes.
"""
from __future__ import annotations

import argparse
import contextlib
import math
import os
import sys
import traceback
import warnings
from pathlib import Path


import copperpath
from copperpath.geometry.errors import InputError
from copperpath.study import CopperpathWarning


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


@contextlib.contextmanager
def _printed_warnings():
    """Print the API's warnings as ``warning: ...`` lines on stderr (only the CLI prints)."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", CopperpathWarning)
        try:
            yield
        finally:
            for w in caught:
                if issubclass(w.category, CopperpathWarning):
                    print(f"warning: {w.message}", file=sys.stderr)
                else:
                    warnings.showwarning(w.message, w.category, w.filename, w.lineno)


def _load(path, *, named=False):
    """Load a case and print its notes (stdout) and warnings (stderr), prefixed with the file
    name when ``named`` (several cases)."""
    with _printed_warnings():
        case = copperpath.load_case(path)
    prefix = f"{Path(case.path).name}: " if named else ""
    for line in case.notes:
        print(f"note: {prefix}{line}")
    return case


_PREFIX = {"": 1.0, "k": 1e3, "K": 1e3, "M": 1e6, "G": 1e9}


def parse_frequency(text):
    """A frequency from the command line: a number in Hz, optionally with an SI prefix and unit.

    Examples
    --------
    >>> [parse_frequency(t) for t in ("0", "2e8", "1MHz", "250k", "1.5 GHz", "10 kHz")]
    [0.0, 200000000.0, 1000000.0, 250000.0, 1500000000.0, 10000.0]
    """
    import re

    m = re.fullmatch(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([kKMG]?)(?:Hz|hz)?\s*", text)
    if not m:
        raise argparse.ArgumentTypeError(
            f"expected a frequency in Hz such as 1e6, 1MHz or 250k, got {text!r}")
    value = float(m.group(1)) * _PREFIX[m.group(2)]
    if not math.isfinite(value) or value < 0:
        raise argparse.ArgumentTypeError(f"frequencies must be finite and >= 0 Hz, got {text!r}")
    return value


def _out_dir(args, case_path):
    return Path(args.out) if args.out else Path("out") / Path(case_path).stem


def _announce(run):
    """Print the plan of a split sweep: where it runs and the memory per task."""
    print(f"parallel: {run['tasks']} tasks of up to {run['points_per_task']} frequencies "
          f"{run['where']}; memory per task about {run['memory_per_task_bytes'] / 2**20:.0f} MiB "
          f"plus {run['shared_system_bytes'] / 2**20:.0f} MiB of the shared system per worker"
          + (f"; {run['points_resumed']} points resumed" if run["points_resumed"] else ""),
          flush=True)


def run_case(case, out, *, freqs=None, quiet=False, write=True, scale=None):
    """Solve one case through the API and write its outputs to ``out``.

    Returns
    -------
    tuple
        ``(solution, summary)`` where ``summary`` is the ``result.json`` data (``None`` when
        ``write`` is false).
    """
    label = Path(case.path).stem
    say = _stage(None if quiet else label)
    with _printed_warnings():
        solution = copperpath.solve(case, frequencies=freqs or None, stage=say,
                                    progress=None if quiet else _progress(label),
                                    **(dict(scale, announce=_announce) if scale else {}))
    say("writing maps, exports and report")
    summary = solution.write(out) if write else None
    say(None)
    for line in (summary or {}).get("warnings", ()):
        print(f"warning: {Path(case.path).name}: {line}", file=sys.stderr)
    return solution, summary


def _staged(out):
    """The staging folder context of ``out`` (:func:`copperpath.solver.output.files.staged_folder`), after printing
    a warning for each unfinished earlier run that it cleans up."""
    from copperpath.solver.output.files import remove_stale, staged_folder

    for line in remove_stale(out):
        print(f"warning: {line}", file=sys.stderr)
    return staged_folder(out)


def _cmd_solve(args):
    from copperpath.solver.output.outputs import format_table

    if args.freq and not all(math.isfinite(f) and f >= 0 for f in args.freq):
        raise InputError(f"--freq: frequencies must be finite and >= 0 Hz, got {args.freq}")
    case = _load(args.case)
    out = _out_dir(args, args.case)
    scale = None
    if args.workers is not None or args.scheduler is not None or args.resume:
        scale = {"workers": args.workers, "scheduler": args.scheduler, "checkpoint": out,
                 "resume": args.resume}
    with _staged(out) as stage:
        solution, summary = run_case(case, stage, freqs=sorted(set(args.freq or [])), scale=scale)
    if scale:
        from copperpath.scaleout import finish_checkpoint

        finish_checkpoint(solution.result)
    print(format_table(case, solution.result, summary))
    print(f"wrote {out}/")
    return 0


def _cmd_inspect(args):
    case = _load(args.case)

    from copperpath.geometry.meshing import triangulate
    from copperpath.solver.output.inspect import write_inspect

    out = _out_dir(args, args.case)
    copperpath.study.check_before_meshing(case, solve=False)
    mesh = triangulate(case.layout, case.mesh)
    with _printed_warnings():
        copperpath.study.mesh_warnings(case, mesh)
    with _staged(out) as stage:
        info = write_inspect(case.layout, mesh, stage, unit_scale=case.unit_scale, unit=case.unit,
                             title=case.title, ports=case.ports, lumped=case.lumped,
                             frequencies=case.frequencies, board=case.board,
                             method=case.solver.method)
    from copperpath.solver.output.outputs import format_inspect
    print(format_inspect(case, info))
    print(f"wrote {out}/")
    return 0


def _variant_progress():
    """Progress over finished variants on a terminal (quiet when piped)."""
    if not sys.stderr.isatty():
        return None

    def show(k, n, name):
        sys.stderr.write(f"\r\033[Kvariants {k}/{n} done ({name})" + ("\n" if k == n else ""))
        sys.stderr.flush()

    return show


def compare_cases(case_paths, out, *, port=None, quiet=False, workers=None, scheduler=None):
    """Solve each case into ``out/<case name>/`` and compare them; returns the comparison.

    Of each solved variant only what the comparison shows is kept (:class:`VariantView`); its
    matrices and currents are released before the next variant is solved.
    """
    from copperpath.solver.analysis.compare import compare, resolve_port
    from copperpath.solver.output.comparison import comparison_sections, format_comparison, short_titles
    from copperpath.solver.output.report import write_comparison_report
    from copperpath.solver.output.variants import side_by_side_images, variant_sections, variant_view

    cases = [_load(p, named=True) for p in case_paths]
    stems = [Path(c.path).stem for c in cases]
    if len(set(stems)) != len(stems):
        raise InputError("compare: two cases share a file name; their outputs would overwrite "
                         "each other (rename one)")
    port = resolve_port(cases, port)            # a missing port is reported before any solve
    for case in cases:                          # so is a variant too large for the machine
        copperpath.study.check_before_meshing(case)
    views, triples = [], []
    if workers is not None or scheduler is not None:
        from copperpath.scaleout import solve_variants

        solved = solve_variants(cases, outs=[Path(out) / Path(c.path).stem for c in cases],
                                port=port, workers=workers, scheduler=scheduler,
                                progress=_variant_progress())
        for case, (view, summary, lines) in zip(cases, solved):
            for line in lines + list(summary.get("warnings", ())):
                print(f"warning: {Path(case.path).name}: {line}", file=sys.stderr)
            views.append(view)
            triples.append((view.case, view.result, summary))
    for case in (cases if not views else ()):
        if not quiet:
            print(f"solving {Path(case.path).name} ...", flush=True)
        solution, summary = run_case(case, Path(out) / Path(case.path).stem, quiet=quiet)
        view = variant_view(solution.case, solution.mesh, solution.system, solution.result, port)
        del solution
        views.append(view)
        triples.append((view.case, view.result, summary))
    comparison = compare(triples, port=port)
    text = format_comparison(comparison)
    _, titles = short_titles([c.title for c in comparison.cases])
    images, failed = side_by_side_images(out, views, titles)
    for line in failed:
        print(f"warning: {line}", file=sys.stderr)
    sections = comparison_sections(comparison) + variant_sections(
        views, titles, lambda v: Path(v.case.path).stem)
    write_comparison_report(out, f"Layout variants compared on port {comparison.port}", sections,
                            images)
    return comparison, text


def _cmd_compare(args):
    out = Path(args.out) if args.out else Path("out") / "compare"
    with _staged(out) as stage:
        _, text = compare_cases(args.cases, stage, port=args.port, workers=args.workers,
                                scheduler=args.scheduler)
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
    with _staged(out) as stage:
        _, text = compare_cases(paths, stage)
    print(text)
    print(f"wrote {out}/report.html (open it in a browser); each variant's maps and exports lie "
          f"in its own folder there")
    return 0


def _scale_options(p):
    p.add_argument("--workers", type=int, default=None, metavar="N",
                   help="solve frequencies (solve) or variants (compare) in N processes")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="run the tasks on a Dask cluster: its scheduler address, or 'local'")


def build_parser():
    """The argument parser of the ``copperpath`` command."""
    parser = argparse.ArgumentParser(
        prog="copperpath",
        description="Frequency-dependent R and L of PCB copper between named terminals "
                    "(quasi-static PEEC on triangle meshes).")
    parser.add_argument("--version", action="version", version=f"copperpath {copperpath.__version__}")
    sub = parser.add_subparsers(dest="command", required=True)
    p = sub.add_parser("solve", help="mesh, solve and report one case")
    p.add_argument("case", help="case file (TOML)")
    p.add_argument("--out", help="output folder (default: out/<case name>)")
    p.add_argument("--freq", type=parse_frequency, nargs="+", metavar="F",
                   help="frequencies (replace the sweep): Hz, or with a prefix such as 1MHz or 250k")
    p.add_argument("--jobs", type=int, default=None, metavar="N", help="worker threads (default: all cores)")
    _scale_options(p)
    p.add_argument("--resume", action="store_true",
                   help="continue an interrupted run of the same case and settings from its checkpoint")
    p.set_defaults(func=_cmd_solve)
    p = sub.add_parser("inspect", help="check geometry, connectivity and mesh; pictures and size estimate")
    p.add_argument("case", help="case file (TOML)")
    p.add_argument("--out", help="output folder (default: out/<case name>)")
    p.set_defaults(func=_cmd_inspect)
    p = sub.add_parser("compare", help="solve layout variants and compare them side by side")
    p.add_argument("cases", nargs="+", metavar="CASE", help="case files; the first is the reference")
    p.add_argument("--port", help="port to compare (default: the first case's [circuit] port or first port)")
    p.add_argument("--out", help="output folder (default: out/compare)")
    _scale_options(p)
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
