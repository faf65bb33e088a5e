"""Quasi-static PEEC solver on triangle meshes: kernels, assembly, sweep, post-processing,
exports and the command line. It takes a :class:`copperpath.geometry.mesh.Mesh` and never reads input
files itself (only :mod:`copperpath.solver.cli` does, through :mod:`geometry`)."""
