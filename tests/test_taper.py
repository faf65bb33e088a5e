"""The fast path's preconditioner parts: the positive-definite taper and the coarse correction.

Checks against sources outside the project: Wendland 1995 ("Piecewise polynomial, positive
definite and compactly supported radial functions of minimal degree", Adv. Comput. Math. 4):
``(1 - r)^4 (4 r + 1)`` is positive definite on points in 3-D; Schur's product theorem (Horn
& Johnson 1991, "Topics in Matrix Analysis", Thm. 5.2.1): the elementwise product of a
positive-definite and a positive semi-definite matrix with a positive diagonal is positive
definite; the two-level A-DEF2 form (Tang, Nabben, Vuik & Erlangga 2009, J. Sci. Comput. 39;
from memory) is exact when the coarse space is the whole space.
"""
import numpy as np
import pytest
import scipy.sparse as sp

from copperpath.solver.elements.pfft import build_sheet_operator
from copperpath.solver.elements.taper import tapered, wendland
from copperpath.solver.solve import coarse
from copperpath.solver.solve.coarse import CoarseSpace, aggregates
from copperpath.solver.solve.system import assemble
from tests.test_fast import via_case


def test_wendland_function_is_positive_definite_on_scattered_points():
    rng = np.random.default_rng(1)
    x = rng.uniform(0, 1, (300, 3))
    d = np.linalg.norm(x[:, None] - x[None], axis=2)
    assert wendland(0.0) == 1.0 and wendland(1.0) == 0.0 and wendland(2.0) == 0.0
    assert np.linalg.eigvalsh(wendland(d / 0.4)).min() > 0


def _fast_via_system():
    lay, mesh, ports, lumped = via_case()
    return assemble(mesh, lay, ports, lumped, f_max=1e8, method="fast",
                    sheet_builder=build_sheet_operator)


def test_tapered_near_part_is_positive_definite_where_the_hard_cut_is_not():
    system = _fast_via_system()
    C = system.basis.loops
    cut = (C.T @ system.L.near() @ C).toarray()
    taper = (C.T @ system.L.near(taper=True) @ C).toarray()
    scale = np.abs(np.diag(cut)).max()
    # the hard cut of the 1/r kernel: indefinite on this strip / via / two-sublayer case
    assert np.linalg.eigvalsh(cut).min() < -1e-6 * scale
    assert np.linalg.eigvalsh(taper).min() > 0
    # the taper keeps the branch self terms (weight 1 at zero distance)
    np.testing.assert_allclose(system.L.near(taper=True).diagonal(), system.L.near().diagonal(),
                               rtol=1e-12)


def test_taper_weights_entries_by_branch_distance():
    near = sp.csr_matrix(np.array([[2.0, 1.0, 1.0], [1.0, 2.0, 1.0], [1.0, 1.0, 2.0]]))
    pos = np.array([[0, 0, 0], [0.5, 0, 0], [2.0, 0, 0]])
    t = tapered(near, pos, 1.0).toarray()
    assert t[0, 1] == wendland(0.5) and t[0, 2] == 0.0 and t[1, 1] == 2.0


def test_aggregates_cover_every_loop_once_and_keep_long_loops_apart(monkeypatch):
    system = _fast_via_system()
    C = sp.csc_matrix(system.basis.loops)
    monkeypatch.setattr(coarse, "LONG_LOOP", 6)                # this small case has no loop over 12
    agg = aggregates(C, system.L.positions(), 20)
    assert agg.shape == (C.shape[1],) and agg.min() == 0
    assert set(agg) == set(range(agg.max() + 1))               # no empty aggregate
    long_loops = np.flatnonzero(np.diff(C.indptr) > 6)
    assert len(long_loops) > 0
    for j in long_loops:                                      # a long loop is alone
        assert np.sum(agg == agg[j]) == 1
    assert agg.max() + 1 < C.shape[1] / 4                      # coarse, not a copy


def test_two_level_correction_is_exact_on_the_whole_space():
    system = _fast_via_system()
    C = sp.csc_matrix(system.basis.loops)
    n = C.shape[1]
    Rc = (C.T @ system.R @ C).tocsc()
    cs = CoarseSpace(C, Rc, system.L, system.L.positions(), target=1)
    # replace the aggregation by the identity: Q = A^-1 and the smoother drops out
    eye = sp.identity(n, format="csc")
    cs.P, cs.Pt = eye, eye.tocsr()
    lc = np.asarray(C.T @ (system.L @ C.toarray()))
    cs.LcP = cs.Lcc = 0.5 * (lc + lc.T)
    cs.RcP, cs.Rcc = Rc, Rc.toarray()
    w = 2 * np.pi * 1e7
    A = cs.Rcc + 1j * w * cs.Lcc
    r = np.random.default_rng(2).standard_normal(n) + 0j
    z = cs.precondition(w, lambda v: 1e3 * v)(r)              # any smoother
    np.testing.assert_allclose(A @ z, r, rtol=1e-9, atol=1e-9 * np.abs(r).max())


def test_gmres_with_the_coarse_correction_reaches_the_one_level_solution():
    from copperpath.solver.solve.krylov import KrylovLoopSolver

    system = _fast_via_system()
    C, R, L = system.basis.loops, system.R, system.L
    w = 2 * np.pi * 1e8
    b = np.asarray(C.T @ (R @ system.port_paths + 1j * w * (L @ system.port_paths.toarray())))
    one = KrylovLoopSolver(C, R, L, 1e-7, coarse=False)
    two = KrylovLoopSolver(C, R, L, 1e-7, coarse=True)
    assert two.coarse is not None and 1 < two.coarse.size < C.shape[1] / 4
    x1, x2 = one(w, b), two(w, b)
    np.testing.assert_allclose(x2, x1, rtol=1e-4, atol=1e-4 * np.abs(x1).max())


@pytest.mark.parametrize("max_coarse", [100, 2000])
def test_gmres_with_the_multigrid_preconditioner_reaches_the_lu_solution(monkeypatch, max_coarse):
    # the V-cycle in place of the sparse LU (used from krylov.AMG_MIN_LOOPS loops on) is only
    # a different preconditioner: the same system, the same solution within the tolerance
    # (1,448 loops: several levels, or one level solved directly)
    from copperpath.solver.solve import krylov
    from copperpath.solver.solve.krylov import KrylovLoopSolver

    monkeypatch.setattr(krylov, "AMG_MAX_COARSE", max_coarse)

    system = _fast_via_system()
    C, R, L = system.basis.loops, system.R, system.L
    for w in (2 * np.pi * 1e6, 2 * np.pi * 1e8):
        b = np.asarray(C.T @ (R @ system.port_paths + 1j * w * (L @ system.port_paths.toarray())))
        lu = KrylovLoopSolver(C, R, L, 1e-7, coarse=False, amg=False)
        amg = KrylovLoopSolver(C, R, L, 1e-7, coarse=False, amg=True)
        x1, x2 = lu(w, b), amg(w, b)
        assert amg.amg and not lu.amg and amg.iterations[0] > 0
        np.testing.assert_allclose(x2, x1, rtol=1e-4, atol=1e-4 * np.abs(x1).max())
