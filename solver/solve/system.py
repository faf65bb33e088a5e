"""Assembly of the branch impedance: partial resistance ``R`` (sparse) and partial inductance
``L`` (dense, real symmetric, reused for every frequency), reduced to loop currents."""
from __future__ import annotations

import time
from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp

from copperpath.geometry.errors import InputError
from copperpath.solver.elements import barrels
from copperpath.solver.solve import memory
from copperpath.solver.elements import partial
from copperpath.solver.graph.loops import LoopBasis, loop_basis
from copperpath.solver.graph.network import BARREL, EDGE, LUMPED, Network, build_network



@dataclass(frozen=True, eq=False)
class System:
    """Everything the sweep needs, in SI units.

    Attributes
    ----------
    network : Network
    basis : LoopBasis
    R : scipy.sparse.csr_matrix, shape (B, B)
        Partial resistance in ohm.
    L : ndarray, shape (B, B)
        Partial inductance in henry.
    ports : tuple of copperpath.geometry.model.Port
    port_paths : scipy.sparse.csc_matrix, shape (B, P)
        1 A of each port from plus to minus along the tree.
    port_nodes : ndarray of int64, shape (P, 2)
        Plus and minus node of each port.
    timing : dict
        Seconds spent per stage.
    """

    network: Network
    basis: LoopBasis
    R: sp.csr_matrix
    L: np.ndarray
    ports: tuple
    port_paths: sp.csc_matrix
    port_nodes: np.ndarray
    timing: dict = field(default_factory=dict)

    @property
    def n_loops(self) -> int:
        """Number of loop-current unknowns of the dense system."""
        return self.basis.loops.shape[1]

    def __repr__(self):
        return (f"System({self.network.n_branches} branch currents, {self.network.n_nodes} nodes, "
                f"{self.n_loops} loop currents, R nnz {self.R.nnz}, "
                f"L {self.L.nbytes / 2**20:.1f} MiB)")


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


def assemble(mesh, layout, ports, lumped=(), *, n_freqs=1, f_max=0.0, memory_limit=None):
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

    memory.require(memory.estimate(network.n_branches, basis.loops.shape[1], network.n_nodes,
                                   ports=max(len(ports), 1), freqs=n_freqs),
                   limit=memory_limit, what="the dense solve")

    t = time.perf_counter()
    nb = network.n_branches
    n_edges = int((network.branch_kind == EDGE).sum())
    sheets = mesh.triangles[network.sheet_tri]
    # Edge branches come first; the matrices are built at full size so that L is never copied.
    args = (network.half_branch, network.half_tri, network.half_vertex, network.half_sign, nb)
    if n_edges:
        L = partial.inductance_matrix(mesh.points, sheets, network.sheet_z, *args)
        R = partial.resistance_matrix(mesh.points, sheets, network.sheet_resistance, *args)
    else:                                   # only vias and lumped branches carry current
        L, R = np.zeros((nb, nb)), sp.csr_matrix((nb, nb))
    r_bar, l_bar = _barrel_matrices(network, layout)
    bar = np.flatnonzero(network.branch_kind == BARREL)
    L[np.ix_(bar, bar)] = l_bar
    lum = np.flatnonzero(network.branch_kind == LUMPED)
    L[lum, lum] = network.lumped_rl[:, 1]
    diag = np.zeros(nb)
    diag[bar] = r_bar
    diag[lum] = network.lumped_rl[:, 0]
    R = (R + sp.diags(diag)).tocsr()
    timing["assemble"] = time.perf_counter() - t
    return System(network=network, basis=basis, R=R, L=L, ports=tuple(ports),
                  port_paths=port_paths, port_nodes=port_nodes, timing=timing)
