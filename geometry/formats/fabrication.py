"""Scan a fabrication folder or .zip: which file is which copper layer, which are drill files.

Copper layers are identified by the X2 file attribute ``.FileFunction,Copper,L<n>,Top|Inr|Bot``
(written as ``%TF...*%`` or as a ``G04 #@! TF...*`` comment). Drill files are Excellon files;
their span and plating come from ``; #@! TF.FileFunction,Plated|NonPlated,<a>,<b>,...``,
plating otherwise from the file name (``NPTH`` means non-plated, see
:mod:`copperpath.geometry.formats.excellon`); a drill file without a span joins all layers. A Gerber job
file (``*.gbrjob``, see :mod:`copperpath.geometry.formats.gerber_job`) is kept for the stackup.

Only when no Gerber file of the set carries a copper ``.FileFunction`` are the layers taken
from file names, using two common conventions (common practice, not a standard):

- ``*-F_Cu.*`` / ``*-B_Cu.*`` / ``*-In<k>_Cu.*`` (also with ``.`` for ``_``): top, bottom,
  inner layer k (copper layer k + 1);
- suffixes ``.gtl`` (top), ``.gbl`` (bottom), ``.g<k>`` (inner layer k, copper layer k + 1).

The bottom layer then gets the number after the last inner layer. Every decision is
reported in :attr:`Fabrication.lines`.

Zip archives are read in memory, never extracted. An archive is refused when it holds more
than ``max_files`` entries, declares or decompresses to more than ``max_bytes`` (members are
read through a bounded reader that stops at the limit, whatever sizes the archive declares),
or has a member whose path is absolute or climbs out with ``..``. The same limits apply to
folders. Only regular files are read: symbolic links that dangle or loop, FIFOs, sockets,
devices (also behind a symbolic link) and symbolic links in a zip are skipped with a line in
:attr:`Fabrication.lines`; linked folders are not followed. Copper layer numbers and drill
spans must lie in 1 to :data:`copperpath.geometry.limits.MAX_LAYER_NUMBER`.
"""
from __future__ import annotations

import io
import os
import re
import stat
import zipfile
import zlib
from dataclasses import dataclass, field, replace
from pathlib import Path, PurePosixPath

from copperpath.geometry.errors import input_error
from copperpath.geometry.formats import detect, excellon, gerber, gerber_job
from copperpath.geometry.formats.gerber import DEFAULT_CHORD
from copperpath.geometry.limits import MAX_LAYER_NUMBER, read_regular

__all__ = ["DrillFile", "Fabrication", "scan", "MAX_FILES", "MAX_BYTES"]

MAX_FILES = 500
"""Most files (archive entries) a fabrication source may hold."""

MAX_BYTES = 200 * 2**20
"""Most bytes (uncompressed) a fabrication source may hold: 200 MiB."""

_TF_GERBER = re.compile(r"(?:%\s*TF|G0*4\s*#@!\s*TF)\.?FileFunction,([^*%\r\n]*)\*")
_TF_DRILL = re.compile(r";\s*#@!\s*TF\.?FileFunction,([^\r\n]*)")
_NAME_RULES = (
    (re.compile(r"[-_.]F[_.]Cu\.[^.]+$", re.I), "top"),
    (re.compile(r"[-_.]B[_.]Cu\.[^.]+$", re.I), "bottom"),
    (re.compile(r"[-_.]In([0-9]+)[_.]Cu\.[^.]+$", re.I), "inner"),
    (re.compile(r"\.gtl$", re.I), "top"),
    (re.compile(r"\.gbl$", re.I), "bottom"),
    (re.compile(r"\.g([0-9]+)$", re.I), "inner"),
)


@dataclass(frozen=True)
class DrillFile:
    """One Excellon file of the set.

    Attributes
    ----------
    name : str
        Label of the file (path, or ``archive.zip!member``).
    span : tuple of int or None
        Copper layers ``(a, b)`` joined by its holes; None: all layers.
    plated : bool
        From the file attribute or the file name (default True); the plating of each hole
        is in :attr:`copperpath.geometry.formats.excellon.Drills.plated`.
    mixed : bool
        True when the file says ``MixedPlating`` (plating given per tool).
    """

    name: str
    span: tuple[int, int] | None
    plated: bool
    mixed: bool = False


@dataclass(frozen=True)
class Fabrication:
    """Result of :func:`scan`.

    Attributes
    ----------
    source : str
        The folder or archive scanned.
    copper : dict of int to str
        Copper layer number (1 = top) -> file label.
    drills : tuple of DrillFile
    lines : tuple of str
        What was assigned and what was skipped, one human-readable line per file.
    contents : dict of str to bytes
        Bytes of the assigned files by label.
    job : str or None
        Label of the Gerber job file, if the set has one.
    """

    source: str
    copper: dict
    drills: tuple[DrillFile, ...]
    lines: tuple[str, ...]
    contents: dict = field(repr=False, default_factory=dict)
    job: str | None = None

    def open(self, label: str) -> io.BytesIO:
        """Return the bytes of an assigned file as a binary buffer."""
        return io.BytesIO(self.contents[label])

    def read_copper(self, layer: int, *, chord: float = DEFAULT_CHORD, clip=None) -> gerber.Artwork:
        """Read the artwork of copper layer ``layer`` (see :func:`copperpath.geometry.formats.gerber.read`)."""
        label = self.copper[layer]
        return gerber.read(self.open(label), chord=chord, name=label, clip=clip)

    def read_drills(self, drill: DrillFile) -> excellon.Drills:
        """Read one drill file of the set (see :func:`copperpath.geometry.formats.excellon.read`)."""
        return excellon.read(self.open(drill.name), name=drill.name)

    def read_job(self) -> gerber_job.Job | None:
        """Read the job file of the set (see :func:`copperpath.geometry.formats.gerber_job.read`), or None."""
        return None if self.job is None else gerber_job.read(self.open(self.job), name=self.job)


def scan(source, *, max_files: int = MAX_FILES, max_bytes: int = MAX_BYTES) -> Fabrication:
    """Identify the copper layers and drill files in a folder or a .zip archive.

    Parameters
    ----------
    source : str or os.PathLike
        A folder (searched recursively) or a .zip file.
    max_files : int, optional
        Refuse sources with more files (archive entries) than this.
    max_bytes : int, optional
        Refuse sources larger than this many bytes (uncompressed).

    Returns
    -------
    Fabrication

    Raises
    ------
    copperpath.geometry.errors.InputError
        Missing source, unsafe or oversized archive, two files claiming one copper layer.
    """
    path = Path(source)
    if path.is_dir():
        files, skipped = _folder_files(path, max_files, max_bytes)
    elif path.is_file() and zipfile.is_zipfile(path):
        files, skipped = _zip_files(path, max_files, max_bytes)
    elif path.exists():
        raise input_error(path, None, "fabrication source must be a folder or a .zip archive")
    else:
        raise input_error(path, None, "fabrication source not found")
    fab = _assign(str(path), files)
    return replace(fab, lines=tuple(skipped) + fab.lines)


# --------------------------------------------------------------------------- sources

def _folder_files(root, max_files, max_bytes):
    """Return ``[(label, short name, bytes)]`` for every regular file under ``root`` and the
    lines for the entries skipped."""
    paths, skipped = [], []
    for folder, dirs, names in os.walk(root):
        dirs.sort()
        for d in dirs:
            if os.path.islink(os.path.join(folder, d)):
                skipped.append(f"skipped {Path(folder, d).relative_to(root).as_posix()}: "
                               "a symbolic link to a folder (not followed)")
        paths.extend(Path(folder) / n for n in sorted(names))
        if len(paths) > max_files:
            raise input_error(root, None, f"more than {max_files} files; expected a fabrication folder")
    regular, total = [], 0
    for p in paths:
        short = p.relative_to(root).as_posix()
        kind = _entry_kind(p)
        if kind:
            skipped.append(f"skipped {short}: {kind}, not a regular file")
            continue
        regular.append((p, short))
        total += p.stat().st_size
    if total > max_bytes:
        raise input_error(root, None, f"{total} bytes in all, more than the limit of {max_bytes}")
    out = []
    for p, short in regular:
        data = read_regular(p, max_bytes=max_bytes - sum(len(d) for _, _, d in out))
        out.append((str(p), short, data))
    return out, skipped


def _entry_kind(path):
    """None for a regular file (also behind a symbolic link), else what the entry is."""
    try:
        mode = os.stat(path).st_mode
    except OSError as exc:
        if os.path.islink(path):
            return f"a symbolic link that dangles or loops ({exc.strerror or exc})"
        return f"unreadable ({exc.strerror or exc})"
    if stat.S_ISREG(mode):
        return None
    link = "a symbolic link to " if os.path.islink(path) else ""
    for test, name in ((stat.S_ISDIR, "a folder"), (stat.S_ISFIFO, "a FIFO"), (stat.S_ISCHR, "a character device"),
                       (stat.S_ISBLK, "a block device"), (stat.S_ISSOCK, "a socket")):
        if test(mode):
            return link + name
    return link + "a special file"


def _zip_files(path, max_files, max_bytes):
    """Return ``[(label, member name, bytes)]`` for the files of a zip archive (in memory)."""
    try:
        with zipfile.ZipFile(path) as zf:
            infos = zf.infolist()
            if len(infos) > max_files:
                raise input_error(path, None, f"{len(infos)} entries, more than the limit of {max_files}")
            for info in infos:
                _check_member(path, info.filename)
            total = sum(info.file_size for info in infos)
            if total > max_bytes:
                raise input_error(path, None, f"{total} bytes uncompressed, more than the limit of {max_bytes}")
            out, skipped, left = [], [], max_bytes
            for info in infos:
                kind = stat.S_IFMT(info.external_attr >> 16) if info.create_system == 3 else 0
                if info.is_dir():
                    continue
                if kind not in (0, stat.S_IFREG):
                    skipped.append(f"skipped {info.filename}: not a regular file in the archive "
                                   "(a symbolic link or special file)")
                    continue
                data = _read_member(path, zf, info, left, max_bytes)
                left -= len(data)
                out.append((f"{path}!{info.filename}", info.filename, data))
            return out, skipped
    except (zipfile.BadZipFile, zlib.error, NotImplementedError, RuntimeError, EOFError, OSError,
            ValueError, OverflowError) as exc:
        raise input_error(path, None, f"cannot read the archive: {exc}") from None


def _read_member(path, zf, info, left, max_bytes):
    """The bytes of one member, read in pieces; refuse once the archive passes ``max_bytes``."""
    parts, size = [], 0
    with zf.open(info) as f:
        while True:
            chunk = f.read(min(2**20, left - size + 1))
            if not chunk:
                return b"".join(parts)
            size += len(chunk)
            if size > left:
                raise input_error(path, None, f"member {info.filename!r} decompresses to more than it "
                                              f"declares; the archive passes the limit of {max_bytes} bytes")
            parts.append(chunk)


def _check_member(path, name):
    posix = name.replace("\\", "/")
    if posix.startswith("/") or re.match(r"[A-Za-z]:", posix) or ".." in PurePosixPath(posix).parts:
        raise input_error(path, None, f"member {name!r} has an absolute path or climbs out of the "
                                      "archive with '..'; refusing the archive")


# --------------------------------------------------------------------------- assignment

def _assign(source, files):
    lines, copper, drills, contents, unnamed, jobs = [], {}, [], {}, [], []
    for label, short, data in files:
        text = data[:65536].decode("utf-8", errors="replace")
        kind = detect(text, short)
        if kind is None and gerber_job.looks_like_job(text, short):
            jobs.append(label)
            contents[label] = data
            lines.append(f"job file {short}")
        elif kind == "gerber":
            m = _TF_GERBER.search(text)
            ff = tuple(f.strip() for f in m.group(1).split(",")) if m else ()
            if not ff:
                unnamed.append((label, short, data))
            elif ff[0] == "Copper" and len(ff) >= 2 and re.fullmatch(r"L[0-9]+", ff[1]):
                _check_layer_number(label, ff[1][1:], "copper layer")
                _claim(source, copper, int(ff[1][1:]), label)
                contents[label] = data
                lines.append(f"L{ff[1][1:]} <- {short} (FileFunction {','.join(ff)})")
            elif ff[0] in ("Plated", "NonPlated", "MixedPlating"):
                lines.append(f"skipped {short}: drill data in Gerber format ({','.join(ff)}); "
                             "expected Excellon for drills")
            else:
                lines.append(f"skipped {short}: Gerber with FileFunction {','.join(ff)}, not copper")
        elif kind == "excellon":
            d = _drill_file(label, short, text)
            drills.append(d)
            contents[label] = data
            span = f"layers L{d.span[0]}-L{d.span[1]}" if d.span else "all layers (no span given)"
            plating = "mixed plating (per tool)" if d.mixed else ("plated" if d.plated else "non-plated")
            lines.append(f"drill {short}: {plating}, {span}")
        else:
            lines.append(f"skipped {short}: neither Gerber nor Excellon")
    if copper:
        lines += [f"skipped {short}: Gerber without X2 FileFunction (other files have one)"
                  for _, short, _ in unnamed]
    else:
        _assign_by_name(source, unnamed, copper, contents, lines)
    numbers = sorted(copper)
    if numbers and numbers != list(range(1, numbers[-1] + 1)):
        missing = sorted(set(range(1, numbers[-1] + 1)) - set(numbers))
        lines.append("warning: no file for copper layer(s) " + ", ".join(f"L{k}" for k in missing))
    if len(jobs) > 1:
        raise input_error(source, None, f"two Gerber job files: {jobs[0]} and {jobs[1]}; expected one")
    return Fabrication(source, dict(sorted(copper.items())), tuple(drills), tuple(lines), contents,
                       jobs[0] if jobs else None)


def _check_layer_number(label, digits, what):
    """``int(digits)``, refused unless it lies in 1 to MAX_LAYER_NUMBER."""
    if len(digits) > 6 or not 1 <= int(digits) <= MAX_LAYER_NUMBER:
        raise input_error(label, None, f"X2 FileFunction {what} number {digits[:20]} out of range; "
                                       f"expected 1 to {MAX_LAYER_NUMBER}")
    return int(digits)


def _claim(source, copper, layer, label):
    if layer in copper:
        raise input_error(source, None, f"two files claim copper layer L{layer}: {copper[layer]} and {label}")
    copper[layer] = label


def _drill_file(label, short, text):
    m = _TF_DRILL.search(text)
    ff = tuple(f.strip() for f in m.group(1).split(",")) if m else ()
    span = None
    if len(ff) >= 3 and re.fullmatch("[0-9]+", ff[1]) and re.fullmatch("[0-9]+", ff[2]):
        span = (_check_layer_number(label, ff[1], "drill span layer"),
                _check_layer_number(label, ff[2], "drill span layer"))
    if ff and ff[0] in ("Plated", "NonPlated"):
        plated = ff[0] == "Plated"
    else:
        plated = not re.search(r"npth|non-?plated|unplated", short.rsplit("/", 1)[-1], re.I)
    return DrillFile(label, span, plated, bool(ff) and ff[0] == "MixedPlating")


def _assign_by_name(source, candidates, copper, contents, lines):
    found = []
    for label, short, data in candidates:
        for pattern, side in _NAME_RULES:
            m = pattern.search(short)
            if m:
                k = _check_layer_number(label, m.group(1), "inner layer") if side == "inner" else 0
                found.append((side, k, label, short, data))
                break
        else:
            lines.append(f"skipped {short}: Gerber without X2 FileFunction and no copper file name")
    inner = [k for side, k, *_ in found if side == "inner"]
    bottom = (max(inner) if inner else 0) + 2
    for side, k, label, short, data in found:
        layer = {"top": 1, "inner": k + 1, "bottom": bottom}[side]
        _claim(source, copper, layer, label)
        contents[label] = data
        lines.append(f"L{layer} <- {short} (by file name, {side}; no X2 FileFunction)")
