"""Everything ``copperpath solve`` writes into its output folder, and the tables it prints."""
from __future__ import annotations

from pathlib import Path

import numpy as np

from solver.circuit import estimates
from solver.exports.csv import write_impedance_csv
from solver.exports.result_json import write_result_json
from solver.exports.spice import write_spice
from solver.exports.touchstone import write_touchstone


def mesh_stats(mesh, system):
    """Mesh and unknown counts for ``result.json``."""
    return {"triangles": int(mesh.n_triangles), "edges": int(len(mesh.edges)),
            "unknowns": int(system.network.n_branches), "nodes": int(system.network.n_nodes),
            "loops": int(system.n_loops)}


def circuit_estimate(case, result):
    """The ``[circuit]`` estimates of a solved case, or ``None`` when the case has none."""
    if case.circuit is None:
        return None
    return estimates(result, case.circuit, source=f"{case.path}: [circuit]")


def write_outputs(case, mesh, system, result, out, *, timing=None):
    """Write ``result.json``, ``impedance.csv``, the Touchstone file and the SPICE subcircuit of
    one solved case into ``out``.

    Returns
    -------
    dict
        The data written to ``result.json``, plus ``"files"`` (names written) and
        ``"spice_fit_error"``.
    """
    out = Path(out)
    out.mkdir(parents=True, exist_ok=True)
    stem = Path(case.path).stem
    n = len(result.ports)
    estimate = circuit_estimate(case, result)
    write_impedance_csv(out / "impedance.csv", result)
    write_touchstone(out / f"{stem}_Z.s{n}p", result)
    write_touchstone(out / f"{stem}_S.s{n}p", result, parameter="S")
    fitted = write_spice(out / f"{stem}.cir", result, name=stem)
    summary = write_result_json(out / "result.json", result, mesh_stats=mesh_stats(mesh, system),
                                circuit=estimate.to_dict() if estimate else None, timing=timing)
    summary["files"] = ["result.json", "impedance.csv", f"{stem}_Z.s{n}p", f"{stem}_S.s{n}p", f"{stem}.cir"]
    summary["spice_fit_error"] = fitted.max_relative_error
    summary["estimate"] = estimate
    return summary


def _si(value, unit):
    """Format a value with an engineering prefix, e.g. ``1.23 nH``."""
    if value is None or not np.isfinite(value):
        return "-"
    for scale, prefix in ((1e-12, "p"), (1e-9, "n"), (1e-6, "u"), (1e-3, "m"), (1.0, ""), (1e3, "k"), (1e6, "M")):
        if abs(value) < scale * 1000:
            return f"{value / scale:.4g} {prefix}{unit}"
    return f"{value:.4g} {unit}"


def format_table(case, result, summary=None):
    """R and L per port and frequency as a text table."""
    lines = [f"{case.title}"]
    r, ell = result.resistance, result.inductance
    for k, name in enumerate(result.ports):
        lines.append(f"port {name}  ({case.ports[k].plus} -> {case.ports[k].minus})")
        lines.append(f"  {'frequency':>12}  {'R':>12}  {'L':>12}")
        for i, f in enumerate(result.frequencies):
            label = "DC" if f == 0 else _si(f, "Hz")
            lines.append(f"  {label:>12}  {_si(r[i, k, k], 'ohm'):>12}  {_si(ell[i, k, k], 'H'):>12}")
    return "\n".join(lines)


def format_inspect(case, info):
    """The summary that ``copperpath inspect`` prints."""
    u = case.unit
    lines = [f"{case.title}"]
    for name, layer in info["layers"].items():
        area = layer["copper_area_m2"] / case.unit_scale**2
        lines.append(f"  layer {name}: copper {area:.4g} {u}^2, {layer['islands']} island(s), "
                     f"{layer['triangles']} triangles")
    lines.append(f"  vias: {info['vias']}   terminals: "
                 f"{', '.join(t['name'] for t in info['terminals']) or '-'}")
    lines.append(f"  ports: {', '.join(p['name'] for p in info['ports']) or '-'}   lumped: "
                 f"{', '.join(x.name for x in case.lumped) or '-'}")
    m = info["mesh"]
    lines.append(f"  mesh: {m['triangles']} triangles, {m['unknowns']} current unknowns, "
                 f"minimum angle {m['min_angle_deg']:.1f} deg")
    lines.append(f"  dense solve needs about {info['dense_memory_bytes'] / 2**20:.1f} MiB")
    return "\n".join(lines)
