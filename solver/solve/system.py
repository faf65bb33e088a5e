"""Assembly of the branch impedance: partial resistance ``R`` (sparse) and partial inductance
``L`` (real symmetric, reused for every frequency), reduced to loop currents.

Two paths hold ``L``:

- ``"dense"``: an ndarray (:func:`copperpath.solver.elements.partial.inductance_matrix`), the reference;
- ``"fast"``: an :class:`InductanceOperator`, the compressed sheet operator of the edge branches
  (:func:`copperpath.solver.elements.pfft.build_sheet_operator`) plus the small dense block of the via barrels and
  the lumped inductances on the diagonal. It offers ``L @ X``, ``shape``, ``diagonal()`` and
  ``near()`` (the sparse near-field part, for the preconditioner) and never a dense matrix.

``"auto"`` takes the dense path below :data:`AUTO_DENSE_BRANCHES` current unknowns, where it
is both exact and faster (see DEVELOPERS.md for the measured crossover).
"""
from __future__ import annotations

import time
from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp

from copperpath.geometry.errors import InputError
from copperpath.solver.elements import barrels
from copperpath.solver.solve import memory
from copperpath.solver.elements import partial
from copperpath.solver.solve.fast_memory import estimate_fast_memory
from copperpath.solver.graph.loops import LoopBasis, loop_basis
from copperpath.solver.graph.network import BARREL, EDGE, LUMPED, Network, build_network

#: ``method = "auto"`` takes the dense path below this many current unknowns.
AUTO_DENSE_BRANCHES = 5000


class InductanceOperator:
    """``L`` of all branches: sheet operator (edge branches), barrel block and lumped diagonal.

    Parameters
    ----------
    sheet : object
        ``L`` of the edge branches, shape (B, B), zero elsewhere; with ``@``, ``nbytes``,
        ``diagonal()`` and ``near()`` (see :mod:`copperpath.solver.elements.pfft`); ``None`` when no edge branch
        carries current.
    barrel_index : ndarray of int64, shape (nb,)
    barrel_block : ndarray, shape (nb, nb)
        Henry; dense (a few segments per via).
    lumped_index : ndarray of int64, shape (nl,)
    lumped_inductance : ndarray, shape (nl,)
        Henry.
    n_branches : int, optional
        ``B`` (needed when ``sheet`` is ``None``).
    """

    def __init__(self, sheet, barrel_index, barrel_block, lumped_index, lumped_inductance,
                 n_branches=None):
        self.sheet = sheet
        self.n_branches = int(sheet.shape[0] if n_branches is None else n_branches)
        self.barrel_index = np.asarray(barrel_index, np.int64)
        self.barrel_block = np.asarray(barrel_block, float)
        self.lumped_index = np.asarray(lumped_index, np.int64)
        self.lumped_inductance = np.asarray(lumped_inductance, float)
        self._near = {}

    @property
    def shape(self):
        return (self.n_branches, self.n_branches)

    @property
    def nbytes(self):
        return int((self.sheet.nbytes if self.sheet is not None else 0) + self.barrel_block.nbytes)

    def __matmul__(self, x):
        """``L @ x`` for ``x`` of shape (B,) or (B, k), real or complex; henry times ``x``."""
        x = np.asarray(x)
        dtype = np.result_type(x.dtype, np.float64)
        y = (np.asarray(self.sheet @ x).astype(dtype, copy=False) if self.sheet is not None
             else np.zeros(x.shape, dtype))
        bar, lum = self.barrel_index, self.lumped_index
        if len(bar):
            y[bar] += self.barrel_block @ x[bar]
        if len(lum):
            y[lum] += (self.lumped_inductance * x[lum].T).T
        return y

    def diagonal(self):
        """Self inductances, shape (B,), henry."""
        d = (np.array(self.sheet.diagonal(), float) if self.sheet is not None
             else np.zeros(self.n_branches))
        d[self.barrel_index] += np.diag(self.barrel_block)
        d[self.lumped_index] += self.lumped_inductance
        return d

    def positions(self):
        """Branch positions (B, 3) in metres, NaN except on sheet branches."""
        if self.sheet is None:
            return np.full((self.n_branches, 3), np.nan)
        return np.asarray(self.sheet.positions(), float)

    def near(self, taper=False):
        """Sparse near-field part of ``L`` (csr, symmetric): the sheet's near entries (with
        ``taper``, weighted to a positive-definite matrix: :mod:`copperpath.solver.elements.taper`),
        the barrel block and the lumped diagonal. Formed once per ``taper`` and kept."""
        if taper not in self._near:
            n = self.shape[0]
            bar = self.barrel_index
            rows = np.concatenate([np.repeat(bar, len(bar)), self.lumped_index])
            cols = np.concatenate([np.tile(bar, len(bar)), self.lumped_index])
            vals = np.concatenate([self.barrel_block.ravel(), self.lumped_inductance])
            extra = sp.csr_matrix((vals, (rows, cols)), shape=(n, n))
            if self.sheet is not None:
                extra = extra + sp.csr_matrix(self.sheet.near(taper=taper))
            self._near[taper] = extra.tocsr()
        return self._near[taper]

    def __repr__(self):
        return f"InductanceOperator({self.shape[0]} branches, {self.nbytes / 2**20:.1f} MiB)"


@dataclass(frozen=True, eq=False)
class System:
    """Everything the sweep needs, in SI units.

    Attributes
    ----------
    network : Network
    basis : LoopBasis
    R : scipy.sparse.csr_matrix, shape (B, B)
        Partial resistance in ohm.
    L : ndarray or InductanceOperator, shape (B, B)
        Partial inductance in henry: dense on the ``"dense"`` path, an operator on ``"fast"``.
    ports : tuple of copperpath.geometry.model.Port
    port_paths : scipy.sparse.csc_matrix, shape (B, P)
        1 A of each port from plus to minus along the tree.
    port_nodes : ndarray of int64, shape (P, 2)
        Plus and minus node of each port.
    timing : dict
        Seconds spent per stage.
    method : str
        ``"dense"`` or ``"fast"`` (``"auto"`` resolved).
    tolerance : float
        Relative tolerance of the compressed operator and of the Krylov solve.
    """

    network: Network
    basis: LoopBasis
    R: sp.csr_matrix
    L: np.ndarray
    ports: tuple
    port_paths: sp.csc_matrix
    port_nodes: np.ndarray
    timing: dict = field(default_factory=dict)
    method: str = "dense"
    tolerance: float = 1e-4

    @property
    def n_loops(self) -> int:
        """Number of loop-current unknowns of the dense system."""
        return self.basis.loops.shape[1]

    def __repr__(self):
        return (f"System({self.network.n_branches} branch currents, {self.network.n_nodes} nodes, "
                f"{self.n_loops} loop currents, R nnz {self.R.nnz}, "
                f"{self.method} L {self.L.nbytes / 2**20:.1f} MiB)")


def choose_method(method, n_branches):
    """Resolve ``"auto"``: dense below :data:`AUTO_DENSE_BRANCHES` current unknowns."""
    if method not in ("auto", "dense", "fast"):
        raise ValueError(f"Invalid method {method!r}, should be one of 'auto', 'dense', 'fast'")
    if method == "auto":
        return "dense" if n_branches < AUTO_DENSE_BRANCHES else "fast"
    return method


def check_memory(method, n_branches, n_loops, n_nodes, n_ports=1, n_freqs=1, *, limit=None,
                 keep_currents=True, lower_bound=False, what=None, sublayers=1):
    """Refuse before anything large is allocated when the chosen path would not fit.

    The dense path is estimated by :func:`copperpath.solver.solve.memory.estimate`, the fast
    path by :func:`copperpath.solver.solve.fast_memory.estimate_fast_memory`; a dense solve
    that does not fit but whose fast solve would says so.

    Raises
    ------
    copperpath.geometry.errors.InputError
        Naming the need, the limit and the settings to change.
    """
    usable = limit if limit is not None else int(memory.USABLE_FRACTION * memory.available()[0])
    fast = estimate_fast_memory(n_branches, n_loops, n_ports, n_freqs, keep_currents=keep_currents,
                                sublayers=sublayers)
    if method == "dense":
        est = memory.estimate(n_branches, n_loops, n_nodes, ports=max(n_ports, 1), freqs=n_freqs,
                              keep_currents=keep_currents, lower_bound=lower_bound)
        try:
            memory.require(est, limit=usable, what=what or "the dense solve")
        except InputError as err:
            if fast <= usable:
                raise InputError(f"{err}; or set [solver] method = \"fast\" (about "
                                 f"{fast / 2**30:.3g} GiB)") from None
            raise
        return
    if fast > usable:
        at_least = "at least " if lower_bound else ""
        raise InputError(
            f"{what or 'the fast solve'} needs {at_least}{fast / 2**30:.3g} GiB ({at_least}"
            f"{n_branches:,} current unknowns, {n_loops:,} loops, fast path) but "
            f"{usable / 2**30:.3g} GiB are usable: raise [mesh] max_edge and min_edge, use fewer "
            f"[[layer]] sublayers, solve fewer frequencies at once, or crop the copper with [window]")


def _barrel_matrices(network, layout):
    """Resistance (diagonal) and inductance (dense) of the via barrel segments."""
    bz = network.barrels["z"]
    n = len(bz)
    radius = network.barrels["radius"]
    vias = [layout.vias[k] for k in network.barrels["via"]]
    r = np.empty(n)
    ell = np.empty((n, n))
    for i in range(n):
        via = vias[i]
        length = bz[i, 1] - bz[i, 0]
        cond = layout.layer(network.barrels["upper"][i]).conductivity
        r[i] = barrels.barrel_resistance(via.drill, via.plating, length, cond)
        ell[i, i] = barrels.barrel_self_inductance(radius[i], length)
        for j in range(i):
            d = float(np.hypot(via.x - vias[j].x, via.y - vias[j].y))
            ell[i, j] = ell[j, i] = barrels.barrel_mutual_inductance(
                radius[i], tuple(bz[i]), radius[j], tuple(bz[j]), d)
    return r, ell


def _sheet_builder():
    """The compressed sheet-operator builder of the fast path."""
    try:
        from copperpath.solver.elements.pfft import build_sheet_operator
    except ImportError:
        raise RuntimeError("the fast path needs copperpath.solver.elements.pfft.build_sheet_operator, which this "
                           "installation lacks; use [solver] method = \"dense\"") from None
    return build_sheet_operator


def assemble(mesh, layout, ports, lumped=(), *, n_freqs=1, f_max=0.0, memory_limit=None,
             method="auto", tolerance=1e-4, keep_currents=True, sheet_builder=None,
             progress=None):
    """Assemble the partial-element system of a meshed layout.

    Parameters
    ----------
    mesh : copperpath.geometry.mesh.Mesh
    layout : copperpath.geometry.model.Layout
    ports : sequence of copperpath.geometry.model.Port
    lumped : sequence of copperpath.geometry.model.Lumped
    n_freqs : int
        Number of frequencies to be solved (for the memory estimate).
    f_max : float
        Highest frequency in Hz (for ``sublayers = "auto"``).
    memory_limit : int, optional
        Bytes the dense path may use; default :func:`copperpath.solver.solve.memory.require`'s (90 % of what
        :func:`copperpath.solver.solve.memory.available` reports).
    method : {"auto", "dense", "fast"}
        How ``L`` is held (see module notes); ``"auto"`` picks by size.
    tolerance : float
        Relative accuracy of the compressed operator (fast path).
    keep_currents : bool
        Whether the sweep will store currents (for the memory estimate).
    sheet_builder : callable, optional
        Builds the sheet operator of the fast path, with the arguments of
        :func:`copperpath.solver.elements.pfft.build_sheet_operator` (the default); tests pass
        :func:`copperpath.solver.solve.dense_sheet.build_dense_sheet_operator`.
    progress : callable, optional
        Passed to the sheet builder.

    Returns
    -------
    System

    Raises
    ------
    InputError
        A port across two bodies, or a mesh too large for the memory.
    """
    timing = {}
    t = time.perf_counter()
    network = build_network(mesh, layout, lumped, f_max=f_max)
    basis = loop_basis(mesh, network)
    port_nodes = np.array([(network.terminal_node(p.plus), network.terminal_node(p.minus))
                           for p in ports], np.int64).reshape(-1, 2)
    paths = []
    for p, (a, b) in zip(ports, port_nodes):
        try:
            paths.append(basis.path(network, a, b))
        except InputError as err:
            raise InputError(f"[[port]] {p.name!r}: {err}") from None
    port_paths = sp.csc_matrix(np.array(paths).T.reshape(network.n_branches, len(ports)))
    timing["topology"] = time.perf_counter() - t

    nb = network.n_branches
    method = choose_method(method, nb)
    check_memory(method, nb, basis.loops.shape[1], network.n_nodes, len(ports), n_freqs,
                 limit=memory_limit, keep_currents=keep_currents,
                 sublayers=network.most_sublayers)

    t = time.perf_counter()
    n_edges = int((network.branch_kind == EDGE).sum())
    sheets = mesh.triangles[network.sheet_tri]
    # Edge branches come first; the matrices are built at full size so that L is never copied.
    args = (network.half_branch, network.half_tri, network.half_vertex, network.half_sign, nb)
    R = (partial.resistance_matrix(mesh.points, sheets, network.sheet_resistance, *args)
         if n_edges else sp.csr_matrix((nb, nb)))
    r_bar, l_bar = _barrel_matrices(network, layout)
    bar = np.flatnonzero(network.branch_kind == BARREL)
    lum = np.flatnonzero(network.branch_kind == LUMPED)
    if method == "dense":
        L = (partial.inductance_matrix(mesh.points, sheets, network.sheet_z, *args)
             if n_edges else np.zeros((nb, nb)))
        L[np.ix_(bar, bar)] = l_bar
        L[lum, lum] = network.lumped_rl[:, 1]
    else:
        sheet = None
        if n_edges:
            build = sheet_builder or _sheet_builder()
            sheet = build(mesh.points, sheets, network.sheet_z, *args, tolerance=tolerance,
                          progress=progress)
        L = InductanceOperator(sheet, bar, l_bar, lum, network.lumped_rl[:, 1], nb)
    diag = np.zeros(nb)
    diag[bar] = r_bar
    diag[lum] = network.lumped_rl[:, 0]
    R = (R + sp.diags(diag)).tocsr()
    timing["assemble"] = time.perf_counter() - t
    return System(network=network, basis=basis, R=R, L=L, ports=tuple(ports),
                  port_paths=port_paths, port_nodes=port_nodes, timing=timing, method=method,
                  tolerance=float(tolerance))
