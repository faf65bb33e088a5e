"""The circuit graph of a meshed layout: nodes, branches and the RWG halves of edge branches.

Nodes are the potentials of the system: one per bulk triangle, one per equipotential region
(a terminal, a via pad; regions that touch are one node). Branches carry currents: interior
mesh edges (edge functions), via barrel segments and lumped R-L branches. A branch runs from
node ``a`` to node ``b``; a positive current leaves ``a``.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from copperpath.geometry.errors import InputError
from copperpath.solver.graph.skin import choose_sublayers, sublayer_bounds

EDGE, BARREL, LUMPED = 0, 1, 2


@dataclass(frozen=True, eq=False)
class Network:
    """Nodes, branches and halves of a meshed layout.

    Attributes
    ----------
    n_nodes : int
    tri_node : ndarray of int64, shape (M,)
        Node of each triangle.
    region_node : dict of str to int
        Node of each mesh region (``"terminal:<name>"``, ``"via:<via>@<layer>"``).
    branch_kind : ndarray of int8, shape (B,)
        ``EDGE``, ``BARREL`` or ``LUMPED``.
    branch_nodes : ndarray of int64, shape (B, 2)
        From and to node of each branch.
    branch_item : ndarray of int64, shape (B,)
        Mesh edge index (edges), barrel segment index (barrels) or lumped index (lumped).
    half_branch, half_tri : ndarray of int64, shape (H,)
        Branch and triangle of each RWG half.
    half_vertex : ndarray, shape (H, 2)
        Free vertex (opposite the edge) of each half, metres.
    half_sign : ndarray, shape (H,)
        +1 in the triangle the current leaves, -1 in the one it enters.
    barrels : dict of str to ndarray
        ``via`` (index into the layout's vias), ``z`` (lo, hi) metres, ``radius`` metres,
        ``upper``/``lower`` layer names, one row per barrel segment.
    lumped_rl : ndarray, shape (n_lumped, 2)
        Resistance (ohm) and inductance (H) of each lumped branch.
    node_layer : ndarray of int64, shape (n_nodes,)
        Layer index of each node (for maps).
    sheet_tri : ndarray of int64, shape (V,)
        Mesh triangle of each sheet triangle. A layer split into ``n`` sublayers has ``n``
        sheet triangles per mesh triangle, one per sublayer; halves refer to sheet triangles.
    sheet_z : ndarray, shape (V, 2)
        Bottom and top elevation of each sheet triangle's copper, metres.
    sheet_resistance : ndarray, shape (V,)
        ``1 / (sigma t)`` of each sheet triangle, ohm per square.
    branch_sublayer : ndarray of int64, shape (B,)
        Sublayer of each edge branch (0 for the others).
    branch_base : ndarray of int64, shape (B,)
        For an edge branch on sublayer ``s > 0``, the branch of the same edge on sublayer 0;
        -1 otherwise.
    layer_sublayers : tuple of int
        Sublayers of each mesh layer (``"auto"`` resolved).
    """

    n_nodes: int
    tri_node: np.ndarray
    region_node: dict
    branch_kind: np.ndarray
    branch_nodes: np.ndarray
    branch_item: np.ndarray
    half_branch: np.ndarray
    half_tri: np.ndarray
    half_vertex: np.ndarray
    half_sign: np.ndarray
    barrels: dict
    lumped_rl: np.ndarray
    node_layer: np.ndarray
    sheet_tri: np.ndarray
    sheet_z: np.ndarray
    sheet_resistance: np.ndarray
    branch_sublayer: np.ndarray
    branch_base: np.ndarray
    layer_sublayers: tuple = ()

    @property
    def n_branches(self) -> int:
        """Number of current unknowns."""
        return len(self.branch_kind)

    @property
    def most_sublayers(self) -> int:
        """Most sublayers of any layer (1 without layers)."""
        return max(self.layer_sublayers, default=1)

    @cached_property
    def incidence(self) -> sp.csr_matrix:
        """``D`` (n_nodes x B): +1 where a branch leaves a node, -1 where it enters."""
        b = np.arange(self.n_branches)
        rows = np.concatenate([self.branch_nodes[:, 0], self.branch_nodes[:, 1]])
        cols = np.concatenate([b, b])
        vals = np.concatenate([np.ones(len(b)), -np.ones(len(b))])
        return sp.csr_matrix((vals, (rows, cols)), shape=(self.n_nodes, self.n_branches))

    @cached_property
    def bodies(self) -> np.ndarray:
        """Connected body (component) of each node, shape (n_nodes,)."""
        a, b = self.branch_nodes.T
        g = sp.coo_matrix((np.ones(len(a)), (a, b)), shape=(self.n_nodes, self.n_nodes))
        return connected_components(g, directed=False)[1]

    def terminal_node(self, name: str) -> int:
        """Node of terminal ``name``."""
        try:
            return self.region_node["terminal:" + name]
        except KeyError:
            raise InputError(f"terminal {name!r} has no copper in the mesh") from None

    def __repr__(self):
        counts = np.bincount(self.branch_kind, minlength=3)
        return (f"Network({self.n_nodes} nodes, {self.n_branches} branches: {counts[0]} edges, "
                f"{counts[1]} barrel segments, {counts[2]} lumped)")


def _merge_regions(mesh):
    """Group regions that touch (share an interior edge), or hold the same terminal on
    several layers (a through-hole pad), into one node each.

    Returns
    -------
    ndarray of int64, shape (n_regions,)
        Group index of each region.
    """
    n = len(mesh.region_names)
    r0 = mesh.tri_region[mesh.edge_tris[:, 0]]
    r1 = mesh.tri_region[mesh.edge_tris[:, 1]]
    touch = (r0 >= 0) & (r1 >= 0) & (r0 != r1)
    first, pairs = {}, []
    for k, name in enumerate(mesh.region_names):
        if name in first:
            pairs.append((first[name], k))
        first.setdefault(name, k)
    same = np.array(pairs, np.int64).reshape(-1, 2)
    rows = np.concatenate([r0[touch], same[:, 0]])
    cols = np.concatenate([r1[touch], same[:, 1]])
    g = sp.coo_matrix((np.ones(len(rows)), (rows, cols)), shape=(n, n))
    return connected_components(g, directed=False)[1] if n else np.zeros(0, np.int64)


def _via_node(mesh, tri_node, via, layer_index, layer_name, region_node):
    """Node that a via joins on a layer: its pad region, else the region under its centre."""
    key = f"via:{via.name}@{layer_name}"
    if key in region_node:
        return region_node[key]
    c = mesh.centroids
    on = np.flatnonzero((mesh.tri_layer == layer_index)
                        & (np.hypot(c[:, 0] - via.x, c[:, 1] - via.y) < 0.5 * via.pad)
                        & (mesh.tri_region >= 0))
    if len(on) == 0:
        raise InputError(f"via {via.name!r}: no pad region on layer {layer_name!r} in the mesh")
    return int(tri_node[on[0]])


def build_network(mesh, layout, lumped=(), *, f_max=0.0):
    """Build the circuit graph of a meshed layout.

    Parameters
    ----------
    mesh : copperpath.geometry.mesh.Mesh
    layout : copperpath.geometry.model.Layout
        For the vias and the layers (z, thickness, conductivity, sublayers).
    lumped : sequence of copperpath.geometry.model.Lumped
    f_max : float
        Highest frequency of the sweep in Hz, for ``sublayers = "auto"``
        (:func:`copperpath.solver.graph.skin.choose_sublayers`).

    Returns
    -------
    Network
    """
    m = mesh.n_triangles
    group = _merge_regions(mesh)
    n_groups = int(group.max()) + 1 if len(group) else 0
    bulk = mesh.tri_region < 0
    tri_node = np.empty(m, np.int64)
    tri_node[~bulk] = group[mesh.tri_region[~bulk]]
    tri_node[bulk] = n_groups + np.arange(bulk.sum())
    n_nodes = n_groups + int(bulk.sum())
    region_node = {name: int(group[k]) for k, name in enumerate(mesh.region_names)}
    node_layer = np.empty(n_nodes, np.int64)
    node_layer[tri_node] = mesh.tri_layer

    # Sheet triangles: one per mesh triangle and sublayer of its layer.
    layers = [layout.layer(name) for name in mesh.layer_names]
    t0, t1 = mesh.edge_tris.T
    n0, n1 = tri_node[t0], tri_node[t1]
    keep = np.flatnonzero(n0 != n1)
    per_layer = np.bincount(mesh.tri_layer[t0[keep]], minlength=len(layers))
    n_sub = np.array(choose_sublayers(layers, per_layer, f_max,
                                      other_unknowns=(len(layers) - 1) * len(layout.vias) + len(lumped)), np.int64)
    sheet_tri, sheet_z, sheet_res = [], [], []
    sheet_of = np.full((m, n_sub.max(initial=1)), -1)
    count = 0
    for li, layer in enumerate(layers):
        tris = np.flatnonzero(mesh.tri_layer == li)
        u = layer.z + layer.thickness * sublayer_bounds(n_sub[li])
        for k in range(n_sub[li]):
            sheet_of[tris, k] = count + np.arange(len(tris))
            count += len(tris)
            sheet_tri.append(tris)
            sheet_z.append(np.tile([u[k], u[k + 1]], (len(tris), 1)))
            sheet_res.append(np.full(len(tris), 1.0 / (layer.conductivity * (u[k + 1] - u[k]))))
    sheet_tri = np.concatenate(sheet_tri) if sheet_tri else np.zeros(0, np.int64)
    sheet_z = np.concatenate(sheet_z) if sheet_z else np.zeros((0, 2))
    sheet_res = np.concatenate(sheet_res) if sheet_res else np.zeros(0)

    # Edge branches: from triangle t0 to t1, one per sublayer; drop edges inside one node.
    subs = n_sub[mesh.tri_layer[t0[keep]]]
    edge_of = np.repeat(keep, subs)                       # mesh edge of each edge branch
    sub_of = np.concatenate([np.arange(k) for k in subs]) if len(subs) else np.zeros(0, np.int64)
    n_edges = len(edge_of)
    first = np.repeat(np.cumsum(subs) - subs, subs)
    branch_base = np.where(sub_of > 0, first, -1)
    half_branch, half_tri, half_sign = [], [], []
    for side, sign in ((0, 1.0), (1, -1.0)):
        tri = mesh.edge_tris[edge_of, side]
        outside = mesh.tri_region[tri] < 0
        half_branch.append(np.flatnonzero(outside))
        half_tri.append(sheet_of[tri[outside], sub_of[outside]])
        half_sign.append(np.full(outside.sum(), sign))
    half_branch = np.concatenate(half_branch)
    half_tri = np.concatenate(half_tri)
    half_sign = np.concatenate(half_sign)
    order = np.lexsort((half_sign, half_branch))
    half_branch, half_tri, half_sign = half_branch[order], half_tri[order], half_sign[order]
    edge_nodes = mesh.edges[edge_of[half_branch]]
    tri_nodes = mesh.triangles[sheet_tri[half_tri]]
    free = np.where((tri_nodes != edge_nodes[:, :1]) & (tri_nodes != edge_nodes[:, 1:]))
    half_vertex_index = np.empty(len(half_tri), np.int64)
    half_vertex_index[free[0]] = tri_nodes[free]
    half_vertex = mesh.points[half_vertex_index]

    # Via barrels between consecutive connected layers.
    layer_index = {name: k for k, name in enumerate(mesh.layer_names)}
    barrel_rows, barrel_nodes = [], []
    for vi, via in enumerate(layout.vias):
        joined = [name for name in via.connects if name in layer_index]
        nodes = [_via_node(mesh, tri_node, via, layer_index[name], name, region_node) for name in joined]
        for k in range(len(joined) - 1):
            if nodes[k] == nodes[k + 1]:
                continue                    # both ends in one terminal (a through-hole pad)
            upper, lower = layout.layer(joined[k]), layout.layer(joined[k + 1])
            barrel_rows.append((vi, lower.z_mid, upper.z_mid, via.barrel_radius, upper.name, lower.name))
            barrel_nodes.append((nodes[k], nodes[k + 1]))
    barrels = {
        "via": np.array([r[0] for r in barrel_rows], np.int64),
        "z": np.array([(r[1], r[2]) for r in barrel_rows], float).reshape(-1, 2),
        "radius": np.array([r[3] for r in barrel_rows], float),
        "upper": tuple(r[4] for r in barrel_rows),
        "lower": tuple(r[5] for r in barrel_rows),
    }

    lumped_nodes = []
    for item in lumped:
        a, b = (region_node.get("terminal:" + t) for t in item.between)
        if a is None or b is None:
            missing = item.between[0] if a is None else item.between[1]
            raise InputError(f"[[lumped]] {item.name!r}: terminal {missing!r} has no copper in the mesh")
        lumped_nodes.append((a, b))
    lumped_rl = np.array([(x.resistance, x.inductance) for x in lumped], float).reshape(-1, 2)

    n_other = len(barrel_nodes) + len(lumped_nodes)
    branch_nodes = np.concatenate([
        np.stack([n0[edge_of], n1[edge_of]], axis=1),
        np.array(barrel_nodes, np.int64).reshape(-1, 2),
        np.array(lumped_nodes, np.int64).reshape(-1, 2),
    ])
    branch_kind = np.concatenate([np.full(n_edges, EDGE), np.full(len(barrel_nodes), BARREL),
                                  np.full(len(lumped_nodes), LUMPED)]).astype(np.int8)
    branch_item = np.concatenate([edge_of, np.arange(len(barrel_nodes)), np.arange(len(lumped_nodes))])
    return Network(n_nodes=n_nodes, tri_node=tri_node, region_node=region_node,
                   branch_kind=branch_kind, branch_nodes=branch_nodes.astype(np.int64),
                   branch_item=branch_item.astype(np.int64), half_branch=half_branch,
                   half_tri=half_tri, half_vertex=half_vertex, half_sign=half_sign,
                   barrels=barrels, lumped_rl=lumped_rl, node_layer=node_layer,
                   sheet_tri=sheet_tri, sheet_z=sheet_z, sheet_resistance=sheet_res,
                   branch_sublayer=np.concatenate([sub_of, np.zeros(n_other, np.int64)]),
                   branch_base=np.concatenate([branch_base, np.full(n_other, -1)]).astype(np.int64),
                   layer_sublayers=tuple(int(k) for k in n_sub))
