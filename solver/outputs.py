"""Everything ``copperpath solve`` writes into its output folder, and the tables it prints."""
from __future__ import annotations

from pathlib import Path


from solver.circuit import CAUTION, estimates
from solver.exports.csv import write_impedance_csv
from solver.exports.result_json import write_result_json
from solver.exports.spice import write_spice
from solver.exports.touchstone import write_touchstone
from solver.exports.vtu import write_vtu
from solver.maps import map_frequencies, write_maps
from solver.report import engineering, write_report


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


def write_outputs(case, mesh, system, result, out, *, timing=None, extra_sections=()):
    """Write everything of one solved case into ``out``: ``result.json``, ``impedance.csv``,
    Touchstone Z and S files, the SPICE subcircuit, ``maps/*.png``, ``mesh.vtu`` and the
    report (``report.html``, ``report.md``).

    Returns
    -------
    dict
        The data written to ``result.json``, plus ``"files"`` (names written),
        ``"spice_fit_error"``, ``"estimate"`` (the circuit estimate or ``None``) and
        ``"images"`` (the maps).
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
    images, bottlenecks = write_maps(out, case, mesh, system, result)
    if result.currents is not None:
        dc, fmap, _, _ = map_frequencies(mesh, case, result)
        write_vtu(out / "mesh.vtu", mesh, system, result, case,
                  freq_index=fmap if fmap is not None else dc, port_index=0)
    summary = write_result_json(out / "result.json", result, mesh_stats=mesh_stats(mesh, system),
                                bottlenecks=bottlenecks,
                                circuit=estimate.to_dict() if estimate else None, timing=timing)
    sections = list(extra_sections)
    if estimate is not None:
        sections.append(circuit_section(estimate))
    sections.append(exports_section(stem, n, fitted.max_relative_error))
    write_report(out, case, result, summary, images, bottlenecks=bottlenecks,
                 warnings=case.warnings, extra_sections=sections)
    summary["files"] = ["result.json", "impedance.csv", f"{stem}_Z.s{n}p", f"{stem}_S.s{n}p",
                        f"{stem}.cir", "mesh.vtu", "report.html", "report.md", "maps/"]
    summary["spice_fit_error"] = fitted.max_relative_error
    summary["estimate"] = estimate
    summary["images"] = images
    return summary


_ESTIMATE_ROWS = (
    ("loop_inductance_h", "loop inductance L", "H"),
    ("loop_resistance_ohm", "loop resistance R", "ohm"),
    ("di_dt_a_per_s", "di/dt", "A/s"),
    ("overshoot_v", "overshoot L di/dt", "V"),
    ("peak_switch_node_v", "peak switch-node voltage", "V"),
    ("ringing_hz", "ringing frequency", "Hz"),
    ("characteristic_impedance_ohm", "characteristic impedance", "ohm"),
    ("damping_ratio", "damping ratio", ""),
    ("snubber_r_ohm", "RC snubber R (start)", "ohm"),
    ("snubber_c_f", "RC snubber C (start)", "F"),
)


def _estimate_rows(estimate):
    data = estimate.to_dict()
    rows = []
    for key, label, unit in _ESTIMATE_ROWS:
        value = data.get(key)
        shown = (f"{value:.3g}" if unit == "" else engineering(value, unit)) if value is not None else \
            f"- ({estimate.missing.get(key, 'not given')})"
        rows.append((label, shown, estimate.formulas.get(key, "")))
    return rows


def circuit_section(estimate):
    """The report section of the circuit estimates: ``(title, html, markdown)``."""
    import html as _html

    rows = _estimate_rows(estimate)
    title = f"What the loop means for the converter (port {estimate.port})"
    cells = "".join(f"<tr><td>{_html.escape(a)}</td><td>{_html.escape(b)}</td>"
                    f"<td><code>{_html.escape(c)}</code></td></tr>" for a, b, c in rows)
    notes = "".join(f"<li>{_html.escape(x)}</li>" for x in estimate.notes)
    body = (f"<p>At {engineering(estimate.frequency_hz, 'Hz')} (the highest swept frequency).</p>"
            f"<table><tr><th>quantity</th><th>value</th><th>formula</th></tr>{cells}</table>"
            + (f"<ul>{notes}</ul>" if notes else "")
            + f"<p class='caution'>{_html.escape(CAUTION)}</p>")
    md = [f"At {engineering(estimate.frequency_hz, 'Hz')} (the highest swept frequency).", "",
          "| quantity | value | formula |", "|---|---|---|"]
    md += [f"| {a} | {b} | `{c}` |" for a, b, c in rows]
    md += [""] + [f"- {x}" for x in estimate.notes] + ["", f"> {CAUTION}"]
    return title, body, "\n".join(md)


def exports_section(stem, n_ports, fit_error):
    """The report section that lists the circuit-simulation exports."""
    text = (f"Touchstone: {stem}_Z.s{n_ports}p (Z, normalised to 50 ohm as version 1 requires) and "
            f"{stem}_S.s{n_ports}p (S, 50 ohm reference). SPICE: {stem}.cir, a passive R-L network "
            f"whose port impedances follow Z(f) within {100 * fit_error:.3g} % (maximum relative "
            f"error over the sweep). impedance.csv holds R, L and Z per frequency.")
    return "Exports for circuit simulation", f"<p>{text}</p>", text


def format_estimate(estimate):
    """The circuit estimates as text lines."""
    lines = [f"circuit estimates for port {estimate.port} at {engineering(estimate.frequency_hz, 'Hz')}:"]
    lines += [f"  {a:<28} {b:<16} {c}" for a, b, c in _estimate_rows(estimate)]
    lines += [f"  note: {x}" for x in estimate.notes]
    return "\n".join(lines)


def format_table(case, result, summary=None):
    """R and L per port and frequency as a text table, then the bottlenecks and the
    circuit estimates when ``summary`` (from :func:`write_outputs`) holds them."""
    lines = [f"{case.title}"]
    r, ell = result.resistance, result.inductance
    for k, name in enumerate(result.ports):
        lines.append(f"port {name}  ({case.ports[k].plus} -> {case.ports[k].minus})")
        lines.append(f"  {'frequency':>12}  {'R':>12}  {'L':>12}")
        for i, f in enumerate(result.frequencies):
            label = "DC" if f == 0 else engineering(f, "Hz")
            lines.append(f"  {label:>12}  {engineering(r[i, k, k], 'ohm'):>12}  {engineering(ell[i, k, k], 'H'):>12}")
    if summary and summary.get("bottlenecks"):
        lines.append(f"bottlenecks (share of loop L and R; x, y in {case.unit}):")
        for b in summary["bottlenecks"]:
            where = (f"{b['layer']} at ({b['x']:.3g}, {b['y']:.3g})" if b.get("layer")
                     else b.get("name", b.get("kind", "")))
            lines.append(f"  #{b.get('rank', '?')} port {b['port']}: {where:<28} "
                         f"L {100 * b['inductance_share']:5.1f} %   R {100 * b['resistance_share']:5.1f} %")
    if summary and summary.get("estimate") is not None:
        lines.append(format_estimate(summary["estimate"]))
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
    lines.append(f"  dense solve needs about {info['dense_memory_bytes'] / 2**20:.1f} MiB, fast solve "
                 f"about {info['fast_memory_bytes'] / 2**20:.1f} MiB (method = \"auto\" takes "
                 f"{info['method']})")
    return "\n".join(lines)
