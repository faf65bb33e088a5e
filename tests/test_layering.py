"""The package is layered and the data flow runs one way (STYLE: one-way data flow).

Layers, lowest first: ``copperpath.geometry``; the solver's ``elements`` (partial elements),
``graph`` (network, loop basis), ``solve`` (assembly, sweep, result), ``analysis`` (maps data,
shares, bottlenecks, switching estimates, comparison), ``output`` (exports, pictures, reports);
the public API ``copperpath``; the command line ``copperpath.solver.cli``. A module may import
its own layer and the layers below it, never above.
"""
import ast
import pathlib
import subprocess
import sys

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[1]
LAYERS = ["copperpath.geometry", "copperpath.solver.elements", "copperpath.solver.graph",
          "copperpath.solver.solve", "copperpath.solver.analysis", "copperpath.solver.output",
          "copperpath.api", "copperpath.solver.cli"]


def _module_name(path):
    rel = path.relative_to(ROOT).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    if parts[:2] == ["solver", "api"]:
        return ".".join(["copperpath"] + parts[2:]) or "copperpath"
    return ".".join(["copperpath"] + parts)


def _layer(name):
    """Index in LAYERS of a module name (the API package is everything directly in copperpath)."""
    if name == "copperpath.solver":
        return None
    if name == "copperpath.__main__":                       # `python -m copperpath` is the CLI
        return LAYERS.index("copperpath.solver.cli")
    for k, prefix in enumerate(LAYERS):
        if name == prefix or name.startswith(prefix + "."):
            return k
    if name == "copperpath" or name.count(".") == 1:      # copperpath, copperpath.study
        return LAYERS.index("copperpath.api")
    raise AssertionError(f"module {name} belongs to no layer")


def _imports(path):
    tree = ast.parse(path.read_text(), filename=str(path))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield node.lineno, alias.name
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            yield node.lineno, node.module


SOURCES = sorted(p for folder in ("geometry", "solver") for p in (ROOT / folder).rglob("*.py"))


@pytest.mark.parametrize("path", SOURCES, ids=[str(p.relative_to(ROOT)) for p in SOURCES])
def test_each_module_imports_only_its_layer_and_below(path):
    own = _layer(_module_name(path))
    for line, name in _imports(path):
        top = name.split(".")[0]
        assert top not in ("solver", "geometry"), \
            f"{path.relative_to(ROOT)}:{line}: imports '{name}': use the copperpath.* name"
        if top != "copperpath" or own is None:
            continue
        other = _layer(name)
        assert other is None or other <= own, \
            f"{path.relative_to(ROOT)}:{line}: {LAYERS[own]} imports {name} (a higher layer)"


def test_geometry_imports_neither_solver_nor_matplotlib():
    code = ("import sys, copperpath.geometry.case, copperpath.geometry.meshing, "
            "copperpath.geometry.formats, copperpath.geometry.gallery; "
            "bad = [m for m in sys.modules if m.startswith('copperpath.solver') "
            "or m.split('.')[0] in ('solver', 'geometry', 'matplotlib')]; "
            "print(bad); sys.exit(1 if bad else 0)")
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert run.returncode == 0, run.stdout + run.stderr


def test_only_copperpath_is_an_import_name(tmp_path):
    # Run outside the source tree, in isolated mode, so that only the installed package counts.
    code = ("import importlib.util as u, sys; import copperpath, copperpath.solver, copperpath.geometry; "
            "bad = [n for n in ('solver', 'geometry') if u.find_spec(n) is not None]; "
            "print(bad); sys.exit(1 if bad else 0)")
    run = subprocess.run([sys.executable, "-I", "-c", code], capture_output=True, text=True,
                         timeout=120, cwd=tmp_path)
    assert run.returncode == 0, run.stdout + run.stderr


def test_python_dash_m_copperpath_runs_the_command_line(tmp_path):
    run = subprocess.run([sys.executable, "-I", "-m", "copperpath", "--version"],
                         capture_output=True, text=True, timeout=120, cwd=tmp_path)
    assert run.returncode == 0, run.stderr
    assert run.stdout.startswith("copperpath ")
