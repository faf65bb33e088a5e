"""Solve the assembled system at each frequency for all ports at once.

With branch currents ``I = C x + P`` (loop currents ``x``, port paths ``P``), the
current-and-potential system ``(R + jwL) I - D^T phi = 0, D I = s`` becomes

    C^T Z C x = -C^T Z P,        Z_port = P^T Z (C x + P),

with ``Z = R + jwL``; the potentials drop out because ``D C = 0``. ``C^T L C`` is formed once;
each frequency is one dense complex-symmetric solve of about a third of the edge count. At
``f = 0`` the sparse resistive system is solved and the DC-limit inductance ``I^T L I`` is
reported.
"""
from __future__ import annotations

import time

import numpy as np
import scipy.linalg as la
import scipy.sparse.linalg as spla

from geometry.errors import InputError
from solver.result import Result


def _potentials(system, drop):
    """Node potentials from branch voltage drops ``Z I`` by walking down the spanning tree.

    Parameters
    ----------
    drop : ndarray, shape (B, P)
        ``(R + jwL) I`` per branch, volt.

    Returns
    -------
    ndarray, shape (n_nodes, P)
        Potentials with each body's root at 0 V.
    """
    basis, net = system.basis, system.network
    order = np.argsort(basis.depth, kind="stable")
    phi = np.zeros((net.n_nodes, drop.shape[1]), drop.dtype)
    for node in order:
        b = basis.parent_branch[node]
        if b < 0:
            continue
        # Branch b runs from node a to node c with phi_a - phi_c = drop_b.
        parent = basis.parent_node[node]
        if net.branch_nodes[b, 0] == parent:
            phi[node] = phi[parent] - drop[b]
        else:
            phi[node] = phi[parent] + drop[b]
    return phi


def solve(system, frequencies, *, title="", keep_currents=True, progress=None):
    """Solve the system over a frequency sweep.

    Parameters
    ----------
    system : solver.system.System
    frequencies : array_like
        Hz, ascending, >= 0.
    title : str
    keep_currents : bool
        Store branch currents and node potentials for maps (memory ``16 F P (B + nodes)``).
    progress : callable, optional
        Called as ``progress(k, n, f)`` after each frequency.

    Returns
    -------
    solver.result.Result
    """
    f = np.asarray(frequencies, float)
    C = system.basis.loops
    P = system.port_paths
    L, R = system.L, system.R
    n_ports = P.shape[1]
    t = time.perf_counter()
    CtL = np.asarray(C.T @ L)                      # (n, B)
    Lc = np.asarray((C.T @ CtL.T).T)               # C^T L C
    Lc = 0.5 * (Lc + Lc.T)
    Rc = (C.T @ R @ C).tocsc()
    bL = np.asarray(CtL @ P)                       # (n, P)
    bR = np.asarray((C.T @ R @ P).todense())
    LP = np.asarray((P.T @ L).T)                   # L P (L is symmetric)
    pLp = np.asarray(P.T @ LP)
    pRp = np.asarray((P.T @ R @ P).todense())
    reduce_s = time.perf_counter() - t

    Z = np.empty((len(f), n_ports, n_ports), complex)
    currents = np.empty((len(f), n_ports, system.network.n_branches), complex) if keep_currents else None
    potentials = np.empty((len(f), n_ports, system.network.n_nodes), complex) if keep_currents else None
    dc_inductance = None
    per_freq = []
    Pd = P.toarray()
    for k, freq in enumerate(f):
        t = time.perf_counter()
        if freq == 0.0:
            try:
                x = -spla.splu(Rc).solve(bR)
            except RuntimeError:
                raise InputError("the resistive system is singular: lumped branches of zero "
                                 "resistance form a closed loop") from None
            z = pRp + bR.T @ x
            I = C @ x + Pd
            dc_inductance = I.T @ (L @ I)
            dc_inductance = 0.5 * (dc_inductance + dc_inductance.T)
        else:
            w = 2 * np.pi * freq
            Zc = Rc.toarray() + 1j * w * Lc
            b = bR + 1j * w * bL
            x = -la.solve(Zc, b, assume_a="sym", overwrite_a=True, check_finite=False)
            z = pRp + 1j * w * pLp + b.T @ x
            I = C @ x + Pd
        Z[k] = z
        if keep_currents:
            currents[k] = I.T
            drop = R @ I + (1j * 2 * np.pi * freq) * (L @ I)
            phi = _potentials(system, drop)
            # Reference: the minus terminal of each driven port at 0 V.
            phi = phi - phi[system.port_nodes[:, 1], np.arange(n_ports)][None, :]
            potentials[k] = phi.T
        per_freq.append(time.perf_counter() - t)
        if progress is not None:
            progress(k + 1, len(f), freq)

    diag = np.einsum("fii->fi", Z)
    info = {
        "timing_s": {**system.timing, "reduce": reduce_s, "solve": float(sum(per_freq)),
                     "solve_per_frequency": per_freq},
        "unknowns": {"branches": system.network.n_branches, "nodes": system.network.n_nodes,
                     "loops": system.n_loops},
        "checks": {
            "min_port_resistance_ohm": float(diag.real.min()) if diag.size else None,
            "max_reciprocity_error": float(np.abs(Z - Z.transpose(0, 2, 1)).max()
                                           / max(np.abs(Z).max(), 1e-300)) if Z.size else 0.0,
        },
    }
    return Result(title=title, ports=tuple(p.name for p in system.ports), frequencies=f,
                  impedance=Z, dc_inductance=dc_inductance, currents=currents,
                  potentials=potentials, info=info)
