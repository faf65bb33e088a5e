"""A frequency sweep split into tasks: chunks of frequency points solved on an executor
(:mod:`copperpath.solver.solve.executors`) against one shared assembled system, merged into
one :class:`~copperpath.solver.solve.result.Result` equal to the serial sweep's.

Each task calls :func:`copperpath.solver.solve.sweep.solve` on its frequencies as it stands;
the solve of one frequency does not depend on the others swept with it, so the merged
impedances, currents and potentials are those of one serial sweep. The system is assembled
once per case and shared (fork pool: inherited; Dask: scattered once to every worker). What a
task repeats is the sweep's reduction to loop quantities (``C^T L C`` or the preconditioner's
near part), hence chunks of several points rather than one task per point.

Merged ``info``: ``timing_s`` keeps the system's stages, ``reduce`` is the sum over tasks,
``solve`` the sum and ``solve_per_frequency`` the list of the per-frequency seconds in sweep
order; GMRES iterations and residuals are in sweep order (one per port and frequency above 0,
as the serial sweep lists them); ``checks`` are recomputed from the merged impedances;
``parallel`` says how the work ran (tasks, workers, memory per task, points resumed).
"""
from __future__ import annotations

import numpy as np

from copperpath.solver.solve import memory, sweep
from copperpath.solver.solve.fast_memory import SHEET_BYTES_PER_BRANCH, estimate_fast_memory
from copperpath.solver.solve.result import Result

TASKS_PER_WORKER = 4
"""Chunks per worker by default: a finished chunk is a checkpoint and evens out the load; each
chunk repeats the sweep's reduction."""


def split(indices, n_chunks):
    """Chunks of point indices, dealt round-robin so that every chunk spans the sweep.

    Examples
    --------
    >>> [c.tolist() for c in split(range(7), 3)]
    [[0, 3, 6], [1, 4], [2, 5]]
    """
    indices = np.asarray(list(indices), np.int64)
    n = max(min(int(n_chunks), len(indices)), 1) if len(indices) else 0
    return [indices[k::n] for k in range(n)]


def default_chunks(n_points, workers):
    """Number of tasks for ``n_points`` frequencies on ``workers``: :data:`TASKS_PER_WORKER`
    per worker, at most one per point."""
    return max(min(n_points, TASKS_PER_WORKER * max(int(workers), 1)), 1)


def task_memory(system, points):
    """Bytes of one task solving ``points`` frequencies, and of the shared system a worker holds.

    Parameters
    ----------
    system : copperpath.solver.solve.system.System
    points : int

    Returns
    -------
    tuple
        ``(task_bytes, shared_bytes)`` from :func:`copperpath.solver.solve.memory.estimate`
        (dense) or :func:`copperpath.solver.solve.fast_memory.estimate_fast_memory` (fast): the
        task's reduction, factorisation and stored currents; the shared ``L`` (dense matrix, or
        the compressed sheet operator).
    """
    net = system.network
    b, n, k, p = net.n_branches, system.n_loops, net.n_nodes, max(len(system.ports), 1)
    if system.method == "dense":
        est = memory.estimate(b, n, k, ports=p, freqs=points)
        shared = est.parts["L"]
        return est.solve_bytes - shared, shared
    shared = SHEET_BYTES_PER_BRANCH * b
    return estimate_fast_memory(b, n, p, points, sublayers=net.most_sublayers) - shared, shared


def _solve_chunk(system, task):
    """One task: ``sweep.solve`` on its frequencies; returns ``(indices, Result)``."""
    indices, freqs, title, keep_currents = task
    return indices, sweep.solve(system, freqs, title=title, keep_currents=keep_currents)


def points_of(result, n_ports):
    """Split a chunk's result into one dict per frequency point (arrays for a checkpoint)."""
    info = result.info
    per_freq = info["timing_s"]["solve_per_frequency"]
    iters, resid = list(info.get("gmres_iterations", [])), list(info.get("gmres_residuals", []))
    positive = int((result.frequencies > 0).sum())
    by_port = len(iters) == n_ports * positive and len(resid) == len(iters)
    out, j = [], 0
    for k, f in enumerate(result.frequencies):
        take = n_ports if (by_port and f > 0) else 0
        point = {
            "frequency": float(f),
            "impedance": result.impedance[k],
            "dc_inductance": result.dc_inductance if f == 0.0 else None,
            "currents": None if result.currents is None else result.currents[k],
            "potentials": None if result.potentials is None else result.potentials[k],
            "seconds": float(per_freq[k]),
            "reduce_s": float(info["timing_s"]["reduce"]) / len(result.frequencies),
            "gmres_iterations": np.asarray(iters[j:j + take], np.int64),
            "gmres_residuals": np.asarray(resid[j:j + take], float),
        }
        if not by_port and k == 0:          # unknown layout of the lists: keep them whole
            point["gmres_iterations"] = np.asarray(iters, np.int64)
            point["gmres_residuals"] = np.asarray(resid, float)
        j += take
        out.append(point)
    return out


def merge(system, frequencies, points, *, title="", template=None, run=None):
    """One Result from per-point dicts in sweep order.

    Parameters
    ----------
    system : copperpath.solver.solve.system.System
    frequencies : ndarray, shape (F,)
    points : list of dict
        One per frequency, in the order of ``frequencies`` (:func:`points_of`).
    template : dict, optional
        A chunk's ``info`` (unknowns, method); rebuilt from ``system`` when ``None``.
    run : dict, optional
        Stored as ``info["parallel"]``.
    """
    f = np.asarray(frequencies, float)
    Z = np.stack([np.asarray(p["impedance"], complex) for p in points]) if points else \
        np.empty((0, len(system.ports), len(system.ports)), complex)
    keep = all(p["currents"] is not None for p in points) and bool(points)
    currents = np.stack([p["currents"] for p in points]) if keep else None
    potentials = np.stack([p["potentials"] for p in points]) if keep else None
    dc = next((np.asarray(p["dc_inductance"], float) for p in points
               if p["frequency"] == 0.0 and p["dc_inductance"] is not None), None)
    per_freq = [float(p["seconds"]) for p in points]
    diag = np.einsum("fii->fi", Z)
    info = {
        "timing_s": {**system.timing, "reduce": float(sum(float(p["reduce_s"]) for p in points)),
                     "solve": float(sum(per_freq)), "solve_per_frequency": per_freq},
        "unknowns": (template or {}).get("unknowns", {
            "branches": system.network.n_branches, "nodes": system.network.n_nodes,
            "loops": system.n_loops}),
        "method": (template or {}).get("method", system.method),
        "gmres_iterations": [int(i) for p in points for i in np.atleast_1d(p["gmres_iterations"])],
        "gmres_residuals": [float(r) for p in points for r in np.atleast_1d(p["gmres_residuals"])],
        "checks": {
            "min_port_resistance_ohm": float(diag.real.min()) if diag.size else None,
            "max_reciprocity_error": float(np.abs(Z - Z.transpose(0, 2, 1)).max()
                                           / max(np.abs(Z).max(), 1e-300)) if Z.size else 0.0,
        },
    }
    if run is not None:
        info["parallel"] = dict(run)
    return Result(title=title, ports=tuple(p.name for p in system.ports), frequencies=f,
                  impedance=Z, dc_inductance=dc, currents=currents, potentials=potentials,
                  info=info)


def solve_sweep(system, frequencies, executor, *, title="", keep_currents=True, checkpoint=None,
                chunks=None, progress=None, announce=None):
    """Solve a sweep in tasks on ``executor`` and merge the points.

    Parameters
    ----------
    system : copperpath.solver.solve.system.System
    frequencies : array_like
        Hz, ascending, >= 0.
    executor : object
        From :func:`copperpath.solver.solve.executors.open_executor`.
    keep_currents : bool
    checkpoint : copperpath.solver.solve.checkpoint.Checkpoint, optional
        Points found there are reused; every new point is saved there as its task finishes.
    chunks : int, optional
        Number of tasks; default :func:`default_chunks`.
    progress : callable, optional
        ``progress(k, n, f)`` after each finished point (``k`` points of ``n`` done).
    announce : callable, optional
        ``announce(run)`` once the plan is known (the ``info["parallel"]`` dict), before any task.

    Returns
    -------
    copperpath.solver.solve.result.Result
    """
    f = np.asarray(frequencies, float)
    n_ports = len(system.ports)
    points = [None] * len(f)
    resumed = []
    if checkpoint is not None:
        checkpoint.open({"branches": system.network.n_branches, "nodes": system.network.n_nodes,
                         "loops": system.n_loops})
        for k in checkpoint.done():
            p = checkpoint.load(k)
            if keep_currents and p["currents"] is None:
                continue
            points[k] = p
            resumed.append(k)
    todo = [k for k in range(len(f)) if points[k] is None]
    n_chunks = chunks if chunks is not None else default_chunks(len(todo), executor.workers)
    plan = split(todo, n_chunks)
    per_task = max((len(c) for c in plan), default=0)
    task_bytes, shared_bytes = task_memory(system, max(per_task, 1))
    run = {"executor": executor.kind, "where": executor.describe(), "workers": executor.workers,
           "tasks": len(plan), "points_per_task": per_task,
           "memory_per_task_bytes": int(task_bytes), "shared_system_bytes": int(shared_bytes),
           "points_resumed": len(resumed)}
    if announce is not None:
        announce(run)
    done = len(resumed)
    if progress is not None and done:
        progress(done, len(f), float(f[resumed[-1]]))
    template = None
    tasks = [(c, f[c], title, keep_currents) for c in plan]
    for _, (indices, chunk) in executor.map_unordered(_solve_chunk, system, tasks):
        template = template or chunk.info
        for k, point in zip(indices, points_of(chunk, n_ports)):
            points[int(k)] = point
            if checkpoint is not None:
                checkpoint.save(int(k), point)
            done += 1
            if progress is not None:
                progress(done, len(f), float(f[int(k)]))
    return merge(system, f, points, title=title, template=template, run=run)

