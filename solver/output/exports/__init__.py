"""Writers that bring a :class:`solver.result.Result` into other tools, one module per format.

- :mod:`solver.exports.result_json`: ``result.json`` (schema ``copperpath.result/1``);
- :mod:`solver.exports.csv`: ``impedance.csv``, R, L and Z of every port pair per frequency;
- :mod:`solver.exports.touchstone`: Touchstone v1.1 ``.s<P>p`` files (Z, or S from Z);
- :mod:`solver.exports.spice`: a passive SPICE subcircuit fitted to Z(f).

Every writer writes through :func:`solver.files.write_text` (a temporary name and a rename), so
an interrupted run never leaves a half file that looks whole.
"""
