"""``mesh.vtu``: the copper mesh in 3-D with per-triangle current density, shares and potential.

Written with meshio (VTK XML unstructured grid, binary, zlib), readable by ParaView. Points
are lifted to the mid-plane of their layer (``Layer.z_mid``); every layer keeps its own points.
Cell data, per triangle and per ampere of the driven port's current (SI units):

==========================  ==========  ===================================================
name                        shape       meaning
==========================  ==========  ===================================================
``current_density_re``      (M, 3)      Re of the sheet current density, A/m (z = 0)
``current_density_im``      (M, 3)      Im of the sheet current density, A/m (z = 0)
``current_density_abs``     (M,)        ``sqrt(|Jx|^2 + |Jy|^2)``, A/m
``inductance_share``        (M,)        share of the port's L per area, H/m^2
``loss_share``              (M,)        ohmic loss per area, W/m^2 (ohm/m^2 at 1 A)
``potential_re``            (M,)        Re of the node potential, V (minus terminal at 0)
``potential_abs``           (M,)        magnitude of the node potential, V
``layer``                   (M,)        index into the stackup (0 = top)
``region``                  (M,)        terminal / via-pad region index, -1 for bulk copper
==========================  ==========  ===================================================

One file holds one port at one frequency (the caller picks them, normally the map frequency).
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

from copperpath.solver.output.files import atomic_path
from copperpath.solver.analysis.post import port_maps


def write_vtu(path, mesh, system, result, case, *, freq_index, port_index):
    """Write the mesh with the fields of one port at one frequency as a VTU file.

    Parameters
    ----------
    path : str or os.PathLike
        Target file (``.vtu``), written atomically.
    mesh : copperpath.geometry.mesh.Mesh
    system : copperpath.solver.solve.system.System
        The assembled system (its network and matrices give the shares).
    result : copperpath.solver.solve.result.Result
        Solved with ``keep_currents=True``.
    case : copperpath.geometry.model.Case
        Stackup (layer mid-planes), vias and lumped branches.
    freq_index, port_index : int

    Returns
    -------
    pathlib.Path
    """
    maps = port_maps(mesh, system, result, freq_index=freq_index, port_index=port_index,
                     layout=case.layout, lumped=case.lumped)
    j = maps.current_density
    zeros = np.zeros((len(j), 1))
    area = mesh.areas
    cell_data = {
        "current_density_re": np.hstack([j.real, zeros]),
        "current_density_im": np.hstack([j.imag, zeros]),
        "current_density_abs": np.sqrt((np.abs(j) ** 2).sum(axis=1)),
        "inductance_share": maps.inductance_share / area,
        "loss_share": maps.resistance_share / area,
        "potential_re": maps.potential.real,
        "potential_abs": np.abs(maps.potential),
    }
    return write_mesh_vtu(path, mesh, case.layout, cell_data)


def write_mesh_vtu(path, mesh, layout, cell_data=None):
    """Write the mesh in 3-D (each layer at its copper mid-plane, metres) with the cell data
    ``layer``, ``region`` (-1: bulk copper) and ``cell_data``; the one VTU writer of the package.

    Parameters
    ----------
    path : str or os.PathLike
        Target file (``.vtu``), written atomically.
    mesh : copperpath.geometry.mesh.Mesh
    layout : copperpath.geometry.model.Layout
        Stackup, for the layer elevations.
    cell_data : dict of str to ndarray, optional
        Per-triangle values, shape (M,) or (M, 3).

    Returns
    -------
    pathlib.Path
    """
    import meshio

    z_mid = np.array([layout.layer(name).z_mid for name in mesh.layer_names])
    z = np.zeros(len(mesh.points))
    z[mesh.triangles.ravel()] = np.repeat(z_mid[mesh.tri_layer], 3)
    points = np.column_stack([mesh.points, z])
    data = {**(cell_data or {}), "layer": mesh.tri_layer.astype(np.int32),
            "region": mesh.tri_region.astype(np.int32)}
    out = meshio.Mesh(points, [("triangle", mesh.triangles)],
                      cell_data={k: [np.ascontiguousarray(v)] for k, v in data.items()})
    path = Path(path)
    with atomic_path(path) as tmp:
        meshio.write(tmp, out, file_format="vtu")
    return path
