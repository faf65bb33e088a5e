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
