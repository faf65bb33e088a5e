"""Preconditioned GMRES on the loop system of the fast path.

In the loop basis ``C`` (sparse, B x n) each frequency solves

    A(w) x = b,        A(w) = C^T (R + jw L) C,

with the product ``A x = C^T (R (C x) + jw L (C x))``: two sparse products and one product of
the compressed ``L`` (:class:`copperpath.solver.solve.system.InductanceOperator`). ``A`` is complex symmetric.

Preconditioner: the real matrix ``M(w) = C^T R C + w C^T L_t C``, factorised by a sparse LU
(SuperLU, symmetric minimum-degree ordering) once per frequency and applied to the real and the
imaginary part of a vector. ``L_t`` is the near-field part of ``L`` tapered to a positive-definite
matrix (:mod:`copperpath.solver.elements.taper`), so ``M`` is symmetric positive definite; as
``A = C^T R C + jw C^T L C``, the preconditioned spectrum sits near the arc of
``(r + j w l) / (r + w l)``, in the right half-plane at every frequency. ``C^T R C`` and
``C^T L_t C`` are formed once for the sweep; entries of ``C^T L_t C`` weaker than :data:`KEEP` of
the geometric mean of their two diagonal entries are dropped, which thins the factor several
times at little cost in iterations. Measured on a four-layer section (19.8k unknowns, 6,448
loops; DEVELOPERS.md): the untapered near part was indefinite and needed 110 iterations at
100 MHz (42-46 with a diagonal shift, 64 kept entries per loop, complex LU); the tapered one 22
with 20 entries per loop and a real LU, about a hundred times less preconditioner time.
The iterations still grow with the mesh (1 MHz: 22 at 6.4k loops, 52 at 14.5k): smooth patterns
of loop current couple through the far field the near part misses. From :data:`COARSE_MIN_LOOPS`
loops on, a coarse correction (:mod:`copperpath.solver.solve.coarse`) handles them (25-28
iterations up to 14.5k loops in the measurements). From :data:`AMG_MIN_LOOPS` loops on, ``M(w)``
is applied by a multigrid V-cycle instead of its LU, whose fill grows too fast beyond.
Vertex loops are local magnetic dipoles whose far couplings decay like ``1/r^3``, so the
near part captures most of ``A``; the few long loops (around holes, through vias and lumped
branches) add a few outlying eigenvalues, which GMRES removes in a few iterations each.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from copperpath.solver.solve.coarse import CoarseSpace

#: Relative strength below which entries of ``C^T L_t C`` leave the preconditioner.
KEEP = 0.01
#: Krylov vectors per GMRES cycle.
RESTART = 100
#: Restart cycles before GMRES gives up.
MAX_CYCLES = 10
#: Loops from which the coarse correction is added. Its set-up costs one product of ``L`` per
#: aggregate; at 14.5k loops (44.5k unknowns, four-layer section, DEVELOPERS.md) it cut the
#: most iterations per frequency (1 and 100 MHz) from 52 to 27 and the time per frequency from
#: 6.2 to 4.0 s, for 12.6 s of set-up and 0.7 GB more peak memory: it pays from about six frequencies.
#: At 9.2k loops it saved iterations (40 to 25) but not time (2.3 against 2.5 s per frequency).
COARSE_MIN_LOOPS = 30000
#: Loops from which ``M(w)`` is applied by an algebraic-multigrid V-cycle (pyamg smoothed
#: aggregation) instead of its sparse LU. The LU's fill grows fast on these meshes: a factor
#: took 3.6 s at 36.6k loops and 85 s at 102k (four-layer section, DEVELOPERS.md); the V-cycle
#: sets up in 0.1 s at 36.6k but cost 70 iterations at 1 MHz against 46 with the LU (49 and 50
#: at 100 MHz).
AMG_MIN_LOOPS = 40000
#: Size of the multigrid's coarsest level (solved directly).
AMG_MAX_COARSE = 2000


def strong_part(A, keep):
    """Entries of a sparse symmetric matrix with ``|a_ij| >= keep sqrt(|a_ii a_jj|)``.

    Returns
    -------
    scipy.sparse.csc_matrix
    """
    A = sp.coo_matrix(A)
    d = np.sqrt(np.abs(A.diagonal()))
    ok = (np.abs(A.data) >= keep * d[A.row] * d[A.col]) | (A.row == A.col)
    return sp.csc_matrix((A.data[ok], (A.row[ok], A.col[ok])), shape=A.shape)


class KrylovLoopSolver:
    """Solve ``C^T (R + jw L) C x = b`` by GMRES with a sparse near-field preconditioner.

    Parameters
    ----------
    C : scipy.sparse matrix, shape (B, n)
        Loop basis.
    R : scipy.sparse matrix, shape (B, B)
        Ohm.
    L : object
        ``L @ X`` and ``near()`` (:class:`copperpath.solver.solve.system.InductanceOperator`), henry.
    rtol : float
        Relative residual ``|b - A x| / |b|`` to reach.
    keep, restart, max_cycles : optional
        See :data:`KEEP`, :data:`RESTART`, :data:`MAX_CYCLES`.
    coarse : bool, optional
        Add the coarse correction (:class:`copperpath.solver.solve.coarse.CoarseSpace`);
        default: from :data:`COARSE_MIN_LOOPS` loops on.
    amg : bool, optional
        Apply ``M(w)^-1`` by a multigrid V-cycle rather than the sparse LU; default: from
        :data:`AMG_MIN_LOOPS` loops on.

    Attributes
    ----------
    iterations : list of int
        GMRES iterations of every solve (one per port and frequency).
    residuals : list of float
        Relative residual reached by every solve.
    """

    def __init__(self, C, R, L, rtol, *, keep=KEEP, restart=RESTART, max_cycles=MAX_CYCLES,
                 coarse=None, amg=None):
        self.C = sp.csc_matrix(C)
        self.Ct = self.C.T.tocsr()
        self.R, self.L, self.rtol = sp.csr_matrix(R), L, float(rtol)
        self.restart, self.max_cycles = int(restart), int(max_cycles)
        self.Rc = (self.Ct @ self.R @ self.C).tocsc()
        self.Lnc = strong_part(self.Ct @ sp.csr_matrix(L.near(taper=True)) @ self.C, keep)
        if coarse is None:
            coarse = self.C.shape[1] >= COARSE_MIN_LOOPS
        self.coarse = CoarseSpace(self.C, self.Rc, L, L.positions()) if coarse else None
        self.amg = self.C.shape[1] >= AMG_MIN_LOOPS if amg is None else bool(amg)
        # R / L of a typical loop (1/s): where the loops turn from resistive to inductive
        d = self.Lnc.diagonal()
        self.rate = float(np.median(self.Rc.diagonal()[d > 0] / d[d > 0])) if (d > 0).any() else 0.0
        self.iterations, self.residuals = [], []

    @property
    def n(self):
        return self.C.shape[1]

    def apply(self, w, x):
        """``A(w) x`` for ``x`` of shape (n,) or (n, k)."""
        i = self.C @ x
        return self.Ct @ (self.R @ i + 1j * w * (self.L @ i))

    def factor(self, w):
        """The preconditioner at ``w``: ``v -> M(w)^-1 v`` for the real symmetric positive
        definite ``M(w) = C^T R C + w C^T L_t C`` (by its sparse LU, or approximately by one
        multigrid V-cycle, see ``amg``), applied to ``Re v`` and ``Im v``, within the coarse
        correction when there is one."""
        M = self.Rc + w * self.Lnc
        if self.amg:
            import pyamg

            real_solve = pyamg.smoothed_aggregation_solver(
                M.tocsr(), symmetry="symmetric", max_coarse=AMG_MAX_COARSE).aspreconditioner().matmat
        else:
            real_solve = spla.splu(M.tocsc(), permc_spec="MMD_AT_PLUS_A").solve

        def solve(v):
            y = real_solve(np.column_stack([v.real, v.imag]))
            return y[:, 0] + 1j * y[:, 1]
        if self.coarse is None:
            return solve
        # Within the coarse correction the smoother must also carry the phase of A^-1: the
        # coarse part is exact, a real M^-1 alone would be off by up to 90 degrees at high
        # frequency and split the spectrum into two clusters.
        alpha = (self.rate + w) / (self.rate + 1j * w)
        return self.coarse.precondition(w, lambda v: alpha * solve(v))

    def __call__(self, w, b):
        """Solve ``A(w) x = b`` for every column of ``b`` (n, P).

        Raises
        ------
        RuntimeError
            When GMRES does not reach ``rtol`` in ``restart * max_cycles`` iterations; the
            message names the frequency, the iterations and the residual reached.
        """
        n = self.n
        psolve = self.factor(w)
        op = spla.LinearOperator((n, n), dtype=complex, matvec=lambda v: self.apply(w, v))
        pre = spla.LinearOperator((n, n), dtype=complex, matvec=psolve)
        x = np.empty(b.shape, complex)
        for j in range(b.shape[1]):
            rhs = np.ascontiguousarray(b[:, j], dtype=complex)
            norm = np.linalg.norm(rhs)
            if norm == 0.0:
                x[:, j] = 0.0
                self.iterations.append(0)
                self.residuals.append(0.0)
                continue
            count = [0]

            def tick(_, count=count):
                count[0] += 1

            x[:, j], info = spla.gmres(op, rhs, rtol=self.rtol, atol=0.0,
                                       restart=self.restart, maxiter=self.max_cycles, M=pre,
                                       callback=tick, callback_type="pr_norm")
            res = float(np.linalg.norm(rhs - op @ x[:, j]) / norm)
            self.iterations.append(count[0])
            self.residuals.append(res)
            if info != 0 and res > self.rtol:
                raise RuntimeError(
                    f"GMRES did not converge at {w / (2 * np.pi):.6g} Hz (port column {j}): "
                    f"relative residual {res:.3g} after {count[0]} iterations, asked for "
                    f"{self.rtol:.3g}; loosen [solver] tolerance or coarsen the mesh")
        return x
