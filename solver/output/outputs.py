"""Everything ``copperpath solve`` writes into its output folder, and the tables it prints."""
from __future__ import annotations

from pathlib import Path


from copperpath.solver.analysis.circuit import CAUTION, estimates
from copperpath.solver.output.exports.csv import write_impedance_csv
from copperpath.solver.output.exports.result_json import write_result_json
from copperpath.solver.output.exports.spice import write_spice
from copperpath.solver.output.exports.touchstone import write_touchstone
from copperpath.solver.output.exports.vtu import write_vtu
from copperpath.solver.solve.finite import require_finite
from copperpath.solver.output.maps import map_frequencies, primary, write_maps
from copperpath.solver.graph.skin import skin_rows, skin_warnings
from copperpath.geometry.units import format_frequency
from copperpath.solver.output.formatting import engineering
from copperpath.solver.output.report import write_report


def mesh_stats(mesh, system):
    """Mesh and unknown counts for ``result.json``."""
    return {"triangles": int(mesh.n_triangles), "edges": int(len(mesh.edges)),
            "unknowns": int(system.network.n_branches), "nodes": int(system.network.n_nodes),
            "loops": int(system.n_loops)}


def _mesh_layers(case, system):
    """The case's layers (the mesh's order) and the sublayers each got."""
    return list(case.layout.layers), list(system.network.layer_sublayers)


def skin_summary(case, system, result):
    """Per layer: sublayers used, the frequency up to which they resolve skin effect and the
    thickness in skin depths at the top frequency (for ``result.json`` and the tables)."""
    layers, n_sub = _mesh_layers(case, system)
    return [{"layer": la.name, "setting": la.sublayers, "sublayers": n, "resolved_up_to_hz": f_res,
             "thickness_in_skin_depths": ratio,
             "resolved": bool(f_res >= float(max(result.frequencies, default=0.0)))}
            for la, n, f_res, ratio in skin_rows(layers, n_sub, result.frequencies)]


def case_skin_warnings(case, system, result):
    """Warnings for layers that do not resolve skin effect where it matters
    (:func:`copperpath.solver.graph.skin.skin_warnings`)."""
    layers, n_sub = _mesh_layers(case, system)
    return skin_warnings(layers, n_sub, result.frequencies, source=str(case.path))


def skin_section(rows, f_top):
    """The report section "Skin effect by layer": ``(title, html, markdown)``."""
    import html as _html

    head = ["layer", "sublayers", "setting", f"t / skin depth at {engineering(f_top, 'Hz')}",
            "resolves skin effect up to", "at the top frequency"]
    table = [(r["layer"], str(r["sublayers"]), str(r["setting"]), f"{r['thickness_in_skin_depths']:.2g}",
              engineering(r["resolved_up_to_hz"], "Hz", 3), "resolved" if r["resolved"] else "NOT resolved")
             for r in rows]
    text = ("Each layer carries a uniform current in each of its sublayers (thin at both faces). "
            "Skin effect counts as resolved while the outer sublayers are no thicker than the skin "
            "depth (resistance within about 6 % of the exact slab solution, Ramo, Whinnery & Van "
            "Duzer); above that frequency R reads low and L high on that layer.")
    cells = "".join("<tr>" + "".join(f"<td>{_html.escape(c)}</td>" for c in row) + "</tr>" for row in table)
    body = (f"<p>{_html.escape(text)}</p><table><tr>" + "".join(f"<th>{_html.escape(h)}</th>" for h in head)
            + f"</tr>{cells}</table>")
    md = [text, "", "| " + " | ".join(head) + " |", "|" + "---|" * len(head)]
    md += ["| " + " | ".join(row) + " |" for row in table]
    return "Skin effect by layer", body, "\n".join(md)


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
        ``"images"`` (the maps) and ``"warnings"`` (pictures that failed and were skipped).

    Raises
    ------
    copperpath.geometry.errors.InputError
        Any R or L is not finite (:func:`copperpath.solver.solve.finite.require_finite`); nothing is written.
    """
    require_finite(result, case.layout.layers, source=str(case.path))
    out = Path(out)
    out.mkdir(parents=True, exist_ok=True)
    stem = Path(case.path).stem
    n = len(result.ports)
    estimate = circuit_estimate(case, result)
    write_impedance_csv(out / "impedance.csv", result)
    write_touchstone(out / f"{stem}_Z.s{n}p", result)
    write_touchstone(out / f"{stem}_S.s{n}p", result, parameter="S")
    fitted = write_spice(out / f"{stem}.cir", result, name=stem)
    images, rankings, picture_warnings = write_maps(out, case, mesh, system, result)
    bottlenecks = primary(rankings)
    if result.currents is not None:
        dc, fmap, _, _ = map_frequencies(mesh, case, result)
        write_vtu(out / "mesh.vtu", mesh, system, result, case,
                  freq_index=fmap if fmap is not None else dc, port_index=0)
    summary = write_result_json(out / "result.json", result, mesh_stats=mesh_stats(mesh, system),
                                bottlenecks=bottlenecks, rankings=rankings,
                                circuit=estimate.to_dict() if estimate else None, timing=timing,
                                length_unit=case.unit)
    skin = skin_summary(case, system, result)
    sections = list(extra_sections)
    sections.append(skin_section(skin, float(max(result.frequencies, default=0.0))))
    sections.append(exports_section(stem, n, fitted.max_relative_error))
    write_report(out, case, result, summary, images, bottlenecks=bottlenecks,
                 warnings=list(picture_warnings) + list(case_skin_warnings(case, system, result)),
                 extra_sections=sections,
                 lead_sections=[circuit_section(estimate)] if estimate is not None else ())
    summary["files"] = ["result.json", "impedance.csv", f"{stem}_Z.s{n}p", f"{stem}_S.s{n}p",
                        f"{stem}.cir", "mesh.vtu", "report.html", "report.md", "maps/"]
    summary["spice_fit_error"] = fitted.max_relative_error
    summary["estimate"] = estimate
    summary["images"] = images
    summary["warnings"] = picture_warnings
    summary["skin"] = skin
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
            label = format_frequency(f)
            lines.append(f"  {label:>12}  {engineering(r[i, k, k], 'ohm'):>12}  {engineering(ell[i, k, k], 'H'):>12}")
    if summary and summary.get("skin"):
        lines.append("skin effect: " + "; ".join(
            f"{r['layer']} {r['sublayers']} sublayer{'s' if r['sublayers'] > 1 else ''} "
            f"(resolved up to {engineering(r['resolved_up_to_hz'], 'Hz', 3)})"
            + ("" if r["resolved"] else " NOT RESOLVED at the top frequency") for r in summary["skin"]))
    for ranking in (summary or {}).get("bottlenecks_by_frequency", ()):
        if not ranking["bottlenecks"]:
            continue
        at = format_frequency(ranking["frequency_hz"])
        lines.append(f"bottlenecks at {at} (the numbers on the {at} maps), most concentrated first "
                     f"(L share per length of current path, share of loop L and R; x, y in {case.unit}):")
        for b in ranking["bottlenecks"]:
            where = f"{b['layer']} at ({b['x']:.3g}, {b['y']:.3g})"
            if b.get("name"):
                where = f"{b['kind']} {b['name']} ({b['layer']})"
            per = b.get("inductance_per_length_h_per_m")
            per = f"{per * 1e6:7.3g} nH/mm" if per is not None else "      point"
            lines.append(f"  #{b.get('rank', '?')} port {b['port']}: {where:<28} {per}   "
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
    terminals = dict.fromkeys(t["name"] for t in info["terminals"])    # one per name, not per layer
    lines.append(f"  vias: {info['vias']}   terminals: {', '.join(terminals) or '-'}")
    lines.append(f"  ports: {', '.join(p['name'] for p in info['ports']) or '-'}   lumped: "
                 f"{', '.join(x.name for x in case.lumped) or '-'}")
    m = info["mesh"]
    lines.append(f"  mesh: {m['triangles']} triangles, {m['unknowns']} current unknowns, "
                 f"minimum angle {m['min_angle_deg']:.1f} deg")
    verdict = "fits" if info["fits"] else "does NOT fit: solve would refuse"
    lines.append(f"  dense solve needs about {info['dense_memory_bytes'] / 2**20:.1f} MiB "
                 f"(process peak {info['process_peak_bytes'] / 2**20:.0f} MiB), fast solve about "
                 f"{info['fast_memory_bytes'] / 2**20:.1f} MiB; [solver] method takes {info['method']}; "
                 f"{info['available_memory_bytes'] / 2**30:.3g} GiB available under "
                 f"{info['available_memory_source']}: {verdict}")
    if "fabrication" in info:
        lines += _format_board(info["fabrication"], case.unit_scale, u)
    return "\n".join(lines)


def _format_board(fab, scale, unit):
    """Lines listing what the fabrication files hold (see :func:`copperpath.solver.output.inspect.board_summary`)."""
    lines = ["fabrication files:", "  stackup (top down):"]
    for la in fab["stackup"]:
        job = f"  (job file: '{la['job_name']}')" if la["job_name"] else ""
        lines.append(f"    {la['name']}: z {la['z_m'] / scale:g} {unit}, "
                     f"thickness {la['thickness_m'] * 1e6:.4g} um{job}")
    if fab["job"] is not None and fab["job"]["board_thickness_m"]:
        lines.append(f"    board thickness {fab['job']['board_thickness_m'] / scale:g} {unit} "
                     f"({fab['job']['file']})")
    layers = [la["name"] for la in fab["stackup"]]
    lines.append(f"  nets ({len(fab['nets'])}), copper {unit}^2 per layer "
                 + ("inside the window" if fab.get("window") else "") + ": "
                 + " / ".join(layers))
    order = sorted(fab["nets"].items(), key=lambda kv: -sum(kv[1].values()))
    for net, area in order:
        cells = " / ".join(f"{area.get(la, 0.0) / scale ** 2:.4g}" for la in layers)
        lines.append(f"    {net or '(no net)'}: {cells}")
    if fab["net_filter"]:
        f = fab["net_filter"]
        lines.append(f"  kept: nets {', '.join(f['nets'])}; others = \"{f['others']}\"")
    lines.append(f"  components ({len(fab['components'])}), pad number = net:")
    for ref, pads in fab["components"].items():
        lines.append(f"    {ref}: " + ", ".join(f"{n} = {p['net'] or '-'}" for n, p in pads.items()))
    return lines
