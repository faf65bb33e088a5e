"""Pictures of the solved copper: per-layer maps and R(f), L(f) plots (PNG).

matplotlib is imported inside the functions and drives an Agg canvas through
:class:`matplotlib.figure.Figure` (no pyplot state, nothing left open). Every file is written
to a temporary name and renamed (:func:`copperpath.solver.output.files.atomic_path`).

Maps are drawn with flat per-triangle colours (``tripcolor``), perceptually uniform colour maps
(:data:`CMAPS`, never a rainbow), axes in the case's length unit, the copper outline (mesh
boundary), terminals and via pads shaded grey (equipotential: no modelled current inside),
via drills as white dots, numbered bottleneck markers and a scale bar. Map values are per ampere
of port current: current density in A/mm, inductance share per area in nH/mm^2, loss share per
area in mohm/mm^2 (mW/mm^2 at 1 A), potential in mV.
"""
from __future__ import annotations

import math
import textwrap

import numpy as np

from copperpath.solver.analysis import post
from copperpath.solver.output.files import atomic_path
from copperpath.geometry.units import format_frequency

CMAPS = {"current": "magma", "inductance": "berlin", "loss": "inferno", "potential": "viridis"}
"""Colour map of each kind of map (matplotlib names; all perceptually uniform; ``berlin`` is a
diverging map for signed inductance shares, zero at its dark centre)."""
LOSS_DECADES = 3.0
"""Range of the logarithmic loss-share scale below its maximum."""
LOG_DECADES = 2.0
"""Range of the logarithmic current-density scale below its maximum."""
ARROWS_ACROSS = 28
"""Direction arrows along the longer side of a layer."""
ARROW_MIN_FRACTION = 0.03
"""Arrows are drawn where |J| exceeds this fraction of the layer's maximum."""
DPI = 130
MIN_RELATIVE_SPAN = 0.02
"""R(f) and L(f) axes span at least this fraction of the largest value (no magnified noise)."""


def _nice_length(span):
    """A 1-2-5 length near a fifth of ``span``."""
    target = span / 5.0
    base = 10.0 ** math.floor(math.log10(target))
    for k in (5, 2, 1):
        if k * base <= target:
            return k * base
    return base


def _layer_view(mesh, layer_index):
    """Triangles of one layer, re-indexed onto the points they use."""
    tris = np.flatnonzero(mesh.tri_layer == layer_index)
    used, local = np.unique(mesh.triangles[tris], return_inverse=True)
    return tris, mesh.points[used], local.reshape(-1, 3)


def _board_extent(mesh):
    """Lower-left and upper-right corner (metres) of the copper of every layer: every map of a
    case shares it, so that layers line up."""
    used = mesh.points[np.unique(mesh.triangles)] if mesh.n_triangles else mesh.points
    return used.min(axis=0), used.max(axis=0)


def _boundary_segments(points, local):
    """Segments of the layer outline: triangle edges used once."""
    e = np.sort(np.concatenate([local[:, [0, 1]], local[:, [1, 2]], local[:, [2, 0]]]), axis=1)
    uniq, counts = np.unique(e, axis=0, return_counts=True)
    return points[uniq[counts == 1]]


def _arrows(ax, points, local, tris, vectors, bulk, scale):
    """Unit direction arrows of ``Re(vectors)`` on a coarse regular grid over the layer."""
    from matplotlib.tri import Triangulation

    tri = Triangulation(points[:, 0] / scale, points[:, 1] / scale, local)
    lo, hi = points.min(axis=0) / scale, points.max(axis=0) / scale
    step = max(hi - lo) / ARROWS_ACROSS
    gx = np.arange(lo[0] + step / 2, hi[0], step)
    gy = np.arange(lo[1] + step / 2, hi[1], step)
    X, Y = np.meshgrid(gx, gy)
    found = tri.get_trifinder()(X.ravel(), Y.ravel())
    ok = found >= 0
    k = found[ok]
    v = vectors[tris[k]].real
    mag = np.hypot(v[:, 0], v[:, 1])
    ref = np.abs(vectors[tris]).max() if len(tris) else 0.0
    keep = bulk[tris[k]] & (mag > ARROW_MIN_FRACTION * max(ref, 1e-300))
    if not keep.any():
        return
    u = v[keep] / mag[keep, None] * (0.75 * step)
    ax.quiver(X.ravel()[ok][keep], Y.ravel()[ok][keep], u[:, 0], u[:, 1], angles="xy",
              scale_units="xy", scale=1.0, pivot="middle", color="white", edgecolor="black",
              linewidth=0.4, width=0.004, headwidth=4.0, headlength=4.5, zorder=4)


def _decorate(ax, mesh, case, layer_index, tris, points, local, markers, shade, frame=True):
    """Outline, terminals and via pads (grey where ``shade``), drills, markers, labels and, with
    ``frame``, the scale bar and the board's extent (side-by-side panels set their own)."""
    from matplotlib.collections import LineCollection, PolyCollection

    scale, unit = case.unit_scale, case.unit
    layer = mesh.layer_names[layer_index]
    region = mesh.tri_region[tris]
    inside = region >= 0
    if inside.any() and shade:
        polys = points[local[inside]] / scale
        ax.add_collection(PolyCollection(polys, facecolors="#d4d4d4", edgecolors="#8c8c8c",
                                         linewidths=0.0, hatch="////", zorder=2))
    if inside.any():
        cent = mesh.centroids[tris] / scale
        for r in np.unique(region[inside]):
            name = mesh.region_names[r]
            if not name.startswith("terminal:"):
                continue
            at = cent[region == r].mean(axis=0)
            ax.text(at[0], at[1], name.split(":", 1)[1], ha="center", va="center", fontsize=8,
                    zorder=6, bbox={"boxstyle": "round,pad=0.2", "fc": "white", "ec": "#555555", "lw": 0.5})
    ax.add_collection(LineCollection(_boundary_segments(points, local) / scale, colors="black",
                                     linewidths=0.7, zorder=3))
    for via in case.layout.vias:
        if layer in (via.connects or via.span):
            ax.add_patch(_circle(via.x / scale, via.y / scale, 0.5 * via.drill / scale))
    for n, x, y, layers in markers:
        if layer in layers:
            ax.text(x / scale, y / scale, str(n), ha="center", va="center", fontsize=9,
                    fontweight="bold", color="black", zorder=7,
                    bbox={"boxstyle": "circle,pad=0.25", "fc": "#ffffffdd", "ec": "#0066cc", "lw": 1.5})
    for other in range(len(mesh.layer_names)):             # the other layers, for lining up
        if other == layer_index or not (mesh.tri_layer == other).any():
            continue
        _, opts, olocal = _layer_view(mesh, other)
        ax.add_collection(LineCollection(_boundary_segments(opts, olocal) / scale, colors="#9a9a9a",
                                         linewidths=0.5, linestyles=(0, (3, 2)), zorder=0.5))
    ax.set_xlabel(f"x ({unit})")
    ax.set_ylabel(f"y ({unit})")
    ax.set_aspect("equal")
    if not frame:
        return
    lo, hi = (c / scale for c in _board_extent(mesh))
    length = _nice_length(max(hi - lo))
    pad = 0.04 * max(hi - lo)
    band = 0.08 * max(hi - lo)                             # below the copper: the scale bar
    x1, y0 = hi[0], lo[1] - pad - 0.55 * band
    ax.plot([x1 - length, x1], [y0, y0], color="black", lw=2.0, solid_capstyle="butt", zorder=6)
    ax.text(x1 - 0.5 * length, y0 + 0.12 * band, f"{length:g} {unit}", ha="center", va="bottom",
            fontsize=8, zorder=6)
    ax.text(lo[0], y0 + 0.12 * band, "dashed grey: copper outline of the other layers",
            ha="left", va="bottom", fontsize=7, color="#666666", zorder=6)
    ax.set_xlim(lo[0] - pad, hi[0] + pad)
    ax.set_ylim(lo[1] - pad - band, hi[1] + pad)


def _circle(x, y, r):
    from matplotlib.patches import Circle

    return Circle((x, y), r, facecolor="white", edgecolor="black", linewidth=0.6, zorder=5)


def _figure(mesh):
    """A figure sized to the board's aspect ratio (the same for every layer of a case)."""
    from matplotlib.figure import Figure

    lo, hi = _board_extent(mesh)
    span = hi - lo
    aspect = float(np.clip(span[1] / max(span[0], 1e-300), 0.12, 1.5))
    return Figure(figsize=(8.0, 1.6 + 6.4 * aspect))


def layer_map(path, mesh, case, values, *, layer_index, title, label, cmap, log=False,
              mask_regions=True, vectors=None, markers=(), note=None, symmetric=False,
              decades=LOG_DECADES):
    """Draw one per-triangle quantity on one layer and save it as a PNG.

    Parameters
    ----------
    path : str or os.PathLike
        PNG file to write (atomically).
    mesh : copperpath.geometry.mesh.Mesh
    case : copperpath.geometry.model.Case
        For the unit, the vias and the layer names.
    values : ndarray, shape (M,)
        Display values per mesh triangle (already in display units).
    layer_index : int
    title, label : str
        Figure title and colour-bar label.
    cmap : str
        matplotlib colour map name.
    log : bool
        Logarithmic colour scale over ``decades`` below the maximum.
    mask_regions : bool
        Shade terminal and via-pad triangles grey instead of colouring them.
    vectors : ndarray of complex, shape (M, 2), optional
        Draw the direction of ``Re(vectors)`` as arrows.
    markers : sequence of (int, float, float, tuple of str)
        ``(number, x, y, layers)``, x and y in metres (:func:`copperpath.solver.output.maps.markers`):
        the number is drawn at (x, y) on each of its layers.
    note : str, optional
        A line of small text under the axes.
    symmetric : bool
        A colour scale symmetric about zero (for signed values on a diverging map).
    decades : float
        Range of a logarithmic scale below its maximum.

    Returns
    -------
    pathlib.Path
    """
    from matplotlib.colors import LogNorm, Normalize

    tris, points, local = _layer_view(mesh, layer_index)
    scale = case.unit_scale
    vals = np.asarray(values, float)[tris]
    bulk = mesh.tri_region < 0
    show = bulk[tris] if mask_regions else np.ones(len(tris), bool)
    shown = vals[show]
    top = float(np.nanmax(shown)) if shown.size else 0.0
    if symmetric:
        big = float(np.nanmax(np.abs(shown))) if shown.size else 0.0
        norm = Normalize(vmin=-big if big > 0 else -1.0, vmax=big if big > 0 else 1.0)
    elif log and top > 0:
        norm = LogNorm(vmin=top * 10.0**-decades, vmax=top)
        vals = np.clip(vals, norm.vmin, None)
    else:
        low = float(np.nanmin(shown)) if shown.size else 0.0
        norm = Normalize(vmin=min(low, 0.0) if not log else 0.0, vmax=top if top > low else low + 1.0)
    fig = _figure(mesh)
    ax = fig.add_subplot()
    coll = ax.tripcolor(points[:, 0] / scale, points[:, 1] / scale, local[show],
                        facecolors=vals[show], cmap=cmap, norm=norm, edgecolors="none", zorder=1)
    fig.colorbar(coll, cax=ax.inset_axes([1.02, 0.0, 0.025, 1.0]), label=label)
    if vectors is not None:
        _arrows(ax, points, local, tris, np.asarray(vectors), bulk, scale)
    _decorate(ax, mesh, case, layer_index, tris, points, local, markers, mask_regions)
    ax.set_title(title, fontsize=10)
    if note:
        note = "\n".join(textwrap.wrap(note, 115))
        ax.annotate(note, xy=(0.0, 0.0), xycoords=("axes fraction", ax.xaxis.label), xytext=(0.0, -4.0),
                    textcoords="offset points", ha="left", va="top", fontsize=7.5,
                    color="#444444", annotation_clip=False)
    with atomic_path(path) as tmp:
        fig.savefig(tmp, dpi=DPI, format="png", bbox_inches="tight", pad_inches=0.15)
    return path


def _head(maps, layer):
    return f"Port {maps.port}, layer {layer}, {format_frequency(maps.frequency)}"


def current_density_map(path, mesh, case, maps, *, layer_index, markers=(), log=True):
    """|J| (A/mm per ampere of port current) with direction arrows; see :func:`layer_map`."""
    layer = mesh.layer_names[layer_index]
    mag = np.sqrt((np.abs(maps.current_density) ** 2).sum(axis=1)) * 1e-3
    scale_word = "log scale" if log else "linear scale"
    on = mag[(mesh.tri_layer == layer_index) & (mesh.tri_region < 0)]
    peak = float(on.max()) if on.size else 0.0
    span = (f"Colour scale: {LOG_DECADES:g} decades below this map's maximum, {peak:.3g} A/mm "
            f"(each frequency has its own maximum: read values on the colour bar). " if log else "")
    return layer_map(path, mesh, case, mag, layer_index=layer_index, log=log,
                     title=f"{_head(maps, layer)}: sheet current density |J| in A/mm per A ({scale_word})",
                     label="|J| (A/mm per A of port current)", cmap=CMAPS["current"],
                     vectors=maps.current_density, markers=markers,
                     note=span + "Arrows: current direction (in phase with the port current). "
                          "Grey hatched: terminals and via pads (equipotential). "
                          "Numbers: bottlenecks.")


def _signed_note(share):
    """What the signed shares of a layer add up to, in nH."""
    pos, neg = share[share > 0].sum() * 1e9, -share[share < 0].sum() * 1e9
    return (f"Signed: positive where the current adds to the loop inductance ({pos:.4g} nH on this "
            f"layer), negative where opposing currents such as eddy currents in a pour cancel part "
            f"of it ({neg:.4g} nH). ")


def inductance_share_map(path, mesh, case, maps, *, layer_index, markers=()):
    """Inductance share per area (nH/mm^2 per A^2 of port current); see :func:`layer_map`."""
    layer = mesh.layer_names[layer_index]
    on_layer = maps.inductance_share[mesh.tri_layer == layer_index].sum()
    note = (_signed_note(maps.inductance_share[mesh.tri_layer == layer_index])
            + f"This layer holds {on_layer * 1e9:.4g} nH net of the port's "
            f"{maps.inductance * 1e9:.4g} nH. Shown smoothed over neighbouring triangles. "
            "Numbers: bottlenecks.")
    # Per-edge energy shares scatter from triangle to triangle; show them smoothed as the
    # bottleneck finder ranks them (post.smoothed_density), signed on a diverging scale whose
    # ends sit at the 99.5th percentile of |share| so that one hot triangle does not flatten the rest.
    bulk = mesh.tri_region < 0
    shown = post.smoothed_density(mesh, maps.inductance_share, mask=bulk) * 1e3
    on = np.abs(shown[(mesh.tri_layer == layer_index) & bulk])
    top = float(np.percentile(on, 99.5)) if on.size else 0.0
    return layer_map(path, mesh, case, np.clip(shown, -top, top), layer_index=layer_index,
                     title=f"{_head(maps, layer)}: inductance share in nH/mm$^2$ (where the loop L lives)",
                     label="signed inductance share (nH/mm$^2$)", cmap=CMAPS["inductance"],
                     markers=markers, note=note, symmetric=True)


def loss_share_map(path, mesh, case, maps, *, layer_index, markers=()):
    """Ohmic loss per area (mohm/mm^2 = mW/mm^2 at 1 A); see :func:`layer_map`."""
    layer = mesh.layer_names[layer_index]
    density = maps.resistance_share / mesh.areas * 1e-3         # ohm/m^2 -> mohm/mm^2
    on_layer = maps.resistance_share[mesh.tri_layer == layer_index].sum()
    note = (f"This layer holds {on_layer * 1e3:.4g} mohm of the port's "
            f"{maps.resistance * 1e3:.4g} mohm (mW per A^2 of port current). Log scale over "
            f"{LOSS_DECADES:g} decades below the maximum.")
    return layer_map(path, mesh, case, density, layer_index=layer_index, log=True,
                     decades=LOSS_DECADES,
                     title=f"{_head(maps, layer)}: ohmic loss share in m$\\Omega$/mm$^2$",
                     label="loss share (m$\\Omega$/mm$^2$ = mW/mm$^2$ at 1 A)", cmap=CMAPS["loss"],
                     markers=markers, note=note)


def ir_drop_map(path, mesh, case, maps, *, layer_index):
    """Potential (mV per ampere of port current, minus terminal at 0); see :func:`layer_map`."""
    layer = mesh.layer_names[layer_index]
    mv = maps.potential.real * 1e3
    return layer_map(path, mesh, case, mv, layer_index=layer_index, mask_regions=False,
                     title=f"{_head(maps, layer)}: IR drop in mV per A of port current",
                     label="potential (mV per A of port current)", cmap=CMAPS["potential"],
                     note=f"Minus terminal of port {maps.port} at 0 mV; the plus terminal is at "
                          f"{maps.resistance * 1e3:.4g} mV (R x 1 A).")


def _min_span(ax, y, fraction):
    """Widen the y-limits to at least ``fraction`` of ``max |y|`` about the data's middle."""
    y = np.asarray(y, float)
    y = y[np.isfinite(y)]
    if not y.size:
        return
    lo, hi = ax.get_ylim()
    need = fraction * np.abs(y).max()
    if hi - lo < need:
        mid = 0.5 * (y.min() + y.max())
        ax.set_ylim(mid - 0.5 * need, mid + 0.5 * need)


def impedance_plot(path, result, port_index, *, f_limit=None):
    """R(f) in mohm and L(f) in nH of one port, log frequency axis, DC values dashed.

    Parameters
    ----------
    path : str or os.PathLike
    result : copperpath.solver.solve.result.Result
    port_index : int
    f_limit : float, optional
        Quasi-static limit in Hz, drawn as a vertical line where it falls in the plot.

    Returns
    -------
    pathlib.Path
    """
    from matplotlib.figure import Figure

    f = result.frequencies
    k = port_index
    series = ((result.resistance[:, k, k] * 1e3, "R (m$\\Omega$)", "#1b4f72"),
              (result.inductance[:, k, k] * 1e9, "L (nH)", "#7b241c"))
    fig = Figure(figsize=(7.0, 5.6), layout="constrained")
    axes = fig.subplots(2, 1, sharex=True)
    pos = f > 0
    for ax, (y, label, colour) in zip(axes, series):
        if pos.any():
            ax.semilogx(f[pos], y[pos], "o-", color=colour, ms=4, lw=1.4, label="swept")
        for i in np.flatnonzero(~pos):
            ax.axhline(y[i], color=colour, ls="--", lw=1.0, label=f"DC: {y[i]:.4g}")
        if f_limit is not None and pos.any() and f[pos].min() < f_limit < 10 * f[pos].max():
            ax.axvline(f_limit, color="#777777", ls=":", lw=1.0, label="quasi-static limit")
        if not pos.any():
            ax.set_xscale("log")
            ax.set_xlim(1.0, 1e9)
        ax.set_ylabel(label)
        ax.ticklabel_format(axis="y", style="plain", useOffset=False)
        _min_span(ax, y, MIN_RELATIVE_SPAN)
        ax.grid(True, which="both", color="#dddddd", lw=0.5)
        ax.legend(fontsize=8, loc="best")
    axes[-1].set_xlabel("frequency (Hz)")
    axes[0].set_title(f"Port {result.ports[k]}: resistance and inductance", fontsize=10)
    with atomic_path(path) as tmp:
        fig.savefig(tmp, dpi=DPI, format="png")
    return path


def side_by_side_map(path, panels, *, layer, title, label, cmap="magma", log=True, symmetric=False):
    """One per-triangle quantity of several cases on one layer, side by side, with one shared
    colour scale (for comparing layout variants).

    Parameters
    ----------
    path : str or os.PathLike
        PNG file to write (atomically).
    panels : sequence of tuple
        ``(panel_title, mesh, case, values, vectors)`` per case; ``values`` (M,) in display
        units, ``vectors`` (M, 2) complex or ``None``.
    layer : str
        Layer name drawn in every panel (a case without it shows an empty panel).
    title, label : str
        Figure title and colour-bar label.
    cmap : str
    log : bool
        Logarithmic scale over :data:`LOG_DECADES` below the largest value of all panels.
    symmetric : bool
        A linear scale symmetric about zero (signed values on a diverging map).

    Returns
    -------
    pathlib.Path
    """
    from matplotlib.colors import LogNorm, Normalize
    from matplotlib.figure import Figure

    views = []
    for panel_title, mesh, case, values, vectors in panels:
        index = mesh.layer_names.index(layer) if layer in mesh.layer_names else -1
        if not (mesh.tri_layer == index).any():
            views.append(None)                 # this case has no copper on the layer
            continue
        tris, points, local = _layer_view(mesh, index)
        show = mesh.tri_region[tris] < 0
        views.append((panel_title, mesh, case, index, tris, points, local, show,
                      np.asarray(values, float)[tris], vectors))
    shown = [v[8][v[7]] for v in views if v is not None and v[7].any()]
    top = max((float(np.nanmax(s)) for s in shown), default=1.0)
    if symmetric:      # ends at the 99.5th percentile of |value| over all panels
        big = max((float(np.percentile(np.abs(s), 99.5)) for s in shown if s.size), default=1.0)
        big = big if big > 0 else 1.0
        norm = Normalize(vmin=-big, vmax=big)
        views = [v if v is None else v[:8] + (np.clip(v[8], -big, big),) + v[9:] for v in views]
    else:
        norm = (LogNorm(vmin=top * 10.0**-LOG_DECADES, vmax=top) if log and top > 0
                else Normalize(vmin=0.0, vmax=top))
    boxes = [np.concatenate(_board_extent(v[1])) / v[2].unit_scale for v in views if v is not None]
    lo = np.min([b[:2] for b in boxes], axis=0)
    hi = np.max([b[2:] for b in boxes], axis=0)
    pad = 0.04 * (hi - lo).max()
    fig = Figure(figsize=(5.0 * len(panels) + 1.0, 5.2))
    axes = fig.subplots(1, len(panels), squeeze=False, sharex=True, sharey=True)[0]
    coll = None
    for ax, view, panel in zip(axes, views, panels):
        ax.set_xlim(lo[0] - pad, hi[0] + pad)
        ax.set_ylim(lo[1] - pad, hi[1] + pad)
        ax.set_aspect("equal")
        if view is None:
            ax.set_title(panel[0], fontsize=9)
            ax.text(0.5, 0.5, f"no copper on {layer}", transform=ax.transAxes, ha="center",
                    va="center", color="#666666")
            continue
        panel_title, mesh, case, index, tris, points, local, show, vals, vectors = view
        scale = case.unit_scale
        vals = np.clip(vals, norm.vmin, None) if log else vals
        coll = ax.tripcolor(points[:, 0] / scale, points[:, 1] / scale, local[show],
                            facecolors=vals[show], cmap=cmap, norm=norm, edgecolors="none", zorder=1)
        if vectors is not None:
            _arrows(ax, points, local, tris, np.asarray(vectors), mesh.tri_region < 0, scale)
        _decorate(ax, mesh, case, index, tris, points, local, (), True, frame=False)
        ax.set_xlim(lo[0] - pad, hi[0] + pad)          # one extent for every panel
        ax.set_ylim(lo[1] - pad, hi[1] + pad)
        ax.set_title(panel_title, fontsize=9)
    if coll is not None:
        fig.colorbar(coll, ax=list(axes), label=label, fraction=0.02, pad=0.02)
    fig.suptitle(title, fontsize=11)
    with atomic_path(path) as tmp:
        fig.savefig(tmp, dpi=DPI, format="png", bbox_inches="tight", pad_inches=0.15)
    return path
