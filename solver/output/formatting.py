"""How numbers and tables are shown in the terminal tables and reports (frequencies:
:func:`copperpath.geometry.units.format_frequency`)."""
from __future__ import annotations

import html
import math

_PREFIXES = ((1e-12, "p"), (1e-9, "n"), (1e-6, "u"), (1e-3, "m"), (1.0, ""), (1e3, "k"),
             (1e6, "M"), (1e9, "G"))


def engineering(value, unit, digits=4):
    """A value with an SI prefix; ``-`` for ``None`` or a non-finite value.

    Examples
    --------
    >>> engineering(0.0123, "ohm"), engineering(2.69e-9, "H", 3), engineering(None, "V")
    ('12.3 mohm', '2.69 nH', '-')
    """
    if value is None or not math.isfinite(value):
        return "-"
    for scale, prefix in _PREFIXES:
        if abs(value) < 1000 * scale:
            return f"{value / scale:.{digits}g} {prefix}{unit}"
    return f"{value:.{digits}g} {unit}"


def table(head, rows, left=1):
    """A table as ``(html, markdown)``; the first ``left`` columns are left-aligned.

    Examples
    --------
    >>> h, md = table(["case", "L (nH)"], [["a|b", "1.0"]])
    >>> md.splitlines()[2]
    '| a/b | 1.0 |'
    """
    def cls(k):
        return ' class="l"' if k < left else ""

    def esc(text):
        return html.escape(str(text), quote=True)

    h = ["<table><tr>" + "".join(f"<th{cls(k)}>{esc(c)}</th>" for k, c in enumerate(head)) + "</tr>"]
    h += ["<tr>" + "".join(f"<td{cls(k)}>{esc(c)}</td>" for k, c in enumerate(r)) + "</tr>"
          for r in rows]
    h.append("</table>")
    md = ["| " + " | ".join(head) + " |",
          "|" + "|".join(":---" if k < left else "---:" for k in range(len(head))) + "|"]
    md += ["| " + " | ".join(str(c).replace("|", "/") for c in r) + " |" for r in rows]
    return "\n".join(h), "\n".join(md)
