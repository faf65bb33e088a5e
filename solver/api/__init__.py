"""copperpath: frequency-dependent resistance and inductance of PCB copper between named
terminals, where the current crowds and where the loop inductance lives (quasi-static PEEC on
triangle meshes).

>>> import copperpath
>>> case = copperpath.load_case("cases/two_layer_pour.toml")      # doctest: +SKIP
>>> sol = copperpath.solve(case, frequencies=[0, 1e6, 1e8])        # doctest: +SKIP
>>> sol.inductance[:, 0, 0]                                        # doctest: +SKIP

The packages below are the implementation: :mod:`copperpath.geometry` (case files, artwork,
meshing) and :mod:`copperpath.solver` (partial elements, graph, solve, analysis, output, the
command line).
"""
from importlib.metadata import PackageNotFoundError, version as _version

from copperpath.geometry.errors import InputError
from copperpath.study import CopperpathWarning, Solution, compare, load_case, solve

try:
    __version__ = _version("copperpath")
except PackageNotFoundError:  # running from a source tree that is not installed
    __version__ = "0+unknown"

__all__ = ["load_case", "solve", "compare", "Solution", "InputError", "CopperpathWarning",
           "__version__"]
