"""All pictures of a solved case (``OUT/maps/*.png``) and the ranked bottlenecks.

:func:`write_maps` is the one call the command line makes. Per port it writes

- ``<port>_RL.png``: R(f) and L(f);
- per layer, at DC and at the map frequency (see below): ``<port>_<layer>_J_<f>.png`` (current
  density), ``<port>_<layer>_L_<f>.png`` (inductance share), ``<port>_<layer>_R_<f>.png``
  (loss share); at DC also ``<port>_<layer>_V_DC.png`` (IR drop).

``<f>`` is ``DC`` or the frequency such as ``1MHz``. The map frequency is the highest swept
frequency within the quasi-static limit ``c0 / (10 sqrt(4.5) D)``, ``D`` the largest dimension
of the modelled copper (:func:`copperpath.solver.analysis.post.quasi_static_limit`); where every swept frequency
lies above it, the lowest one. Bottlenecks are found at the map frequency (at DC when the
sweep holds DC only) and, separately, at DC: one ranking per reported frequency, and the maps
of that frequency number their markers from it.
"""
from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

from copperpath.solver.output import plot
from copperpath.solver.analysis import post

TOP_BOTTLENECKS = 5
"""Bottlenecks per port returned for ``result.json`` and the report."""


@dataclass(frozen=True)
class MapImage:
    """One written picture.

    Attributes
    ----------
    path : pathlib.Path
    caption : str
    port : str
    layer : str
        ``""`` for R(f)/L(f) plots.
    kind : str
        ``"rl"``, ``"current"``, ``"inductance"``, ``"loss"`` or ``"potential"``.
    frequency : float or None
        Hz; ``None`` for R(f)/L(f) plots.
    """

    path: Path
    caption: str
    port: str
    layer: str
    kind: str
    frequency: float | None


def safe_name(text):
    """A file-name-safe form of a port or layer name.

    Examples
    --------
    >>> safe_name("hot loop/L1")
    'hot_loop_L1'
    """
    return re.sub(r"[^A-Za-z0-9_.+-]+", "_", str(text)).strip("_") or "_"


def map_frequencies(mesh, case, result):
    """Sweep indices to draw: ``(dc_index, map_index)``, either ``None`` when absent.

    Returns
    -------
    tuple
        ``(dc_index, map_index, f_limit_hz, largest_dimension_m)``.
    """
    f_lim, d = post.quasi_static_limit(mesh, case.layout.layers)
    return post.dc_index(result.frequencies), post.map_frequency_index(result.frequencies, f_lim), f_lim, d


_KINDS = (
    ("current", "J", plot.current_density_map, "sheet current density |J|"),
    ("inductance", "L", plot.inductance_share_map, "inductance share per area"),
    ("loss", "R", plot.loss_share_map, "ohmic loss share per area"),
)


def _draw(draw, path, *args, **kwargs):
    """Call ``draw(path, ...)``; return ``None``, or a warning line when the picture failed.

    A picture is never worth the numbers: any failure of the plotting library is turned into
    one warning and the picture is skipped (its temporary file is removed by
    :func:`copperpath.solver.output.files.atomic_path`)."""
    try:
        draw(path, *args, **kwargs)
    except Exception as err:  # noqa: BLE001 -- a failed picture must not cost the results
        return f"picture {path.name} skipped: {type(err).__name__}: {err}"
    return None


def free_copper_layers(mesh):
    """Indices of the layers that hold bulk copper (triangles outside terminals and via pads).

    A layer whose copper is all terminal or pad carries no modelled sheet current and has no
    map."""
    bulk = mesh.tri_region < 0
    return [li for li in range(len(mesh.layer_names)) if (bulk & (mesh.tri_layer == li)).any()]


def reported_frequencies(mesh, case, result):
    """Sweep indices that the maps, the report and the command line show: DC and the map
    frequency (either absent when not swept), ascending and without repeats."""
    dc, fmap, _, _ = map_frequencies(mesh, case, result)
    return list(dict.fromkeys(i for i in (dc, fmap) if i is not None))


def _ranking(case, mesh, system, result, fi, k):
    """The maps of port ``k`` at sweep index ``fi`` and its ranked bottlenecks (JSON-ready)."""
    maps = post.port_maps(mesh, system, result, freq_index=fi, port_index=k,
                          layout=case.layout, lumped=case.lumped)
    found = post.find_bottlenecks(mesh, maps)[:TOP_BOTTLENECKS]
    return maps, [b.as_dict(case.unit_scale, rank=n + 1) for n, b in enumerate(found)]


def markers(ranked, unit_scale):
    """The numbered map markers of a ranking: ``(rank, x, y, layers)``, x and y in metres.

    Taken from the very dicts of the table (``result.json``, the report, the command line), so
    that marker "3" is entry #3 of the ranking at that frequency."""
    return tuple((b["rank"], b["x"] * unit_scale, b["y"] * unit_scale, tuple(b["layers"]))
                 for b in ranked)


def primary(rankings):
    """The bottlenecks at the map frequency (else DC) from :func:`write_maps`'s rankings."""
    return list(rankings[-1]["bottlenecks"]) if rankings else []


def write_maps(out_dir, case, mesh, system, result):
    """Write every map and R(f)/L(f) plot into ``out_dir/maps`` and rank the bottlenecks.

    Parameters
    ----------
    out_dir : str or os.PathLike
    case : copperpath.geometry.model.Case
    mesh : copperpath.geometry.mesh.Mesh
    system : copperpath.solver.solve.system.System
    result : copperpath.solver.solve.result.Result
        Solved with ``keep_currents=True`` (without currents only the R(f)/L(f) plots are drawn).

    Returns
    -------
    images : list of MapImage
    rankings : list of dict
        One ranking per reported frequency (:func:`reported_frequencies`, ascending):
        ``{"frequency_hz": f, "bottlenecks": [...]}``, the top :data:`TOP_BOTTLENECKS` of each
        port, JSON-ready (lengths in the case's units, shares as fractions), with ``rank``
        (1 = first, see :func:`copperpath.solver.analysis.post.find_bottlenecks`). The maps at
        that frequency number their markers from the same list. :func:`primary` gives the
        map frequency's list.
    warnings : list of str
        One line per picture that failed and was skipped.
    """
    folder = Path(out_dir) / "maps"
    dc, fmap, f_lim, d = map_frequencies(mesh, case, result)
    images, warnings = [], []
    shown = reported_frequencies(mesh, case, result) if result.currents is not None else []
    rankings = [{"frequency_hz": float(result.frequencies[fi]), "bottlenecks": []} for fi in shown]
    for k, port in enumerate(result.ports):
        path = folder / f"{safe_name(port)}_RL.png"
        failed = _draw(plot.impedance_plot, path, result, k, f_limit=f_lim)
        if failed:
            warnings.append(failed)
        else:
            images.append(MapImage(path, f"Port {port}: R(f) and L(f); dashed lines: DC values.",
                                   port, "", "rl", None))
        for fi, ranking in zip(shown, rankings):
            maps, ranked = _ranking(case, mesh, system, result, fi, k)
            ranking["bottlenecks"] += ranked
            images += _port_maps(folder, case, mesh, maps, markers(ranked, case.unit_scale),
                                 fi == dc, f_lim, d, warnings)
    return images, rankings, warnings


def rank_bottlenecks(case, mesh, system, result):
    """The ranked bottlenecks of every port at the map frequency (else DC), as
    :func:`primary` of :func:`write_maps` gives them, without drawing.

    Returns
    -------
    list of dict
        The top :data:`TOP_BOTTLENECKS` of each port, JSON-ready.
    """
    if result.currents is None:
        return []
    shown = reported_frequencies(mesh, case, result)
    if not shown:
        return []
    return [b for k in range(len(result.ports))
            for b in _ranking(case, mesh, system, result, shown[-1], k)[1]]


def _port_maps(folder, case, mesh, maps, found, is_dc, f_lim, d, warnings):
    """The maps of one port at one frequency, every layer with free copper, ``found`` the
    markers (:func:`markers`); a failed picture adds a line to ``warnings``."""
    label = plot.format_frequency(maps.frequency, sep="")
    why = ("" if is_dc else f" (highest swept frequency within the quasi-static limit "
                            f"{plot.format_frequency(f_lim)} for D = {d / case.unit_scale:.3g} {case.unit})")
    out = []
    for li in free_copper_layers(mesh):
        layer = mesh.layer_names[li]
        stem = f"{safe_name(maps.port)}_{safe_name(layer)}"
        for kind, tag, draw, words in _KINDS:
            path = folder / f"{stem}_{tag}_{label}.png"
            failed = _draw(draw, path, mesh, case, maps, layer_index=li, markers=found)
            if failed:
                warnings.append(failed)
                continue
            out.append(MapImage(path, f"Port {maps.port}, layer {layer}, "
                                      f"{plot.format_frequency(maps.frequency)}{why}: {words}.",
                                maps.port, layer, kind, maps.frequency))
        if is_dc:
            path = folder / f"{stem}_V_DC.png"
            failed = _draw(plot.ir_drop_map, path, mesh, case, maps, layer_index=li)
            if failed:
                warnings.append(failed)
                continue
            out.append(MapImage(path, f"Port {maps.port}, layer {layer}, DC: IR drop "
                                      "(potential per ampere of port current).",
                                maps.port, layer, "potential", 0.0))
    return out
