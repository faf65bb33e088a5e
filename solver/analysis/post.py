"""Where the current crowds and where the loop inductance lives: per-triangle maps and shares.

Everything here is per ampere of port current (the sweep drives each port with 1 A) and in SI
units: sheet current density in A/m, shares in H and ohm, potentials in V.

Sheet current density
    An RWG half of edge branch ``b`` on sheet triangle ``T`` (area ``A``, free vertex ``p``,
    sign ``s``) carries ``K(r) = I_b s (r - p) / (2 A)``; the sheet current density of ``T``
    is the sum over its halves, linear in ``r``. The map value of a mesh triangle is ``K`` at
    its centroid summed over the sublayers of its layer (the current of the whole thickness).
    Triangles of a terminal or a via pad are equipotential nodes and carry no modelled
    current (zero).

Inductance and loss shares
    With branch currents ``I`` for 1 A of port current, the port's inductance and resistance
    split over the branches as ``L_m = Re(conj(I_m) (L I)_m)`` and ``R_m = Re(conj(I_m) (R I)_m)``;
    by Tellegen's theorem they sum exactly to ``Im Z_pp / w`` and ``Re Z_pp`` (at ``f = 0`` to the
    DC-limit ``I^T L I``). A branch share may be negative (eddy currents that oppose the loop).

    - Inductance share of a triangle: each edge branch's share is split onto the triangles
      of its halves in proportion to the flux of each half across the edge,
      ``int f_h . n dS = 2 A_h / (3 l)``, i.e. in proportion to the two triangles' areas
      (exact when the vector potential is uniform over the pair); a half inside a terminal
      or via pad does not exist, so the other half takes all.
    - Loss share of a triangle: the exact ohmic loss ``R_s int |K|^2 dS`` of each sheet
      triangle (the integrand is quadratic; the edge-midpoint rule is exact), summed over
      sublayers. Summed over all triangles it equals ``sum_m Re(conj(I_m) (R I)_m)`` of the
      edge branches, and it is never negative.
    - Via barrels (summed per via over its segments) and lumped branches are listed as
      separate items (:class:`ShareItem`).

Bottlenecks (:func:`find_bottlenecks`)
    Triangles are ranked by inductance-share density (H/m^2), smoothed by
    :data:`SMOOTHING_PASSES` passes of area-weighted averaging over each triangle and its
    edge neighbours (to damp the triangle-to-triangle noise of lowest-order currents). The
    smallest set of bulk triangles, taken in that order, that holds :data:`BOTTLENECK_FRACTION`
    of the positive triangle inductance share is grouped into connected regions (triangles
    sharing an interior edge; edges never join two layers). Regions, vias and lumped
    branches (those holding at least :data:`ITEM_MIN_SHARE` of the port's L) are ranked
    together by inductance share.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from copperpath.geometry.physics import quasi_static_frequency
from copperpath.solver.graph.network import BARREL, EDGE, LUMPED

BOTTLENECK_FRACTION = 0.5
"""Fraction of the positive triangle inductance share that the bottleneck triangles hold."""
SMOOTHING_PASSES = 2
"""Neighbour-averaging passes of the share density before ranking triangles."""
ITEM_MIN_SHARE = 0.01
"""Vias and lumped branches holding less than this fraction of the port's L are not listed."""


@dataclass(frozen=True)
class ShareItem:
    """Inductance and loss share of a via (its barrel segments) or a lumped branch.

    Attributes
    ----------
    kind : str
        ``"via"`` or ``"lumped"``.
    name : str
    layer : str
        Layer span of a via (``"L1-L2"``), the terminal layers of a lumped branch.
    x, y : float
        Position in metres (a lumped branch: midway between its two terminals).
    inductance_share : float
        Henry per ampere squared of port current.
    resistance_share : float
        Ohm per ampere squared of port current.
    layers : tuple of str
        The layers it touches (where its marker is drawn).
    length : float
        Metres of current path: the barrel length of a via, 0 for a lumped branch.
    """

    kind: str
    name: str
    layer: str
    x: float
    y: float
    inductance_share: float
    resistance_share: float
    layers: tuple = ()
    length: float = 0.0


@dataclass(frozen=True, eq=False)
class PortMaps:
    """Per-triangle fields of one driven port at one frequency (1 A of port current).

    Attributes
    ----------
    port : str
    port_index : int
    frequency : float
        Hz (0 for DC).
    current_density : ndarray of complex128, shape (M, 2)
        Sheet current density at each triangle's centroid, A/m, summed over sublayers.
    inductance_share : ndarray, shape (M,)
        Henry per triangle.
    resistance_share : ndarray, shape (M,)
        Ohm per triangle (ohmic loss in W per A^2).
    potential : ndarray of complex128, shape (M,)
        Node potential of each triangle in V, minus terminal of the port at 0 V.
    inductance, resistance : float
        The port's own ``L`` (H) and ``R`` (ohm) from the impedance matrix.
    items : tuple of ShareItem
        Vias and lumped branches.
    branch_inductance_share, branch_resistance_share : ndarray, shape (B,)
        Per-branch shares in H and ohm.
    """

    port: str
    port_index: int
    frequency: float
    current_density: np.ndarray
    inductance_share: np.ndarray
    resistance_share: np.ndarray
    potential: np.ndarray
    inductance: float
    resistance: float
    items: tuple
    branch_inductance_share: np.ndarray
    branch_resistance_share: np.ndarray


@dataclass(frozen=True)
class Bottleneck:
    """A place that holds a large part of a port's loop inductance.

    Attributes
    ----------
    port : str
    kind : str
        ``"copper"`` (a region of triangles), ``"via"`` or ``"lumped"``.
    name : str
        Via or lumped name; ``""`` for copper.
    layer : str
    x, y : float
        Metres: for copper the share-weighted centroid moved onto the region's nearest
        triangle (so it lies on copper).
    inductance_share, resistance_share : float
        Fractions of the port's ``L`` and ``R``.
    inductance, resistance : float
        The same in H and ohm.
    area : float
        Copper area of the region in m^2 (0 for vias and lumped branches).
    triangles : ndarray of int64
        Mesh triangles of the region (empty for vias and lumped branches).
    frequency : float
        Hz.
    layers : tuple of str
        The layers it touches (where its marker is drawn).
    path_length : float
        Metres of current path through it: ``int |K| dA`` over the region per ampere of port
        current for copper (the length of a strip that carries the whole current), the barrel
        length of a via, 0 for a lumped branch.
    """

    port: str
    kind: str
    name: str
    layer: str
    x: float
    y: float
    inductance_share: float
    resistance_share: float
    inductance: float
    resistance: float
    area: float
    triangles: np.ndarray
    frequency: float
    layers: tuple = ()
    path_length: float = 0.0

    @property
    def concentration(self) -> float:
        """Inductance share per metre of current path (H/m), the ranking key; ``inf`` for a
        lumped branch (its inductance sits at a point)."""
        return self.inductance / self.path_length if self.path_length > 0 else math.inf

    def as_dict(self, unit_scale=1.0, rank=None):
        """Plain JSON-ready dict, lengths in the case's units (metres divided by ``unit_scale``)."""
        out = {"port": self.port, "layer": self.layer, "x": self.x / unit_scale,
               "y": self.y / unit_scale, "inductance_share": self.inductance_share,
               "resistance_share": self.resistance_share, "kind": self.kind,
               "inductance_h": self.inductance, "resistance_ohm": self.resistance,
               "area": self.area / unit_scale**2, "frequency_hz": self.frequency,
               "layers": list(self.layers),
               "path_length": self.path_length / unit_scale,
               "inductance_per_length_h_per_m": (self.concentration if self.path_length > 0
                                                 else None)}
        if self.name:
            out["name"] = self.name
        if rank is not None:
            out["rank"] = rank
        return out


def _sum_complex(index, values, n):
    """``out[index] += values`` for complex values, shape (n,)."""
    return (np.bincount(index, values.real, minlength=n)
            + 1j * np.bincount(index, values.imag, minlength=n))


def _sheet_linear_field(mesh, network, currents):
    """Coefficients of ``K(r) = alpha r + beta`` on every sheet triangle (A/m per metre, A/m).

    Returns
    -------
    alpha : ndarray of complex128, shape (V,)
    beta : ndarray of complex128, shape (V, 2)
    """
    n_sheets = len(network.sheet_tri)
    area = mesh.areas[network.sheet_tri[network.half_tri]]
    c = currents[network.half_branch] * network.half_sign / (2.0 * area)
    alpha = _sum_complex(network.half_tri, c, n_sheets)
    beta = np.stack([-_sum_complex(network.half_tri, c * network.half_vertex[:, k], n_sheets)
                     for k in (0, 1)], axis=1)
    return alpha, beta


def sheet_current_density(mesh, network, currents):
    """Sheet current density at each mesh triangle's centroid, summed over sublayers.

    Parameters
    ----------
    mesh : copperpath.geometry.mesh.Mesh
    network : copperpath.solver.graph.network.Network
    currents : ndarray of complex, shape (B,)
        Branch currents in A (e.g. ``result.currents[f, p]``).

    Returns
    -------
    ndarray of complex128, shape (M, 2)
        A/m; zero on terminal and via-pad triangles.
    """
    alpha, beta = _sheet_linear_field(mesh, network, np.asarray(currents, complex))
    k = alpha[:, None] * mesh.centroids[network.sheet_tri] + beta
    return np.stack([_sum_complex(network.sheet_tri, k[:, j], mesh.n_triangles) for j in (0, 1)],
                    axis=1)


def triangle_loss(mesh, network, currents):
    """Exact ohmic loss ``R_s int |K|^2 dS`` of each mesh triangle, summed over sublayers.

    Parameters
    ----------
    mesh : copperpath.geometry.mesh.Mesh
    network : copperpath.solver.graph.network.Network
    currents : ndarray of complex, shape (B,)
        Branch currents in A.

    Returns
    -------
    ndarray, shape (M,)
        Watt per the square of the port current (ohm).
    """
    alpha, beta = _sheet_linear_field(mesh, network, np.asarray(currents, complex))
    tri = mesh.triangles[network.sheet_tri]
    p = mesh.points[tri]                                      # (V, 3, 2)
    mids = 0.5 * (p + np.roll(p, -1, axis=1))
    k = alpha[:, None, None] * mids + beta[:, None, :]
    mean_sq = (np.abs(k) ** 2).sum(axis=2).mean(axis=1)      # edge-midpoint rule, exact
    loss = network.sheet_resistance * mesh.areas[network.sheet_tri] * mean_sq
    return np.bincount(network.sheet_tri, loss, minlength=mesh.n_triangles)


def branch_shares(system, currents):
    """Per-branch inductance and loss shares ``Re(conj(I_m) (L I)_m)``, ``Re(conj(I_m) (R I)_m)``.

    Parameters
    ----------
    system : copperpath.solver.solve.system.System
    currents : ndarray of complex, shape (B,)
        Branch currents for 1 A of port current.

    Returns
    -------
    tuple of ndarray, shape (B,)
        Inductance shares in H and resistance shares in ohm; their sums are the port's ``L``
        and ``R``.
    """
    i = np.asarray(currents, complex)
    ell = (np.conj(i) * (system.L @ i)).real
    r = (np.conj(i) * (system.R @ i)).real
    return ell, r


def half_weights(mesh, network):
    """Fraction of its edge branch's share that each RWG half takes (areas of the halves).

    Returns
    -------
    ndarray, shape (H,)
        Weights that sum to one over the halves of each edge branch.
    """
    area = mesh.areas[network.sheet_tri[network.half_tri]]
    total = np.bincount(network.half_branch, area, minlength=network.n_branches)
    return area / total[network.half_branch]


def split_to_triangles(mesh, network, branch_values):
    """Spread per-branch values of the edge branches onto mesh triangles (see module notes).

    Parameters
    ----------
    branch_values : ndarray, shape (B,)

    Returns
    -------
    ndarray, shape (M,)
    """
    w = half_weights(mesh, network) * np.asarray(branch_values, float)[network.half_branch]
    return np.bincount(network.sheet_tri[network.half_tri], w, minlength=mesh.n_triangles)


def share_items(mesh, system, layout, lumped, ell, r):
    """Shares of the via barrels (summed per via) and of the lumped branches.

    Parameters
    ----------
    layout : copperpath.geometry.model.Layout
        For via names and positions.
    lumped : sequence of copperpath.geometry.model.Lumped
    ell, r : ndarray, shape (B,)
        Branch shares from :func:`branch_shares`.

    Returns
    -------
    tuple of ShareItem
    """
    net = system.network
    items = []
    bar = np.flatnonzero(net.branch_kind == BARREL)
    vias = net.barrels["via"][net.branch_item[bar]]
    for v in np.unique(vias):
        rows = bar[vias == v]
        seg = net.branch_item[rows]
        via = layout.vias[v]
        span = f"{net.barrels['upper'][seg.min()]}-{net.barrels['lower'][seg.max()]}"
        bz = net.barrels["z"][seg]
        items.append(ShareItem("via", via.name, span, via.x, via.y,
                               float(ell[rows].sum()), float(r[rows].sum()), tuple(via.connects),
                               length=float((bz[:, 1] - bz[:, 0]).sum())))
    cent = mesh.centroids
    for b in np.flatnonzero(net.branch_kind == LUMPED):
        item = lumped[net.branch_item[b]]
        xy, layers = [], []
        for node in net.branch_nodes[b]:
            tris = np.flatnonzero(net.tri_node == node)
            xy.append(np.average(cent[tris], axis=0, weights=mesh.areas[tris]))
            layers.append(mesh.layer_names[int(net.node_layer[node])])
        x, y = np.mean(xy, axis=0)
        items.append(ShareItem("lumped", item.name, "-".join(dict.fromkeys(layers)), float(x),
                               float(y), float(ell[b]), float(r[b]), tuple(dict.fromkeys(layers))))
    return tuple(items)


def port_maps(mesh, system, result, *, freq_index, port_index, layout=None, lumped=()):
    """All per-triangle fields of one port at one frequency.

    Parameters
    ----------
    mesh : copperpath.geometry.mesh.Mesh
    system : copperpath.solver.solve.system.System
    result : copperpath.solver.solve.result.Result
        Solved with ``keep_currents=True``.
    freq_index, port_index : int
    layout : copperpath.geometry.model.Layout, optional
        Needed to name and place vias (when the network has barrels).
    lumped : sequence of copperpath.geometry.model.Lumped
        Needed to name lumped branches.

    Returns
    -------
    PortMaps
    """
    if result.currents is None:
        raise ValueError("port_maps: the result holds no currents; solve with keep_currents=True")
    i = result.currents[freq_index, port_index]
    net = system.network
    ell, r = branch_shares(system, i)
    edge = net.branch_kind == EDGE
    tri_ell = split_to_triangles(mesh, net, np.where(edge, ell, 0.0))
    tri_r = triangle_loss(mesh, net, i)
    potential = (result.potentials[freq_index, port_index][net.tri_node]
                 if result.potentials is not None else np.full(mesh.n_triangles, np.nan + 0j))
    items = share_items(mesh, system, layout, lumped, ell, r) if (~edge).any() else ()
    return PortMaps(
        port=result.ports[port_index], port_index=port_index,
        frequency=float(result.frequencies[freq_index]),
        current_density=sheet_current_density(mesh, net, i),
        inductance_share=tri_ell, resistance_share=tri_r, potential=potential,
        inductance=float(result.inductance[freq_index, port_index, port_index]),
        resistance=float(result.resistance[freq_index, port_index, port_index]),
        items=items, branch_inductance_share=ell, branch_resistance_share=r)


def quasi_static_limit(mesh, layers=()):
    """Highest frequency for which the quasi-static model holds (common practice).

    ``f_lim = c0 / (10 sqrt(4.5) D)``: the largest dimension ``D`` of the modelled copper (the
    diagonal of the mesh's bounding box, with the stackup height) stays below a tenth of the
    wavelength in FR-4 (``eps_r = 4.5``). Same rule as :func:`copperpath.geometry.case.quasi_static_limit`.

    Parameters
    ----------
    mesh : copperpath.geometry.mesh.Mesh
    layers : sequence of copperpath.geometry.model.Layer
        Stackup, for the height (optional).

    Returns
    -------
    tuple of float
        ``(f_lim, D)`` in Hz and metres.
    """
    if mesh.n_triangles == 0:
        return math.inf, 0.0
    span = np.ptp(mesh.points[np.unique(mesh.triangles)], axis=0)
    dz = (max(la.z_top for la in layers) - min(la.z for la in layers)) if layers else 0.0
    d = float(math.sqrt(span[0] ** 2 + span[1] ** 2 + dz**2))
    return quasi_static_frequency(d), d


def map_frequency_index(frequencies, f_limit):
    """Index of the default map frequency: the highest swept ``f > 0`` with ``f <= f_limit``.

    Where every positive frequency lies above the limit, the lowest positive one; ``None``
    when the sweep holds only DC.

    Examples
    --------
    >>> map_frequency_index([0, 1e3, 1e6, 1e9], 2e8)
    2
    >>> map_frequency_index([0.0], 1e8) is None
    True
    """
    f = np.asarray(frequencies, float)
    pos = np.flatnonzero(f > 0)
    if len(pos) == 0:
        return None
    ok = pos[f[pos] <= f_limit]
    return int(ok[np.argmax(f[ok])]) if len(ok) else int(pos[np.argmin(f[pos])])


def dc_index(frequencies):
    """Index of ``f = 0`` in the sweep, or ``None``."""
    hit = np.flatnonzero(np.asarray(frequencies, float) == 0.0)
    return int(hit[0]) if len(hit) else None


def triangle_adjacency(mesh, mask=None):
    """Symmetric (M x M) adjacency of triangles sharing an interior edge, optionally masked.

    Parameters
    ----------
    mask : ndarray of bool, shape (M,), optional
        Keep only edges whose two triangles are both in the mask.
    """
    a, b = mesh.edge_tris.T
    if mask is not None:
        keep = mask[a] & mask[b]
        a, b = a[keep], b[keep]
    m = mesh.n_triangles
    g = sp.coo_matrix((np.ones(len(a)), (a, b)), shape=(m, m))
    return (g + g.T).tocsr()


def smoothed_density(mesh, share, *, passes=SMOOTHING_PASSES, mask=None):
    """Share per area (per m^2), averaged ``passes`` times over each triangle and its neighbours.

    Each pass replaces the density of a triangle by the area-weighted mean over the triangle and
    its edge neighbours inside ``mask``.
    """
    area = mesh.areas
    adj = triangle_adjacency(mesh, mask) + sp.identity(mesh.n_triangles, format="csr")
    density = share / area
    for _ in range(passes):
        density = (adj @ (density * area)) / (adj @ area)
    return density


def find_bottlenecks(mesh, maps, *, fraction=BOTTLENECK_FRACTION, passes=SMOOTHING_PASSES):
    """Rank the copper regions, vias and lumped branches that hold a port's loop inductance.

    Parameters
    ----------
    mesh : copperpath.geometry.mesh.Mesh
    maps : PortMaps
    fraction : float
        Share of the positive triangle inductance that the selected triangles hold (0-1).
    passes : int
        Smoothing passes of the density before ranking (see module notes).

    Returns
    -------
    list of Bottleneck
        Sorted by inductance share, largest first. Shares are fractions of the port's ``L``
        and ``R``.
    """
    if not 0.0 < fraction <= 1.0:
        raise ValueError(f"find_bottlenecks: fraction must lie in (0, 1], got {fraction!r}")
    share = maps.inductance_share
    bulk = mesh.tri_region < 0
    density = smoothed_density(mesh, share, passes=passes, mask=bulk)
    cand = np.flatnonzero(bulk & (share > 0))
    order = cand[np.argsort(-density[cand], kind="stable")]
    total = share[cand].sum()
    out = []
    if total > 0:
        n_take = int(np.searchsorted(np.cumsum(share[order]), fraction * total)) + 1
        chosen = np.zeros(mesh.n_triangles, bool)
        chosen[order[:n_take]] = True
        _, label = connected_components(triangle_adjacency(mesh, chosen), directed=False)
        regions = [_copper_bottleneck(mesh, maps, np.flatnonzero(chosen & (label == comp)))
                   for comp in np.unique(label[chosen])]
        # Fragments below ITEM_MIN_SHARE are dropped (a few triangles of high concentration
        # are noise, not a bottleneck); the largest region is always kept.
        big = max(regions, key=lambda b: b.inductance)
        out += [b for b in regions
                if b is big or b.inductance >= ITEM_MIN_SHARE * maps.inductance]
    for item in maps.items:
        if item.inductance_share < ITEM_MIN_SHARE * maps.inductance:
            continue
        out.append(Bottleneck(port=maps.port, kind=item.kind, name=item.name, layer=item.layer,
                              x=item.x, y=item.y,
                              inductance_share=_fraction(item.inductance_share, maps.inductance),
                              resistance_share=_fraction(item.resistance_share, maps.resistance),
                              inductance=item.inductance_share, resistance=item.resistance_share,
                              area=0.0, triangles=np.zeros(0, np.int64), frequency=maps.frequency,
                              layers=item.layers, path_length=item.length))
    # Components (lumped branches) are points with no current path to widen: they follow the
    # copper and vias, which a layout change can improve, instead of heading every ranking.
    out.sort(key=lambda b: (b.kind == "lumped", -b.concentration, -b.inductance))
    return out


def _fraction(value, total):
    return float(value / total) if total != 0 else 0.0


def _copper_bottleneck(mesh, maps, tris):
    """A copper region as a Bottleneck, placed on its triangle nearest the weighted centroid."""
    share = maps.inductance_share[tris]
    cent = mesh.centroids[tris]
    weight = np.clip(share, 0.0, None)
    centre = np.average(cent, axis=0, weights=weight if weight.sum() > 0 else None)
    x, y = cent[np.argmin(np.hypot(*(cent - centre).T))]
    ell = float(share.sum())
    r = float(maps.resistance_share[tris].sum())
    layer = mesh.layer_names[int(mesh.tri_layer[tris[0]])]
    return Bottleneck(port=maps.port, kind="copper", name="", layer=layer, layers=(layer,),
                      x=float(x), y=float(y),
                      inductance_share=_fraction(ell, maps.inductance),
                      resistance_share=_fraction(r, maps.resistance), inductance=ell, resistance=r,
                      area=float(mesh.areas[tris].sum()), triangles=tris, frequency=maps.frequency,
                      path_length=path_length(mesh, maps, tris))


def path_length(mesh, maps, tris):
    """Metres of current path through triangles ``tris``: ``int |K| dA`` per ampere of port
    current (|K| at the centroids, summed over sublayers).

    For a strip of length ``l`` that carries the whole port current it is ``l``, however wide
    the strip; for a band that carries a third of the current it is ``l / 3``.
    """
    k = np.sqrt((np.abs(maps.current_density[tris]) ** 2).sum(axis=1))
    return float((k * mesh.areas[tris]).sum())
