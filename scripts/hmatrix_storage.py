"""Storage of a hierarchical low-rank matrix of L against the pre-corrected FFT operator.

Why the fast path uses the pre-corrected FFT: this script builds the dense partial inductance of
two 10 x 5 mm planes 0.2 mm apart (uniform 0.3 mm mesh), clusters the branches by bisection of
their in-plane positions (leaves of 64), takes every block whose smaller cluster diameter is at
most its distance (standard admissibility, eta = 1), truncates its SVD at 1e-4 of the block's
Frobenius norm (the best any low-rank compression can do at that accuracy), and prints the
bytes of that H-matrix, per unknown, next to the bytes of :func:`copperpath.solver.elements.pfft.build_sheet_operator`
at tolerance 1e-4 for the same mesh.

    python scripts/hmatrix_storage.py
"""
from __future__ import annotations

import numpy as np

from copperpath.geometry import gallery
from copperpath.geometry.meshing import triangulate
from copperpath.geometry.model import MeshOptions
from copperpath.solver.elements import partial
from copperpath.solver.elements import pfft
from copperpath.solver.graph.network import build_network

TOL, LEAF, ETA = 1e-4, 64, 1.0


def _tree(pos, ix):
    if len(ix) <= LEAF:
        return ix, None
    p = pos[ix]
    d = np.argmax(p.max(0) - p.min(0))
    o = ix[np.argsort(p[:, d])]
    return o, (_tree(pos, o[:len(o) // 2]), _tree(pos, o[len(o) // 2:]))


def hmatrix_bytes(a, pos):
    """Bytes (low-rank, dense leaves) and the ranks of the admissible blocks of ``a``."""
    root = _tree(pos, np.arange(len(pos)))
    low, dense, ranks = 0, 0, []
    stack = [(root, root)]
    while stack:
        (ia, ca), (ib, cb) = stack.pop()
        la, ha, lb, hb = pos[ia].min(0), pos[ia].max(0), pos[ib].min(0), pos[ib].max(0)
        gap = np.linalg.norm(np.maximum(0, np.maximum(la - hb, lb - ha)))
        if min(np.linalg.norm(ha - la), np.linalg.norm(hb - lb)) <= ETA * gap:
            s = np.linalg.svd(a[np.ix_(ia, ib)], compute_uv=False)
            tail = np.cumsum((s**2)[::-1])[::-1]
            k = int(np.sum(tail > TOL**2 * tail[0]))
            ranks.append(k)
            low += 8 * k * (len(ia) + len(ib))
        elif ca is None or cb is None:
            dense += 8 * len(ia) * len(ib)
        else:
            stack += [(x, y) for x in ca for y in cb]
    return low, dense, np.array(ranks)


def main():
    layout = gallery.plane_pair(length=10e-3, width=5e-3)
    mesh = triangulate(layout, MeshOptions(0.3e-3, 0.3e-3))
    net = build_network(mesh, layout)
    args = (mesh.points, mesh.triangles[net.sheet_tri], net.sheet_z, net.half_branch,
            net.half_tri, net.half_vertex, net.half_sign, net.n_branches)
    a = partial.inductance_matrix(*args)
    cent = mesh.points[mesh.triangles[net.sheet_tri]].mean(1)
    pos = np.zeros((net.n_branches, 2))
    np.add.at(pos, net.half_branch, cent[net.half_tri])
    pos /= np.bincount(net.half_branch, minlength=net.n_branches)[:, None]
    low, dense, ranks = hmatrix_bytes(a, pos)
    op = pfft.build_sheet_operator(*args, tolerance=TOL)
    n = net.n_branches
    print(f"unknowns {n}; H-matrix at {TOL:g}: {(low + dense) / 2**20:.1f} MiB "
          f"({(low + dense) / n:.0f} B per unknown; low-rank {low / 2**20:.1f}, dense leaves "
          f"{dense / 2**20:.1f}; {len(ranks)} blocks, rank median {np.median(ranks):.0f}, max "
          f"{ranks.max()}); pFFT: {op.nbytes / 2**20:.1f} MiB ({op.nbytes / n:.0f} B per unknown)")


if __name__ == "__main__":
    main()
