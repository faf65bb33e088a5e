"""Return paths: strip over a plane, parallel plates, a via barrel."""
import math

import pytest
import shapely
from scipy.integrate import quad
from shapely.geometry import Point

from copperpath.geometry import gallery
from copperpath.geometry.model import Layer, Layout, MeshOptions, Port, Terminal, Via
from tests.validation.line_formulas import (MU0, microstrip_inductance_per_length,
                                            parallel_plate_inductance_per_length)
from tests.validation.solver_setups import per_length, shorted_pair, solve_layout


def test_strip_over_plane_matches_air_microstrip():
    # Hammerstad & Jensen 1980 (IEEE MTT-S Digest): air microstrip, L' = Z0 / c0. The strip is
    # shorted to the plane by a via at its far end; the difference of two lengths removes the
    # port and via end effects. Thin copper (5 um) keeps the internal inductance of uniform
    # current through the thickness small; at 100 MHz the current has crowded under the strip.
    w, h, t, plane = 1e-3, 0.5e-3, 5e-6, 14e-3
    mesh = MeshOptions(0.4e-3, 0.1e-3)
    ell = []
    lengths = (4e-3, 8e-3)
    for length in lengths:
        lay = gallery.strip_over_plane(length, w, h, plane, t)
        res, _, _ = solve_layout(lay, [Port("p", "S", "G")], (0.0, 1e8), mesh=mesh)
        ell.append(res.inductance[:, 0, 0])
    got = per_length(*ell, *lengths)
    assert got[1] == pytest.approx(microstrip_inductance_per_length(w, h, t), rel=0.03)
    # At DC the return current spreads over the plane and the loop inductance is much higher
    # (REFERENCES: "a solver must show that rise").
    assert got[0] > 1.3 * got[1]


def test_parallel_plates_shorted_at_far_end():
    # Ampere's law for wide plates, mu0 (h + 2t/3) / w with current uniform through the
    # thickness (Ramo, Whinnery & Van Duzer); w / h = 200 keeps fringing near 1 %.
    w, h, t = 10e-3, 0.05e-3, 2e-6
    lengths = (4e-3, 8e-3)
    ell = {0.0: [], 1e8: []}
    for length in lengths:
        lay = gallery.plane_pair(length, w, h, t, terminal_length=0.2e-3)
        ports, lumped = shorted_pair(lay, "A1", "A2", "B1", "B2")
        res, _, _ = solve_layout(lay, ports, (0.0, 1e8), mesh=MeshOptions(0.5e-3, 0.1e-3), lumped=lumped)
        for k, f in enumerate((0.0, 1e8)):
            ell[f].append(res.inductance[k, 0, 0])
    expected = parallel_plate_inductance_per_length(w, h, t)
    for f in ell:
        assert per_length(*ell[f], *lengths) == pytest.approx(expected, rel=0.03)
    assert per_length(*ell[0.0], *lengths) == pytest.approx(MU0 * h / w, rel=0.05)


def _thin_shell_self_inductance(radius, length):
    """Partial self-inductance of a thin tube: Grover's (1946) parallel-filament mutual
    (mu0/2pi)[l asinh(l/d) - sqrt(l^2+d^2) + d] averaged over filaments around the ring,
    d = 2 r sin(phi/2), by numerical integration (independent of the solver's closed form)."""
    def m(phi):
        d = 2 * radius * math.sin(phi / 2)
        return MU0 / (2 * math.pi) * (length * math.asinh(length / d) - math.hypot(length, d) + d)
    value, _ = quad(m, 0.0, math.pi, limit=200, epsabs=0, epsrel=1e-11)
    return value / math.pi


def test_via_between_two_pads_is_its_barrel():
    drill, plating, pad = 0.3e-3, 25e-6, 0.6e-3
    t, gap = 35e-6, 1.5e-3
    layers = (Layer("top", t + gap, t), Layer("bottom", 0.0, t))
    via = Via("V", 0.0, 0.0, drill, plating, pad, ("top", "bottom"), ("top", "bottom"))
    disk = Point(0, 0).buffer(pad / 2).difference(Point(0, 0).buffer(drill / 2))
    lay = Layout(layers=layers, copper={n: shapely.MultiPolygon([disk]) for n in ("top", "bottom")},
                 vias=(via,), terminals=(Terminal("T", "top", disk), Terminal("B", "bottom", disk)))
    res, _, _ = solve_layout(lay, [Port("p", "T", "B")], (0.0, 1e6))
    length = layers[0].z_mid - layers[1].z_mid      # between the layers' mid-planes
    radius = (drill + plating) / 2                   # mid-wall radius of the plated barrel
    assert res.inductance[1, 0, 0] == pytest.approx(_thin_shell_self_inductance(radius, length), rel=0.01)
    # resistance of the plated annulus, rho l / A (Ohm's law)
    area = math.pi * ((drill / 2 + plating) ** 2 - (drill / 2) ** 2)
    assert res.resistance[0, 0, 0] == pytest.approx(length / (5.8e7 * area), rel=1e-6)


def test_thin_shell_reference_limits():
    # The reference itself: a very thin long tube tends to the filament form with d -> r's
    # geometric mean distance (Grover 1946: the GMD of a thin ring is its radius).
    r, ell = 1e-6, 1.0
    gmd = MU0 / (2 * math.pi) * (ell * math.asinh(ell / r) - math.hypot(ell, r) + r)
    assert _thin_shell_self_inductance(r, ell) == pytest.approx(gmd, rel=1e-6)
