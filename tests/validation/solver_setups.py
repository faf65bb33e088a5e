"""Shared set-ups for the solver's validation tests: solve a gallery layout quickly."""
import numpy as np
import shapely
from shapely.geometry import box

from copperpath.geometry.meshing import triangulate
from copperpath.geometry.model import Layer, Layout, Lumped, MeshOptions, Port, Terminal
from copperpath.solver.solve.sweep import solve
from copperpath.solver.solve.system import assemble


def solve_layout(layout, ports, frequencies=(0.0,), *, mesh=MeshOptions(), lumped=()):
    """Mesh, assemble and solve; return ``(result, mesh, system)``."""
    m = triangulate(layout, mesh)
    system = assemble(m, layout, ports, lumped, f_max=max(frequencies))
    return solve(system, frequencies), m, system


def stacked_strips(length, width, thickness, gap, *, terminal_length):
    """Two equal strips on layers ``top`` and ``bottom``, ``gap`` apart between the facing faces."""
    layers = (Layer("top", thickness + gap, thickness), Layer("bottom", 0.0, thickness))
    strip = box(0.0, 0.0, length, width)
    tl = terminal_length
    terms = []
    for k, layer in enumerate(layers, start=1):
        terms += [Terminal(f"A{k}", layer.name, box(0.0, 0.0, tl, width)),
                  Terminal(f"B{k}", layer.name, box(length - tl, 0.0, length, width))]
    return Layout(layers=layers, copper={la.name: shapely.MultiPolygon([strip]) for la in layers},
                  terminals=tuple(terms))


def shorted_pair(layout, plus, minus, far_plus, far_minus):
    """Port ``plus -> minus`` with the far ends shorted by a zero-impedance lumped branch."""
    return [Port("p", plus, minus)], [Lumped("short", (far_plus, far_minus), 0.0, 0.0)]


def per_length(l_short, l_long, length_short, length_long):
    """Inductance per unit length from two lengths (end effects cancel)."""
    return (l_long - l_short) / (length_long - length_short)


def eigen_min(matrix):
    """Smallest eigenvalue of a symmetric matrix."""
    return float(np.linalg.eigvalsh(matrix).min())
