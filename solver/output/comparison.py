"""The comparison of layout variants as text: the terminal table, its one-line verdict and the
report sections (the numbers come from :mod:`copperpath.solver.analysis.compare`)."""
from __future__ import annotations

import html
import math
import os

from copperpath.geometry.units import format_frequency
from copperpath.solver.output.formatting import table


def _num(value, scale, fmt):
    if value is None or not math.isfinite(value):
        return "-"
    return format(value / scale, fmt)


def short_titles(titles):
    """Split off the part before ``": "`` that all titles share.

    Parameters
    ----------
    titles : sequence of str

    Returns
    -------
    tuple
        ``(common, rest)``: the shared head (``""`` when none) and each title without it.

    Examples
    --------
    >>> short_titles(["buck: far", "buck: near"])
    ('buck', ['far', 'near'])
    >>> short_titles(["C1 far", "C1 near"])
    ('', ['C1 far', 'C1 near'])
    """
    titles = list(titles)
    cut = os.path.commonprefix(titles).rfind(": ") if len(titles) > 1 else -1
    rest = [t[cut + 2:] for t in titles]
    if cut < 0 or not all(r.strip() for r in rest):
        return "", titles
    return titles[0][:cut].strip(), rest


def _columns(comparison):
    """Shared title head, header and rows of the comparison table (display units)."""
    common, names = short_titles([c.title for c in comparison.cases])
    top = format_frequency(comparison.frequencies[-1])
    low = comparison.frequencies[0]
    head = ["case"] + [f"L {format_frequency(f)} (nH)" for f in comparison.frequencies]
    head += [f"dL {top} (nH)", f"dL {top} (%)", f"R {format_frequency(low)} (mohm)",
             f"R {top} (mohm)", "overshoot (V)", "ringing (MHz)"]
    rows = []
    for name, c in zip(names, comparison.cases):
        row = [name] + [_num(v, 1e-9, ".3f") for v in c.inductance_h]
        row += [_num(c.delta_inductance_h[-1], 1e-9, "+.3f"), _num(c.relative_inductance[-1], 0.01, "+.1f"),
                _num(c.resistance_ohm[0], 1e-3, ".3f"), _num(c.resistance_ohm[-1], 1e-3, ".3f"),
                _num(c.overshoot_v, 1.0, ".2f"), _num(c.ringing_hz, 1e6, ".1f")]
        rows.append(row)
    return common, head, rows


def verdict(comparison) -> str:
    """The one-line conclusion: which case has the lowest inductance, and by how much.

    E.g. ``lowest loop inductance (port 'loop' at 100 MHz): pour (-75 % vs far)``; titles lose
    the head they all share (see :func:`short_titles`).
    """
    _, names = short_titles([c.title for c in comparison.cases])
    best = comparison.best_case
    where = f"port '{comparison.port}' at {format_frequency(comparison.frequencies[-1])}"
    if comparison.best == 0:
        return f"lowest loop inductance ({where}): {names[0]} (the first case)"
    pct = _num(best.relative_inductance[-1], 0.01, "+.0f")
    return f"lowest loop inductance ({where}): {names[comparison.best]} ({pct} % vs {names[0]})"


def format_comparison(comparison) -> str:
    """The comparison as a text table for the terminal.

    One row per case: title, L at each chosen frequency, the change of L at the highest
    frequency against the first case (nH and %), R at the lowest and highest frequency,
    switch-node overshoot and ringing frequency (``-`` where the case has no ``[circuit]``),
    then a line naming the lowest-inductance case.

    Parameters
    ----------
    comparison : Comparison

    Returns
    -------
    str
    """
    common, head, rows = _columns(comparison)
    widths = [max(len(r[k]) for r in [head] + rows) for k in range(len(head))]

    def line(cells):
        return "  ".join(c.ljust(w) if k == 0 else c.rjust(w)
                         for k, (c, w) in enumerate(zip(cells, widths))).rstrip()
    title = f"{common}: " if common else ""
    out = [f"{title}port '{comparison.port}', changes against the first case", line(head),
           line(["-" * w for w in widths])]
    out += [line(r) for r in rows]
    out.append(verdict(comparison))
    return "\n".join(out)


def comparison_sections(comparison) -> list:
    """Report sections of a comparison.

    Parameters
    ----------
    comparison : Comparison

    Returns
    -------
    list of (str, str, str)
        ``(title, html, markdown)``: the variant table with its conclusion, and the circuit
        estimates where any case has them.
    """
    common, head, rows = _columns(comparison)
    h, m = table(head, rows)
    note = (f"{common}: " if common else "") + (
        f"port '{comparison.port}'; L is Im Z / (2 pi f), the DC-limit inductance at DC; changes "
        f"are against the first case. {verdict(comparison)}.")
    sections = [("Variant comparison", f"<p>{html.escape(note)}</p>\n{h}", f"{note}\n\n{m}")]
    circuit = [[row[0], _num(c.overshoot_v, 1.0, ".2f"), _num(c.peak_switch_node_v, 1.0, ".2f"),
                _num(c.ringing_hz, 1e6, ".1f"), _num(c.damping_ratio, 1.0, ".3f")]
               for row, c in zip(rows, comparison.cases)
               if c.overshoot_v is not None or c.ringing_hz is not None]
    if circuit:
        h2, m2 = table(["case", "overshoot (V)", "peak switch node (V)", "ringing (MHz)",
                         "damping ratio"], circuit)
        text = ("Series R-L-C estimate of each case's loop with its [circuit] values: overshoot "
                "L di/dt, ringing 1/(2 pi sqrt(L C_oss)), damping from the copper's resistance "
                "only. Estimates, not measurements.")
        sections.append(("Circuit estimates per variant", f"<p>{html.escape(text)}</p>\n{h2}",
                         f"{text}\n\n{m2}"))
    return sections
