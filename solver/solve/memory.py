"""How much memory a solve needs and how much this process may use: one estimator for
``inspect``, ``solve`` and ``compare``, before meshing and after.

The dense path (``method="dense"``) holds the partial inductance ``L`` of the ``B`` current
unknowns (edge currents of every sublayer, via barrels, lumped branches) as a dense real
matrix, reduces it to ``n`` loop currents and solves one dense complex system per frequency.
Its peak, measured with ``tracemalloc`` (``scripts/bench_memory.py``), is

    8 B^2                       L
    + max(16 n B + 8 n^2,       C^T L (n x B), the contiguous copy of its transpose that the
                                sparse product makes, and C^T L C
          32 n^2)               C^T L C and the complex Rc + jw Lc factored in place
    + 16 F P (B + K)            stored currents and potentials (F frequencies, P ports,
                                K nodes)

on top of the process itself (imports, compiled kernels: :data:`BASE_BYTES`). The
``"fast"`` method of the iterative solve of another engineer will add its own terms; the GMRES
solve of today also stores the dense ``L``, and the dense estimate bounds it.

Available memory is the least of ``MemAvailable``, the address-space limit ``RLIMIT_AS``
minus the address space in use, and every enclosing cgroup's limit minus its usage (v2
``memory.max``/``memory.current``; v1 ``memory.limit_in_bytes``/``memory.usage_in_bytes``).
"""
from __future__ import annotations

import math
import resource
from dataclasses import dataclass, field
from pathlib import Path

from copperpath.geometry.errors import InputError

METHODS = ("dense",)
"""Solve methods this module estimates."""
BASE_BYTES = 260 * 2**20
"""Resident size of the process before the solve (Python, numpy/scipy, numba kernels, the
mesh), measured 220-260 MiB; counted in :attr:`MemoryEstimate.total` only."""
USABLE_FRACTION = 0.9
"""Fraction of the available memory a solve may plan to use."""
EQUILATERAL = math.sqrt(3.0) / 4.0
"""Area of the equilateral triangle of unit edge."""
GRADING = 0.4
"""Growth of the mesh edge per unit distance from a refined feature (as the mesher)."""
MESH_BYTES_PER_TRIANGLE = 1024
"""Memory of meshing and building the network per triangle (measured 670 B on 67k triangles,
rounded up)."""


@dataclass(frozen=True)
class MemoryEstimate:
    """Peak bytes of one solve.

    Attributes
    ----------
    method : str
    branches, loops, nodes : int
        Current unknowns ``B`` (every sublayer), loop currents ``n``, potentials ``K``.
    parts : dict of str to int
        Bytes of each term (see the module notes).
    lower_bound : bool
        True for an estimate before meshing (from areas and edge sizes: never more than the
        mesh will need).
    """

    method: str
    branches: int
    loops: int
    nodes: int
    parts: dict = field(default_factory=dict)
    lower_bound: bool = False

    @property
    def solve_bytes(self) -> int:
        """Bytes the solve adds to the running process."""
        return int(sum(self.parts.values()))

    @property
    def total(self) -> int:
        """Bytes of the whole process at its peak (:data:`BASE_BYTES` plus the solve)."""
        return BASE_BYTES + self.solve_bytes


def estimate(branches, loops, nodes, *, ports=1, freqs=1, keep_currents=True, method="dense",
             lower_bound=False):
    """Peak memory of a solve with these unknown counts.

    Parameters
    ----------
    branches, loops, nodes : int
        ``B``, ``n``, ``K`` (see :class:`MemoryEstimate`).
    ports, freqs : int
    keep_currents : bool
        Currents and potentials stored for the maps.
    method : {"dense"}
    lower_bound : bool
        Marks an estimate from a lower bound of the unknowns.

    Returns
    -------
    MemoryEstimate

    Examples
    --------
    >>> e = estimate(10_000, 3_300, 7_000)
    >>> round(e.solve_bytes / 2**20)
    1350
    """
    if method not in METHODS:
        raise ValueError(f"memory.estimate: method must be one of {METHODS}, got {method!r}")
    b, n, k = int(branches), int(loops), int(nodes)
    parts = {"L": 8 * b * b, "reduce_and_factor": max(16 * n * b + 8 * n * n, 32 * n * n)}
    if keep_currents:
        parts["currents"] = 16 * int(freqs) * int(ports) * (b + k)
    return MemoryEstimate(method, b, n, k, parts, lower_bound)


def from_network(network, *, ports=1, freqs=1, method="dense"):
    """The estimate for an assembled or inspected network (exact unknown counts).

    Parameters
    ----------
    network : copperpath.solver.graph.network.Network
    """
    import numpy as np

    bodies = len(np.unique(network.bodies)) if len(network.bodies) else 0
    loops = network.n_branches - network.n_nodes + bodies
    return estimate(network.n_branches, loops, network.n_nodes, ports=ports, freqs=freqs,
                    method=method)


def before_meshing(layout, options, *, f_max=0.0, ports=1, freqs=1, method="dense"):
    """A lower bound of the estimate from copper areas and edge sizes, before any meshing.

    Triangles per layer: the copper area at ``max_edge`` plus, around each terminal and via
    pad, the band where the edge grows from ``min_edge`` at ``GRADING`` per unit length
    (``perimeter / (c g) (1/min_edge - 1/max_edge)`` triangles, ``c`` the equilateral area,
    counted at half to stay below overlapping bands); about 1.5 interior edges per triangle,
    one current per edge and sublayer, one node per triangle.

    Parameters
    ----------
    layout : copperpath.geometry.model.Layout
    options : copperpath.geometry.model.MeshOptions
    f_max : float
        Highest frequency in Hz (for ``sublayers = "auto"``).

    Returns
    -------
    tuple
        ``(MemoryEstimate, triangles)``, the estimate flagged ``lower_bound`` and the lower
        bound of the triangle count.
    """
    import shapely

    from copperpath.geometry.meshing import layer_copper
    from copperpath.solver.graph.skin import auto_sublayers

    lo, hi = options.min_edge, options.max_edge
    band = 0.5 / (EQUILATERAL * GRADING) * max(1.0 / lo - 1.0 / hi, 0.0)
    triangles = edges = 0.0
    branches = 0.0
    for layer in layout.layers:
        copper = layer_copper(layout, layer.name)
        if copper.is_empty:
            continue
        perimeter = sum(float(shapely.intersection(t.shape, copper).length)
                        for t in layout.terminals if t.layer == layer.name)
        perimeter += sum(math.pi * v.pad for v in layout.vias if layer.name in v.connects)
        t = copper.area / (EQUILATERAL * hi * hi) + band * perimeter
        t = min(t, copper.area / (EQUILATERAL * lo * lo * 0.25))
        subs = layer.sublayers if isinstance(layer.sublayers, int) else auto_sublayers(layer, f_max)
        triangles += t
        edges += 1.5 * t
        branches += 1.5 * t * subs
    n_tri = int(triangles)
    loops = max(int(branches - triangles), 0)
    est = estimate(int(branches), loops, n_tri, ports=ports, freqs=freqs, method=method,
                   lower_bound=True)
    return est, n_tri


def available():
    """Bytes this process may still allocate, and where the limit comes from.

    Returns
    -------
    tuple
        ``(bytes, source)``: the least of ``MemAvailable``, ``RLIMIT_AS`` minus the address
        space in use, and each enclosing cgroup's limit minus its usage; ``source`` names it
        (for messages).
    """
    limits = [(_meminfo_available(), "available memory (MemAvailable)")]
    limits.append(_address_space_left())
    limits += cgroup_limits()
    limits = [(b, s) for b, s in limits if b is not None]
    if not limits:
        return 8 * 2**30, "assumed 8 GiB (no memory information)"
    return min(limits, key=lambda x: x[0])


def _meminfo_available(path="/proc/meminfo"):
    try:
        with open(path) as f:
            for line in f:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except (OSError, ValueError, IndexError):
        pass
    return None


def _address_space_left(status="/proc/self/status"):
    soft, _ = resource.getrlimit(resource.RLIMIT_AS)
    if soft == resource.RLIM_INFINITY:
        return None, ""
    used = 0
    try:
        for line in Path(status).read_text().splitlines():
            if line.startswith("VmSize:"):
                used = int(line.split()[1]) * 1024
    except (OSError, ValueError, IndexError):
        pass
    return max(soft - used, 0), f"the address-space limit (ulimit -v, RLIMIT_AS {soft / 2**30:.3g} GiB)"


def cgroup_limits(proc_cgroup="/proc/self/cgroup", root="/sys/fs/cgroup"):
    """``(bytes left, source)`` for the memory limit of this process's cgroup and each
    ancestor (v2 ``memory.max`` - ``memory.current``; v1 ``memory.limit_in_bytes`` -
    ``memory.usage_in_bytes``); empty when there is none.

    Parameters
    ----------
    proc_cgroup, root : str
        The process's cgroup file and the cgroup mount (parameters for tests).
    """
    out = []
    try:
        lines = Path(proc_cgroup).read_text().splitlines()
    except OSError:
        return out
    for line in lines:
        parts = line.split(":", 2)
        if len(parts) != 3:
            continue
        _, controllers, rel = parts
        if controllers == "":                                    # v2 unified hierarchy
            base, limit_name, usage_name = Path(root), "memory.max", "memory.current"
        elif "memory" in controllers.split(","):                 # v1 memory controller
            base, limit_name, usage_name = Path(root) / "memory", "memory.limit_in_bytes", \
                "memory.usage_in_bytes"
        else:
            continue
        rel_path = Path(rel.lstrip("/"))
        for folder in [base / rel_path, *[base / p for p in rel_path.parents]]:
            limit = _read_int(folder / limit_name)
            if limit is None or limit >= 2**60:                 # "max" or the v1 "no limit"
                continue
            usage = _read_int(folder / usage_name) or 0
            out.append((max(limit - usage, 0), f"the cgroup memory limit {limit / 2**30:.3g} GiB "
                                               f"({folder / limit_name})"))
    return out


def _read_int(path):
    try:
        text = Path(path).read_text().strip()
    except OSError:
        return None
    return int(text) if text.isdigit() else None


def require(est, *, limit=None, what="the solve"):
    """Raise :class:`InputError` when ``est`` does not fit; the message names the settings.

    Parameters
    ----------
    est : MemoryEstimate
    limit : int, optional
        Bytes allowed; default :data:`USABLE_FRACTION` of :func:`available`.
    what : str
        Who needs it, for the message.
    """
    if limit is None:
        free, source = available()
        limit = int(USABLE_FRACTION * free)
    else:
        source = "the given limit"
    need = est.solve_bytes
    if need <= limit:
        return
    at_least = "at least " if est.lower_bound else ""
    raise InputError(
        f"{what} needs {at_least}{need / 2**30:.3g} GiB ({at_least}{est.branches:,} current "
        f"unknowns, {est.loops:,} loops, dense {est.method} path) but {limit / 2**30:.3g} GiB "
        f"are usable under {source}: raise [mesh] max_edge and min_edge, use fewer [[layer]] "
        f"sublayers, or crop the copper with [window]")


def require_mesh(triangles, *, what="meshing"):
    """Raise :class:`InputError` when meshing ``triangles`` (a lower bound) cannot fit."""
    free, source = available()
    need = triangles * MESH_BYTES_PER_TRIANGLE
    if need > USABLE_FRACTION * free:
        raise InputError(
            f"{what} needs at least {triangles:,} triangles ({need / 2**30:.3g} GiB) but "
            f"{USABLE_FRACTION * free / 2**30:.3g} GiB are usable under {source}: raise [mesh] "
            f"max_edge and min_edge, or crop the copper with [window]")


def peak_rss():
    """Peak resident size of this process so far, in bytes (Linux ``ru_maxrss`` is KiB)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
