"""One memory estimator for inspect and solve (copperpath.solver.solve.memory): against the measured peak, the
limits it honours, and refusal before meshing."""
import dataclasses
import os
import subprocess
import sys
import time
import tracemalloc
from pathlib import Path

import pytest

from copperpath.geometry import gallery
from copperpath.geometry.meshing import triangulate
from copperpath.geometry.model import MeshOptions, Port
from copperpath.solver.solve import memory
from copperpath.solver.cli import main
from copperpath.solver.solve.sweep import solve
from copperpath.solver.solve.system import assemble
from tests.bad_cases import GOOD, write_case

MM = 1e-3
ROOT = Path(__file__).resolve().parents[1]


def _layout(sublayers):
    lay = gallery.strip_over_plane(10 * MM, 1 * MM, plane_width=4 * MM)
    return dataclasses.replace(lay, layers=tuple(dataclasses.replace(la, sublayers=sublayers)
                                                 for la in lay.layers))


@pytest.mark.parametrize("scale, sublayers", [(3.0, 1), (2.2, 1), (3.5, 2)])
def test_estimate_within_25_percent_of_the_measured_peak(scale, sublayers):
    lay = _layout(sublayers)
    mesh = triangulate(lay, MeshOptions(0.5 * MM * scale, 0.05 * MM * scale))
    freqs = [0.0, 1e6, 1e8]
    # Compile the kernels first so that only the solve's own allocations are traced.
    small = triangulate(lay, MeshOptions(2 * MM, 1 * MM))
    solve(assemble(small, lay, [Port("p", "S", "G")]), [0.0, 1e6])
    tracemalloc.start()
    try:
        system = assemble(mesh, lay, [Port("p", "S", "G")], n_freqs=len(freqs), f_max=1e8)
        solve(system, freqs, method="dense")
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    est = memory.from_network(system.network, ports=1, freqs=len(freqs))
    assert est.loops == system.n_loops
    assert est.branches > 1500
    assert est.solve_bytes == pytest.approx(peak, rel=0.25), (est.parts, peak)


def test_inspect_and_solve_use_the_same_estimate(tmp_path, monkeypatch):
    """``sublayers = "auto"``: inspect counts the sublayer unknowns of the sweep's top
    frequency, as the solve does (the issue: 2.4 GiB in inspect, 268 GiB in solve)."""
    from copperpath.geometry.case import load_case
    from copperpath.solver.output.inspect import inspect_summary

    text = GOOD.replace("thickness = 0.035", 'thickness = 0.035\nsublayers = "auto"', 1)
    case = load_case(write_case(tmp_path, text + "\n[sweep]\nfrequencies = [0, 1e8]\n"))
    mesh = triangulate(case.layout, case.mesh)
    info = inspect_summary(case.layout, mesh, ports=case.ports, lumped=case.lumped,
                           frequencies=case.frequencies)
    seen = []
    monkeypatch.setattr(memory, "require", lambda est, **kw: seen.append(est))
    system = assemble(mesh, case.layout, case.ports, case.lumped,
                      n_freqs=len(case.frequencies), f_max=1e8)
    assert info["mesh"]["unknowns"] == system.network.n_branches > 2 * len(mesh.edges)
    assert info["dense_memory_bytes"] == seen[0].solve_bytes


def test_a_hopeless_mesh_is_refused_before_meshing(tmp_path, capsys, monkeypatch):
    import copperpath.geometry.meshing

    def never(*a, **k):
        raise AssertionError("meshed a case that cannot fit")

    monkeypatch.setattr(copperpath.geometry.meshing, "triangulate", never)
    t = time.perf_counter()
    # 100 x finer than the default mesh: the solve is hopeless (the mesh alone would fit).
    path = write_case(tmp_path, GOOD + "\n[mesh]\nmax_edge = 0.005\nmin_edge = 0.0005\n")
    assert main(["solve", str(path), "--out", str(tmp_path / "s")]) == 2
    err = capsys.readouterr().err
    assert "solve needs at least" in err and "max_edge" in err and err.count("\n") == 1, err
    # 1000 x finer: even the mesh is hopeless, and inspect refuses too.
    path = write_case(tmp_path, GOOD + "\n[mesh]\nmax_edge = 0.0005\nmin_edge = 0.00005\n")
    assert main(["inspect", str(path), "--out", str(tmp_path / "i")]) == 2
    err = capsys.readouterr().err
    assert "the mesh needs at least" in err and "max_edge" in err and err.count("\n") == 1, err
    assert time.perf_counter() - t < 20


def test_available_memory_honours_the_address_space_limit():
    code = ("import resource; from copperpath.solver.solve import memory;"
            "resource.setrlimit(resource.RLIMIT_AS, (6 * 2**30, resource.RLIM_INFINITY));"
            "b, s = memory.available(); print(b, '|', s)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                         cwd=ROOT, env={**os.environ, "PYTHONPATH": str(ROOT)}).stdout
    free, source = out.split("|")
    assert int(free) < 6 * 2**30 and "RLIMIT_AS" in source


def test_cgroup_v2_and_v1_limits(tmp_path):
    v2 = tmp_path / "v2"
    (v2 / "user.slice" / "job").mkdir(parents=True)
    (v2 / "user.slice" / "memory.max").write_text(f"{11 * 2**30}\n")
    (v2 / "user.slice" / "memory.current").write_text(f"{2**30}\n")
    (v2 / "user.slice" / "job" / "memory.max").write_text("max\n")
    (tmp_path / "cg2").write_text("0::/user.slice/job\n")
    found = memory.cgroup_limits(tmp_path / "cg2", v2)
    assert [b for b, _ in found] == [10 * 2**30] and "memory.max" in found[0][1]
    v1 = tmp_path / "v1" / "memory" / "docker" / "abc"
    v1.mkdir(parents=True)
    (v1 / "memory.limit_in_bytes").write_text(f"{4 * 2**30}\n")
    (v1 / "memory.usage_in_bytes").write_text(f"{2**30}\n")
    (tmp_path / "cg1").write_text("12:cpu,cpuacct:/docker/abc\n4:memory:/docker/abc\n")
    found = memory.cgroup_limits(tmp_path / "cg1", tmp_path / "v1")
    assert [b for b, _ in found] == [3 * 2**30] and "limit_in_bytes" in found[0][1]
    (v1 / "memory.limit_in_bytes").write_text("9223372036854771712\n")        # v1: no limit
    assert memory.cgroup_limits(tmp_path / "cg1", tmp_path / "v1") == []


def test_refusal_names_the_settings():
    est = memory.estimate(100_000, 33_000, 70_000)
    with pytest.raises(Exception, match=r"needs 1\d\d GiB .*max_edge.*sublayers.*\[window\]"):
        memory.require(est, limit=2**30)
