"""Studies beyond one process: a case's frequency points, or a comparison's variants, as tasks
on worker processes of this machine or on a Dask cluster, and resumable sweeps.

:func:`copperpath.solve` and :func:`copperpath.compare` call these when given ``workers``,
``scheduler`` or ``checkpoint``; the executors are :mod:`copperpath.solver.solve.executors`,
the split and merge of a sweep :mod:`copperpath.solver.solve.parallel`, the checkpoint folder
:mod:`copperpath.solver.solve.checkpoint`.
"""
from __future__ import annotations

import warnings
from importlib.metadata import PackageNotFoundError, version
from pathlib import Path

from copperpath.geometry.errors import InputError
from copperpath.solver.solve import checkpoint as ckpt
from copperpath.solver.solve.executors import open_executor
from copperpath.solver.solve.parallel import solve_sweep


def _version():
    try:
        return version("copperpath")
    except PackageNotFoundError:
        return "0+unknown"


def sweep_settings(frequencies, method, tolerance, keep_currents=True):
    """The solve settings a checkpoint is keyed by (JSON-ready)."""
    return {"frequencies_hz": [float(f).hex() for f in frequencies], "method": str(method),
            "tolerance": float(tolerance).hex(), "keep_currents": bool(keep_currents),
            "version": _version()}


def open_checkpoint(case, out, frequencies, method, tolerance, *, resume):
    """The checkpoint of a solve of ``case`` into ``out``.

    Without ``resume`` every earlier checkpoint of ``out`` is discarded (with a warning); with
    it, the checkpoint of the same case file content and settings is continued, and one of
    other content or settings is refused.

    Returns
    -------
    copperpath.solver.solve.checkpoint.Checkpoint

    Raises
    ------
    InputError
        ``resume`` and the only checkpoints of ``out`` belong to another case or settings.
    """
    from copperpath.solver.solve.checkpoint import Checkpoint

    settings = sweep_settings(frequencies, method, tolerance)
    key = ckpt.checkpoint_key(case.path, settings)
    mine = ckpt.folder_for(out, key)
    others = [p for p in ckpt.folders(out) if p != mine]
    if resume:
        if others and not mine.is_dir():
            raise InputError(f"--resume: the checkpoint {others[0]} was written for another case "
                             f"file content or other solve settings (frequencies, method, "
                             f"tolerance) than {Path(case.path).name}; remove it or run without "
                             f"--resume")
    else:
        for p in others + ([mine] if mine.is_dir() else []):
            warnings.warn(f"{Path(case.path).name}: an interrupted run's checkpoint {p.name} was "
                          f"discarded (--resume continues one)", _warning(), stacklevel=3)
            ckpt.remove(p)
    return Checkpoint(mine, frequencies, settings)


def _warning():
    from copperpath.study import CopperpathWarning

    return CopperpathWarning


def sweep_in_tasks(case, system, frequencies, *, workers=None, scheduler=None, checkpoint=None,
                   resume=False, method="auto", tolerance=1e-4, progress=None, announce=None):
    """The sweep of an assembled case as tasks (see :func:`copperpath.solve`).

    Parameters
    ----------
    checkpoint : str or os.PathLike, optional
        The output folder the checkpoint goes beside (``--out``); ``None``: no checkpoint.
    resume : bool
        Continue the checkpoint of the same case and settings.

    Returns
    -------
    copperpath.solver.solve.result.Result
        ``info["parallel"]`` says how it ran, and ``"checkpoint"`` names the folder (the caller
        removes it once the outputs are written: :func:`finish_checkpoint`).
    """
    store = None
    if checkpoint is not None:
        store = open_checkpoint(case, checkpoint, frequencies, method, tolerance, resume=resume)
    with open_executor(workers, scheduler) as executor:
        result = solve_sweep(system, frequencies, executor, title=case.title, checkpoint=store,
                             progress=progress, announce=announce)
    if store is not None:
        result.info["parallel"]["checkpoint"] = str(store.folder)
    return result


def finish_checkpoint(result):
    """Remove the checkpoint of a complete run (``result.info["parallel"]["checkpoint"]``)."""
    folder = result.info.get("parallel", {}).get("checkpoint")
    if folder:
        ckpt.remove(folder)


def _variant(_, job):
    """Task: solve one variant; with an output folder also write its outputs and keep only the
    comparison's view. Returns ``(value, summary, warning lines)``."""
    from copperpath.solver.output.exports.result_json import result_dict
    from copperpath.solver.output.outputs import mesh_stats
    from copperpath.solver.output.variants import variant_view
    from copperpath.study import solve

    case, out, port = job
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        sol = solve(case)
        if out is None:
            summary = result_dict(sol.result, mesh_stats=mesh_stats(sol.mesh, sol.system),
                                  timing=sol.timing)
            value = (sol.case, sol.result)
        else:
            summary = sol.write(out)
            value = variant_view(sol.case, sol.mesh, sol.system, sol.result, port)
    lines = [str(w.message) for w in caught if issubclass(w.category, _warning())]
    return value, summary, lines


def solve_variants(cases, *, outs=None, port=None, workers=None, scheduler=None, progress=None):
    """Solve variants as parallel tasks, one variant per task (each solved serially there).

    Parameters
    ----------
    cases : sequence of Case
    outs : sequence of path, optional
        Output folder of each variant: the task writes every output there and returns the
        comparison's view (:func:`copperpath.solver.output.variants.variant_view`); without
        it, the case and result.
    port : str, optional
        The compared port (with ``outs``).
    progress : callable, optional
        ``progress(k, n, name)`` after each finished variant.

    Returns
    -------
    list of tuple
        ``(value, summary, warning lines)`` per case, in the order of ``cases``.
    """
    outs = list(outs) if outs is not None else [None] * len(cases)
    jobs = [(c, None if o is None else Path(o), port) for c, o in zip(cases, outs)]
    values = [None] * len(jobs)
    with open_executor(workers, scheduler) as executor:
        for done, (k, value) in enumerate(executor.map_unordered(_variant, None, jobs), 1):
            values[k] = value
            if progress is not None:
                progress(done, len(jobs), Path(cases[k].path).name)
    return values
