"""Warnings for inputs that are legal but almost certainly not meant: a sliver that drives the
mesh size, a via that joins nothing."""
import pytest

from copperpath.geometry.case import load_case
from copperpath.geometry.mesh_size import size_warnings
from copperpath.geometry.meshing import triangulate
from copperpath.solver.cli import main
from tests.bad_cases import GOOD, L2, write_case


def _mesh(path):
    case = load_case(path)
    return case, triangulate(case.layout, case.mesh)


def test_a_sliver_terminal_is_named_as_what_drives_the_mesh(tmp_path):
    # Terminal B is 1 um wide: it, not [mesh] min_edge, sets the size of most triangles.
    case, mesh = _mesh(write_case(tmp_path, GOOD.replace("rect = [9, 0, 10, 1]", "rect = [9.999, 0, 10, 1]")))
    lines = size_warnings(mesh, case.layout, case.mesh, unit_scale=case.unit_scale, unit="mm")
    assert len(lines) == 1
    assert "terminal 'B'" in lines[0] and "layer L1" in lines[0] and f"min_edge {case.mesh.min_edge / case.unit_scale:g} mm" in lines[0]
    assert f"{mesh.n_triangles:,} triangles" in lines[0]


@pytest.mark.parametrize("name", ["buck_baseline", "two_layer_pour"])
def test_ordinary_cases_do_not_warn(name):
    from pathlib import Path

    case, mesh = _mesh(Path(__file__).resolve().parents[1] / "cases" / f"{name}.toml")
    assert size_warnings(mesh, case.layout, case.mesh) == []


def test_the_command_line_prints_the_sliver_warning(tmp_path, capsys):
    path = write_case(tmp_path, GOOD.replace("rect = [9, 0, 10, 1]", "rect = [9.999, 0, 10, 1]"))
    assert main(["inspect", str(path), "--out", str(tmp_path / "o")]) == 0
    err = capsys.readouterr().err
    assert "warning:" in err and "forced by terminal 'B'" in err


def test_a_via_outside_any_copper_is_warned(tmp_path):
    text = GOOD + L2 + "\n[[via]]\nname = \"stray\"\nat = [20, 20]\ndrill = 0.3\n"
    case = load_case(write_case(tmp_path, text))
    hits = [w for w in case.warnings if "stray" in w]
    assert len(hits) == 1 and "joins nothing" in hits[0] and "no copper" in hits[0]
    text = GOOD + L2 + "\n[[via]]\nname = \"half\"\nat = [5, 0.5]\ndrill = 0.3\n"
    hits = [w for w in load_case(write_case(tmp_path, text)).warnings if "half" in w]
    assert len(hits) == 1 and "only layer 'L1'" in hits[0]
