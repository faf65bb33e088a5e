"""Peak memory of the fast path (compressed ``L``, sparse near-field preconditioner, GMRES),
estimated from the unknown counts before anything is assembled.

The coefficients are measured on four-layer board sections and strips over a plane and
rounded up: against the peaks of nine runs (DEVELOPERS.md; 19.8k-1.0M unknowns with one
sublayer, 35k and 53k with four; the process's own 0.3 GB left out) the estimate is 1.17-1.87
times the measured peak (3.9 / 6.6 / 8.8 GiB measured at 310k / 668.5k / 1.0M unknowns, 5.7 /
11.2 / 16.5 GiB estimated); tests/test_fast.py keeps it above every one of them.
"""
from __future__ import annotations

from copperpath.solver.solve.coarse import CHUNK, TARGET_AGGREGATES
from copperpath.solver.elements.pfft import GRID_BLOCK_BYTES
from copperpath.solver.solve.krylov import AMG_MIN_LOOPS, COARSE_MIN_LOOPS, RESTART

#: Bytes of the compressed sheet operator per current unknown (grids, near-pair corrections,
#: the build's temporaries; 4.4 kB stored at 44.5k unknowns, the rest is the build's peak).
SHEET_BYTES_PER_BRANCH = 6000
#: Nonzeros per row of the near-field part ``L_near`` (branches) with one sublayer per layer;
#: the sublayers of a layer lie within each other's near field, so it is multiplied by the most
#: sublayers of any layer.
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


def estimate_fast_memory(n_branches, n_loops, n_ports=1, n_freqs=1, *, keep_currents=True,
                         sublayers=1):
    """Peak bytes of the fast path.

    Parameters
    ----------
    n_branches, n_loops, n_ports, n_freqs : int
    keep_currents : bool
        Whether branch currents and node potentials are stored for every frequency.
    sublayers : int
        Most sublayers of any layer.

    Returns
    -------
    int
        Sheet operator, the near-field part and its tapered copy (real csr, 12 B per entry each),
        the loop preconditioner and its real LU or multigrid hierarchy (12 B per entry), the
        coarse space from ``COARSE_MIN_LOOPS`` loops (``C^T L C P``, 8 B per loop and aggregate,
        one chunk of ``C P`` and ``L C P`` and the pFFT grids of that chunk's product, at most
        ``GRID_BLOCK_BYTES``), the GMRES basis (16 B per vector entry), a few complex work
        vectors per port and the stored currents (16 F P B, twice with potentials).
    """
    b, n, p = int(n_branches), int(n_loops), max(int(n_ports), 1)
    sheet = SHEET_BYTES_PER_BRANCH * b
    near = 2 * 12 * NEAR_NNZ_PER_BRANCH * max(int(sublayers), 1) * b
    factor = AMG_ENTRIES if n >= AMG_MIN_LOOPS else LU_FILL
    precond = 12 * PRECOND_NNZ_PER_LOOP * n * (1 + factor)
    coarse = (8 * TARGET_AGGREGATES * n + 2 * 8 * CHUNK * b + GRID_BLOCK_BYTES
              if n >= COARSE_MIN_LOOPS else 0)
    krylov = 16 * (RESTART + 4) * n
    work = 16 * 6 * p * b
    stored = 16 * 2 * n_freqs * p * b if keep_currents else 0
    return int(sheet + near + precond + coarse + krylov + work + stored)
