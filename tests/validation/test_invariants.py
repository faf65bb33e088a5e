"""Properties every physical solution must have (passivity, reciprocity, monotone R(f) and L(f))."""
import dataclasses

import numpy as np
import pytest
import shapely
from shapely.geometry import Point, box

from copperpath.geometry import gallery
from copperpath.geometry.model import Layer, Layout, MeshOptions, Port
from tests.validation.solver_setups import eigen_min, solve_layout

SWEEP = (0.0, 1e4, 1e5, 1e6, 1e7, 1e8)
COARSE = MeshOptions(0.5e-3, 0.15e-3)


@pytest.fixture(scope="module")
def strip_over_plane():
    lay = gallery.strip_over_plane(8e-3, 1e-3, 0.3e-3, 5e-3, 35e-6)
    return solve_layout(lay, [Port("p", "S", "G")], SWEEP, mesh=COARSE)


def test_inductance_matrix_is_symmetric_positive_definite(strip_over_plane):
    # Partial inductance is a Gram matrix of the currents' magnetic energy (Ruehli 1972).
    _, _, system = strip_over_plane
    assert np.allclose(system.L, system.L.T, rtol=0, atol=1e-12 * np.abs(system.L).max())
    np.linalg.cholesky(system.L)          # raises unless positive definite


def test_r_rises_and_l_falls_with_frequency(strip_over_plane):
    # Current redistributes to lower the impedance's magnetic energy as w grows: R(f) does not
    # fall and L(f) does not rise (passive R-L network, Foster's reactance theorem for RL).
    res, _, _ = strip_over_plane
    r, ell = res.resistance[:, 0, 0], res.inductance[:, 0, 0]
    assert np.all(np.diff(r) >= -1e-9 * r[0])
    assert np.all(np.diff(ell) <= 1e-9 * ell[0])
    assert ell[-1] < 0.97 * ell[0] and r[-1] > 1.05 * r[0]   # the plane's return current crowds


def test_two_port_is_reciprocal_and_passive():
    lay = gallery.two_strips(6e-3, 1e-3, 0.5e-3, 35e-6)
    res, _, _ = solve_layout(lay, [Port("a", "A1", "B1"), Port("b", "A2", "B2")], (0.0, 1e6, 1e8), mesh=COARSE)
    Z = res.impedance
    # Reciprocity, Z_ij = Z_ji (Lorentz reciprocity of linear isotropic media).
    assert np.allclose(Z, Z.transpose(0, 2, 1), rtol=1e-9, atol=0)
    # Passivity: Re Z positive definite.
    for k in range(len(Z)):
        assert eigen_min(Z[k].real) > 0


def test_a_via_in_parallel_never_raises_loop_inductance():
    one = gallery.strip_over_plane(8e-3, 1.2e-3, 0.3e-3, 5e-3, 35e-6)
    v = one.vias[0]
    twin = dataclasses.replace(v, name="V2", y=v.y + 0.0)
    # a second via beside the first, with its own pads on both layers
    twin = dataclasses.replace(twin, x=v.x - 1.0e-3)
    copper = {}
    for name, geom in one.copper.items():
        pad = Point(twin.x, twin.y).buffer(twin.pad / 2)
        copper[name] = shapely.MultiPolygon(shapely.get_parts(
            shapely.union_all([geom, pad]).difference(Point(twin.x, twin.y).buffer(twin.drill / 2))).tolist())
    two = dataclasses.replace(one, copper=copper, vias=(v, twin))
    freqs = (0.0, 1e6, 1e8)
    r1, _, _ = solve_layout(one, [Port("p", "S", "G")], freqs, mesh=COARSE)
    r2, _, _ = solve_layout(two, [Port("p", "S", "G")], freqs, mesh=COARSE)
    # A parallel path can only lower the minimum magnetic energy (Thomson's theorem).
    assert np.all(r2.inductance[:, 0, 0] <= r1.inductance[:, 0, 0] * (1 + 1e-9))


def test_floating_pour_lowers_high_frequency_loop_inductance():
    loop = gallery.rect_loop(12e-3, 8e-3, 1e-3, 1e-3, 35e-6)
    layers = (Layer("L1", 0.5e-3, 35e-6), Layer("L2", 0.0, 35e-6))
    top = dataclasses.replace(loop.layers[0], z=0.5e-3)
    bare = Layout(layers=(top,), copper=loop.copper, terminals=loop.terminals)
    pour = Layout(layers=layers, copper={"L1": loop.copper["L1"],
                                         "L2": shapely.MultiPolygon([box(-1e-3, -1e-3, 13e-3, 9e-3)])},
                  terminals=loop.terminals)
    freqs = (0.0, 1e8)
    r_bare, _, _ = solve_layout(bare, [Port("p", "P", "N")], freqs, mesh=COARSE)
    r_pour, _, _ = solve_layout(pour, [Port("p", "P", "N")], freqs, mesh=COARSE)
    # Eddy currents in floating copper oppose the loop's flux (Lenz): L falls at high frequency;
    # at DC no current flows in the floating pour and L is unchanged (up to the loop's mesh,
    # which is refined where it lies over the pour).
    assert r_pour.inductance[0, 0, 0] == pytest.approx(r_bare.inductance[0, 0, 0], rel=2e-3)
    assert r_pour.inductance[1, 0, 0] < 0.9 * r_bare.inductance[1, 0, 0]
