"""Solve the assembled system at each frequency for all ports at once.

With branch currents ``I = C x + P`` (loop currents ``x``, port paths ``P``), the
current-and-potential system ``(R + jwL) I - D^T phi = 0, D I = s`` becomes

    C^T Z C x = -C^T Z P,        Z_port = P^T Z (C x + P),

with ``Z = R + jwL``; the potentials drop out because ``D C = 0``. ``C^T L C`` is formed once on the
dense path; each frequency is one dense complex-symmetric solve of about a third of the edge
count. On the fast path ``L`` is an operator and each frequency is a preconditioned GMRES solve
(:mod:`copperpath.solver.solve.krylov`); nothing forms a dense matrix. At ``f = 0`` the sparse resistive system
is solved and the DC-limit inductance ``I^T L I`` is reported.
"""
from __future__ import annotations

import time

import numpy as np
import scipy.linalg as la
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from copperpath.geometry.errors import InputError
from copperpath.solver.solve.krylov import KrylovLoopSolver
from copperpath.solver.solve.result import Result


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


def _singular_message(system):
    """Why the DC loop system is singular: a closed loop of zero-resistance lumped branches when
    the case has such branches, else a sheet or barrel resistance out of floating-point range."""
    net = system.network
    if len(net.lumped_rl) and (net.lumped_rl[:, 0] == 0).any():
        return ("the resistive system is singular: lumped branches of zero resistance form a "
                "closed loop (give one of them a resistance)")
    return ("the resistive system is singular: a resistance overflows or vanishes in floating "
            "point (check each [[layer]] conductivity and thickness, and via plating)")


def _real_matmul(A, X):
    """``A @ X`` for a real matrix ``A`` and a complex ``X`` without a complex copy of ``A``."""
    return A @ X.real + 1j * (A @ X.imag)


def _dense_loop_solve(Rc, Lc, w, b):
    """Dense LU of ``(Rc + jw Lc) x = b`` (the reference path)."""
    Zc = Rc.toarray() + 1j * w * Lc
    return la.solve(Zc, b, assume_a="gen", overwrite_a=True, check_finite=False)


def _resolve_method(system, method):
    own = getattr(system, "method", "dense")
    if method in (None, "auto", own):
        return own
    if method not in ("dense", "fast"):
        raise ValueError(f"Invalid method {method!r}, should be one of 'auto', 'dense', 'fast'")
    raise ValueError(f"the system was assembled for the {own} path; pass method={method!r} to "
                     f"copperpath.solver.solve.system.assemble")


def _dc_solve(Rc, bR):
    try:
        return -spla.splu(sp.csc_matrix(Rc)).solve(np.asarray(bR, float))
    except RuntimeError:
        raise InputError("the resistive system is singular: lumped branches of zero "
                         "resistance form a closed loop") from None


def solve(system, frequencies, *, title="", keep_currents=True, progress=None,
          method=None, rtol=None):
    """Solve the system over a frequency sweep.

    Parameters
    ----------
    system : copperpath.solver.solve.system.System
    frequencies : array_like
        Hz, ascending, >= 0.
    title : str
    keep_currents : bool
        Store branch currents and node potentials for maps (memory ``16 F P (B + nodes)``).
    progress : callable, optional
        Called as ``progress(k, n, f)`` after each frequency.
    method : {None, "auto", "dense", "fast"}
        Must agree with the path the system was assembled for (``system.method``), which it
        follows: ``"dense"``, dense LU of the loop system per frequency (the reference);
        ``"fast"``, GMRES with the near-field preconditioner (:mod:`copperpath.solver.solve.krylov`).
    rtol : float, optional
        Relative residual of GMRES (fast path); default ``system.tolerance``.

    Returns
    -------
    copperpath.solver.solve.result.Result

    Notes
    -----
    On the fast path the impedance is the stationary form ``Z_ij = I_i^T (R + jwL) I_j`` with
    ``I = C x + P``: its error is of second order in the GMRES error.
    """
    method = _resolve_method(system, method)
    rtol = float(getattr(system, "tolerance", 1e-4) if rtol is None else rtol)
    f = np.asarray(frequencies, float)
    C = system.basis.loops
    P = system.port_paths
    L, R = system.L, system.R
    n_ports = P.shape[1]
    t = time.perf_counter()
    Pd = P.toarray()
    LP = np.asarray(L @ Pd)                        # L P, (B, P)
    bL = np.asarray(C.T @ LP)                      # (n, P)
    bR = np.asarray((C.T @ R @ P).todense())
    pLp = Pd.T @ LP
    pRp = np.asarray((P.T @ R @ P).todense())
    if method == "dense":
        CtL = np.asarray(C.T @ L)                  # (n, B)
        Lc = np.asarray((C.T @ CtL.T).T)           # C^T L C
        Lc = 0.5 * (Lc + Lc.T)
        del CtL
        Rc = (C.T @ R @ C).tocsc()
        krylov = None
    else:
        krylov = KrylovLoopSolver(C, R, L, rtol)
        Rc = krylov.Rc
    reduce_s = time.perf_counter() - t

    Z = np.empty((len(f), n_ports, n_ports), complex)
    currents = np.empty((len(f), n_ports, system.network.n_branches), complex) if keep_currents else None
    potentials = np.empty((len(f), n_ports, system.network.n_nodes), complex) if keep_currents else None
    dc_inductance = None
    per_freq = []
    for k, freq in enumerate(f):
        t = time.perf_counter()
        w = 2 * np.pi * freq
        if freq == 0.0:
            x = _dc_solve(Rc, bR)
            z = pRp + bR.T @ x
            I = C @ x + Pd
            LI = L @ I
            dc_inductance = I.T @ LI
            dc_inductance = 0.5 * (dc_inductance + dc_inductance.T)
            drop = R @ I
        else:
            b = bR + 1j * w * bL
            if krylov is None:
                x = -_dense_loop_solve(Rc, Lc, w, b)
            else:
                x = -krylov(w, b)
            I = C @ x + Pd
            drop = None
            if krylov is not None or keep_currents:
                drop = R @ I + 1j * w * (L @ I if krylov is not None else _real_matmul(L, I))
            if krylov is None:
                z = pRp + 1j * w * pLp + b.T @ x
            else:
                z = I.T @ drop                     # stationary: second order in the error
        Z[k] = z
        if keep_currents:
            currents[k] = I.T
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
        "method": method,
        "gmres_iterations": krylov.iterations if krylov is not None else [],
        "gmres_residuals": krylov.residuals if krylov is not None else [],
        "coarse_size": krylov.coarse.size if krylov is not None and krylov.coarse else 0,
        "checks": {
            "min_port_resistance_ohm": float(diag.real.min()) if diag.size else None,
            "max_reciprocity_error": float(np.abs(Z - Z.transpose(0, 2, 1)).max()
                                           / max(np.abs(Z).max(), 1e-300)) if Z.size else 0.0,
        },
    }
    return Result(title=title, ports=tuple(p.name for p in system.ports), frequencies=f,
                  impedance=Z, dc_inductance=dc_inductance, currents=currents,
                  potentials=potentials, info=info)
