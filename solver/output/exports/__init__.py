"""Writers that bring a :class:`copperpath.solver.solve.result.Result` into other tools, one module per format.

- :mod:`copperpath.solver.output.exports.result_json`: ``result.json`` (schema ``copperpath.result/1``);
- :mod:`copperpath.solver.output.exports.csv`: ``impedance.csv``, R, L and Z of every port pair per frequency;
- :mod:`copperpath.solver.output.exports.touchstone`: Touchstone v1.1 ``.s<P>p`` files (Z, or S from Z);
- :mod:`copperpath.solver.output.exports.spice`: a passive SPICE subcircuit fitted to Z(f).

Every writer writes through :func:`copperpath.solver.output.files.write_text` (a temporary name and a rename), so
an interrupted run never leaves a half file that looks whole.
"""
