"""Gerber aperture macros (``%AM``): expression parsing, primitives and evaluation, plus the
chord rule for curves that the reader shares (Ucamco Gerber Layer Format Specification, rev.
2023.08, section on aperture macros; cited from memory). Lengths are in the file's unit until
the reader scales them to metres."""
from __future__ import annotations

import math
import re

import numpy as np
import shapely

from copperpath.geometry.limits import MAX_MACRO_RINGS

MAX_CHORDS = 4096           # per full circle
MAX_DEPTH = 64              # parentheses in macro expressions


# --------------------------------------------------------------------------- curves

def chord_count(r, sweep, tol):
    """Number of chords for an arc of radius ``r`` and angle ``sweep`` (sagitta <= tol)."""
    if r <= tol:
        step = math.pi / 2
    else:
        step = max(2 * math.acos(1 - tol / r), 2 * math.pi / MAX_CHORDS)
    return max(1, math.ceil(sweep / step - 1e-9))


def segments_per_quarter(r, tol):
    """Segments per quarter circle for shapely's buffer at radius ``r``."""
    return max(1, math.ceil(chord_count(r, 2 * math.pi, tol) / 4))




# --------------------------------------------------------------------------- macros

_ETOK = re.compile(r"\s*(?:(\d+\.?\d*|\.\d+)|\$(\d+)|([-+xX/()]))")


def _compile_expr(text):
    """Parse a macro expression into a nested tuple; raise ValueError when malformed."""
    tokens, pos = [], 0
    text = text.strip()
    while pos < len(text):
        m = _ETOK.match(text, pos)
        if m is None:
            raise ValueError(f"unexpected {text[pos:pos + 10].strip()!r} in expression {text!r}")
        if m.group(1) is not None:
            tokens.append(("n", float(m.group(1))))
        elif m.group(2) is not None:
            tokens.append(("v", int(m.group(2))))
        else:
            tokens.append((m.group(3).lower(), None))
        pos = m.end()
    if not tokens:
        raise ValueError("empty expression")
    node, k = _expr(tokens, 0, 0, text)
    if k != len(tokens):
        raise ValueError(f"unexpected {tokens[k][0]!r} in expression {text!r}")
    return node


def _expr(tokens, k, depth, text):
    node, k = _term(tokens, k, depth, text)
    while k < len(tokens) and tokens[k][0] in "+-":
        op = tokens[k][0]
        rhs, k = _term(tokens, k + 1, depth, text)
        node = (op, node, rhs)
    return node, k


def _term(tokens, k, depth, text):
    node, k = _factor(tokens, k, depth, text)
    while k < len(tokens) and tokens[k][0] in "x/":
        op = tokens[k][0]
        rhs, k = _factor(tokens, k + 1, depth, text)
        node = (op, node, rhs)
    return node, k


def _factor(tokens, k, depth, text):
    if depth > MAX_DEPTH:
        raise ValueError(f"expression nested too deeply: {text[:40]!r}")
    if k >= len(tokens):
        raise ValueError(f"expression ends early: {text!r}")
    kind = tokens[k][0]
    if kind in ("n", "v"):
        return tokens[k], k + 1
    if kind in "+-":
        node, k = _factor(tokens, k + 1, depth + 1, text)
        return (("neg", node) if kind == "-" else node), k
    if kind == "(":
        node, k = _expr(tokens, k + 1, depth + 1, text)
        if k >= len(tokens) or tokens[k][0] != ")":
            raise ValueError(f"missing ')' in expression {text!r}")
        return node, k + 1
    raise ValueError(f"unexpected {kind!r} in expression {text!r}")


def _eval(node, env):
    kind = node[0]
    if kind == "n":
        return node[1]
    if kind == "v":
        return env.get(node[1], 0.0)
    if kind == "neg":
        return -_eval(node[1], env)
    a, b = _eval(node[1], env), _eval(node[2], env)
    if kind == "+":
        return a + b
    if kind == "-":
        return a - b
    if kind == "x":
        return a * b
    if b == 0:
        raise ValueError("division by zero in a macro expression")
    return a / b


# Parameter counts (without, with the optional trailing rotation) of each primitive.
_PRIMITIVE_ARGS = {1: (4, 5), 2: (6, 7), 20: (6, 7), 21: (5, 6), 22: (5, 6), 5: (5, 6),
                   6: (8, 9), 7: (5, 6)}


def compile_macro(items):
    """Compile the words of an ``%AM`` block into a list of statements (line, kind, data)."""
    body = []
    for line, word in items:
        if not word or re.match(r"0(?![\d.])", word):
            continue                                   # comment primitive 0
        try:
            if word.startswith("$"):
                m = re.match(r"\$(\d+)\s*=(.*)\Z", word, re.S)
                if m is None:
                    raise ValueError(f"expected a variable definition '$n=expression', got {word[:40]!r}")
                body.append((line, "set", (int(m.group(1)), _compile_expr(m.group(2)))))
                continue
            fields = word.split(",")
            code = int(fields[0]) if fields[0].strip().isdigit() else None
            if code not in _PRIMITIVE_ARGS and code != 4:
                raise ValueError(f"unknown macro primitive {fields[0][:20]!r}; "
                                 "expected 0, 1, 2, 4, 5, 6, 7, 20, 21 or 22")
            args = [_compile_expr(f) for f in fields[1:]]
            if code in _PRIMITIVE_ARGS and len(args) not in _PRIMITIVE_ARGS[code]:
                raise ValueError(f"macro primitive {code} takes {_PRIMITIVE_ARGS[code][1]} parameters, got {len(args)}")
            if code == 4 and len(args) < 9:
                raise ValueError(f"macro primitive 4 (outline) needs at least 9 parameters, got {len(args)}")
            body.append((line, code, args))
        except ValueError as exc:
            raise MacroError(line, str(exc)) from None
    return body


class MacroError(Exception):
    def __init__(self, line, message):
        super().__init__(message)
        self.line = line


def _rot(geom, degrees):
    if not degrees:
        return geom
    a = math.radians(degrees)
    c, s = math.cos(a), math.sin(a)
    m = np.array([[c, -s], [s, c]])
    return shapely.transform(geom, lambda xy: xy @ m.T)


def disk_polygon(cx, cy, r, tol):
    if r <= 0:
        return shapely.Polygon()
    return shapely.Point(cx, cy).buffer(r, quad_segs=segments_per_quarter(r, tol))


def rect_polygon(cx, cy, w, h):
    if w <= 0 or h <= 0:
        return shapely.Polygon()
    return shapely.box(cx - w / 2, cy - h / 2, cx + w / 2, cy + h / 2)


def regular_ngon(cx, cy, d, n, rotation):
    a = np.radians(rotation) + 2 * np.pi * np.arange(n) / n
    return shapely.Polygon(np.column_stack([cx + d / 2 * np.cos(a), cy + d / 2 * np.sin(a)]))


def _thermal(cx, cy, outer, inner, gap, tol):
    if not (outer > inner >= 0 and gap >= 0):
        raise ValueError("thermal needs outer diameter > inner diameter >= 0 and gap >= 0, "
                         f"got {outer:g}, {inner:g}, {gap:g}")
    if gap >= outer / math.sqrt(2):
        raise ValueError(f"thermal gap {gap:g} must be smaller than outer diameter / sqrt(2) "
                         f"= {outer / math.sqrt(2):g}")
    ring = disk_polygon(cx, cy, outer / 2, tol).difference(disk_polygon(cx, cy, inner / 2, tol))
    big = 2 * outer
    cross = shapely.union(rect_polygon(cx, cy, big, gap), rect_polygon(cx, cy, gap, big))
    return ring.difference(cross)


def _moire(cx, cy, outer, thick, gap, rings, cross_w, cross_len, tol):
    shape = shapely.union(rect_polygon(cx, cy, cross_len, cross_w), rect_polygon(cx, cy, cross_w, cross_len))
    if not 0 <= rings <= MAX_MACRO_RINGS:
        raise ValueError(f"moire with {rings:g} rings; expected 0 to {MAX_MACRO_RINGS}")
    r = outer / 2
    for _ in range(int(rings)):
        if r <= 0:
            break
        shape = shape.union(disk_polygon(cx, cy, r, tol).difference(disk_polygon(cx, cy, r - thick, tol)))
        r -= thick + gap
    return shape


def _primitive(code, v, tol):
    """Return (exposure_on, geometry) of one macro primitive with evaluated parameters."""
    if code == 7:
        return True, _rot(_thermal(*v[:5], tol), v[5] if len(v) > 5 else 0)
    if code == 6:
        return True, _rot(_moire(*v[:8], tol), v[8] if len(v) > 8 else 0)
    if v[0] not in (0, 1):
        raise ValueError(f"exposure must be 0 (off) or 1 (on), got {v[0]:g}")
    on = v[0] == 1
    if code == 1:
        geom, rot = disk_polygon(v[2], v[3], abs(v[1]) / 2, tol), (v[4] if len(v) > 4 else 0)
    elif code in (2, 20):
        w, s, e = v[1], np.array(v[2:4]), np.array(v[4:6])
        length = float(np.hypot(*(e - s)))
        if length > 0 and w > 0:
            normal = np.array([s[1] - e[1], e[0] - s[0]]) / length * w / 2
            geom = shapely.Polygon([s - normal, e - normal, e + normal, s + normal])
        else:
            geom = shapely.Polygon()
        rot = v[6] if len(v) > 6 else 0
    elif code == 21:
        geom, rot = rect_polygon(v[3], v[4], v[1], v[2]), (v[5] if len(v) > 5 else 0)
    elif code == 22:
        geom, rot = rect_polygon(v[3] + v[1] / 2, v[4] + v[2] / 2, v[1], v[2]), (v[5] if len(v) > 5 else 0)
    elif code == 5:
        n = int(v[1])
        if n != v[1] or not 3 <= n <= 1000:
            raise ValueError(f"polygon primitive needs 3..1000 vertices, got {v[1]:g}")
        geom, rot = regular_ngon(v[2], v[3], v[4], n, 0), (v[5] if len(v) > 5 else 0)
    else:                                                           # 4: outline
        n = int(v[1])
        if n != v[1] or n < 3 or len(v) not in (2 * n + 5, 2 * n + 4):
            raise ValueError(f"outline primitive with {v[1]:g} vertices needs {2 * v[1] + 5:g} "
                             f"parameters, got {len(v)}")
        pts = np.asarray(v[2:2 * n + 4], dtype=float).reshape(-1, 2)
        geom = shapely.make_valid(shapely.Polygon(pts), method="structure", keep_collapsed=False)
        rot = v[2 * n + 4] if len(v) == 2 * n + 5 else 0
    return on, _rot(geom, rot)


def evaluate_macro(body, params, unit, tol):
    """Build the shape of a macro aperture in metres (raise MacroError)."""
    env = {k + 1: p for k, p in enumerate(params)}
    shape = shapely.Polygon()
    for line, kind, data in body:
        try:
            if kind == "set":
                env[data[0]] = _eval(data[1], env)
                continue
            values = [_eval(a, env) for a in data]
            if not all(math.isfinite(x) and abs(x) < 1e9 for x in values):
                raise ValueError(f"parameter out of range: {values}")
            on, geom = _primitive(kind, values, tol / unit)
        except (ValueError, ZeroDivisionError, OverflowError) as exc:
            raise MacroError(line, f"primitive {kind}: {exc}") from None
        shape = shape.union(geom) if on else shape.difference(geom)
    return shapely.transform(shape, lambda xy: xy * unit)
