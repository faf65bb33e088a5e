"""Small hand-made meshes with known topology, independent of the mesher."""
import numpy as np

from copperpath.geometry.mesh import Mesh


def grid_mesh(nx, ny, lx, ly, *, layers=1, regions=None, drop=None):
    """Structured triangle mesh of the rectangle [0, lx] x [0, ly] on each layer.

    Parameters
    ----------
    nx, ny : int
        Cells along x and y; each cell is split into two triangles.
    lx, ly : float
        Size in metres.
    layers : int
        Number of identical layers (named L1, L2, ...).
    regions : dict of str to callable, optional
        Region name -> ``f(layer_index, x, y)`` of triangle centroids -> bool.
    drop : callable, optional
        ``f(x, y)`` of cell centres -> True to leave the cell out (holes).

    Returns
    -------
    Mesh
    """
    xs = np.linspace(0, lx, nx + 1)
    ys = np.linspace(0, ly, ny + 1)
    X, Y = np.meshgrid(xs, ys, indexing="ij")
    pts = np.stack([X.ravel(), Y.ravel()], 1)
    idx = np.arange(len(pts)).reshape(nx + 1, ny + 1)
    tris = []
    for i in range(nx):
        for j in range(ny):
            cx, cy = (xs[i] + xs[i + 1]) / 2, (ys[j] + ys[j + 1]) / 2
            if drop is not None and drop(cx, cy):
                continue
            a, b, c, d = idx[i, j], idx[i + 1, j], idx[i + 1, j + 1], idx[i, j + 1]
            tris += [(a, b, c), (a, c, d)]
    tris = np.array(tris)
    used = np.unique(tris)
    remap = np.full(len(pts), -1)
    remap[used] = np.arange(len(used))
    pts, tris = pts[used], remap[tris]
    all_pts = np.concatenate([pts] * layers)
    all_tris = np.concatenate([tris + k * len(pts) for k in range(layers)])
    tri_layer = np.repeat(np.arange(layers), len(tris))
    cent = all_pts[all_tris].mean(1)
    names = tuple(regions or {})
    tri_region = np.full(len(all_tris), -1)
    for r, name in enumerate(names):
        hit = regions[name](tri_layer, cent[:, 0], cent[:, 1])
        tri_region[hit & (tri_region < 0)] = r
    edges, edge_tris = interior_edges(all_tris)
    return Mesh(points=all_pts, triangles=all_tris.astype(np.int64), tri_layer=tri_layer,
                tri_region=tri_region, layer_names=tuple(f"L{k + 1}" for k in range(layers)),
                region_names=names, edges=edges, edge_tris=edge_tris)


def interior_edges(tris):
    """Edges shared by two triangles and their triangles, sorted."""
    e = np.concatenate([tris[:, [0, 1]], tris[:, [1, 2]], tris[:, [2, 0]]])
    t = np.tile(np.arange(len(tris)), 3)
    e = np.sort(e, axis=1)
    order = np.lexsort((t, e[:, 1], e[:, 0]))
    e, t = e[order], t[order]
    same = np.all(e[1:] == e[:-1], axis=1)
    k = np.flatnonzero(same)
    return e[k].astype(np.int64), np.stack([t[k], t[k + 1]], 1).astype(np.int64)
