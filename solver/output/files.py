"""Atomic file output: every file is written to a temporary name and renamed into place, so an
interrupted run never leaves a half file that looks whole."""
from __future__ import annotations

import contextlib
import os
from pathlib import Path


@contextlib.contextmanager
def atomic_path(path):
    """Yield a temporary path beside ``path``; rename it to ``path`` when the block succeeds.

    Parameters
    ----------
    path : str or os.PathLike
        Final file name. Its folder is created if needed.

    Examples
    --------
    >>> import tempfile
    >>> d = Path(tempfile.mkdtemp())
    >>> with atomic_path(d / "a.txt") as tmp:
    ...     _ = tmp.write_text("hello")
    >>> (d / "a.txt").read_text()
    'hello'
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp{path.suffix}")
    try:
        yield tmp
        os.replace(tmp, path)
    finally:
        if tmp.exists():
            tmp.unlink()


def write_text(path, text):
    """Write ``text`` to ``path`` atomically (UTF-8)."""
    with atomic_path(path) as tmp:
        tmp.write_text(text, encoding="utf-8")


STAMP = ".copperpath"
"""File that marks a folder as copperpath output. A folder is replaced only when it holds this
file, or holds nothing but names that copperpath writes (:data:`OUTPUT_PATTERNS`)."""
OUTPUT_PATTERNS = ("result.json", "inspect.json", "impedance.csv", "report.html", "report.md",
                   "mesh.vtu", "maps", "*.s[0-9]*p", "*.cir", "*.png", ".*.tmp*")
"""Names of the files an earlier (unstamped) run may have left in its output folder."""
_PARTIAL = ".copperpath-partial-"
_OLD = ".copperpath-old-"


def _ours(folder):
    """True when ``folder`` may be replaced: empty, stamped, or an earlier run's outputs."""
    import fnmatch

    names = [p.name for p in folder.iterdir()]
    return STAMP in names or all(any(fnmatch.fnmatch(n, pat) for pat in OUTPUT_PATTERNS)
                                 for n in names)


def _alive(pid):
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OSError):
        return True
    return True


def remove_stale(target):
    """Remove the staging folders of earlier runs into ``target`` whose process has ended.

    Returns
    -------
    list of str
        One line per removed folder (for the command line to print).
    """
    import shutil

    target = Path(target)
    notes = []
    if not target.parent.is_dir():
        return notes
    for tag in (_PARTIAL, _OLD):
        for p in target.parent.glob(f".{target.name}{tag}*"):
            pid = p.name.rsplit("-", 1)[-1]
            if pid.isdigit() and not _alive(int(pid)) and p.is_dir():
                shutil.rmtree(p, ignore_errors=True)
                if tag == _PARTIAL:
                    notes.append(f"an earlier run into {target} did not finish (process {pid}); "
                                 f"its unfinished outputs were removed and {target} was left as it was")
    return notes


@contextlib.contextmanager
def staged_folder(target):
    """Yield a fresh hidden folder beside ``target``; when the block succeeds, it replaces
    ``target`` by two renames, so ``target`` only ever holds the outputs of one complete run.

    A run that is killed leaves ``target`` untouched and a hidden ``.<name>.copperpath-partial-<pid>``
    folder beside it, which the next run into ``target`` removes (:func:`remove_stale`). A
    failure inside the block removes the staging folder.

    Raises
    ------
    copperpath.geometry.errors.InputError
        ``target`` exists and holds files that are not copperpath outputs (it is never replaced),
        or is not a folder.
    """
    import shutil

    from copperpath.geometry.errors import InputError

    target = Path(target).absolute()
    if target.exists() and (not target.is_dir() or not _ours(target)):
        what = "folder holds files that are not copperpath outputs" if target.is_dir() else \
            "is not a folder"
        raise InputError(f"--out {target}: this {what}; name a new or empty folder (copperpath "
                         f"replaces its output folder as a whole)")
    target.parent.mkdir(parents=True, exist_ok=True)
    stage = target.parent / f".{target.name}{_PARTIAL}{os.getpid()}"
    if stage.exists():
        shutil.rmtree(stage)
    stage.mkdir()
    try:
        yield stage
        (stage / STAMP).write_text("copperpath output folder; replaced as a whole by the next run\n")
        old = target.parent / f".{target.name}{_OLD}{os.getpid()}"
        if target.exists():
            os.replace(target, old)
        os.replace(stage, target)
        shutil.rmtree(old, ignore_errors=True)
    finally:
        if stage.exists():
            shutil.rmtree(stage, ignore_errors=True)
