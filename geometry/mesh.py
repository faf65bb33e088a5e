"""The triangle mesh of all copper layers, as plain numpy arrays (metres)."""
from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np


@dataclass(frozen=True, eq=False)
class Mesh:
    """Conforming triangle mesh of every copper layer.

    Points of different layers are distinct even where their coordinates coincide, so an
    edge or a triangle belongs to exactly one layer.

    Attributes
    ----------
    points : ndarray, shape (N, 2)
        Node coordinates in metres.
    triangles : ndarray of int64, shape (M, 3)
        Node indices, counter-clockwise.
    tri_layer : ndarray of int64, shape (M,)
        Index into ``layer_names`` of each triangle.
    tri_region : ndarray of int64, shape (M,)
        Index into ``region_names``, or -1 for bulk copper.
    layer_names : tuple of str
        Layer names, top (highest z) first, as in the stackup.
    region_names : tuple of str
        ``"terminal:<name>"`` for a terminal region, ``"via:<via name>@<layer>"`` for
        a via pad on a layer.
    edges : ndarray of int64, shape (E, 2)
        Interior edges (node indices, lower index first): every edge shared by two
        triangles. These are the current unknowns before terminal merging.
    edge_tris : ndarray of int64, shape (E, 2)
        The two triangles of each interior edge, lower index first.
    """

    points: np.ndarray
    triangles: np.ndarray
    tri_layer: np.ndarray
    tri_region: np.ndarray
    layer_names: tuple
    region_names: tuple
    edges: np.ndarray
    edge_tris: np.ndarray

    def __post_init__(self):
        m = len(self.triangles)
        for name in ("tri_layer", "tri_region"):
            if len(getattr(self, name)) != m:
                raise ValueError(f"Mesh: {name} has {len(getattr(self, name))} entries, expected {m}")
        if self.edges.shape != self.edge_tris.shape:
            raise ValueError(f"Mesh: edges {self.edges.shape} and edge_tris {self.edge_tris.shape} differ")

    @cached_property
    def areas(self) -> np.ndarray:
        """Triangle areas in square metres, shape (M,)."""
        p = self.points[self.triangles]
        d1 = p[:, 1] - p[:, 0]
        d2 = p[:, 2] - p[:, 0]
        return 0.5 * (d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0])

    @cached_property
    def centroids(self) -> np.ndarray:
        """Triangle centroids in metres, shape (M, 2)."""
        return self.points[self.triangles].mean(axis=1)

    @cached_property
    def edge_lengths(self) -> np.ndarray:
        """Interior edge lengths in metres, shape (E,)."""
        d = self.points[self.edges[:, 1]] - self.points[self.edges[:, 0]]
        return np.hypot(d[:, 0], d[:, 1])

    @cached_property
    def angles_deg(self) -> np.ndarray:
        """Interior angles of every triangle in degrees, shape (M, 3)."""
        p = self.points[self.triangles]
        out = np.empty((len(p), 3))
        for k in range(3):
            a = p[:, (k + 1) % 3] - p[:, k]
            b = p[:, (k + 2) % 3] - p[:, k]
            cos = (a * b).sum(1) / (np.linalg.norm(a, axis=1) * np.linalg.norm(b, axis=1))
            out[:, k] = np.degrees(np.arccos(np.clip(cos, -1.0, 1.0)))
        return out

    @property
    def n_triangles(self) -> int:
        """Number of triangles."""
        return len(self.triangles)

    def region_index(self, name: str) -> int:
        """Index of region ``name`` in ``region_names``."""
        return self.region_names.index(name)

    def __repr__(self):
        return (f"Mesh({len(self.layer_names)} layers, {len(self.points)} nodes, "
                f"{len(self.triangles)} triangles, {len(self.edges)} interior edges, "
                f"{len(self.region_names)} regions)")
