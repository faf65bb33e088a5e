"""The public API: load a case, solve it, look at the numbers, write the outputs, compare variants.

Warnings (a case file's findings, a port resistance that is not positive, a non-reciprocal Z)
are issued through :mod:`warnings` with the category :class:`CopperpathWarning`; nothing here
prints. The command line (:mod:`copperpath.solver.cli`) is a thin layer over these functions.
"""
from __future__ import annotations

import os
import time
import warnings
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path

import numpy as np

from copperpath.geometry.case import load_case as _read_case
from copperpath.geometry.errors import InputError
from copperpath.geometry.model import Case


class CopperpathWarning(UserWarning):
    """A finding that does not stop the work: read it, it may change the answer."""


def load_case(path) -> Case:
    """Read and check a case file.

    Parameters
    ----------
    path : str or os.PathLike
        The case file (TOML); relative paths inside it resolve against its folder.

    Returns
    -------
    copperpath.geometry.model.Case
        Everything in SI units. ``case.notes`` says what the artwork and drill files gave;
        each of ``case.warnings`` is also issued as a :class:`CopperpathWarning`.

    Raises
    ------
    copperpath.geometry.errors.InputError
        Any problem of the file, with a one-line message naming the file and the item.
    """
    case = _read_case(path)
    for line in case.warnings:
        warnings.warn(f"{Path(case.path).name}: {line}", CopperpathWarning, stacklevel=2)
    return case


@dataclass(frozen=True, eq=False)
class Solution:
    """A solved case: the port impedances over the sweep and what is needed for its outputs.

    Attributes
    ----------
    case : copperpath.geometry.model.Case
    mesh : copperpath.geometry.mesh.Mesh
    system : copperpath.solver.solve.system.System
        The assembled partial-element system (its ``L`` is a dense matrix or an operator).
    result : copperpath.solver.solve.result.Result
        Impedances, currents and potentials per frequency.
    timing : dict
        Seconds per stage (``mesh``, ``assemble``, ``solve``).
    """

    case: Case
    mesh: object
    system: object
    result: object
    timing: dict = field(default_factory=dict)

    @property
    def ports(self) -> tuple:
        """Port names, in the order of the matrix rows and columns."""
        return tuple(self.result.ports)

    @property
    def frequencies(self) -> np.ndarray:
        """Swept frequencies in Hz, shape (F,)."""
        return self.result.frequencies

    @property
    def impedance(self) -> np.ndarray:
        """``Z[f, i, j]`` in ohm (complex): voltage at port ``i`` per ampere into port ``j``."""
        return self.result.impedance

    @property
    def resistance(self) -> np.ndarray:
        """``Re Z`` in ohm, shape (F, P, P)."""
        return self.result.resistance

    @property
    def inductance(self) -> np.ndarray:
        """``Im Z / (2 pi f)`` in henry, shape (F, P, P); the DC-limit ``I^T L I`` at ``f = 0``."""
        return self.result.inductance

    @cached_property
    def bottlenecks(self) -> list:
        """Ranked bottlenecks of every port, as in ``result.json``: dicts with ``port``,
        ``layer``, ``x``, ``y`` (in the case's length unit), ``inductance_share``,
        ``resistance_share`` and ``rank``."""
        from copperpath.solver.output.maps import rank_bottlenecks

        return rank_bottlenecks(self.case, self.mesh, self.system, self.result)

    @cached_property
    def estimate(self):
        """The ``[circuit]`` estimates (overshoot, ringing, damping, snubber start), or ``None``
        when the case has no ``[circuit]`` table."""
        from copperpath.solver.output.outputs import circuit_estimate

        return circuit_estimate(self.case, self.result)

    def write(self, out) -> dict:
        """Write every output of ``copperpath solve`` into the folder ``out``.

        Returns
        -------
        dict
            The ``result.json`` data, plus ``files``, ``spice_fit_error``, ``estimate`` and
            ``images``.
        """
        from copperpath.solver.output.outputs import write_outputs

        return write_outputs(self.case, self.mesh, self.system, self.result, out,
                             timing=self.timing)

    def __repr__(self):
        return f"Solution({self.case.title!r}, ports={list(self.ports)}, " \
               f"{len(self.frequencies)} frequencies, {self.system.network.n_branches} unknowns)"


def check_before_meshing(case, frequencies=None, *, solve=True):
    """Refuse in seconds a case whose mesh (and, with ``solve``, its solve) cannot fit in memory,
    from a lower bound of its size (:func:`copperpath.solver.solve.memory.before_meshing`).

    Raises
    ------
    copperpath.geometry.errors.InputError
        Naming the case, the estimate, the limit and the settings to change.
    """
    from copperpath.solver.solve import memory
    from copperpath.solver.solve.system import check_memory, choose_method

    f = np.asarray(case.frequencies if frequencies is None else frequencies, float)
    est, triangles = memory.before_meshing(case.layout, case.mesh, f_max=float(f.max(initial=0.0)),
                                           ports=max(len(case.ports), 1), freqs=len(f))
    memory.require_mesh(triangles, what=f"{Path(case.path).name}: the mesh")
    if solve:
        method = choose_method(case.solver.method, est.branches)
        check_memory(method, est.branches, est.loops, est.nodes, max(len(case.ports), 1), len(f),
                     lower_bound=True, what=f"{Path(case.path).name}: the {method} solve")


def mesh_warnings(case, mesh):
    """Warn (:class:`CopperpathWarning`) when a tiny feature of the copper drives the mesh size."""
    from copperpath.geometry.mesh_size import size_warnings

    for line in size_warnings(mesh, case.layout, case.mesh, unit_scale=case.unit_scale,
                              unit=case.unit, source=Path(case.path).name):
        warnings.warn(line, CopperpathWarning, stacklevel=2)


def solve(case, frequencies=None, method=None, *, tolerance=None, progress=None, stage=None,
          workers=None, scheduler=None, checkpoint=None, resume=False, announce=None):
    """Mesh, assemble and solve a case over its sweep.

    Parameters
    ----------
    case : Case or str or os.PathLike
        A loaded case, or the path of a case file.
    frequencies : sequence of float, optional
        Hz, replacing the case's ``[sweep]``.
    method : {"auto", "dense", "fast"}, optional
        Default: the case's ``[solver] method``.
    tolerance : float, optional
        Relative tolerance of the iterative path; default the case's ``[solver] tolerance``.
    progress : callable, optional
        ``progress(k, n, f)`` after each frequency.
    stage : callable, optional
        ``stage(text)`` at the start of each stage (meshing, assembling, solving).
    workers : int, optional
        Solve the frequency points in this many processes of this machine (the system is
        assembled once and shared); with ``scheduler="local"`` the number of Dask workers.
    scheduler : str, optional
        ``"local"`` (a Dask LocalCluster) or a Dask scheduler address: the frequency points
        as tasks there, the system scattered once to every worker.
    checkpoint : str or os.PathLike, optional
        The output folder: every solved point is kept in a checkpoint folder beside it
        (:mod:`copperpath.scaleout`), which the caller removes after writing the outputs
        (:func:`copperpath.scaleout.finish_checkpoint`).
    resume : bool
        Reuse the points of that checkpoint (same case file content and settings only).
    announce : callable, optional
        ``announce(run)`` with the plan of a split sweep (tasks, workers, memory per task).

    Returns
    -------
    Solution
        With ``workers``, ``scheduler`` or ``checkpoint`` the same numbers as without;
        ``result.info["parallel"]`` says how the sweep ran.

    Raises
    ------
    copperpath.geometry.errors.InputError
        A bad case, a bad frequency, a port across two bodies or a mesh too large for memory.
    """
    from copperpath.geometry.meshing import triangulate
    from copperpath.solver.solve.sweep import solve as sweep
    from copperpath.solver.solve.system import assemble

    if not isinstance(case, Case):
        case = load_case(case)
    if frequencies is None:
        freqs = np.asarray(case.frequencies, float)
    else:
        freqs = np.unique(np.asarray(frequencies, float).ravel())
        if freqs.size == 0 or not np.all(np.isfinite(freqs)) or (freqs < 0).any():
            raise InputError(f"frequencies must be finite and >= 0 Hz, got {list(frequencies)}")
        _warn_quasi_static(case, freqs.max())
    method = case.solver.method if method is None else method
    if method not in ("auto", "dense", "fast"):
        raise InputError(f"method must be 'auto', 'dense' or 'fast', got {method!r}")
    rtol = case.solver.tolerance if tolerance is None else float(tolerance)
    say = stage or (lambda text: None)
    check_before_meshing(case, freqs)
    timing = {}
    t = time.perf_counter()
    say("meshing")
    mesh = triangulate(case.layout, case.mesh)
    timing["mesh"] = time.perf_counter() - t
    mesh_warnings(case, mesh)
    say(f"assembling ({mesh.n_triangles} triangles)")
    t = time.perf_counter()
    system = assemble(mesh, case.layout, case.ports, case.lumped, n_freqs=len(freqs),
                      f_max=float(freqs.max(initial=0.0)), method=method, tolerance=rtol)
    timing["assemble"] = time.perf_counter() - t
    say("solving")
    t = time.perf_counter()
    if workers is None and scheduler is None and checkpoint is None:
        result = sweep(system, freqs, title=case.title, progress=progress)
    else:
        from copperpath.scaleout import sweep_in_tasks

        result = sweep_in_tasks(case, system, freqs, workers=workers, scheduler=scheduler,
                                checkpoint=checkpoint, resume=resume, method=system.method,
                                tolerance=rtol, progress=progress, announce=announce)
    timing["solve"] = time.perf_counter() - t
    _warn_checks(case, result, rtol)
    from copperpath.solver.output.outputs import case_skin_warnings

    for line in case_skin_warnings(case, system, result):
        warnings.warn(line, CopperpathWarning, stacklevel=2)
    return Solution(case=case, mesh=mesh, system=system, result=result, timing=timing)


def _warn_quasi_static(case, f_top):
    """Warn when frequencies given in place of the case's sweep exceed the quasi-static limit
    (the case reader checks its own ``[sweep]``)."""
    from copperpath.geometry.case import quasi_static_limit

    f_lim, d = quasi_static_limit(case.layout)
    if f_top > f_lim:
        warnings.warn(f"{Path(case.path).name}: frequencies: top frequency {f_top:g} Hz exceeds the "
                      f"quasi-static limit {f_lim:.3g} Hz for the largest modelled dimension "
                      f"D = {d / case.unit_scale:g} {case.unit}; the results above it are not "
                      f"valid", CopperpathWarning, stacklevel=3)


def _warn_checks(case, result, rtol):
    """Warn where the solved port matrix breaks passivity or reciprocity."""
    name = Path(case.path).name
    checks = result.info["checks"]
    low = checks["min_port_resistance_ohm"]
    if low is not None and low <= 0:
        warnings.warn(f"{name}: a port resistance is not positive ({low:.3g} ohm): the mesh is too "
                      f"coarse or the case is degenerate", CopperpathWarning, stacklevel=3)
    if checks["max_reciprocity_error"] > max(1e-6, 10 * rtol):
        warnings.warn(f"{name}: Z_ij and Z_ji differ by {checks['max_reciprocity_error']:.2g} "
                      f"(relative); lower [solver] tolerance", CopperpathWarning, stacklevel=3)


def compare(cases, port=None, frequencies=None, *, workers=None, scheduler=None):
    """Compare layout variants on one port: R and L side by side, the change against the first
    case, circuit estimates, and which variant has the lowest loop inductance.

    Parameters
    ----------
    cases : sequence of Solution, Case or path
        The variants, reference first; cases and paths are solved here (checked for the port
        first, so that a missing port is reported before any solve).
    port : str, optional
        Default: the first case's ``[circuit]`` port, else its first port.
    frequencies : sequence of float, optional
        Hz to compare at; each must have been swept by every case.
    workers, scheduler : optional
        Solve the cases that are not yet solved as parallel tasks, one variant per task
        (processes of this machine, or a Dask scheduler / ``"local"``; see :func:`solve`).

    Returns
    -------
    copperpath.solver.analysis.compare.Comparison
    """
    from copperpath.solver.analysis.compare import compare as _compare, resolve_port
    from copperpath.solver.output.exports.result_json import result_dict
    from copperpath.solver.output.outputs import mesh_stats

    items = [c if isinstance(c, (Solution, Case)) else load_case(c) for c in cases]
    port = resolve_port([s.case if isinstance(s, Solution) else s for s in items], port)
    triples = []
    if workers is not None or scheduler is not None:
        from copperpath.scaleout import solve_variants

        todo = [k for k, item in enumerate(items) if not isinstance(item, Solution)]
        solved = dict(zip(todo, solve_variants([items[k] for k in todo], workers=workers,
                                               scheduler=scheduler)))
        for k, item in enumerate(items):
            if k in solved:
                (case, result), summary, lines = solved[k]
                for line in lines:
                    warnings.warn(line, CopperpathWarning, stacklevel=2)
                triples.append((case, result, summary))
                continue
            summary = result_dict(item.result, mesh_stats=mesh_stats(item.mesh, item.system),
                                  timing=item.timing)
            triples.append((item.case, item.result, summary))
        return _compare(triples, port=port, frequencies=frequencies)
    for item in items:
        sol = item if isinstance(item, Solution) else solve(item)
        summary = result_dict(sol.result, mesh_stats=mesh_stats(sol.mesh, sol.system),
                              timing=sol.timing)
        triples.append((sol.case, sol.result, summary))
    return _compare(triples, port=port, frequencies=frequencies)


def set_threads(n):
    """Use ``n`` threads for the kernel fill (before the first solve of the process)."""
    if int(n) < 1:
        raise InputError(f"threads must be at least 1, got {n}")
    os.environ["NUMBA_NUM_THREADS"] = str(int(n))
