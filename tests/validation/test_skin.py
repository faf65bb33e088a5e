"""Sublayers for skin and proximity effect, against independent references.

References
----------
- Skin depth ``delta = 1 / sqrt(pi f mu0 sigma)``: Ramo, Whinnery & Van Duzer 1994, *Fields and
  Waves in Communication Electronics*, 3rd ed., sec. 5.2 (plane-wave penetration of a good
  conductor).
- Current distribution in the cross-section of a long conductor: a two-dimensional eddy-current
  finite-element solution computed here with scikit-fem (:mod:`tests.validation.fem2d`), itself
  checked against Ohm's law at DC and the exact Bessel-function impedance of a round wire
  (Ramo, Whinnery & Van Duzer 1994, sec. 5.5; Wheeler 1942, "Formulas for the skin effect",
  Proc. IRE 30).
- Annealed copper ``sigma = 5.8e7 S/m`` (IEC 60028, 1925).
"""
import dataclasses

import numpy as np
import pytest

from copperpath.geometry import gallery
from copperpath.geometry.case import load_case
from copperpath.geometry.meshing import triangulate
from copperpath.geometry.model import MeshOptions, Port
from copperpath.solver.graph.network import build_network
from copperpath.solver.graph.skin import auto_sublayers, sublayer_bounds
from tests.bad_cases import GOOD, write_case
from tests.validation.solver_setups import solve_layout

SIGMA = 5.8e7          # S/m, IEC 60028 (1925)
MU0 = 4e-7 * np.pi     # H/m (the pre-2019 SI value; the 2019 value differs by 1e-9)
COARSE = MeshOptions(1.0e-3, 0.5e-3)


def skin_depth(f, sigma=SIGMA):
    """``1 / sqrt(pi f mu0 sigma)`` in metres (Ramo, Whinnery & Van Duzer 1994, sec. 5.2)."""
    return 1.0 / np.sqrt(np.pi * f * MU0 * sigma)


def with_sublayers(layout, n):
    """The layout with every layer split into ``n`` sublayers (an int or ``"auto"``)."""
    return dataclasses.replace(layout, layers=tuple(dataclasses.replace(la, sublayers=n)
                                                    for la in layout.layers))


# --- 1. skin depth ---------------------------------------------------------------------------

def test_skin_depth_reference_is_the_decay_length_of_the_diffusion_equation():
    # Verify the reference itself: in a half-space the field obeys d2E/dz2 = j w mu0 sigma E,
    # E ~ exp(-k z), k = sqrt(j w mu0 sigma) = (1 + j) / delta (Ramo, Whinnery & Van Duzer).
    for f in (1e6, 1e7, 1e8):
        k = np.sqrt(1j * 2 * np.pi * f * MU0 * SIGMA)
        assert k.real == pytest.approx(1.0 / skin_depth(f), rel=1e-12)
        assert k.imag == pytest.approx(1.0 / skin_depth(f), rel=1e-12)


@pytest.mark.parametrize("f, hand_um", [(1e6, 66.09), (1e7, 20.90), (1e8, 6.609)])
def test_copper_skin_depth_hand_values(f, hand_um):
    # Hand values for 5.8e7 S/m (computed by hand, 4 figures): pi mu0 sigma = 228.97 /(Hz m^2),
    # delta(1 MHz) = 1 / sqrt(2.2897e8) = 66.09 um; it falls as 1 / sqrt(f).
    assert skin_depth(f) * 1e6 == pytest.approx(hand_um, rel=1e-3)


@pytest.mark.parametrize("f", [1e6, 1e7, 1e8])
def test_auto_sublayers_uses_the_same_skin_depth(f):
    # auto_sublayers keeps one sublayer while t <= delta (Ramo, Whinnery & Van Duzer skin
    # depth) and splits just above it: probing either side of delta(f) pins the value it uses.
    delta = skin_depth(f)
    layer = gallery.strip(thickness=delta * (1 - 1e-6)).layers[0]
    assert auto_sublayers(layer, f) == 1
    layer = gallery.strip(thickness=delta * (1 + 1e-6)).layers[0]
    assert auto_sublayers(layer, f) >= 2
    # Above that, the fewest sublayers (never two) whose outer one is no thicker than delta
    # (the rule checked against the exact slab in test_sublayer_rule.py).
    for ratio in (3.0, 6.0, 12.0):
        layer = gallery.strip(thickness=ratio * delta).layers[0]
        n = auto_sublayers(layer, f)
        assert sublayer_bounds(n)[1] * ratio * delta <= delta * (1 + 1e-9)
        if n > 3:
            assert sublayer_bounds(n - 1)[1] * ratio * delta > delta


# --- 4. one sublayer is the single sheet; DC is uniform through the thickness ------------------

@pytest.fixture(scope="module")
def strip_runs():
    lay = gallery.strip(10e-3, 1e-3, 70e-6)
    freqs = (0.0, 1e6, 1e8)
    out = {}
    for n in (None, 1, 3):
        case = lay if n is None else with_sublayers(lay, n)
        out[n] = solve_layout(case, [Port("p", "A", "B")], freqs, mesh=COARSE)
    return out


def test_one_sublayer_equals_the_single_sheet_exactly(strip_runs):
    # The default layer (sublayers = 1) and an explicit single sublayer are the same model.
    a, _, sa = strip_runs[None]
    b, _, sb = strip_runs[1]
    assert np.array_equal(a.impedance, b.impedance)
    assert np.array_equal(sa.L, sb.L) and (sa.R != sb.R).nnz == 0


def test_sublayers_keep_dc_resistance_and_dc_inductance(strip_runs):
    # At DC the current is uniform through the thickness whatever the split (Ohm's law, equal
    # field in parallel sublayers), so R_dc and the DC-limit I^T L I (Hoer & Love 1965: the
    # thickness average of 1/r is linear in the current density) equal the single sheet's.
    one, _, _ = strip_runs[1]
    three, _, s3 = strip_runs[3]
    assert s3.network.branch_sublayer.max() == 2
    assert three.resistance[0, 0, 0] == pytest.approx(one.resistance[0, 0, 0], rel=1e-6)
    assert three.dc_inductance[0, 0] == pytest.approx(one.dc_inductance[0, 0], rel=1e-6)
    # ... and at 1 MHz (delta = 66 um, about the thickness) they still agree within 2 %,
    # while at 100 MHz (delta = 6.6 um) the sublayers show the skin effect.
    assert three.resistance[1, 0, 0] == pytest.approx(one.resistance[1, 0, 0], rel=0.02)
    assert three.resistance[2, 0, 0] > 1.3 * one.resistance[2, 0, 0]


def test_sublayers_keep_dc_values_of_a_two_layer_loop():
    # Same property with a plane return path and a via (strip over a plane).
    lay = gallery.strip_over_plane(4e-3, 1e-3, 0.3e-3, 2e-3, 35e-6)
    ports = [Port("p", "S", "G")]
    mesh = MeshOptions(1.0e-3, 0.4e-3)
    one, _, _ = solve_layout(lay, ports, (0.0,), mesh=mesh)
    four, _, _ = solve_layout(with_sublayers(lay, 3), ports, (0.0,), mesh=mesh)
    assert four.resistance[0, 0, 0] == pytest.approx(one.resistance[0, 0, 0], rel=1e-6)
    assert four.dc_inductance[0, 0] == pytest.approx(one.dc_inductance[0, 0], rel=1e-6)


# --- 5. "auto" in a case file ------------------------------------------------------------------

@pytest.mark.parametrize("f_top, expected", [(1e6, 1), (1e8, 4)])
def test_auto_sublayers_in_a_case_file(tmp_path, f_top, expected):
    # 35 um copper: delta(1 MHz) = 66 um > t gives one sublayer; delta(100 MHz) = 6.61 um gives
    # 4 (outer sublayer 35 (1 - cos(pi/4)) / 2 = 5.1 um <= delta; with 3 it is 8.75 um).
    text = GOOD.replace("thickness = 0.035", 'thickness = 0.035\nsublayers = "auto"')
    text += f"\n[sweep]\nfrequencies = [0, {f_top / 100:g}, {f_top:g}]\n"
    case = load_case(write_case(tmp_path, text))
    assert case.layout.layer("L1").sublayers == "auto"
    assert auto_sublayers(case.layout.layer("L1"), f_top) == expected
    mesh = triangulate(case.layout, COARSE)
    net = build_network(mesh, case.layout, f_max=float(case.frequencies.max()))
    assert net.branch_sublayer.max() + 1 == expected
    sheets_per_triangle = np.bincount(net.sheet_tri, minlength=mesh.n_triangles)
    assert np.all(sheets_per_triangle == expected)
    # The sublayers tile the copper: bottom face to top face, thicknesses summing to t.
    z = net.sheet_z[net.sheet_tri == 0]
    assert z[0, 0] == pytest.approx(0.0, abs=1e-15) and z[-1, 1] == pytest.approx(35e-6, rel=1e-12)
    assert np.allclose(z[1:, 0], z[:-1, 1])


# --- 2. isolated strip: R_ac / R_dc and internal inductance against a 2-D eddy-current FEM -----

STRIP_W, STRIP_T, TERMINAL = 0.5e-3, 70e-6, 0.1e-3
F_QUARTER = 1.0 / (np.pi * MU0 * SIGMA * (STRIP_T / 4) ** 2)   # delta = t / 4: 14.3 MHz
STRIP_FREQS = np.array([0.0, 1e6, 3e6, 1e7, F_QUARTER])


def _interior_edges(tris):
    """Edges shared by two triangles and their triangles, lower index first."""
    e = np.sort(np.concatenate([tris[:, [0, 1]], tris[:, [1, 2]], tris[:, [2, 0]]]), axis=1)
    owner = np.tile(np.arange(len(tris)), 3)
    order = np.lexsort((e[:, 1], e[:, 0]))
    e, owner = e[order], owner[order]
    k = np.flatnonzero(np.all(e[1:] == e[:-1], axis=1))
    return e[k], np.sort(np.stack([owner[k], owner[k + 1]], axis=1), axis=1)


def graded_strip_mesh(length, width, terminal_length, nx, ny):
    """Structured mesh of a strip along x: ``ny`` rows graded toward both long edges
    (``y_k = w (1 - cos(pi k / ny)) / 2``, the same grading as the sublayers), ``nx`` columns
    between two terminal columns (regions ``terminal:A`` and ``terminal:B``).

    The mesher refines only where current enters terminals, so this mesh resolves the current
    crowding at the strip's edges (part of the physics both models capture) at a fraction of
    the unknowns of a uniformly fine mesh.
    """
    from copperpath.geometry.mesh import Mesh
    y = 0.5 * width * (1 - np.cos(np.pi * np.arange(ny + 1) / ny))
    x = np.concatenate([[0.0], np.linspace(terminal_length, length - terminal_length, nx + 1), [length]])
    X, Y = np.meshgrid(x, y, indexing="ij")
    i, j = np.meshgrid(np.arange(len(x) - 1), np.arange(ny), indexing="ij")
    i, j = i.ravel(), j.ravel()
    a, b = i * (ny + 1) + j, (i + 1) * (ny + 1) + j
    c, d = b + 1, a + 1
    alt = (i + j) % 2 == 1                    # alternate the diagonals (no preferred direction)
    t1 = np.where(alt[:, None], np.stack([a, b, c], 1), np.stack([a, b, d], 1))
    t2 = np.where(alt[:, None], np.stack([a, c, d], 1), np.stack([b, c, d], 1))
    tris = np.concatenate([t1, t2]).astype(np.int64)
    column = np.concatenate([i, i])
    region = np.where(column == 0, 0, np.where(column == len(x) - 2, 1, -1))
    edges, edge_tris = _interior_edges(tris)
    return Mesh(points=np.stack([X.ravel(), Y.ravel()], 1), triangles=tris,
                tri_layer=np.zeros(len(tris), np.int64), tri_region=region, layer_names=("L1",),
                region_names=("terminal:A", "terminal:B"), edges=edges, edge_tris=edge_tris)


def _copperpath_strip(length, nx, ny=12, n_sub=6):
    from copperpath.solver.solve.sweep import solve
    from copperpath.solver.solve.system import assemble
    lay = with_sublayers(gallery.strip(length, STRIP_W, STRIP_T, terminal_length=TERMINAL), n_sub)
    mesh = graded_strip_mesh(length, STRIP_W, TERMINAL, nx, ny)
    res = solve(assemble(mesh, lay, [Port("p", "A", "B")]), STRIP_FREQS)
    return res.resistance[:, 0, 0], np.where(STRIP_FREQS > 0, res.inductance[:, 0, 0],
                                             res.dc_inductance[0, 0])


def _fem_strip(h):
    from tests.validation import fem2d
    mesh, cond = fem2d.cross_section_mesh(fem2d.rectangle(STRIP_W, STRIP_T), h, 10 * STRIP_W)
    f = np.where(STRIP_FREQS > 0, STRIP_FREQS, 1.0)       # 1 Hz stands in for DC for L
    z = fem2d.impedance_per_length(mesh, cond, SIGMA, f)
    z_dc = fem2d.impedance_per_length(mesh, cond, SIGMA, [0.0])[0]
    return z.real, z.imag / (2 * np.pi * f), z_dc.real


def test_fem_reference_matches_the_round_wire_bessel_solution():
    # Verify the reference: round wire a = 0.25 mm (128-gon) against the exact impedance
    # kappa J0(kappa a) / (2 pi a sigma J1(kappa a)) (Ramo, Whinnery & Van Duzer 1994, sec.
    # 5.5). R' as a ratio to the polygon's DC value; the internal inductance change
    # L'(f) - L'(DC) (the rim's constant external part cancels).
    from tests.validation import fem2d
    a = 0.25e-3
    mesh, cond = fem2d.cross_section_mesh(fem2d.polygon_disk(a, 128), 20e-6, 20 * a)
    freqs = np.array([1.0, 1e5, 1e6, 1e7])
    z = fem2d.impedance_per_length(mesh, cond, SIGMA, freqs)
    z_dc = fem2d.impedance_per_length(mesh, cond, SIGMA, [0.0])[0]
    area = 0.5 * 128 * a * a * np.sin(2 * np.pi / 128)
    assert z_dc.real == pytest.approx(1.0 / (SIGMA * area), rel=1e-9)       # Ohm's law
    exact = np.array([fem2d.round_wire_impedance(a, SIGMA, f) for f in freqs])
    assert np.allclose(z.real / z_dc.real, exact.real / exact[0].real, rtol=2e-3)
    dl_fem = z.imag / (2 * np.pi * freqs) - z[0].imag / (2 * np.pi)
    dl_exact = exact.imag / (2 * np.pi * freqs) - MU0 / (8 * np.pi)   # DC internal: mu0 / 8 pi
    assert np.allclose(dl_fem[1:], dl_exact[1:], rtol=0.02, atol=0.01 * MU0 / (8 * np.pi))


@pytest.fixture(scope="module")
def fem_strip():
    return _fem_strip(5e-6)


def test_fem_strip_is_exact_at_dc_and_mesh_converged(fem_strip):
    r, ell, r_dc = fem_strip
    assert r_dc == pytest.approx(1.0 / (SIGMA * STRIP_W * STRIP_T), rel=1e-9)      # Ohm's law
    assert r[0] == pytest.approx(r_dc, rel=1e-6)
    r2, ell2, _ = _fem_strip(7e-6)                        # coarser mesh: same answer to 0.5 %
    assert np.allclose(r2, r, rtol=5e-3)
    assert np.allclose(ell2 - ell2[0], ell - ell[0], rtol=5e-3, atol=1e-11)


def test_short_strip_ratio_against_2d_fem(fem_strip):
    # Fast version: one 5 mm strip (length / width = 10; end effects lower R_ac / R_dc by
    # about 4 % at delta = t / 4: measured 2.51 vs 2.61).
    r_fem, _, r_dc_fem = fem_strip
    r5, _ = _copperpath_strip(5e-3, 4)
    assert np.allclose(r5 / r5[0], r_fem / r_dc_fem, rtol=0.05)


@pytest.mark.slow
def test_strip_skin_and_edge_crowding_against_2d_fem(fem_strip):
    # Per-unit-length R'(f) and L'(f) - L'(DC) from two strip lengths (end effects cancel:
    # common practice) against the 2-D eddy-current FEM of the same 0.5 mm x 70 um section, up
    # to delta = t / 4 (14.3 MHz). Measured: R_ac / R_dc 2.58 vs 2.61 at 14.3 MHz.
    r_fem, l_fem, r_dc_fem = fem_strip
    r5, l5 = _copperpath_strip(5e-3, 4)
    r10, l10 = _copperpath_strip(10e-3, 8)
    r_pl = (r10 - r5) / 5e-3
    l_pl = (l10 - l5) / 5e-3
    assert r_pl[0] == pytest.approx(r_dc_fem, rel=1e-6)
    ratio_cp, ratio_fem = r_pl / r_pl[0], r_fem / r_dc_fem
    assert np.allclose(ratio_cp, ratio_fem, rtol=0.05), np.c_[STRIP_FREQS, ratio_cp, ratio_fem]
    assert ratio_fem[-1] > 2.0                            # the check is not a DC one
    dl_cp, dl_fem = l_pl - l_pl[0], l_fem - l_fem[0]
    assert np.allclose(dl_cp[1:], dl_fem[1:], rtol=0.05), np.c_[STRIP_FREQS, dl_cp, dl_fem]


# --- 3. strip over a plane: proximity effect and the square-root law ---------------------------

@pytest.mark.slow
def test_strip_over_plane_crowds_to_the_facing_sublayers_and_follows_sqrt_f():
    # Proximity effect: at high frequency the return current and the strip's current crowd onto
    # the facing surfaces (Ramo, Whinnery & Van Duzer 1994, sec. 5.5; Wheeler 1942), and once
    # delta << t the surface resistance grows as sqrt(f) (R_s = 1 / (sigma delta)).
    n = 6
    lay = with_sublayers(gallery.strip_over_plane(4e-3, 1e-3, 0.2e-3, 2e-3, 70e-6), n)
    freqs = (0.0, 1e7, 3e7, 1e8)                 # delta = 20.9, 12.1, 6.6 um for t = 70 um
    res, _, system = solve_layout(lay, [Port("p", "S", "G")], freqs, mesh=MeshOptions(0.6e-3, 0.3e-3))
    net = system.network
    edge = net.branch_kind == 0
    on_strip = net.node_layer[net.branch_nodes[:, 0]] == 0       # layer "top" (the strip)
    shares = {}
    for name, mask in (("strip", edge & on_strip), ("plane", edge & ~on_strip)):
        s = np.array([[np.abs(res.currents[k, 0, mask & (net.branch_sublayer == j)]).sum()
                       for j in range(n)] for k in range(len(freqs))])
        shares[name] = s / s.sum(axis=1, keepdims=True)
    # DC: each sublayer carries its share of the thickness (uniform current, Ohm's law).
    for s in shares.values():
        assert np.allclose(s[0], np.diff(sublayer_bounds(n)), atol=1e-6)
    # 100 MHz: the strip's bottom sublayer (index 0, facing the plane) and the plane's top
    # sublayer (index n - 1, facing the strip) carry the most current.
    assert np.argmax(shares["strip"][-1]) == 0 and shares["strip"][-1, 0] > 0.3
    assert np.argmax(shares["plane"][-1]) == n - 1 and shares["plane"][-1, -1] > 0.3
    r = res.resistance[:, 0, 0]
    assert np.all(np.diff(r) > 0)
    slope = np.polyfit(np.log(freqs[1:]), np.log(r[1:]), 1)[0]       # top decade, 10-100 MHz
    assert 0.4 < slope < 0.6, slope                                      # measured 0.50
