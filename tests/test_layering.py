"""The data flow runs one way: geometry never imports the solver (STYLE: one-way data flow)."""
import subprocess
import sys


def test_geometry_imports_neither_solver_nor_matplotlib():
    code = ("import sys, geometry.case, geometry.meshing, geometry.formats, geometry.gallery; "
            "bad = [m for m in sys.modules if m.split('.')[0] in ('solver', 'matplotlib')]; "
            "print(bad); sys.exit(1 if bad else 0)")
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert run.returncode == 0, run.stdout + run.stderr
