"""mesh.vtu: written with meshio, read back with meshio, arrays and geometry intact."""
import numpy as np
import pytest

from copperpath.solver.analysis import post
from copperpath.solver.output.exports.vtu import write_vtu
from tests.test_post import lumped_case, neck_case


def test_vtu_round_trip(tmp_path):
    meshio = pytest.importorskip("meshio")
    case, mesh, system, result = neck_case()
    path = write_vtu(tmp_path / "mesh.vtu", mesh, system, result, case, freq_index=1, port_index=0)
    back = meshio.read(path)
    assert back.cells_dict["triangle"].shape == mesh.triangles.shape
    assert np.array_equal(back.cells_dict["triangle"], mesh.triangles)
    # lifted to the layer's mid-plane: z = 17.5 um for a 35 um layer at z = 0
    assert np.allclose(back.points[:, :2], mesh.points)
    assert np.allclose(back.points[:, 2], 17.5e-6)
    data = {k: v[0] for k, v in back.cell_data.items()}
    expected = {"current_density_re": (mesh.n_triangles, 3), "current_density_im": (mesh.n_triangles, 3),
                "current_density_abs": (mesh.n_triangles,), "inductance_share": (mesh.n_triangles,),
                "loss_share": (mesh.n_triangles,), "potential_re": (mesh.n_triangles,),
                "potential_abs": (mesh.n_triangles,), "layer": (mesh.n_triangles,),
                "region": (mesh.n_triangles,)}
    for name, shape in expected.items():
        assert data[name].shape == shape, name
    m = post.port_maps(mesh, system, result, freq_index=1, port_index=0)
    assert np.allclose(data["current_density_re"][:, :2], m.current_density.real)
    assert np.allclose(data["current_density_im"][:, :2], m.current_density.imag)
    # the per-area shares integrate back to the port's inductance and resistance
    assert (data["inductance_share"] * mesh.areas).sum() == pytest.approx(m.inductance, rel=1e-6)
    assert (data["loss_share"] * mesh.areas).sum() == pytest.approx(m.resistance, rel=1e-6)
    assert np.array_equal(data["region"], mesh.tri_region)
    assert not list(tmp_path.glob(".*"))


def test_vtu_with_lumped_branch(tmp_path):
    meshio = pytest.importorskip("meshio")
    case, mesh, system, result = lumped_case()
    path = write_vtu(tmp_path / "m.vtu", mesh, system, result, case, freq_index=0, port_index=0)
    back = meshio.read(path)
    assert np.isfinite(back.cell_data["potential_re"][0]).all()
    assert back.cell_data["potential_re"][0].max() == pytest.approx(result.resistance[0, 0, 0])
