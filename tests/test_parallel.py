"""Studies beyond one process (issue 14): frequency points in worker processes and on a Dask
LocalCluster, variants as tasks, and a killed sweep resumed from its checkpoint. The reference
is the serial run of the same case: the per-frequency solve does not depend on which other
frequencies are swept with it, so every number of result.json must be equal."""
import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

import copperpath
from copperpath.solver.cli import main

ROOT = Path(__file__).resolve().parents[1]
CASE = ROOT / "tests" / "data" / "scaleout" / "loop.toml"


def _numbers(folder):
    data = json.loads((Path(folder) / "result.json").read_text())
    data.pop("timing_s")
    data.pop("run", None)
    return data


@pytest.fixture(scope="module")
def serial(tmp_path_factory):
    out = tmp_path_factory.mktemp("serial") / "out"
    assert main(["solve", str(CASE), "--out", str(out)]) == 0
    return _numbers(out)


def _variants(tmp_path):
    """Three variants of the loop: the via moved inwards twice (a shorter loop each time)."""
    text = CASE.read_text()
    paths = []
    for name, x in (("far", "11.5"), ("mid", "8.5"), ("near", "5.5")):
        p = tmp_path / f"{name}.toml"
        p.write_text(text.replace("at = [11.5, 0.5]", f"at = [{x}, 0.5]"))
        paths.append(p)
    return paths


def test_workers_2_equals_serial(tmp_path, serial, capsys):
    out = tmp_path / "out"
    assert main(["solve", str(CASE), "--out", str(out), "--workers", "2"]) == 0
    assert "memory per task about" in capsys.readouterr().out
    assert _numbers(out) == serial
    assert not list(tmp_path.glob(".out.copperpath-checkpoint-*"))     # removed after the run


def test_local_dask_cluster_equals_serial(tmp_path, serial):
    out = tmp_path / "out"
    assert main(["solve", str(CASE), "--out", str(out), "--scheduler", "local",
                 "--workers", "2"]) == 0
    assert _numbers(out) == serial


def test_api_workers_equal_serial_arrays():
    case = copperpath.load_case(CASE)
    a = copperpath.solve(case)
    b = copperpath.solve(case, workers=2)
    for name in ("impedance", "currents", "potentials", "dc_inductance"):
        np.testing.assert_array_equal(getattr(b.result, name), getattr(a.result, name))
    assert b.result.info["parallel"]["memory_per_task_bytes"] > 0


def test_killed_sweep_resumes_to_the_same_numbers(tmp_path, serial):
    out = tmp_path / "out"
    cmd = [sys.executable, "-m", "copperpath", "solve", str(CASE), "--out", str(out),
           "--workers", "1", "--resume"]
    proc = subprocess.Popen(cmd, cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    deadline = time.time() + 240
    points = []
    while time.time() < deadline and proc.poll() is None:
        points = list(tmp_path.glob(".out.copperpath-checkpoint-*/point-*.npz"))
        if points:
            break
        time.sleep(0.05)
    assert proc.poll() is None, "the run finished before it could be killed"
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait()
    kept = len(list(tmp_path.glob(".out.copperpath-checkpoint-*/point-*.npz")))
    assert 1 <= kept < 5 and not (out / "result.json").exists()
    run = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True, timeout=300)
    assert run.returncode == 0, run.stderr
    assert f"{kept} points resumed" in run.stdout
    assert _numbers(out) == serial


def test_checkpoint_of_other_settings_is_refused(tmp_path, capsys):
    out = tmp_path / "out"
    other = tmp_path / ".out.copperpath-checkpoint-0123456789abcdef"
    other.mkdir()
    assert main(["solve", str(CASE), "--out", str(out), "--resume", "--freq", "1e6"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "another case file content or other solve settings" in err[0]


def test_missing_dask_is_one_line_and_status_2(tmp_path, monkeypatch, capsys):
    monkeypatch.setitem(sys.modules, "dask.distributed", None)
    assert main(["solve", str(CASE), "--out", str(tmp_path / "o"), "--scheduler", "local"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "Dask is not installed" in err[0]


@pytest.mark.slow
def test_three_variants_on_a_local_cluster_cli_and_api(tmp_path, capsys):
    paths = _variants(tmp_path)
    assert main(["compare", *map(str, paths), "--out", str(tmp_path / "c1")]) == 0
    serial_text = capsys.readouterr().out
    assert main(["compare", *map(str, paths), "--out", str(tmp_path / "c2"),
                 "--scheduler", "local", "--workers", "2"]) == 0
    dask_text = capsys.readouterr().out
    table = lambda text: [ln for ln in text.splitlines() if "nH" in ln and "s)" not in ln]
    assert table(dask_text) == table(serial_text)
    for p in paths:
        assert _numbers(tmp_path / "c2" / p.stem) == _numbers(tmp_path / "c1" / p.stem)
    a = copperpath.compare(paths)
    b = copperpath.compare(paths, scheduler="local", workers=2)
    assert b.best_case.title == a.best_case.title
    for ca, cb in zip(a.cases, b.cases):
        assert cb.inductance_h == ca.inductance_h and cb.resistance_ohm == ca.resistance_ohm
