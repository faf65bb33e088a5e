"""``copperpath inspect``: what was read and meshed, before any solve.

Writes ``inspect.json`` (sizes, connectivity counts, mesh quality and the memory a dense
solve would need; with ``[fabrication]`` files also what they hold: components and their
pads, nets and their copper per layer, the stackup), one picture per layer and ``mesh.vtu``. Every file is written to a
temporary name in the output folder and renamed into place.
"""
from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import shapely

from copperpath.geometry.meshing import layer_copper
from copperpath.solver.output.files import atomic_path
from copperpath.solver.graph.network import build_network
from copperpath.solver.output.exports.vtu import write_mesh_vtu
from copperpath.solver.solve import memory
from copperpath.solver.solve.fast_memory import estimate_fast_memory
from copperpath.solver.solve.system import choose_method

SMALL_ANGLE_DEG = 25.0
"""Triangles with a smaller angle are counted (they come from sharp angles of the artwork)."""


def write_inspect(layout, mesh, out_dir, *, unit_scale=1e-3, unit="mm", title="", ports=(),
                  lumped=(), frequencies=(0.0,), board=None, method="auto"):
    """Write ``inspect.json``, ``<layer>.png`` per layer and ``mesh.vtu`` into ``out_dir``.

    Parameters
    ----------
    layout : copperpath.geometry.model.Layout
    mesh : copperpath.geometry.mesh.Mesh
        The mesh of ``layout`` (:func:`copperpath.geometry.meshing.triangulate`).
    out_dir : str or os.PathLike
        Created if missing.
    unit_scale : float
        Metres per display unit (pictures show lengths divided by it).
    unit : str
        Name of the display unit, for axis labels.
    title : str
    ports : sequence of copperpath.geometry.model.Port
    lumped : sequence of copperpath.geometry.model.Lumped
    frequencies : sequence of float
        The sweep in Hz (``sublayers = "auto"`` follows its top; the estimate counts its
        stored currents).
    board : copperpath.geometry.formats.board.BoardContents, optional
        What the fabrication files hold (``Case.board``).

    Returns
    -------
    dict
        The content of ``inspect.json``.
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    info = inspect_summary(layout, mesh, ports=ports, title=title, lumped=lumped,
                           frequencies=frequencies, board=board, method=method)
    for index, name in enumerate(mesh.layer_names):
        _write_atomic(out / f"{_file_stem(name)}.png",
                      lambda tmp, i=index: _plot_layer(layout, mesh, i, tmp, unit_scale=unit_scale,
                                                       unit=unit, title=title, ports=ports))
    write_mesh_vtu(out / "mesh.vtu", mesh, layout)
    text = json.dumps(info, indent=2)
    _write_atomic(out / "inspect.json", lambda tmp: Path(tmp).write_text(text + "\n"))
    return info


def inspect_summary(layout, mesh, *, ports=(), title="", lumped=(), frequencies=(0.0,), board=None,
                    method="auto"):
    """The content of ``inspect.json`` (SI units).

    ``mesh.unknowns`` counts the current unknowns of the solve (edge currents of every
    sublayer, via-barrel segments), ``mesh.nodes`` the potentials (bulk triangles and
    equipotential regions), ``mesh.loops`` the loop currents of the dense solve, and
    ``dense_memory_bytes`` the peak memory of the dense path (:func:`copperpath.solver.solve.memory.estimate`,
    the same estimate ``solve`` checks, sublayer unknowns of the sweep's top frequency and
    stored currents included), ``fast_memory_bytes`` that of the fast path
    (:func:`copperpath.solver.solve.fast_memory.estimate_fast_memory`), ``method`` the path the
    case's ``[solver] method`` takes, ``available_memory_bytes`` what the process may use and where
    that limit comes from. With ``board`` (:class:`copperpath.geometry.formats.board.BoardContents`)
    the key ``fabrication`` lists what the fabrication files hold (:func:`board_summary`).
    """
    layers = {}
    for index, layer in enumerate(layout.layers):
        copper = layer_copper(layout, layer.name)
        layers[layer.name] = {
            "copper_area_m2": float(copper.area),
            "islands": int(sum(1 for g in shapely.get_parts(copper) if g.area > 0.0)),
            "triangles": int(np.count_nonzero(mesh.tri_layer == index)),
        }
    freqs = np.asarray(frequencies, float)
    network = build_network(mesh, layout, lumped, f_max=float(freqs.max(initial=0.0)))
    est = memory.from_network(network, ports=max(len(ports), 1), freqs=len(freqs))
    unknowns, nodes, loops = network.n_branches, network.n_nodes, est.loops
    free, source = memory.available()
    method = choose_method(method, unknowns)
    fast = estimate_fast_memory(unknowns, loops, max(len(ports), 1), len(freqs),
                                sublayers=network.most_sublayers)
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
        "dense_memory_bytes": est.solve_bytes,
        "fast_memory_bytes": fast,
        "method": method,
        "process_peak_bytes": est.total,
        "available_memory_bytes": int(free),
        "available_memory_source": source,
        "fits": (est.solve_bytes if method == "dense" else fast) <= memory.USABLE_FRACTION * free,
        **({"fabrication": board_summary(board, layout)} if board is not None else {}),
    }


def board_summary(board, layout):
    """What the fabrication files hold, SI units (the ``fabrication`` key of ``inspect.json``).

    Returns
    -------
    dict
        ``components``: reference -> pad number -> ``{"net", "function", "layers",
        "center_m"}`` (whole board); ``nets``: net -> layer -> copper area in m^2 (inside the
        window if there is one, then ``window`` is true; ``""`` is copper the file marks as on
        no net); ``net_filter``:
        ``{"nets", "others"}`` or None; ``stackup``: the layers used, top down, with the job
        file's name for each copper layer; ``job``: the job file's name, board thickness and
        dielectrics, or None.
    """
    components = {}
    for layer, pads in board.pads.items():
        for pad in pads.values():
            entry = components.setdefault(pad.ref, {}).setdefault(pad.number, {
                "net": pad.net, "function": pad.function, "layers": [],
                "center_m": [float(c) for c in pad.geometry.centroid.coords[0]] if not pad.geometry.is_empty else None})
            entry["layers"].append(layer)
    job = board.job
    names = {f"L{c.number}": c.name for c in job.copper} if job is not None else {}
    return {
        "components": {ref: components[ref] for ref in sorted(components, key=_natural)},
        "nets": board.net_area,
        "window": board.windowed,
        "net_filter": None if board.nets is None else {"nets": list(board.nets), "others": board.others},
        "stackup": [{"name": la.name, "z_m": la.z, "thickness_m": la.thickness,
                     "conductivity_s_per_m": la.conductivity, "job_name": names.get(la.name)}
                    for la in layout.layers],
        "job": None if job is None else {
            "file": Path(job.source).name, "board_thickness_m": job.board_thickness,
            "copper": [{"number": c.number, "name": c.name, "z_m": c.z, "thickness_m": c.thickness}
                       for c in job.copper],
            "dielectrics": [{"name": n, "thickness_m": t, "material": m} for n, t, m in job.dielectrics]},
    }


def _natural(name):
    """Sort key that puts ``U10`` after ``U9``."""
    return [(0, int(t), "") if t.isdigit() else (1, 0, t) for t in re.split(r"(\d+)", name)]


def _file_stem(name):
    """Layer name made safe for a file name."""
    return "".join(c if c.isalnum() or c in "-_." else "_" for c in name)


def _write_atomic(path, write):
    """Call ``write(tmp)`` on a temporary name beside ``path``, then rename it into place."""
    with atomic_path(path) as tmp:
        write(tmp)

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
