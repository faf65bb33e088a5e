"""Equal lengths in any unit give equal meshes (exactly rounded unit scaling)."""
import numpy as np
import pytest

from copperpath.geometry.case import load_case
from copperpath.geometry.meshing import triangulate
from copperpath.geometry.units import to_si

#: A two-layer case in millimetres; every length is written through ``{}`` so that the same
#: case can be written in other units. Values chosen so that the plain products differ by an ulp
#: for some of them (``0.07 * 1e-3 != 70 * 1e-6``, the min_edge of the issue).
TEMPLATE = """\
units = "{unit}"
[[layer]]
name = "L1"
z = {z1}
thickness = {t}
[[layer]]
name = "L2"
z = 0
thickness = {t}
[[copper]]
layer = "L1"
trace = {{ path = [[0, 0], [{a}, 0], [{a}, {b}]], width = {w} }}
[[copper]]
layer = "L2"
rect = [{m}, {m}, {a2}, {b2}]
[[via]]
at = [{a}, {b}]
drill = {d}
[[terminal]]
name = "A"
layer = "L1"
circle = {{ center = [0, 0], radius = {r} }}
[[terminal]]
name = "B"
layer = "L2"
rect = [{m}, {m}, 0.3, 0.3]
[[port]]
name = "p"
plus = "A"
minus = "B"
[mesh]
max_edge = {emax}
min_edge = {emin}
"""
MM_VALUES = {"z1": 1.565, "t": 0.035, "a": 7.3, "b": 2.9, "w": 0.7, "m": -0.6, "a2": 8.1, "b2": 3.7, "d": 0.3, "r": 0.35,
                 "emax": 0.5, "emin": 0.07}
FACTOR = {"mm": 1, "um": 1000, "m": 0.001}


def _write(tmp_path, unit):
    values = {k: f"{v * FACTOR[unit]:.12g}" for k, v in MM_VALUES.items()}
    text = TEMPLATE.format(unit=unit, **values).replace("0.3, 0.3]",
                                                         f"{0.3 * FACTOR[unit]:.12g}, {0.3 * FACTOR[unit]:.12g}]")
    path = tmp_path / f"case_{unit}.toml"
    path.write_text(text)
    return path


def test_exact_scaling_of_single_lengths():
    assert to_si(1500, "um") == to_si(1.5, "mm") == to_si(0.0015, "m") == 0.0015
    assert 0.07 * 1e-3 != 70 * 1e-6              # the plain products that made meshes differ
    assert to_si(0.07, "mm") == to_si(70, "um") == to_si(7e-5, "m") == 7e-5
    assert to_si(70, "um") == to_si(0.07, "mm")
    assert to_si(1000, "mil") == to_si(1, "inch") == 0.0254
    assert np.array_equal(to_si([[1565, 35]], "um"), to_si([[1.565, 0.035]], "mm"))


def test_mm_um_and_m_give_identical_meshes(tmp_path):
    meshes = {}
    for unit in FACTOR:
        case = load_case(_write(tmp_path, unit))
        meshes[unit] = triangulate(case.layout, case.mesh)
        assert case.mesh.min_edge == 0.07e-3
    ref = meshes["mm"]
    assert ref.n_triangles > 100
    for unit in ("um", "m"):
        m = meshes[unit]
        assert np.array_equal(m.points, ref.points), unit
        assert np.array_equal(m.triangles, ref.triangles), unit
        assert np.array_equal(m.tri_region, ref.tri_region), unit


@pytest.mark.parametrize("unit", ["um", "m"])
def test_layers_and_vias_equal_in_every_unit(tmp_path, unit):
    ref, other = load_case(_write(tmp_path, "mm")), load_case(_write(tmp_path, unit))
    assert ref.layout.layers == other.layout.layers
    assert ref.layout.vias == other.layout.vias
