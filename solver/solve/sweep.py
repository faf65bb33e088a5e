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
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from copperpath.geometry.errors import InputError
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


def near_preconditioner_pattern(Lc, keep=0.02):
    """Sparse part of the loop inductance: entries above ``keep`` of the geometric mean of their
    row's and column's diagonal (the strong, near couplings).

    Returns
    -------
    scipy.sparse.csc_matrix
    """
    d = np.sqrt(np.abs(np.diag(Lc)))
    rows, cols = np.nonzero(np.abs(Lc) >= keep * np.outer(d, d))
    return sp.csc_matrix((Lc[rows, cols], (rows, cols)), shape=Lc.shape)


class _LoopSolver:
    """Solves ``(Rc + jw Lc) x = b`` by dense LU (``"dense"``, the reference) or by GMRES with a
    sparse near-field preconditioner (``"fast"``)."""

    def __init__(self, Rc, Lc, method, rtol):
        self.Rc, self.Lc, self.method, self.rtol = Rc, Lc, method, rtol
        self.Ln = near_preconditioner_pattern(Lc) if method == "fast" else None
        self.iterations = []

    def __call__(self, w, b):
        if self.method == "dense":
            Zc = self.Rc.toarray() + 1j * w * self.Lc
            return la.solve(Zc, b, assume_a="gen", overwrite_a=True, check_finite=False)
        n = self.Lc.shape[0]
        lu = spla.splu((self.Rc + 1j * w * self.Ln).tocsc().astype(complex))
        op = spla.LinearOperator((n, n), dtype=complex,
                                 matvec=lambda v: self.Rc @ v + 1j * w * _real_matmul(self.Lc, v))
        pre = spla.LinearOperator((n, n), dtype=complex, matvec=lu.solve)
        x = np.empty(b.shape, complex)
        for j in range(b.shape[1]):
            count = [0]

            def tick(_, count=count):
                count[0] += 1

            x[:, j], info = spla.gmres(op, b[:, j], x0=lu.solve(b[:, j]), rtol=self.rtol,
                                       atol=0.0, restart=100, maxiter=20, M=pre,
                                       callback=tick, callback_type="pr_norm")
            if info != 0:
                raise RuntimeError(f"GMRES did not reach rtol {self.rtol:g} at "
                                   f"{w / 2 / np.pi:.4g} Hz after {count[0]} iterations")
            self.iterations.append(count[0])
        return x


def solve(system, frequencies, *, title="", keep_currents=True, progress=None,
          method="auto", rtol=1e-8):
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
    method : {"auto", "dense", "fast"}
        ``"dense"``: dense LU of the loop system per frequency (the reference);
        ``"fast"``: GMRES on the stored loop matrices with a sparse near-field
        preconditioner, to relative residual ``rtol``; ``"auto"``: dense up to 2,500 loops.
    rtol : float
        Relative residual of the iterative path.

    Returns
    -------
    copperpath.solver.solve.result.Result
    """
    if method not in ("auto", "dense", "fast"):
        raise ValueError(f"Invalid method {method!r}, should be one of 'auto', 'dense', 'fast'")
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
    del CtL
    bR = np.asarray((C.T @ R @ P).todense())
    LP = np.asarray((P.T @ L).T)                   # L P (L is symmetric)
    pLp = np.asarray(P.T @ LP)
    pRp = np.asarray((P.T @ R @ P).todense())
    if method == "auto":
        method = "dense" if Lc.shape[0] <= 2500 else "fast"
    loop_solver = _LoopSolver(Rc, Lc, method, rtol)
    reduce_s = time.perf_counter() - t

    Z = np.empty((len(f), n_ports, n_ports), complex)
    currents = np.empty((len(f), n_ports, system.network.n_branches), complex) if keep_currents else None
    potentials = np.empty((len(f), n_ports, system.network.n_nodes), complex) if keep_currents else None
    dc_inductance = None
    per_freq = []
    Pd = P.toarray()
    for k, freq in enumerate(f):
        t = time.perf_counter()
        w = 2 * np.pi * freq
        if freq == 0.0:
            try:
                x = -spla.splu(Rc).solve(bR)
            except RuntimeError:
                raise InputError(_singular_message(system)) from None
            z = pRp + bR.T @ x
            I = C @ x + Pd
            dc_inductance = I.T @ (L @ I)
            dc_inductance = 0.5 * (dc_inductance + dc_inductance.T)
        else:
            b = bR + 1j * w * bL
            x = -loop_solver(w, b)
            z = pRp + 1j * w * pLp + b.T @ x
            I = C @ x + Pd
        Z[k] = z
        if keep_currents:
            currents[k] = I.T
            drop = R @ I + 1j * w * _real_matmul(L, I) if freq > 0 else R @ I
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
        "gmres_iterations": loop_solver.iterations,
        "checks": {
            "min_port_resistance_ohm": float(diag.real.min()) if diag.size else None,
            "max_reciprocity_error": float(np.abs(Z - Z.transpose(0, 2, 1)).max()
                                           / max(np.abs(Z).max(), 1e-300)) if Z.size else 0.0,
        },
    }
    return Result(title=title, ports=tuple(p.name for p in system.ports), frequencies=f,
                  impedance=Z, dc_inductance=dc_inductance, currents=currents,
                  potentials=potentials, info=info)
