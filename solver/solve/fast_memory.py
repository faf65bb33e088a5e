"""Peak memory of the fast path (compressed ``L``, sparse near-field preconditioner, GMRES),
estimated from the unknown counts before anything is assembled.

The coefficients are measured on four-layer board sections (the pFFT table and the
preconditioner measurements in DEVELOPERS.md, 6k-66k unknowns) and rounded up; against peaks
measured at 19.8k / 44.5k / 125k unknowns (0.5 / 0.8 / 2.8 GB, the last with maps and report)
the estimate is 0.4 / 0.9 / 2.6 GB (the process itself, about 0.3 GB, not counted); against
3.9 / 6.6 / 8.8 GiB at 310k / 668.5k / 1.0M unknowns (benchmark, V-cycle, process left out) it
is 6.0 / 12.8 / 19.4 GiB: safe but conservative on the largest meshes.
"""
from __future__ import annotations

from copperpath.solver.solve.coarse import CHUNK, TARGET_AGGREGATES
from copperpath.solver.solve.krylov import AMG_MIN_LOOPS, RESTART

#: Bytes of the compressed sheet operator per current unknown (grids, near-pair corrections).
SHEET_BYTES_PER_BRANCH = 10000
#: Nonzeros per row of the near-field part ``L_near`` (branches).
NEAR_NNZ_PER_BRANCH = 300
#: Nonzeros per loop of the kept (tapered) preconditioner matrix and fill of its sparse LU
#: (loops; 18-20 measured on the four-layer section).
PRECOND_NNZ_PER_LOOP = 30
LU_FILL = 16
#: Entries of the multigrid hierarchy (matrices of every level, prolongators, restrictions) over
#: those of the kept matrix, from :data:`copperpath.solver.solve.krylov.AMG_MIN_LOOPS` loops on,
#: where no LU is formed. pyamg gave an operator complexity of 1.47 at 14.5k loops (four-layer
#: section, forced on); the transfer operators are counted as twice as much again.
AMG_ENTRIES = 4


def estimate_fast_memory(n_branches, n_loops, n_ports=1, n_freqs=1, *, keep_currents=True):
    """Peak bytes of the fast path.

    Parameters
    ----------
    n_branches, n_loops, n_ports, n_freqs : int
    keep_currents : bool
        Whether branch currents and node potentials are stored for every frequency.

    Returns
    -------
    int
        Sheet operator, the near-field part and its tapered copy (real csr, 12 B per entry each),
        the loop preconditioner and its real LU or multigrid hierarchy (12 B per entry), the coarse space (``C^T L C
        P``, 8 B per loop and aggregate, and one chunk of ``C P`` and ``L C P``), the GMRES
        basis (16 B per vector entry), a few complex work vectors per port and the stored
        currents (16 F P B, twice with potentials).
    """
    b, n, p = int(n_branches), int(n_loops), max(int(n_ports), 1)
    sheet = SHEET_BYTES_PER_BRANCH * b
    near = 2 * 12 * NEAR_NNZ_PER_BRANCH * b
    factor = AMG_ENTRIES if n >= AMG_MIN_LOOPS else LU_FILL
    precond = 12 * PRECOND_NNZ_PER_LOOP * n * (1 + factor)
    coarse = 8 * TARGET_AGGREGATES * n + 2 * 8 * CHUNK * b
    krylov = 16 * (RESTART + 4) * n
    work = 16 * 6 * p * b
    stored = 16 * 2 * n_freqs * p * b if keep_currents else 0
    return int(sheet + near + precond + coarse + krylov + work + stored)
