"""Checkpoints of a sweep: every solved frequency point is kept in a folder beside the output
folder, so that an interrupted run can be continued (``--resume``) with the same numbers.

The folder is ``.<out name>.copperpath-checkpoint-<key>`` beside ``out`` (outputs are written
through a staging folder that a killed run does not keep, so the points live outside it). The
key is a hash of the case file's bytes and the solve settings (frequencies, method, tolerance,
whether currents are kept, the copperpath version); ``key.json`` inside repeats them and the
unknown counts of the assembled system, which are checked again before a point is reused.
Each point is ``point-<index>.npz`` (index into the sorted frequencies), written to a temporary
name and renamed, so a point file is either whole or absent.
"""
from __future__ import annotations

import hashlib
import json
import os
from pathlib import Path

import numpy as np

from copperpath.geometry.errors import InputError

TAG = ".copperpath-checkpoint-"


def checkpoint_key(case_path, settings):
    """Hex key of a case file's content and the solve settings.

    Parameters
    ----------
    case_path : str or os.PathLike
    settings : dict
        JSON-ready settings (frequencies in Hz, method, tolerance, ...).

    Returns
    -------
    str
        16 hex digits.
    """
    h = hashlib.sha256()
    h.update(Path(case_path).read_bytes())
    h.update(json.dumps(settings, sort_keys=True).encode())
    return h.hexdigest()[:16]


def folders(out):
    """Checkpoint folders beside the output folder ``out`` (any key)."""
    out = Path(out).absolute()
    if not out.parent.is_dir():
        return []
    return sorted(p for p in out.parent.glob(f".{out.name}{TAG}*") if p.is_dir())


def folder_for(out, key):
    """The checkpoint folder of ``out`` for ``key``."""
    out = Path(out).absolute()
    return out.parent / f".{out.name}{TAG}{key}"


def remove(folder):
    """Remove a checkpoint folder (after a complete run)."""
    import shutil

    shutil.rmtree(folder, ignore_errors=True)


class Checkpoint:
    """Read and write the solved points of one sweep.

    Parameters
    ----------
    folder : pathlib.Path
    frequencies : ndarray, shape (F,)
        The sweep, sorted; a point is its index into this array.
    settings : dict
        As given to :func:`checkpoint_key`.
    """

    def __init__(self, folder, frequencies, settings):
        self.folder = Path(folder)
        self.frequencies = np.asarray(frequencies, float)
        self.settings = dict(settings)

    def open(self, unknowns):
        """Create the folder or check that it belongs to this system.

        Parameters
        ----------
        unknowns : dict
            ``branches``, ``nodes``, ``loops`` of the assembled system.

        Raises
        ------
        InputError
            The folder holds points of a system with other unknown counts or other settings
            (the case's artwork or base file changed).
        """
        self.folder.mkdir(parents=True, exist_ok=True)
        meta = {"settings": self.settings, "unknowns": {k: int(v) for k, v in unknowns.items()}}
        path = self.folder / "key.json"
        if path.is_file():
            try:
                old = json.loads(path.read_text())
            except (OSError, ValueError):
                old = None
            if old != json.loads(json.dumps(meta)):
                raise InputError(f"--resume: the checkpoint {self.folder} was written for another "
                                 f"mesh or settings (a file the case reads has changed); remove it "
                                 f"or run without --resume")
            return
        tmp = path.with_name(f".key.{os.getpid()}.tmp")
        tmp.write_text(json.dumps(meta, indent=1))
        os.replace(tmp, path)

    def done(self):
        """Indices of the points already solved (whole files whose frequency matches)."""
        out = []
        for p in self.folder.glob("point-*.npz"):
            try:
                k = int(p.stem.split("-")[1])
                with np.load(p) as z:
                    ok = 0 <= k < len(self.frequencies) and float(z["frequency"]) == self.frequencies[k]
            except (OSError, ValueError, KeyError, IndexError):
                ok = False
            if ok:
                out.append(k)
        return sorted(out)

    def save(self, index, point):
        """Write one point (a dict of arrays and numbers, see :mod:`copperpath.solver.solve.parallel`)."""
        path = self.folder / f"point-{index:05d}.npz"
        tmp = self.folder / f".point-{index:05d}.{os.getpid()}.tmp.npz"
        arrays = {k: np.asarray(v) for k, v in point.items() if v is not None}
        np.savez(tmp, **arrays)
        os.replace(tmp, path)

    def load(self, index):
        """One saved point as a dict (``None`` for the arrays that were not stored)."""
        with np.load(self.folder / f"point-{index:05d}.npz", allow_pickle=False) as z:
            point = {k: z[k] for k in z.files}
        for name in ("currents", "potentials", "dc_inductance"):
            point.setdefault(name, None)
        return point
