"""The public API (``copperpath.load_case``, ``solve``, ``compare``) end to end, the command line
on the same case, and the schema of ``result.json``."""
import json
import math
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import copperpath
from copperpath.solver.cli import main
from tests.bad_cases import GOOD, write_case

ROOT = Path(__file__).resolve().parents[1]
SWEEP = "\n[sweep]\nfrequencies = [0, 1e6, 1e8]\n[mesh]\nmax_edge = 0.5\nmin_edge = 0.25\n"


@pytest.fixture(scope="module")
def strip_case(tmp_path_factory):
    return write_case(tmp_path_factory.mktemp("api"), GOOD + SWEEP)


@pytest.fixture(scope="module")
def solution(strip_case):
    return copperpath.solve(copperpath.load_case(strip_case))


def test_solution_arrays_follow_result_json_conventions(solution):
    assert solution.ports == ("p",)
    np.testing.assert_array_equal(solution.frequencies, [0.0, 1e6, 1e8])
    for name in ("impedance", "resistance", "inductance"):
        assert getattr(solution, name).shape == (3, 1, 1)
    # Ohm's law (IEC 60028 annealed copper, 5.8e7 S/m): 8 mm between the terminals' inner edges,
    # 1 mm x 35 um.  R_dc = 8e-3 / (5.8e7 * 1e-3 * 35e-6) = 3.941 mohm.
    assert solution.resistance[0, 0, 0] == pytest.approx(8e-3 / (5.8e7 * 1e-3 * 35e-6), rel=2e-3)
    f = solution.frequencies[1:]
    np.testing.assert_allclose(solution.inductance[1:, 0, 0],
                               solution.impedance[1:, 0, 0].imag / (2 * np.pi * f))
    assert solution.bottlenecks and solution.bottlenecks[0]["rank"] == 1


def test_write_gives_the_same_numbers_as_the_command_line(solution, strip_case, tmp_path):
    api = solution.write(tmp_path / "api")
    assert (tmp_path / "api" / "report.html").is_file()
    assert main(["solve", str(strip_case), "--out", str(tmp_path / "cli")]) == 0
    cli = json.loads((tmp_path / "cli" / "result.json").read_text())
    written = json.loads((tmp_path / "api" / "result.json").read_text())
    for key in ("ports", "frequency_hz", "resistance_ohm", "inductance_h", "impedance_re_ohm",
                "impedance_im_ohm", "bottlenecks", "mesh", "length_unit"):
        assert written[key] == cli[key] == api[key], key


def _check_matrix(values, n_f, n_p):
    assert len(values) == n_f
    for per_f in values:
        assert len(per_f) == n_p and all(len(row) == n_p for row in per_f)
        assert all(isinstance(v, float) and math.isfinite(v) for row in per_f for v in row)


def test_result_json_schema(solution, tmp_path):
    solution.write(tmp_path)
    data = json.loads((tmp_path / "result.json").read_text())
    assert data["schema"] == "copperpath.result/1"
    assert isinstance(data["title"], str)
    n_f, n_p = len(data["frequency_hz"]), len(data["ports"])
    for key in ("resistance_ohm", "inductance_h", "impedance_re_ohm", "impedance_im_ohm"):
        _check_matrix(data[key], n_f, n_p)
    assert set(data["mesh"]) >= {"triangles", "edges", "unknowns", "nodes"}
    assert all(isinstance(v, int) and v > 0 for v in data["mesh"].values())
    assert set(data["timing_s"]) >= {"mesh", "assemble", "solve"}
    # Bottleneck coordinates are in the case's length unit, and the file says which: the strip
    # spans 0-10 mm by 0-1 mm, so millimetre coordinates fall inside it (metres would not).
    assert data["length_unit"] == "mm"
    assert data["bottlenecks"]
    for b in data["bottlenecks"]:
        assert set(b) >= {"port", "layer", "x", "y", "inductance_share", "resistance_share"}
        assert b["port"] in data["ports"] and b["layer"] == "L1"
        assert -0.01 <= b["x"] <= 10.01 and -0.01 <= b["y"] <= 1.01
        assert 0 <= b["inductance_share"] <= 1 and 0 <= b["resistance_share"] <= 1


def test_compare_orders_variants_and_checks_the_port_first(strip_case, tmp_path):
    short = write_case(tmp_path, (GOOD + SWEEP).replace("rect = [0, 0, 10, 1]", "rect = [0, 0, 6, 1]")
                       .replace("rect = [9, 0, 10, 1]", "rect = [5, 0, 6, 1]"))
    comparison = copperpath.compare([strip_case, short])
    assert comparison.port == "p"
    assert comparison.best_case.source == str(short)
    # Shorter strip, lower partial inductance at every compared frequency.
    assert all(d < 0 for d in comparison.cases[1].delta_inductance_h)
    with pytest.raises(copperpath.InputError, match="'nope'"):
        copperpath.compare([strip_case, short], port="nope")


def test_warnings_go_through_the_warnings_module_and_nothing_prints(tmp_path, capsys):
    # 10 GHz lies far above the quasi-static limit of a 10 mm strip: the case reader warns.
    path = write_case(tmp_path, GOOD + "\n[sweep]\nfrequencies = [1e10]\n")
    with pytest.warns(copperpath.CopperpathWarning, match="quasi-static"):
        case = copperpath.load_case(path)
    assert case.warnings
    out = capsys.readouterr()
    assert out.out == "" and out.err == ""


def test_frequencies_given_to_solve_get_the_quasi_static_check(strip_case, tmp_path, capsys):
    # The same check as a [sweep] above the limit: a 10 mm strip is quasi-static to ~1.4 GHz
    # (c0 / (10 sqrt(4.5) D), common practice), so 5 GHz must warn, on the API and the CLI.
    with pytest.warns(copperpath.CopperpathWarning, match="quasi-static"):
        copperpath.solve(strip_case, frequencies=[5e9])
    assert main(["solve", str(strip_case), "--freq", "5GHz", "--out", str(tmp_path / "o")]) == 0
    assert "quasi-static" in capsys.readouterr().err


def test_api_rejects_bad_arguments(strip_case):
    with pytest.raises(copperpath.InputError, match="frequencies"):
        copperpath.solve(strip_case, frequencies=[-1.0])
    with pytest.raises(copperpath.InputError, match="method"):
        copperpath.solve(strip_case, method="quick")


def _readme_example():
    text = (ROOT / "README.md").read_text()
    blocks = re.findall(r"```python\n(.*?)```", text, flags=re.S)
    assert blocks, "the README has no python example"
    return blocks[0]


@pytest.mark.slow
def test_readme_api_example_runs_as_written(tmp_path):
    run = subprocess.run([sys.executable, "-c", _readme_example()], cwd=ROOT, capture_output=True,
                         text=True, timeout=1800)
    assert run.returncode == 0, run.stderr
    assert "nH" in run.stdout
