"""The rule behind ``sublayers = "auto"`` and the skin-effect warnings (solver/skin.py), checked
against the exact one-dimensional skin effect of a conductor slab.

A slab of thickness ``t`` with the field on one face (a plane under a trace) has the surface
impedance ``Z_s = k / (sigma tanh(k t))``, ``k = sqrt(j w mu0 sigma)`` (Ramo, Whinnery & Van
Duzer 1994, *Fields and Waves in Communication Electronics*, sec. 5.5). Discretised as the
solver does it, uniform current in each sublayer of :func:`copperpath.solver.graph.skin.sublayer_bounds`, the
slab is a set of parallel sheets whose mutual inductance per square is ``mu0 min(x, x')`` (the
flux between two sheets at depths ``x`` and ``x'`` and the return face).
"""
import numpy as np
import pytest

from copperpath.geometry.model import Layer
from copperpath.solver.graph.skin import MU0, auto_sublayers, resolved_up_to, skin_depth, sublayer_bounds

SIGMA = 5.8e7
T = 35e-6


def _slab_impedance(n, f, t=T):
    """Surface impedance (ohm per square) of ``n`` sublayers with uniform current each."""
    x = t * sublayer_bounds(n)
    g, wg = np.polynomial.legendre.leggauss(16)
    pts = (x[:-1, None] + np.diff(x)[:, None] * (g + 1) / 2)           # (n, 16)
    w = wg / 2
    mean_min = np.einsum("a,b,iajb->ij", w, w, np.minimum(pts[:, :, None, None], pts[None, None, :, :]))
    z = np.diag(1.0 / (SIGMA * np.diff(x))) + 2j * np.pi * f * MU0 * mean_min
    return 1.0 / np.linalg.solve(z, np.ones(n)).sum()


def _exact(f, t=T):
    k = np.sqrt(2j * np.pi * f * MU0 * SIGMA)
    return k / (SIGMA * np.tanh(k * t))


def test_slab_model_is_exact_when_fine():
    # The discretisation itself converges to the exact surface impedance (60 sublayers).
    f = 1e8
    assert _slab_impedance(60, f) == pytest.approx(_exact(f), rel=2e-3)


@pytest.mark.parametrize("n", [1, 3, 4, 5, 6, 8])
def test_resolved_sublayers_give_the_slab_resistance(n):
    # Up to resolved_up_to the resistance is within 8 % (one sublayer) or 6 % of the exact slab.
    layer = Layer("L", 0.0, T, SIGMA)
    fs = np.geomspace(1e4, resolved_up_to(layer, n), 30)
    err = [abs(_slab_impedance(n, f).real / _exact(f).real - 1) for f in fs]
    assert max(err) < (0.08 if n == 1 else 0.06)


def test_beyond_the_limit_resistance_reads_low():
    # Three sublayers at 1.75 times their limit (outer sublayer 1.32 skin depths): R is 11 % low,
    # one sublayer at 100 MHz (5.3 skin depths) 81 % low; that is what the warning is for.
    layer = Layer("L", 0.0, T, SIGMA)
    f = 1.75 * resolved_up_to(layer, 3)
    assert _slab_impedance(3, f).real / _exact(f).real - 1 < -0.08
    assert _slab_impedance(1, 1e8).real / _exact(1e8).real - 1 < -0.7


@pytest.mark.parametrize("f", [1e5, 1e6, 1e7, 5e7, 1e8, 2e8, 1e9])
def test_auto_picks_the_fewest_that_resolve(f):
    layer = Layer("L", 0.0, T, SIGMA)
    n = auto_sublayers(layer, f)
    assert n != 2
    if n < 8:
        assert f <= resolved_up_to(layer, n)
    smaller = [k for k in (1, 3, 4, 5, 6, 7) if k < n]
    assert all(f > resolved_up_to(layer, k) for k in smaller)
    # One sublayer exactly while the copper is no thicker than the skin depth.
    assert (n == 1) == (T <= skin_depth(f, SIGMA))
