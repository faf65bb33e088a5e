"""Tests of copperpath.solver.output.inspect: inspect.json, per-layer pictures and mesh.vtu."""
import json

import numpy as np
import pytest

from copperpath.geometry import gallery
from copperpath.geometry.meshing import triangulate
from copperpath.geometry.model import MeshOptions, Port
from copperpath.solver.output.inspect import write_inspect

MM = 1e-3


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    layout = gallery.strip_over_plane(10 * MM, 1 * MM, plane_width=4 * MM)
    mesh = triangulate(layout, MeshOptions(1 * MM, 0.1 * MM))
    out = tmp_path_factory.mktemp("inspect")
    info = write_inspect(layout, mesh, out, unit_scale=1e-3, unit="mm", title="strip over plane",
                         ports=(Port("loop", "S", "G"),))
    return layout, mesh, out, info


def test_json_matches_return(written):
    layout, mesh, out, info = written
    assert json.loads((out / "inspect.json").read_text()) == info
    assert {"layers", "vias", "terminals", "ports", "mesh", "dense_memory_bytes"} <= set(info)
    assert set(info["mesh"]) >= {"triangles", "edges", "unknowns", "min_angle_deg"}
    assert set(info["layers"]) == {"top", "bottom"}
    for name, entry in info["layers"].items():
        assert entry["islands"] == 1
        assert entry["copper_area_m2"] == pytest.approx(layout.copper[name].area, rel=1e-6)
    assert sum(e["triangles"] for e in info["layers"].values()) == mesh.n_triangles
    assert info["mesh"]["edges"] == len(mesh.edges)
    assert info["mesh"]["min_angle_deg"] == pytest.approx(mesh.angles_deg.min())
    assert info["ports"] == [{"name": "loop", "plus": "S", "minus": "G"}]
    assert [t["name"] for t in info["terminals"]] == ["S", "G"]
    assert info["vias"] == 1


def test_unknown_count(written):
    layout, mesh, _, info = written
    # count by hand: an edge between two triangles of the same region is inside an
    # equipotential and carries no unknown; one barrel segment joins top and bottom
    inside = sum(1 for a, b in mesh.edge_tris
                 if mesh.tri_region[a] >= 0 and mesh.tri_region[a] == mesh.tri_region[b])
    assert info["mesh"]["unknowns"] == len(mesh.edges) - inside + 1
    nodes = int((mesh.tri_region < 0).sum()) + len(mesh.region_names)
    assert info["mesh"]["nodes"] == nodes
    # the dense path's peak memory: L (8 B^2) plus the loop matrices
    loops = info["mesh"]["loops"]
    assert loops == info["mesh"]["unknowns"] - nodes + 1          # one body
    assert info["dense_memory_bytes"] >= 8 * info["mesh"]["unknowns"] ** 2 + 40 * loops**2


def test_pictures(written):
    import matplotlib.image

    _, _, out, _ = written
    for name in ("top", "bottom"):
        img = matplotlib.image.imread(out / f"{name}.png")
        colours = np.unique((img[..., :3] * 255).astype(np.uint8).reshape(-1, 3), axis=0)
        assert len(colours) > 20, f"{name}.png looks blank"
        assert img.shape[0] > 300 and img.shape[1] > 400


def test_vtu_reads_back(written):
    import meshio

    layout, mesh, out, _ = written
    vtu = meshio.read(out / "mesh.vtu")
    np.testing.assert_array_equal(vtu.cells_dict["triangle"], mesh.triangles)
    np.testing.assert_array_equal(vtu.cell_data["layer"][0], mesh.tri_layer)
    np.testing.assert_array_equal(vtu.cell_data["region"][0], mesh.tri_region)
    np.testing.assert_allclose(vtu.points[:, :2], mesh.points)
    z_mid = [layout.layer(n).z_mid for n in mesh.layer_names]
    z = vtu.points[mesh.triangles[:, 0], 2]
    np.testing.assert_allclose(z, np.take(z_mid, mesh.tri_layer))


def test_no_temporary_files_left(written):
    _, _, out, _ = written
    assert sorted(p.name for p in out.iterdir()) == ["bottom.png", "inspect.json", "mesh.vtu", "top.png"]
