"""What a comparison of layout variants shows beyond its table: current and inductance-share maps
side by side, each variant's bottlenecks, what its loop includes, and links to its own report.

A :class:`VariantView` keeps of a solved variant only what the comparison needs (per-triangle
fields of the compared port, ranked bottlenecks, lumped-branch shares and the impedances), so that
the assembled matrices and branch currents of every variant need not stay in memory while the
others are solved.
"""
from __future__ import annotations

import html
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np

from copperpath.solver.analysis import post
from copperpath.geometry.units import format_frequency
from copperpath.solver.output.formatting import engineering, table
from copperpath.solver.output.maps import map_frequencies, rank_bottlenecks, safe_name
from copperpath.solver.output.plot import side_by_side_map

TOP = 3
"""Bottlenecks listed per variant in the comparison report."""


@dataclass(frozen=True, eq=False)
class VariantView:
    """The part of one solved variant that the comparison shows.

    Attributes
    ----------
    case : copperpath.geometry.model.Case
    mesh : copperpath.geometry.mesh.Mesh
    result : copperpath.solver.solve.result.Result
        Impedances only (branch currents and potentials dropped).
    port : str
    frequency : float
        Hz of the maps (the highest swept frequency within the quasi-static limit, else DC).
    current_density : ndarray of complex, shape (M, 2)
        A/m per ampere of port current.
    inductance_density : ndarray, shape (M,)
        Signed inductance share per area, smoothed as the bottleneck finder ranks it, H/m^2.
    bottlenecks : list of dict
        The port's ranked bottlenecks (as in ``result.json``).
    lumped : tuple of (str, float)
        Name and inductance share (H) of each lumped branch of the loop, at the top frequency.
    inductance : float
        The port's L at the top frequency, H.
    """

    case: object
    mesh: object
    result: object
    port: str
    frequency: float
    current_density: np.ndarray
    inductance_density: np.ndarray
    bottlenecks: list
    lumped: tuple
    inductance: float


def variant_view(case, mesh, system, result, port):
    """Extract what the comparison shows of one solved variant.

    Parameters
    ----------
    case, mesh, system, result
        The solved variant (``result`` with currents).
    port : str
        The compared port (checked by the caller to exist).

    Returns
    -------
    VariantView
    """
    k = list(result.ports).index(port)
    dc, fmap, _, _ = map_frequencies(mesh, case, result)
    fi = fmap if fmap is not None else (dc if dc is not None else len(result.frequencies) - 1)
    maps = post.port_maps(mesh, system, result, freq_index=fi, port_index=k, layout=case.layout,
                          lumped=case.lumped)
    density = post.smoothed_density(mesh, maps.inductance_share, mask=mesh.tri_region < 0)
    top = len(result.frequencies) - 1
    at_top = maps if top == fi else post.port_maps(mesh, system, result, freq_index=top,
                                                  port_index=k, layout=case.layout,
                                                  lumped=case.lumped)
    lumped = tuple((it.name, it.inductance_share) for it in at_top.items if it.kind == "lumped")
    ranked = [b for b in rank_bottlenecks(case, mesh, system, result) if b["port"] == port]
    return VariantView(case=case, mesh=mesh, result=replace(result, currents=None, potentials=None),
                       port=port, frequency=float(result.frequencies[fi]),
                       current_density=maps.current_density, inductance_density=density,
                       bottlenecks=ranked, lumped=lumped,
                       inductance=float(result.inductance[top, k, k]))


def _layers_top_down(views):
    """Layer names that any variant has copper on, ordered by elevation (top first)."""
    z = {}
    for v in views:
        for li, name in enumerate(v.mesh.layer_names):
            if (v.mesh.tri_layer == li).any():
                z.setdefault(name, v.case.layout.layer(name).z)
    return sorted(z, key=lambda name: -z[name])


def side_by_side_images(out, views, titles):
    """Current-density and inductance-share maps of the compared port, one PNG per layer and
    kind, one panel per variant that has copper on the layer, one colour scale per picture.

    Returns
    -------
    images : list of (pathlib.Path, str)
        Paths and captions, layers top first, current density before inductance share.
    failed : list of str
        One line per picture that could not be drawn (skipped: a picture never costs the
        comparison).
    """
    images, failed = [], []
    port = views[0].port
    for layer in _layers_top_down(views):
        have = [(t, v) for t, v in zip(titles, views) if layer in v.mesh.layer_names
                and (v.mesh.tri_layer == v.mesh.layer_names.index(layer)).any()]
        head = f"\n{format_frequency(have[0][1].frequency)}" if have else ""
        j_panels = [(f"{t}{head}", v.mesh, v.case,
                     np.sqrt((np.abs(v.current_density) ** 2).sum(axis=1)) * 1e-3, v.current_density)
                    for t, v in have]
        l_panels = [(f"{t}{head}", v.mesh, v.case, v.inductance_density * 1e3, None) for t, v in have]
        pictures = (
            ("J", j_panels, {}, "sheet current density |J| (one colour scale for all variants)",
             "|J| (A/mm per A of port current)",
             f"Layer {layer}: |J| of port {port} in each variant that has copper on it, one shared "
             f"logarithmic colour scale."),
            ("L", l_panels, {"cmap": "berlin", "log": False, "symmetric": True},
             "where the loop inductance lives (signed share, one colour scale for all variants)",
             "signed inductance share (nH/mm$^2$)",
             f"Layer {layer}: inductance share per area of port {port} in each variant, signed "
             f"(negative: opposing currents such as eddy currents in a pour), one shared colour "
             f"scale."))
        for tag, panels, style, words, label, caption in pictures:
            path = Path(out) / "maps" / f"compare_{safe_name(port)}_{safe_name(layer)}_{tag}.png"
            try:
                side_by_side_map(path, panels, layer=layer, title=f"Port {port}, layer {layer}: {words}",
                                 label=label, **style)
            except Exception as err:  # noqa: BLE001 -- a failed picture must not cost the results
                failed.append(f"picture {path.name} skipped: {type(err).__name__}: {err}")
                continue
            images.append((path, caption))
    return images, failed


def loop_contents(view):
    """One sentence on what the variant's loop inductance includes besides the copper."""
    if not view.lumped:
        return f"L = {engineering(view.inductance, 'H', 3)}, all of it copper and vias."
    parts = ", ".join(f"{name} {engineering(ell, 'H', 3)} ({100 * ell / view.inductance:.0f} %)"
                      for name, ell in view.lumped)
    copper = view.inductance - sum(ell for _, ell in view.lumped)
    return (f"L = {engineering(view.inductance, 'H', 3)} includes the lumped branches {parts}; "
            f"the copper and vias hold {engineering(copper, 'H', 3)}.")


def variant_sections(views, titles, unit_of):
    """Report sections per variant: a link to its own report, what its loop includes and its
    first bottlenecks.

    Parameters
    ----------
    views : sequence of VariantView
    titles : sequence of str
        Short titles of the variants.
    unit_of : callable
        ``unit_of(view)`` -> folder of the variant's own outputs, relative to the comparison's.

    Returns
    -------
    list of (str, str, str)
        ``(title, html, markdown)``.
    """
    sections = []
    for title, v in zip(titles, views):
        folder = unit_of(v)
        link = f"{folder}/report.html"
        text = (f"{loop_contents(v)} At {format_frequency(v.result.frequencies[-1])}; per ampere of "
                f"port current.")
        rows = [(str(b.get("rank", n + 1)), b.get("kind", ""), b.get("name") or "-", b["layer"],
                 f"{b['x']:.4g}", f"{b['y']:.4g}", f"{100 * b['inductance_share']:.1f}",
                 engineering(b.get("inductance_h"), "H", 3))
                for n, b in enumerate(v.bottlenecks[:TOP])]
        u = v.case.unit
        h, m = table(["#", "kind", "item", "layer", f"x ({u})", f"y ({u})", "L share (%)", "L"],
                     rows, left=4)
        body = (f'<p>{html.escape(text)} Own report: <a href="{html.escape(link)}">'
                f"{html.escape(link)}</a>.</p>\n{h if rows else ''}")
        md = f"{text} Own report: [{link}]({link}).\n\n{m if rows else ''}"
        sections.append((f"Variant: {title}", body, md))
    return sections
