"""Current density, inductance and loss shares, potentials and bottlenecks (copperpath.solver.analysis.post).

The small layouts here are built with ``tests.helpers.grid_mesh`` (independent of the mesher)
and solved through the real chain (assemble -> solve). ``neck_case`` and ``detour_case`` are
also used by the plot, map, VTU and report tests.
"""
import math
from functools import cache
from pathlib import Path

import numpy as np
import pytest

from copperpath.geometry.model import Case, Layer, Layout, Lumped, Port
from copperpath.solver.analysis import post
from copperpath.solver.solve.sweep import solve
from copperpath.solver.solve.system import assemble
from tests.helpers import grid_mesh

MM = 1e-3
SIGMA = 5.8e7
T = 35e-6
FREQS = np.array([0.0, 1e6, 1e8])


def _case(name, mesh, ports, lumped=(), freqs=FREQS):
    layers = tuple(Layer(n, z=-k * 1.0 * MM, thickness=T, conductivity=SIGMA)
                   for k, n in enumerate(mesh.layer_names))
    return Case(path=Path(f"{name}.toml"), title=name, unit="mm", unit_scale=MM,
                layout=Layout(layers=layers, copper={}), ports=tuple(ports), lumped=tuple(lumped),
                frequencies=np.asarray(freqs, float))


def _solved(case, mesh):
    system = assemble(mesh, case.layout, case.ports, case.lumped)
    return system, solve(system, case.frequencies, title=case.title, keep_currents=True)


@cache
def neck_case():
    """A 12 x 3 mm strip with a 1 mm wide, 2 mm long neck at x = 5..7 mm (terminals at the ends)."""
    regions = {"terminal:A": lambda l, x, y: x < 0.5 * MM, "terminal:B": lambda l, x, y: x > 11.5 * MM}
    mesh = grid_mesh(24, 6, 12 * MM, 3 * MM, regions=regions,
                     drop=lambda x, y: 5 * MM < x < 7 * MM and not (1 * MM < y < 2 * MM))
    case = _case("neck", mesh, [Port("P", "A", "B")])
    return (case, mesh) + _solved(case, mesh)


@cache
def detour_case():
    """A closely spaced pair of 6 mm stubs (1 mm gap) closed through a 10 x 10 mm detour loop.

    Terminals A (lower stub) and B (upper stub) at x < 0.5 mm. From the stubs' far end the
    current leaves along x = 5..6 mm down to y = 0, runs round the square [5, 15] x [0, 10] mm
    and comes back down the same column from the top: the detour is everything at x > 6 mm.
    """
    def copper(x, y):
        rects = [(0, 4, 6, 5), (0, 6, 6, 7), (5, 0, 6, 5), (5, 6, 6, 10),     # stubs, column
                 (5, 0, 15, 1), (14, 0, 15, 10), (5, 9, 15, 10)]              # detour loop
        return any(a * MM < x < c * MM and b * MM < y < d * MM for a, b, c, d in rects)

    regions = {"terminal:A": lambda l, x, y: (x < 0.5 * MM) & (y < 5 * MM),
               "terminal:B": lambda l, x, y: (x < 0.5 * MM) & (y > 6 * MM)}
    mesh = grid_mesh(30, 20, 15 * MM, 10 * MM, regions=regions, drop=lambda x, y: not copper(x, y))
    case = _case("detour", mesh, [Port("loop", "A", "B")])
    return (case, mesh) + _solved(case, mesh)


@cache
def lumped_case():
    """Two 4 x 1 mm strips in a row, joined by a lumped R-L branch (1 mohm, 2 nH) from B to C."""
    regions = {"terminal:A": lambda l, x, y: x < 0.5 * MM,
               "terminal:B": lambda l, x, y: (x > 3.5 * MM) & (x < 4 * MM),
               "terminal:C": lambda l, x, y: (x > 5 * MM) & (x < 5.5 * MM),
               "terminal:D": lambda l, x, y: x > 8.5 * MM}
    mesh = grid_mesh(18, 2, 9 * MM, 1 * MM, regions=regions, drop=lambda x, y: 4 * MM < x < 5 * MM)
    case = _case("lumped", mesh, [Port("P", "A", "D"), Port("Q", "A", "B")],
                 lumped=[Lumped("ESL", ("B", "C"), 1e-3, 2e-9)])
    return (case, mesh) + _solved(case, mesh)


def _all_maps(case, mesh, system, result):
    for fi in range(len(result.frequencies)):
        for pi in range(len(result.ports)):
            yield post.port_maps(mesh, system, result, freq_index=fi, port_index=pi,
                                 layout=case.layout, lumped=case.lumped)


@pytest.mark.parametrize("build", [neck_case, lumped_case])
def test_shares_sum_to_port_l_and_r(build):
    # Tellegen 1952 ("A general network theorem, with applications", Philips Res. Rep. 7):
    # sum_m conj(I_m) V_m = conj(I_port) V_port, so the branch shares add up to Z_pp exactly:
    # Re -> R, Im / w -> L (and I^T L I at DC by definition of the DC-limit inductance).
    case, mesh, system, result = build()
    for m in _all_maps(case, mesh, system, result):
        items_l = sum(x.inductance_share for x in m.items)
        items_r = sum(x.resistance_share for x in m.items)
        assert m.inductance > 0 and m.resistance > 0
        assert m.inductance_share.sum() + items_l == pytest.approx(m.inductance, rel=1e-6)
        assert m.resistance_share.sum() + items_r == pytest.approx(m.resistance, rel=1e-6)
        assert m.branch_inductance_share.sum() == pytest.approx(m.inductance, rel=1e-6)
        assert m.branch_resistance_share.sum() == pytest.approx(m.resistance, rel=1e-6)
        assert (m.resistance_share >= 0).all()          # exact per-triangle loss is never negative


def test_lumped_branch_share_is_its_own_impedance():
    # A series element carries the whole port current (Kirchhoff's current law) and has no
    # mutual coupling, so its shares are exactly its own R and L (circuit definition).
    case, mesh, system, result = lumped_case()
    for m in _all_maps(case, mesh, system, result):
        (item,) = m.items
        assert item.kind == "lumped" and item.name == "ESL"
        if m.port == "P":
            assert item.inductance_share == pytest.approx(2e-9, rel=1e-9)
            assert item.resistance_share == pytest.approx(1e-3, rel=1e-9)
            assert item.x == pytest.approx(4.5 * MM)
        else:                                            # port Q never reaches the lumped branch
            assert abs(item.inductance_share) < 1e-9 * m.inductance


def test_uniform_strip_density_loss_and_ir_drop():
    # Uniform current in a straight strip: J = I / w (A/m), R = l / (sigma w t) (Ohm's law for
    # a bar), and the potential falls linearly from the plus terminal (R x 1 A) to 0.
    regions = {"terminal:A": lambda l, x, y: x < 1 * MM, "terminal:B": lambda l, x, y: x > 7 * MM}
    mesh = grid_mesh(8, 2, 8 * MM, 2 * MM, regions=regions)
    case = _case("strip", mesh, [Port("P", "A", "B")], freqs=[0.0])
    system, result = _solved(case, mesh)
    m = post.port_maps(mesh, system, result, freq_index=0, port_index=0)
    bulk = mesh.tri_region < 0
    j = m.current_density[bulk]
    assert np.allclose(j[:, 0].real, 1.0 / (2 * MM), rtol=1e-6)
    assert np.allclose(j[:, 1], 0.0, atol=1e-6 / MM)
    assert np.allclose(m.current_density[~bulk], 0.0)
    r_bar = 6 * MM / (SIGMA * 2 * MM * T)
    assert m.resistance_share.sum() == pytest.approx(r_bar, rel=1e-6)
    a = mesh.tri_region == mesh.region_index("terminal:A")
    assert np.allclose(m.potential[a].real, r_bar, rtol=1e-6)
    x = mesh.centroids[bulk, 0]
    assert np.all(np.diff(m.potential[bulk].real[np.argsort(x)]) <= 1e-9 * r_bar)


def test_bottleneck_at_the_neck():
    case, mesh, system, result = neck_case()
    for fi in range(len(result.frequencies)):
        m = post.port_maps(mesh, system, result, freq_index=fi, port_index=0)
        top = post.find_bottlenecks(mesh, m)[0]
        assert top.kind == "copper" and top.layer == "L1"
        assert 4.5 * MM <= top.x <= 7.5 * MM, top        # neck at x = 5..7 mm
        assert 1 * MM <= top.y <= 2 * MM
        # The neck (1/3 of the width over 1/6 of the length) holds more L per area than the strip.
        assert top.inductance / top.area > m.inductance / mesh.areas[mesh.tri_region < 0].sum()
        assert 0 < top.inductance_share <= 1 and 0 < top.resistance_share <= 1


def test_top_inductance_region_on_the_detour():
    case, mesh, system, result = detour_case()
    for fi in range(len(result.frequencies)):
        m = post.port_maps(mesh, system, result, freq_index=fi, port_index=0)
        found = post.find_bottlenecks(mesh, m)
        assert found[0].x > 6 * MM, found[0]
        # the closely coupled stubs hold little: the detour triangles hold most of L
        detour = mesh.centroids[:, 0] > 6 * MM
        assert m.inductance_share[detour].sum() > 0.6 * m.inductance


def test_bottleneck_fraction_and_order():
    case, mesh, system, result = detour_case()
    m = post.port_maps(mesh, system, result, freq_index=1, port_index=0)
    few = post.find_bottlenecks(mesh, m, fraction=0.2)
    many = post.find_bottlenecks(mesh, m, fraction=0.9)
    assert sum(b.inductance for b in few) < sum(b.inductance for b in many)
    key = [b.concentration for b in many]
    assert key == sorted(key, reverse=True)
    held = sum(b.inductance for b in many) / m.inductance_share[m.inductance_share > 0].sum()
    assert held >= 0.9
    with pytest.raises(ValueError, match="fraction"):
        post.find_bottlenecks(mesh, m, fraction=0.0)
    d = many[0].as_dict(MM, rank=1)
    assert {"port", "layer", "x", "y", "inductance_share", "resistance_share", "kind", "area",
            "rank"} <= set(d)
    assert d["x"] == pytest.approx(many[0].x / MM)


def test_quasi_static_limit_and_map_frequency():
    # Common practice: the quasi-static model holds while D < lambda / 10 in FR-4 (eps_r 4.5),
    # i.e. f < c0 / (10 sqrt(4.5) D), D the largest dimension (box diagonal with the height).
    case, mesh, *_ = neck_case()
    f_lim, d = post.quasi_static_limit(mesh, case.layout.layers)
    assert d == pytest.approx(math.sqrt(12**2 + 3**2 + 0.035**2) * MM)
    assert f_lim == pytest.approx(299_792_458.0 / (10 * math.sqrt(4.5) * d))
    assert post.map_frequency_index([0, 1e6, 1e8, 1e10], f_lim) == 2
    assert post.map_frequency_index([0, 1e10, 1e11], f_lim) == 1
    assert post.map_frequency_index([0], f_lim) is None
    assert post.dc_index([1e3, 0.0]) == 1 and post.dc_index([1e3]) is None
