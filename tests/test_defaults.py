"""Defaults a new user gets: sublayers from the top frequency, mesh sizes from the geometry,
and a loud warning where skin effect is not resolved."""
import math

import pytest

from copperpath.geometry.case import load_case
from copperpath.geometry.mesh_defaults import MAX_EDGE_CAP, default_mesh, return_gap, trace_width
from copperpath.geometry.meshing import FACING_FRACTION, triangulate
from copperpath.geometry.model import Layer, MeshOptions
from copperpath.solver.graph.network import build_network
from copperpath.solver.graph.skin import AUTO_UNKNOWN_BUDGET, choose_sublayers, resolved_up_to, skin_warnings
from tests.validation.strip_case import case_text

COARSE = MeshOptions(2e-3, 0.5e-3)


def _case(tmp_path, name="strip.toml", **kw):
    path = tmp_path / name
    path.write_text(case_text(kw.pop("length", 6.0), **kw))
    return load_case(path)


@pytest.mark.parametrize("f_top, expected", [(1e6, 1), (3e7, 3), (1e8, 4), (2e8, 5)])
def test_default_sublayers_follow_the_top_frequency(tmp_path, f_top, expected):
    # No 'sublayers' key: "auto", resolved at the top solved frequency (35 um copper: the outer
    # sublayer no thicker than the skin depth, solver/skin.py).
    case = _case(tmp_path, f=f_top)
    assert all(la.sublayers == "auto" for la in case.layout.layers)
    net = build_network(triangulate(case.layout, COARSE), case.layout, f_max=f_top)
    assert net.layer_sublayers == (expected, expected)
    assert net.branch_sublayer.max() + 1 == expected


def test_an_integer_is_the_users_override_and_is_warned_about(tmp_path):
    case = _case(tmp_path, sublayers=1)
    net = build_network(triangulate(case.layout, COARSE), case.layout, f_max=1e8)
    assert net.layer_sublayers == (1, 1)
    lines = skin_warnings(case.layout.layers, net.layer_sublayers, [0.0, 1e8], source="strip.toml")
    # both layers share the cause: one line naming both
    assert len(lines) == 1 and lines[0].startswith("strip.toml: layers 'top', ")
    assert "35 um copper, one sublayer (set by the case)" in lines[0]
    assert "5.3 skin depths thick at 100 MHz" in lines[0]
    assert lines[0].endswith("sublayers = 4 would resolve it up to 100 MHz")


def test_no_warning_when_resolved_or_thin(tmp_path):
    layer = Layer("L1", 0.0, 35e-6)
    assert skin_warnings([layer], [4], [0.0, 1e6, 1e8]) == []
    # 3 sublayers resolve 35 um up to 57 MHz: at 100 MHz they do not.
    assert round(resolved_up_to(layer, 3) / 1e6) == 57
    assert len(skin_warnings([layer], [3], [1e8])) == 1
    # Between one and two skin depths thick, one sublayer is tolerated without a warning.
    f = 1.0 / (math.pi * 4e-7 * math.pi * 5.8e7 * (35e-6 / 1.5) ** 2)       # t = 1.5 delta
    assert skin_warnings([layer], [1], [f]) == []


def test_auto_stays_within_the_unknown_budget():
    # All "auto" layers step down together (5 -> 4 -> 3 -> 1); an integer stays.
    big, small = Layer("plane", 0.0, 35e-6, sublayers="auto"), Layer("trace", 1e-3, 35e-6, sublayers="auto")
    fixed = Layer("fixed", 2e-3, 35e-6, sublayers=2)
    assert choose_sublayers([big, small], [4000, 1000], 2e8, budget=10**9) == [5, 5]
    n = choose_sublayers([big, small, fixed], [4000, 1000, 500], 2e8, budget=16_000)
    assert n == [3, 3, 2]                       # 4 each would be 21000
    assert choose_sublayers([big, small, fixed], [4000, 1000, 500], 2e8, budget=10_000) == [1, 1, 2]
    assert choose_sublayers([fixed], [10**6], 1e8, budget=10) == [2]
    lines = skin_warnings([big, small], n[:2], [2e8])
    assert len(lines) == 1 and lines[0].startswith("layers 'plane', 'trace': ")   # one cause, one line
    assert "\"auto\" lowered them from 5" in lines[0] and "resolved up to 57 MHz" in lines[0]


def _crowding_edge(mesh):
    """Edge length on the copper edges that face another layer (and under them), metres."""
    return FACING_FRACTION * mesh.min_edge


def test_default_mesh_from_width_and_height(tmp_path):
    # Where the current crowds (strip edges and the plane under them) the edge is half the
    # scale min(height, width / 4): there the error of L at 100 MHz is set (DEVELOPERS.md,
    # "Accuracy at default settings": edges of the full scale read +4.3 to +4.6 %).
    case = _case(tmp_path, length=30.0)
    w, h = trace_width(case.layout), return_gap(case.layout)
    assert h == pytest.approx(0.2e-3, rel=1e-9)
    assert w == pytest.approx(60 / 62 * 1e-3, rel=1e-3)         # 2 area / perimeter of the strip
    assert _crowding_edge(case.mesh) == pytest.approx(0.5 * h)  # 0.1 mm: half the height
    assert case.mesh.under_edges and case.mesh.grading is not None
    assert case.mesh.min_edge < case.mesh.max_edge <= MAX_EDGE_CAP
    assert any(n.startswith("[mesh] not given: max_edge 2 mm, min_edge 0.2 mm") for n in case.notes)
    assert any("0.1 mm on copper edges that face another layer" in n for n in case.notes)
    # A narrow trace high over the plane: the width sets the scale (eight edges across it where
    # the current crowds).
    case = _case(tmp_path, "narrow.toml", width=0.2, height=0.5)
    assert _crowding_edge(case.mesh) == pytest.approx(trace_width(case.layout) / 8)
    # A wide trace far from the plane: max_edge is capped.
    case = _case(tmp_path, "wide.toml", width=5.0, height=1.5)
    assert case.mesh.max_edge == pytest.approx(MAX_EDGE_CAP)


def test_below_the_crowding_frequency_no_edge_refinement(tmp_path):
    # 35 um at 0.2 mm: the current crowds above about 0.31 MHz (skin depth sqrt(2 t h)).
    low, high = _case(tmp_path, "low.toml", f=1e5), _case(tmp_path, "high.toml", f=1e6)
    assert low.mesh.min_edge == pytest.approx(low.mesh.max_edge / 4)
    assert _crowding_edge(high.mesh) == pytest.approx(0.1e-3) and high.mesh.under_edges
    assert "no edge refinement" in low.notes[-1] and not low.mesh.under_edges


def test_an_explicit_mesh_wins(tmp_path):
    case = _case(tmp_path, mesh=(0.7, 0.3))
    assert case.mesh == MeshOptions(0.7e-3, 0.3e-3)
    assert not any(n.startswith("[mesh]") for n in case.notes)
    path = tmp_path / "half.toml"
    path.write_text(case_text(6.0) + "[mesh]\nmax_edge = 0.6\n")
    case = load_case(path)
    default = _case(tmp_path, "default.toml").mesh                # the missing key from the default
    assert case.mesh.max_edge == pytest.approx(0.6e-3)
    assert case.mesh.min_edge == pytest.approx(default.min_edge)
    assert "the [mesh] table sets max_edge" in case.notes[-1]


def test_single_layer_uses_the_width():
    from copperpath.geometry import gallery
    lay = gallery.strip()
    opts, note = default_mesh(lay, 1e8)
    assert math.isinf(return_gap(lay))
    assert FACING_FRACTION * opts.min_edge == pytest.approx(trace_width(lay) / 8)
    assert "no return copper" in note


def test_eight_auto_sublayers_at_5_ghz_say_what_was_used_why_and_the_remedy():
    # 35 um copper at 5 GHz (delta 0.93 um): "auto" gives its most, 8 sublayers, which resolve
    # up to 2.46 GHz; the line must not claim they were lowered, nor offer 8 as the remedy.
    layer = Layer("L1", 0.0, 35e-6, sublayers="auto")
    (line,) = skin_warnings([layer], [8], [0.0, 5e9], source="c.toml")
    assert line == ("c.toml: layer 'L1': 35 um copper, 8 sublayers (the most \"auto\" gives is 8): "
                    "skin effect resolved up to 2.46 GHz, but the copper is 37.4 skin depths thick at "
                    "5 GHz: from there up, R reads low and L high; sublayers = 10 would resolve it up to 5 GHz")
    assert "lowered" not in line and "sublayers = 8" not in line
    # lowered by the budget: says from what, and the remedy is the count "auto" wanted
    (low,) = skin_warnings([layer], [3], [1e8])
    assert f"\"auto\" lowered them from 4 to keep the mesh within {AUTO_UNKNOWN_BUDGET:,} unknowns" in low
    assert low.endswith("sublayers = 4 would resolve it up to 100 MHz")
