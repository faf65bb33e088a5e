"""A sparse basis of loop currents (the cycle space of the network graph) and port paths.

Branch currents that satisfy Kirchhoff's current law are ``I = C x + P s``: ``C`` (B x n_loops)
spans the divergence-free currents, ``P`` carries 1 A of each port from its plus to its minus
terminal along a tree path. Solving in ``x`` eliminates the node potentials, so the dense
system per frequency has about a third as many unknowns as there are edges.

``C`` is built by the tree-cotree method (Eppstein 2003, "Dynamic generators of topologically
embedded graphs", SODA; Erickson & Whittlesey 2005, "Greedy optimal homotopy and homology
generators", SODA): the small loops around interior mesh vertices are the faces; a spanning
tree of the graph and a spanning tree of the faces' dual leave exactly the branches whose
fundamental cycles complete the basis (loops around holes, through vias, through lumped
branches). Every column is a closed loop, and the columns are independent by construction.
"""
from __future__ import annotations

from collections import deque
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from copperpath.geometry.errors import InputError


@dataclass(frozen=True, eq=False)
class LoopBasis:
    """Loop currents and port paths.

    Attributes
    ----------
    loops : scipy.sparse.csc_matrix, shape (B, n_loops)
        Each column a closed loop of branches with +-1 entries.
    parent_branch : ndarray of int64, shape (n_nodes,)
        Tree branch to each node's parent (-1 at roots).
    parent_node : ndarray of int64, shape (n_nodes,)
    depth : ndarray of int64, shape (n_nodes,)
    n_vertex_loops : int
        Loops that circle one mesh vertex; the rest are fundamental cycles.
    """

    loops: sp.csc_matrix
    parent_branch: np.ndarray
    parent_node: np.ndarray
    depth: np.ndarray
    n_vertex_loops: int

    def path(self, network, start, stop):
        """Branch coefficients of 1 A flowing from node ``start`` to node ``stop`` along the tree.

        Returns
        -------
        ndarray, shape (B,)
            +1 where the path runs along a branch, -1 against it.

        Raises
        ------
        InputError
            When the two nodes lie on different bodies.
        """
        out = np.zeros(network.n_branches)
        for node, sign in ((start, 1.0), (stop, -1.0)):
            # Walk both ends up; entries cancel above the common ancestor.
            while self.parent_branch[node] >= 0:
                b = self.parent_branch[node]
                leaves = network.branch_nodes[b, 0] == node
                out[b] += sign * (1.0 if leaves else -1.0)
                node = self.parent_node[node]
            if sign > 0:
                root_start = node
            elif node != root_start:
                raise InputError("the two terminals lie on different bodies (no copper, via or "
                                 "lumped branch joins them)")
        return out


def _spanning_tree(network):
    """Breadth-first spanning forest: parent branch, parent node and depth of every node."""
    n = network.n_nodes
    use = np.flatnonzero(network.branch_base < 0)    # sublayer copies never enter the tree
    a, b = network.branch_nodes[use].T
    ends = np.concatenate([a, b])
    order = np.argsort(ends, kind="stable")
    branch_of = np.concatenate([use, use])[order]
    start = np.searchsorted(ends[order], np.arange(n + 1))
    other = np.concatenate([b, a])[order]
    parent_branch = np.full(n, -1, np.int64)
    parent_node = np.full(n, -1, np.int64)
    depth = np.full(n, -1, np.int64)
    # Roots: for each body, start from its largest-degree node for shallow trees.
    degree = np.diff(start)
    for root in np.argsort(-degree, kind="stable"):
        if depth[root] >= 0:
            continue
        depth[root] = 0
        queue = deque([root])
        while queue:
            u = queue.popleft()
            for k in range(start[u], start[u + 1]):
                v = other[k]
                if depth[v] < 0:
                    depth[v] = depth[u] + 1
                    parent_node[v] = u
                    parent_branch[v] = branch_of[k]
                    queue.append(v)
    return parent_branch, parent_node, depth


def _vertex_loops(mesh, network):
    """Loops of branches around interior mesh vertices, as a sparse (B x n) matrix."""
    n_points = len(mesh.points)
    edge_branch = np.full(len(mesh.edges), -1, np.int64)
    is_edge = (network.branch_kind == 0) & (network.branch_base < 0)
    edge_branch[network.branch_item[is_edge]] = np.flatnonzero(is_edge)
    # Boundary vertices: on an edge used by one triangle only.
    tri = mesh.triangles
    all_edges = np.sort(np.concatenate([tri[:, [0, 1]], tri[:, [1, 2]], tri[:, [2, 0]]]), axis=1)
    uniq, counts = np.unique(all_edges, axis=0, return_counts=True)
    on_boundary = np.zeros(n_points, bool)
    on_boundary[uniq[counts == 1].ravel()] = True

    c = mesh.centroids
    t0, t1 = mesh.edge_tris.T
    cross = c[t1] - c[t0]
    rows, cols, vals = [], [], []
    for end in (0, 1):
        v = mesh.edges[:, end]
        w = mesh.edges[:, 1 - end]
        d = mesh.points[w] - mesh.points[v]
        # Counter-clockwise about v: the crossing direction against z x (w - v).
        sign = np.sign(cross[:, 1] * d[:, 0] - cross[:, 0] * d[:, 1])
        ok = (~on_boundary[v]) & (edge_branch >= 0)
        rows.append(edge_branch[ok])
        cols.append(v[ok])
        vals.append(sign[ok])
    rows, cols, vals = map(np.concatenate, (rows, cols, vals))
    used, cols = np.unique(cols, return_inverse=True)
    return sp.csc_matrix((vals, (rows, cols)), shape=(network.n_branches, len(used)))


def _fundamental_cycle(network, parent_branch, parent_node, depth, branch):
    """Rows and signs of the cycle closed by a cotree branch, oriented along the branch."""
    a, b = network.branch_nodes[branch]
    rows, vals = [branch], [1.0]
    # a -> b along the branch, then b back to a through the tree.
    up_b, up_a = [], []
    x, y = b, a
    while depth[x] > depth[y]:
        up_b.append(x)
        x = parent_node[x]
    while depth[y] > depth[x]:
        up_a.append(y)
        y = parent_node[y]
    while x != y:
        up_b.append(x)
        up_a.append(y)
        x, y = parent_node[x], parent_node[y]
    for node in up_b:          # traversed node -> parent
        pb = parent_branch[node]
        rows.append(pb)
        vals.append(1.0 if network.branch_nodes[pb, 0] == node else -1.0)
    for node in up_a:          # traversed parent -> node
        pb = parent_branch[node]
        rows.append(pb)
        vals.append(1.0 if network.branch_nodes[pb, 1] == node else -1.0)
    return rows, vals


def loop_basis(mesh, network):
    """Build a sparse basis of the network's loop currents.

    Parameters
    ----------
    mesh : copperpath.geometry.mesh.Mesh
    network : copperpath.solver.graph.network.Network

    Returns
    -------
    LoopBasis
    """
    parent_branch, parent_node, depth = _spanning_tree(network)
    faces = _vertex_loops(mesh, network)
    in_tree = np.zeros(network.n_branches, bool)
    in_tree[parent_branch[parent_branch >= 0]] = True

    # Dual graph over faces (+ one outer node) through cotree branches.
    n_faces = faces.shape[1]
    outer = n_faces
    fr = faces.tocsr()
    dual_adj = [[] for _ in range(n_faces + 1)]
    copy = network.branch_base >= 0
    for k in np.flatnonzero(~in_tree & ~copy):
        fs = fr.indices[fr.indptr[k]:fr.indptr[k + 1]]
        if len(fs) == 0:
            continue
        f1 = fs[0]
        f2 = fs[1] if len(fs) > 1 else outer
        dual_adj[f1].append((f2, k))
        dual_adj[f2].append((f1, k))
    seen = np.zeros(n_faces + 1, bool)
    in_dual_tree = np.zeros(network.n_branches, bool)
    dependent = []
    for root in [outer] + list(range(n_faces)):
        if seen[root]:
            continue
        if root != outer:
            dependent.append(root)   # a closed surface: this face is the sum of the others
        seen[root] = True
        queue = deque([root])
        while queue:
            u = queue.popleft()
            for v, k in dual_adj[u]:
                if not seen[v]:
                    seen[v] = True
                    in_dual_tree[k] = True
                    queue.append(v)
    keep_faces = np.setdiff1d(np.arange(n_faces), dependent)
    faces = faces[:, keep_faces]

    rows, cols, vals = [], [], []
    extra = np.flatnonzero(~in_tree & ~in_dual_tree & ~copy)
    for j, branch in enumerate(extra):
        r, v = _fundamental_cycle(network, parent_branch, parent_node, depth, branch)
        rows += r
        vals += v
        cols += [j] * len(r)
    cycles = sp.csc_matrix((vals, (rows, cols)), shape=(network.n_branches, len(extra)))
    # A sublayer copy and its base edge run between the same two nodes: out along one, back
    # along the other.
    copies = np.flatnonzero(copy)
    k = np.arange(len(copies))
    pairs = sp.csc_matrix((np.concatenate([np.ones(len(k)), -np.ones(len(k))]),
                           (np.concatenate([copies, network.branch_base[copies]]), np.concatenate([k, k]))),
                          shape=(network.n_branches, len(copies)))
    loops = sp.hstack([faces, cycles, pairs], format="csc")
    n_bodies = int((parent_branch < 0).sum())
    expected = network.n_branches - network.n_nodes + n_bodies
    if loops.shape[1] != expected:
        raise RuntimeError(f"loop basis has {loops.shape[1]} loops, the graph has {expected}")
    return LoopBasis(loops=loops, parent_branch=parent_branch, parent_node=parent_node,
                     depth=depth, n_vertex_loops=faces.shape[1])
