"""``report.html`` (self-contained) and ``report.md`` of a solved case.

The HTML embeds every picture as a base64 data URI and carries its own CSS: it opens from a
mail attachment or an archive with no network and no JavaScript. The Markdown version refers to
the pictures by relative path (``maps/...``). Both are written atomically.

Other stages add sections without editing this module: ``extra_sections`` is a list of
``(title, html, markdown)`` placed after the bottlenecks and before the warnings (the variant
comparison and the circuit estimates use it).
"""
from __future__ import annotations

import base64
import html
import os
from pathlib import Path


from copperpath.solver.output.files import write_text
from copperpath.geometry.units import format_frequency
from copperpath.solver.output.formatting import engineering, table

CAUTION = (
    "copperpath estimates the resistance and inductance of copper from a quasi-static field "
    "model. Its results are no substitute for measurement of the built board. It does not check "
    "safety spacing: creepage, clearance and insulation of mains-connected or high-voltage "
    "converters must follow the applicable standards (e.g. IEC 62368-1, IPC-2221) and local "
    "codes. The design remains the responsibility of a qualified engineer."
)
"""The caution every report carries (DESIGN s.8)."""

_CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif;
 color:#222;background:#fafafa;margin:0;line-height:1.45}
main{max-width:1100px;margin:0 auto;padding:24px 28px 48px;background:#fff}
h1{font-size:1.6em;margin:0 0 4px}h2{font-size:1.25em;border-bottom:1px solid #ddd;
 padding-bottom:4px;margin-top:2em}h3{font-size:1.05em;margin-top:1.5em}
.sub{color:#666;margin:0 0 16px}
table{border-collapse:collapse;margin:8px 0 16px;font-size:.92em}
th,td{border:1px solid #d6d6d6;padding:4px 10px;text-align:right}
th{background:#f0f0f0;font-weight:600}td.l,th.l{text-align:left}
figure{margin:12px 0 24px}figure img{max-width:100%;border:1px solid #e2e2e2}
.grid{display:grid;grid-template-columns:repeat(auto-fill,minmax(480px,1fr));gap:0 18px}
.grid figure{margin:8px 0 16px}
nav.toc{background:#f6f6f6;border:1px solid #e2e2e2;padding:6px 18px;margin:12px 0}
nav.toc ol{margin:6px 0;padding-left:20px}
.answer td,.answer th{font-size:1.02em}
figcaption{color:#555;font-size:.88em;margin-top:4px}
.caution{border-left:4px solid #8a6d3b;background:#f7f3ea;padding:10px 14px;margin:16px 0}
.warn{border-left:4px solid #a94442;background:#f8eeee;padding:8px 14px}
code{font-family:ui-monospace,Menlo,Consolas,monospace;font-size:.92em}
"""


def _esc(text):
    return html.escape(str(text), quote=True)


def _case_tables(case, summary):
    """Stackup, items and mesh size."""
    u = case.unit
    s = case.unit_scale
    rows = [(la.name, f"{la.z / s:.4g}", f"{la.thickness * 1e6:.3g}", f"{la.conductivity:.4g}",
             str(la.sublayers)) for la in case.layout.layers]
    parts = [table(["layer", f"z ({u})", "thickness (um)", "conductivity (S/m)", "sublayers"], rows)]
    items = [("vias", str(len(case.layout.vias))),
             ("terminals", ", ".join(dict.fromkeys(t.name for t in case.layout.terminals)) or "-"),
             ("ports", "; ".join(f"{p.name}: {p.plus} -> {p.minus}" for p in case.ports) or "-"),
             ("lumped", "; ".join(f"{x.name} ({x.between[0]}-{x.between[1]}, "
                                  f"{engineering(x.resistance, 'ohm')}, {engineering(x.inductance, 'H')})"
                                  for x in case.lumped) or "-"),
             ("frequencies", ", ".join(format_frequency(f) for f in case.frequencies))]
    mesh = (summary or {}).get("mesh") or {}
    if mesh:
        items.append(("mesh", ", ".join(f"{v} {k}" for k, v in mesh.items())))
    timing = (summary or {}).get("timing_s") or {}
    if timing:
        items.append(("time", ", ".join(f"{k} {v:.3g} s" for k, v in timing.items()
                                        if isinstance(v, (int, float)))))
    parts.append(table(["item", "value"], items, left=2))
    return parts


def _rl_tables(case, result):
    out = []
    r, ell = result.resistance, result.inductance
    for k, name in enumerate(result.ports):
        rows = [(format_frequency(f), f"{r[i, k, k] * 1e3:.5g}", f"{ell[i, k, k] * 1e9:.5g}")
                for i, f in enumerate(result.frequencies)]
        out.append((f"Port {name}", table(["frequency", "R (mohm)", "L (nH)"], rows)))
    return out


def _per_length(b):
    per = b.get("inductance_per_length_h_per_m")
    return f"{per * 1e6:.3g}" if per is not None else "point"


def _bottleneck_table(bottlenecks, unit):
    rows = []
    for b in bottlenecks:
        where = b.get("name") or "-"
        rows.append((str(b.get("rank", "")), b["port"], b.get("kind", ""), where, b["layer"],
                     f"{b['x']:.4g}", f"{b['y']:.4g}", _per_length(b),
                     f"{100 * b['inductance_share']:.1f}",
                     engineering(b.get("inductance_h"), "H", 3), f"{100 * b['resistance_share']:.1f}",
                     f"{b.get('area', 0.0):.3g}", format_frequency(b.get("frequency_hz", 0.0))))
    return table(["#", "port", "kind", "item", "layer", f"x ({unit})", f"y ({unit})",
                  "L per length (nH/mm)", "L share (%)", "L", "R share (%)", f"area ({unit}^2)", "at"],
                 rows, left=5)


def _image(item):
    """(path, caption) of a MapImage or a plain path."""
    path = Path(getattr(item, "path", item))
    return path, getattr(item, "caption", path.stem)


def _figure_html(path, caption):
    data = base64.b64encode(path.read_bytes()).decode("ascii")
    return (f'<figure><img alt="{_esc(caption)}" src="data:image/png;base64,{data}">'
            f"<figcaption>{_esc(caption)}</figcaption></figure>")


def _figure_md(path, caption, out_dir):
    rel = Path(os.path.relpath(path, out_dir)).as_posix()
    return f"![{caption}]({rel})\n\n*{caption}*"


def _answer(case, result, bottlenecks, top=3):
    """The first section: each port's R and L at DC and at the highest frequency, and where its
    inductance lives (the first bottlenecks). ``[(html, markdown), ...]``."""
    f = result.frequencies
    at = sorted({0, len(f) - 1})
    r, ell = result.resistance, result.inductance
    head = ["port"] + [f"{q} {format_frequency(f[i])}" for i in at for q in ("R", "L")]
    rows = [[name] + [v for i in at for v in (engineering(r[i, k, k], "ohm"),
                                              engineering(ell[i, k, k], "H"))]
            for k, name in enumerate(result.ports)]
    h, m = table(head, rows)
    parts = [(f'<div class="answer">{h}</div>', m)]
    for name in result.ports:
        mine = [b for b in bottlenecks if b.get("port") == name][:top]
        if not mine:
            continue
        words = "; ".join(
            f"#{b.get('rank', n + 1)} {b.get('name') or b.get('kind', 'copper')} on {b['layer']} at "
            f"({b['x']:.3g}, {b['y']:.3g}) {case.unit}: {100 * b['inductance_share']:.0f} % of L"
            for n, b in enumerate(mine))
        text = f"Where the loop inductance of port {name} lives: {words} (full list below)."
        parts.append((f"<p>{_esc(text)}</p>", text))
    return parts


def _maps_by_frequency(images, rankings, unit, out_dir):
    """The maps grouped by frequency, each group after the ranking its markers number
    (``[(html, markdown), ...]``)."""
    by_f = {}
    for x in images:
        by_f.setdefault(getattr(x, "frequency", None), []).append(_image(x))
    ranked = {r["frequency_hz"]: r["bottlenecks"] for r in rankings}
    parts = []
    for f, pics in by_f.items():
        head = f"At {format_frequency(f)}" if f is not None else "Other pictures"
        parts.append((f"<h3>{_esc(head)}</h3>", f"### {head}"))
        if ranked.get(f):
            h, m = _bottleneck_table(ranked[f], unit)
            text = f"Bottlenecks at {format_frequency(f)}: the numbers on the maps below."
            parts.append((f"<p>{_esc(text)}</p>\n{h}", f"{text}\n\n{m}"))
        figs = [(_figure_html(p, c), _figure_md(p, c, out_dir)) for p, c in pics]
        parts.append(('<div class="grid">' + "".join(h for h, _ in figs) + "</div>",
                      "\n\n".join(m for _, m in figs)))
    return parts


def write_report(out_dir, case, result, summary=None, images=(), *, bottlenecks=None,
                 warnings=(), extra_sections=(), lead_sections=()):
    """Write ``report.html`` and ``report.md`` into ``out_dir``.

    Parameters
    ----------
    out_dir : str or os.PathLike
    case : copperpath.geometry.model.Case
    result : copperpath.solver.solve.result.Result
    summary : dict, optional
        The ``result.json`` data (``mesh``, ``timing_s``, ``bottlenecks``).
    images : sequence of copperpath.solver.output.maps.MapImage or path
        Pictures, in order; those of kind ``"rl"`` go to the R(f)/L(f) section.
    bottlenecks : sequence of dict, optional
        As in ``result.json``; default ``summary["bottlenecks"]``.
    warnings : sequence of str
        Shown with the case's own warnings.
    extra_sections : sequence of (str, str, str)
        ``(title, html, markdown)`` sections added after the maps.
    lead_sections : sequence of (str, str, str)
        Sections placed right after the answer (e.g. what the loop means for the converter).

    Returns
    -------
    tuple of pathlib.Path
        ``(report.html, report.md)``.
    """
    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    if bottlenecks is None:
        bottlenecks = (summary or {}).get("bottlenecks", [])
    sections = [("The answer", _answer(case, result, bottlenecks))]   # (title, [(html, md)])
    for title, h, m in lead_sections:
        sections.append((title, [(h, m)]))
    all_warnings = list(case.warnings) + list(warnings)
    if all_warnings:
        items = "".join(f"<li>{_esc(w)}</li>" for w in all_warnings)
        sections.append(("Warnings", [(f'<div class="warn"><ul>{items}</ul></div>',
                                       "\n".join(f"- {w}" for w in all_warnings))]))
    sections.append(("Case", _case_tables(case, summary)))
    rl = [(f"<h3>{_esc(t)}</h3>\n{h}", f"### {t}\n\n{m}") for t, (h, m) in _rl_tables(case, result)]
    rl.append(("<p>L is Im Z / (2 pi f) above DC and the DC-limit inductance at DC; R is Re Z. "
               "The full impedance matrix is in <code>result.json</code>.</p>",
               "L is Im Z / (2 pi f) above DC and the DC-limit inductance at DC; R is Re Z. "
               "The full impedance matrix is in `result.json`."))
    sections.append(("Resistance and inductance", rl))
    pics = [_image(x) + (getattr(x, "kind", ""),) for x in images]
    sections.append(("R(f) and L(f)", [(_figure_html(p, c), _figure_md(p, c, out_dir))
                                       for p, c, k in pics if k == "rl"]))
    if bottlenecks:
        h, m = _bottleneck_table(bottlenecks, case.unit)
        text = ("Regions of copper, vias and lumped branches where each port's loop inductance is "
                "most concentrated (numbered on the maps), ranked by inductance share per length "
                "of current path: the places where each millimetre of path costs the most loop L, "
                "however large a region is drawn. Lumped branches (components) follow the copper and vias. "
                "Shares are fractions of the port's own L and R at the frequency given. Each map "
                "frequency has its own ranking, printed beside its maps.")
        sections.append(("Bottlenecks", [(f"<p>{_esc(text)}</p>\n{h}", f"{text}\n\n{m}")]))
    rankings = (summary or {}).get("bottlenecks_by_frequency", ())
    maps = _maps_by_frequency([x for x in images if getattr(x, "kind", "") != "rl"], rankings,
                              case.unit, out_dir)
    if maps:
        sections.append(("Maps", maps))
    for title, h, m in extra_sections:
        sections.append((title, [(h, m)]))
    sections.append(("Cautions", [(f'<div class="caution">{_esc(CAUTION)}</div>', f"> {CAUTION}")]))

    sub = (f"copperpath report of {Path(case.path).name}. Estimates from a field model, per ampere "
           "of port current; read the cautions at the end.")
    return write_page(out_dir, case.title or Path(case.path).stem, sub, sections)


def write_page(out_dir, title, sub, sections):
    """Write ``report.html`` and ``report.md`` from ``(title, [(html, markdown), ...])`` sections.

    Returns
    -------
    tuple of pathlib.Path
        ``(report.html, report.md)``.
    """
    out_dir = Path(out_dir)
    body = [f"<h1>{_esc(title)}</h1>", f'<p class="sub">{_esc(sub)}</p>']
    md = [f"# {title}", "", sub, ""]
    body.append('<nav class="toc"><b>Contents</b><ol>' + "".join(
        f'<li><a href="#s{k + 1}">{_esc(head)}</a></li>' for k, (head, _) in enumerate(sections))
        + "</ol></nav>")
    md += ["Contents:", ""] + [f"{k + 1}. {head}" for k, (head, _) in enumerate(sections)] + [""]
    for k, (head, parts) in enumerate(sections):
        body.append(f'<h2 id="s{k + 1}">{_esc(head)}</h2>')
        md += [f"## {head}", ""]
        for h, m in parts:
            body.append(h)
            md += [m, ""]
    page = ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f"<title>{_esc(title)} - copperpath report</title><style>{_CSS}</style></head>"
            "<body><main>\n" + "\n".join(body) + "\n</main></body></html>\n")
    html_path, md_path = out_dir / "report.html", out_dir / "report.md"
    write_text(html_path, page)
    write_text(md_path, "\n".join(md).rstrip() + "\n")
    return html_path, md_path


def write_comparison_report(out_dir, title, sections, images=()):
    """The report of a variant comparison: the comparison's own sections, then the
    side-by-side pictures (paths relative to ``out_dir`` in the markdown), then the cautions.

    Parameters
    ----------
    out_dir : str or os.PathLike
    title : str
    sections : sequence of (str, str, str)
        ``(title, html, markdown)``.
    images : sequence of (path, caption)

    Returns
    -------
    tuple of pathlib.Path
    """
    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    parts = [(t, [(h, m)]) for t, h, m in sections]
    if images:
        parts.append(("Side by side", [(_figure_html(Path(p), c), _figure_md(Path(p), c, out_dir))
                                       for p, c in images]))
    parts.append(("Cautions", [(f'<div class="caution">{_esc(CAUTION)}</div>', f"> {CAUTION}")]))
    sub = ("copperpath comparison of layout variants: each variant's own report lies in its "
           "folder beside this file. Read the cautions at the end.")
    return write_page(out_dir, title, sub, parts)
