"""Outputs never cost the numbers and never mix two runs: failed pictures, layers without free
copper, non-finite results, a run killed while writing."""
import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from copperpath.geometry.errors import InputError
from copperpath.solver.cli import main
from copperpath.solver.solve.finite import require_finite
from copperpath.solver.solve.result import Result
from tests.bad_cases import GOOD, write_case

#: One via between two round pads, each pad all terminal: no layer has free copper.
VIA_ONLY = """\
title = "One via between two round pads"
[[layer]]
name = "L1"
z = 1.565
thickness = 0.035
[[layer]]
name = "L2"
z = 0.0
thickness = 0.035
[[copper]]
layer = "L1"
circle = { center = [0, 0], radius = 0.5 }
[[copper]]
layer = "L2"
circle = { center = [0, 0], radius = 0.5 }
[[via]]
at = [0, 0]
drill = 0.3
pad = 0.6
[[terminal]]
name = "A"
layer = "L1"
circle = { center = [0, 0], radius = 0.5 }
[[terminal]]
name = "B"
layer = "L2"
circle = { center = [0, 0], radius = 0.5 }
[[port]]
name = "p"
plus = "A"
minus = "B"
[sweep]
frequencies = [0, 1e6]
"""

SWEPT = GOOD + "\n[sweep]\nfrequencies = [0, 1e6]\n"


def test_via_only_case_writes_every_output_and_no_layer_map(tmp_path, capsys):
    path = write_case(tmp_path, VIA_ONLY)
    out = tmp_path / "out"
    assert main(["solve", str(path), "--out", str(out)]) == 0
    err = capsys.readouterr().err
    assert "warning" not in err
    data = json.loads((out / "result.json").read_text())
    r_dc = data["resistance_ohm"][0][0][0]
    # Barrel resistance l / (sigma pi ((d/2 + t)^2 - (d/2)^2)): drill 0.3 mm, plating 25 um,
    # between the mid-planes 1.565 mm apart (Ohm's law).
    area = np.pi * ((0.15e-3 + 25e-6) ** 2 - 0.15e-3 ** 2)
    assert r_dc == pytest.approx(1.565e-3 / (5.8e7 * area), rel=1e-6)
    for name in ("impedance.csv", "report.html", "report.md", "mesh.vtu", "case.cir"):
        assert (out / name).is_file(), name
    assert sorted(p.name for p in (out / "maps").iterdir()) == ["p_RL.png"]


def test_a_failing_picture_is_skipped_with_one_warning(tmp_path, capsys, monkeypatch):
    from copperpath.solver.output import maps
    from copperpath.solver.output import plot

    def broken(path, *args, **kwargs):
        raise ValueError("zero-size array to reduction operation maximum")

    monkeypatch.setattr(maps, "_KINDS", ((*maps._KINDS[0][:2], broken, maps._KINDS[0][3]),
                                         *maps._KINDS[1:]))
    monkeypatch.setattr(plot, "ir_drop_map", broken)
    path = write_case(tmp_path, SWEPT)
    out = tmp_path / "out"
    assert main(["solve", str(path), "--out", str(out)]) == 0
    warnings = [x for x in capsys.readouterr().err.splitlines() if x.startswith("warning")]
    # J at DC and at 1 MHz, V at DC: one line per skipped picture.
    assert len(warnings) == 3, warnings
    assert all("skipped" in w and "zero-size" in w for w in warnings)
    assert json.loads((out / "result.json").read_text())["resistance_ohm"]
    pngs = {p.name for p in (out / "maps").iterdir()}
    assert "p_L1_L_DC.png" in pngs and "p_L1_J_DC.png" not in pngs
    assert not [n for n in os.listdir(out / "maps") if n.startswith(".")]
    assert "skipped" in (out / "report.md").read_text()


def test_non_finite_result_is_refused_naming_the_layer():
    from copperpath.geometry.model import Layer

    z = np.array([[[1e-3 + 0j]], [[np.nan + 0j]]])
    res = Result("t", ("p",), np.array([0.0, 1e6]), z, dc_inductance=np.array([[1e-9]]))
    with pytest.raises(InputError, match=r"non-finite.*1e\+06 Hz.*L1: thickness 1e-300 m"):
        require_finite(res, [Layer("L1", 0.0, 1e-300, 5.8e7)], source="c.toml")
    ok = Result("t", ("p",), np.array([0.0, 1e6]), np.full((2, 1, 1), 1e-3 + 1e-3j))
    require_finite(ok, [Layer("L1", 0.0, 35e-6, 5.8e7)])        # DC L absent: legal


@pytest.mark.parametrize("field, value", [("thickness", "1e-300"), ("conductivity", "1e-300")])
def test_extreme_layer_values_exit_2_and_write_nothing(tmp_path, capsys, field, value):
    text = SWEPT.replace("thickness = 0.035", "thickness = 0.035\nconductivity = 5.8e7", 1)
    text = text.replace(f"{field} = {'0.035' if field == 'thickness' else '5.8e7'}",
                        f"{field} = {value}", 1)
    path = write_case(tmp_path, text)
    out = tmp_path / "out"
    assert main(["solve", str(path), "--out", str(out)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "lumped" not in err[0], err
    assert field in err[0] or "L1" in err[0], err
    assert not out.exists()


def _run(path, out):
    return subprocess.Popen([sys.executable, "-m", "copperpath.solver.cli", "solve", str(path), "--out", str(out)],
                            cwd=Path(__file__).resolve().parents[1],
                            env={**os.environ, "PYTHONPATH": str(Path(__file__).resolve().parents[1])},
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE)


def test_a_killed_run_never_leaves_a_mix_of_two_runs(tmp_path):
    path = write_case(tmp_path, SWEPT)
    out = tmp_path / "out"
    assert main(["solve", str(path), "--out", str(out)]) == 0
    before = {p.relative_to(out): p.read_bytes() for p in out.rglob("*") if p.is_file()}
    # Change the case so that a new run writes different numbers, then kill it part-way
    # through writing its pictures (SIGKILL: no clean-up runs).
    path.write_text(SWEPT.replace("rect = [0, 0, 10, 1]", "rect = [0, 0, 10, 2]", 1))
    proc = _run(path, out)
    stage = tmp_path / f".out.copperpath-partial-{proc.pid}"
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline and proc.poll() is None:
        if (stage / "maps").is_dir() and any((stage / "maps").iterdir()):
            break
        time.sleep(0.01)
    assert proc.poll() is None, "the run finished before it could be killed"
    proc.send_signal(signal.SIGKILL)
    proc.wait()
    after = {p.relative_to(out): p.read_bytes() for p in out.rglob("*") if p.is_file()}
    assert after == before                      # the old complete run, untouched
    assert stage.is_dir()                      # the unfinished run's files stayed outside
    # The next run notices and removes the unfinished outputs, then replaces the folder whole.
    proc = _run(path, out)
    _, err = proc.communicate(timeout=300)
    assert proc.returncode == 0, err
    assert b"did not finish" in err
    assert not stage.exists()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".out.")]
    new = json.loads((out / "result.json").read_text())
    assert new["resistance_ohm"] != json.loads(before[Path("result.json")])["resistance_ohm"]
    assert not [p for p in out.rglob(".*") if p.name != ".copperpath"]


def test_a_foreign_folder_is_never_replaced(tmp_path, capsys):
    path = write_case(tmp_path, GOOD)
    out = tmp_path / "mine"
    out.mkdir()
    (out / "thesis.tex").write_text("keep me")
    assert main(["solve", str(path), "--out", str(out)]) == 2
    assert "not copperpath outputs" in capsys.readouterr().err
    assert (out / "thesis.tex").read_text() == "keep me"


def test_compare_releases_each_variant_before_the_next(tmp_path, monkeypatch, capsys):
    import gc
    import weakref

    import copperpath.solver.cli as cli

    a = write_case(tmp_path, SWEPT)
    (tmp_path / "b").mkdir()
    b = write_case(tmp_path / "b", SWEPT.replace("rect = [0, 0, 10, 1]", "rect = [0, 0, 10, 2]", 1))
    b = b.rename(tmp_path / "wide.toml")
    alive, real = [], cli.run_case

    def tracked(case, out, **kw):
        nonlocal alive
        gc.collect()
        # Nothing of an earlier variant's assembled system or stored currents is held.
        assert all(ref() is None for ref in alive), "an earlier variant's matrices are still held"
        solution, summary = real(case, out, **kw)
        alive += [weakref.ref(solution.system), weakref.ref(solution.result.currents)]
        return solution, summary

    monkeypatch.setattr(cli, "run_case", tracked)
    out = tmp_path / "cmp"
    assert main(["compare", str(a), str(b), "--out", str(out)]) == 0
    gc.collect()
    assert all(ref() is None for ref in alive)
    assert (out / "report.html").is_file() and (out / "case" / "result.json").is_file()
    assert (out / "wide" / "result.json").is_file()


def test_compare_refuses_a_missing_port_before_solving(tmp_path, capsys, monkeypatch):
    import copperpath.solver.cli as cli

    monkeypatch.setattr(cli, "run_case", lambda *a, **k: pytest.fail("solved before checking"))
    a = write_case(tmp_path, SWEPT)
    b = tmp_path / "other.toml"
    b.write_text(SWEPT)
    assert main(["compare", str(a), str(b), "--port", "nope", "--out", str(tmp_path / "c")]) == 2
    assert "nope" in capsys.readouterr().err
