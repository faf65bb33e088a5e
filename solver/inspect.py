"""``copperpath inspect``: what was read and meshed, before any solve.

Writes ``inspect.json`` (sizes, connectivity counts, mesh quality and the memory a dense
solve would need), one picture per layer and ``mesh.vtu``. Every file is written to a
temporary name in the output folder and renamed into place.
"""
from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import shapely

from geometry.meshing import layer_copper
from solver.files import atomic_path
from solver.network import build_network
from solver.fast_memory import estimate_fast_memory
from solver.system import choose_method, estimate_memory

SMALL_ANGLE_DEG = 25.0
"""Triangles with a smaller angle are counted (they come from sharp angles of the artwork)."""


def write_inspect(layout, mesh, out_dir, *, unit_scale=1e-3, unit="mm", title="", ports=()):
    """Write ``inspect.json``, ``<layer>.png`` per layer and ``mesh.vtu`` into ``out_dir``.

    Parameters
    ----------
    layout : geometry.model.Layout
    mesh : geometry.mesh.Mesh
        The mesh of ``layout`` (:func:`geometry.meshing.triangulate`).
    out_dir : str or os.PathLike
        Created if missing.
    unit_scale : float
        Metres per display unit (pictures show lengths divided by it).
    unit : str
        Name of the display unit, for axis labels.
    title : str
    ports : sequence of geometry.model.Port

    Returns
    -------
    dict
        The content of ``inspect.json``.
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    info = inspect_summary(layout, mesh, ports=ports, title=title)
    for index, name in enumerate(mesh.layer_names):
        _write_atomic(out / f"{_file_stem(name)}.png",
                      lambda tmp, i=index: _plot_layer(layout, mesh, i, tmp, unit_scale=unit_scale,
                                                       unit=unit, title=title, ports=ports))
    _write_atomic(out / "mesh.vtu", lambda tmp: _write_vtu(layout, mesh, tmp))
    text = json.dumps(info, indent=2)
    _write_atomic(out / "inspect.json", lambda tmp: Path(tmp).write_text(text + "\n"))
    return info


def inspect_summary(layout, mesh, *, ports=(), title=""):
    """The content of ``inspect.json`` (SI units).

    ``mesh.unknowns`` counts the current unknowns of the solve (edge currents of every
    sublayer, via-barrel segments), ``mesh.nodes`` the potentials (bulk triangles and
    equipotential regions), ``mesh.loops`` the loop currents of the dense solve, and
    ``dense_memory_bytes`` the peak memory of the dense path
    (:func:`solver.system.estimate_memory`, one frequency), ``fast_memory_bytes`` that of the
    fast path (:func:`solver.fast_memory.estimate_fast_memory`, one frequency) and ``method``
    the path ``method = "auto"`` takes. Lumped branches (a handful) are not counted.
    """
    layers = {}
    for index, layer in enumerate(layout.layers):
        copper = layer_copper(layout, layer.name)
        layers[layer.name] = {
            "copper_area_m2": float(copper.area),
            "islands": int(sum(1 for g in shapely.get_parts(copper) if g.area > 0.0)),
            "triangles": int(np.count_nonzero(mesh.tri_layer == index)),
        }
    network = build_network(mesh, layout)
    unknowns, nodes = network.n_branches, network.n_nodes
    loops = unknowns - nodes + len(np.unique(network.bodies))
    angles = mesh.angles_deg.min(axis=1) if mesh.n_triangles else np.array([180.0])
    return {
        "title": title,
        "layers": layers,
        "vias": len(layout.vias),
        "terminals": [{"name": t.name, "layer": t.layer, "area_m2": float(t.shape.area)}
                      for t in layout.terminals],
        "ports": [{"name": p.name, "plus": p.plus, "minus": p.minus} for p in ports],
        "mesh": {
            "triangles": int(mesh.n_triangles),
            "edges": int(len(mesh.edges)),
            "unknowns": unknowns,
            "nodes": nodes,
            "loops": int(loops),
            "regions": len(mesh.region_names),
            "min_angle_deg": float(angles.min()),
            "small_angle_triangles": int(np.count_nonzero(angles < SMALL_ANGLE_DEG)),
        },
        "dense_memory_bytes": estimate_memory(unknowns, loops, max(len(ports), 1)),
        "fast_memory_bytes": estimate_fast_memory(unknowns, loops, max(len(ports), 1)),
        "method": choose_method("auto", unknowns),
    }


def _file_stem(name):
    """Layer name made safe for a file name."""
    return "".join(c if c.isalnum() or c in "-_." else "_" for c in name)


def _write_atomic(path, write):
    """Call ``write(tmp)`` on a temporary name beside ``path``, then rename it into place."""
    with atomic_path(path) as tmp:
        write(tmp)

def _write_vtu(layout, mesh, path):
    """``mesh.vtu``: triangles in 3-D at each layer's mid-plane (metres), cell data ``layer``
    and ``region`` (-1: bulk copper)."""
    import meshio

    z_mid = np.array([layout.layer(name).z_mid for name in mesh.layer_names])
    z = np.zeros(len(mesh.points))
    z[mesh.triangles.ravel()] = np.repeat(z_mid[mesh.tri_layer], 3)
    points = np.column_stack([mesh.points, z])
    vtu = meshio.Mesh(points, [("triangle", mesh.triangles)],
                      cell_data={"layer": [mesh.tri_layer.astype(np.int32)],
                                 "region": [mesh.tri_region.astype(np.int32)]})
    meshio.write(path, vtu, file_format="vtu")


def _plot_layer(layout, mesh, index, path, *, unit_scale, unit, title, ports):
    """Picture of one layer: copper, mesh, terminals, vias and port labels."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from matplotlib.collections import LineCollection
    from matplotlib.patches import PathPatch

    name = mesh.layer_names[index]
    colours = matplotlib.colormaps["cividis"]
    fig, ax = plt.subplots(figsize=(8.0, 6.0), dpi=120)
    copper = layer_copper(layout, name)
    for poly in shapely.get_parts(copper):
        ax.add_patch(PathPatch(_path(poly, unit_scale), facecolor=colours(0.85),
                               edgecolor=colours(0.55), lw=0.6))
    tri = mesh.triangles[mesh.tri_layer == index]
    if len(tri):
        seg = mesh.points[tri[:, [0, 1, 1, 2, 2, 0]].reshape(-1, 2)] / unit_scale
        ax.add_collection(LineCollection(seg, colors=[colours(0.25)], linewidths=0.15))
    roles = {}
    for port in ports:
        roles.setdefault(port.plus, []).append(f"{port.name} +")
        roles.setdefault(port.minus, []).append(f"{port.name} -")
    for term in layout.terminals:
        if term.layer != name:
            continue
        for poly in shapely.get_parts(term.shape):
            ax.add_patch(PathPatch(_path(poly, unit_scale), facecolor="none",
                                   edgecolor=colours(0.0), hatch="////", lw=0.8))
        label = "\n".join([term.name, *roles.get(term.name, [])])
        c = term.shape.representative_point()
        ax.annotate(label, (c.x / unit_scale, c.y / unit_scale), fontsize=7, ha="center",
                    va="center", color="black",
                    bbox={"boxstyle": "round", "fc": "white", "ec": colours(0.0), "alpha": 0.8})
    for via in layout.vias:
        if name in via.span:
            joined = name in via.connects
            ax.add_patch(plt.Circle((via.x / unit_scale, via.y / unit_scale),
                                    0.5 * via.drill / unit_scale, fill=joined,
                                    fc=colours(0.0), ec=colours(0.0), lw=0.8))
    ax.autoscale_view()
    ax.set_aspect("equal")
    ax.set_xlabel(f"x ({unit})")
    ax.set_ylabel(f"y ({unit})")
    n = len(tri)
    ax.set_title(f"{title}\nlayer {name}: {n} triangles" if title else f"layer {name}: {n} triangles")
    fig.tight_layout()
    fig.savefig(path, format="png")
    plt.close(fig)


def _path(poly, unit_scale):
    """Matplotlib path of a polygon with holes, in display units."""
    from matplotlib.path import Path as MplPath

    verts, codes = [], []
    for ring in (poly.exterior, *poly.interiors):
        xy = np.asarray(ring.coords) / unit_scale
        verts.append(xy)
        codes.append([MplPath.MOVETO] + [MplPath.LINETO] * (len(xy) - 2) + [MplPath.CLOSEPOLY])
    return MplPath(np.concatenate(verts), np.concatenate(codes))
