"""The command line: exit status and messages."""
import pytest

from copperpath.solver.cli import main
from tests.bad_cases import BAD_CASES, GOOD, write_case


@pytest.mark.parametrize("case_id, text, words, extra", BAD_CASES, ids=[c[0] for c in BAD_CASES])
def test_bad_input_exits_2_with_one_line(tmp_path, capsys, case_id, text, words, extra):
    path = write_case(tmp_path, text, extra)
    out_dir = tmp_path / "out"
    status = main(["inspect", str(path), "--out", str(out_dir)])
    err = capsys.readouterr().err
    assert status == 2
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert "Traceback" not in err
    for word in words:
        assert word in lines[0]
    assert not out_dir.exists() or not any(out_dir.iterdir())   # nothing half-written


def test_missing_case_file(tmp_path, capsys):
    assert main(["solve", str(tmp_path / "nope.toml")]) == 2
    assert "nope.toml" in capsys.readouterr().err


def test_usage_error_is_status_2(capsys):
    assert main(["solve"]) == 2
    assert main(["frobnicate"]) == 2


def test_negative_frequency_on_the_command_line(tmp_path, capsys):
    path = write_case(tmp_path, GOOD)
    assert main(["solve", str(path), "--freq", "-5", "--out", str(tmp_path / "o")]) == 2
    assert "--freq" in capsys.readouterr().err


def test_memory_estimate_refuses_a_mesh_that_does_not_fit():
    import pytest as _pytest

    from copperpath.geometry import gallery
    from copperpath.geometry.errors import InputError
    from copperpath.geometry.meshing import triangulate
    from copperpath.geometry.model import MeshOptions, Port
    from copperpath.solver.solve.system import assemble

    lay = gallery.strip(10e-3, 1e-3)
    mesh = triangulate(lay, MeshOptions(0.5e-3, 0.1e-3))
    with _pytest.raises(InputError, match="max_edge"):
        assemble(mesh, lay, [Port("p", "A", "B")], memory_limit=1000)
