"""Via barrel partial elements (Grover 1946 filament forms; Ohm's law)."""
import math

import pytest
from scipy import integrate

from copperpath.solver.elements.barrels import barrel_mutual_inductance, barrel_resistance, barrel_self_inductance
from tests.validation.references import (MU0, grover_filament_mutual,
                                         grover_filament_mutual_offset)

R_MID = 0.1625e-3  # (0.3 mm drill + 25 um plating) / 2


def _ring_average_quad(r, length):
    # mean over phi of Grover's filament mutual at d = 2 r |sin(phi/2)| (scipy quad, log endpoint)
    f = lambda phi: grover_filament_mutual(length, 2 * r * math.sin(phi / 2))
    val, _ = integrate.quad(f, 0, math.pi, epsabs=0, epsrel=1e-12, limit=400)
    return val / math.pi


@pytest.mark.parametrize("length", [0.2e-3, 1.6e-3, 10e-3])
def test_self_is_ring_average(length):
    assert barrel_self_inductance(R_MID, length) == pytest.approx(_ring_average_quad(R_MID, length), rel=1e-9)


def test_filament_at_radius_is_too_low_for_short_segment():
    # the short "filament at distance r" form (Grover 1946) is 10-20 % low on a 0.2 mm segment
    exact = barrel_self_inductance(R_MID, 0.2e-3)
    short = grover_filament_mutual(0.2e-3, R_MID)
    assert 0.10 < 1 - short / exact < 0.20


def test_long_tube_limit():
    # long thin tube: (mu0 l / 2 pi)(ln(2 l / r) - 1) (Grover 1946, GMD of a circle = r)
    l = 0.5
    ref = MU0 * l / (2 * math.pi) * (math.log(2 * l / R_MID) - 1)
    # next term is O(r/l) = 3e-4
    assert barrel_self_inductance(R_MID, l) == pytest.approx(ref, rel=1e-4)
    assert barrel_self_inductance(R_MID, l) != pytest.approx(ref, rel=1e-6)


def test_mutual_of_separate_vias_is_filament_form():
    z1, z2 = (0.0, 1.6e-3), (0.4e-3, 2.0e-3)
    m = barrel_mutual_inductance(R_MID, z1, R_MID, z2, 2e-3)
    assert m == pytest.approx(grover_filament_mutual_offset(z1, z2, 2e-3), rel=1e-12)


def test_coaxial_segments_ring_average():
    z1, z2 = (0.0, 0.5e-3), (0.5e-3, 1.6e-3)
    f = lambda phi: grover_filament_mutual_offset(z1, z2, 2 * R_MID * math.sin(phi / 2))
    ref, _ = integrate.quad(f, 1e-12, math.pi, epsrel=1e-12, limit=200)
    assert barrel_mutual_inductance(R_MID, z1, R_MID, z2, 0.0) == pytest.approx(ref / math.pi, rel=1e-8)
    # consistency: self of the whole = sum of the parts' selfs and twice their mutual
    whole = barrel_self_inductance(R_MID, 1.6e-3)
    parts = (barrel_self_inductance(R_MID, 0.5e-3) + barrel_self_inductance(R_MID, 1.1e-3)
             + 2 * barrel_mutual_inductance(R_MID, z1, R_MID, z2, 0.0))
    assert parts == pytest.approx(whole, rel=1e-9)


def test_resistance_annulus():
    # Ohm's law on the annulus area pi ((r0 + p)^2 - r0^2)
    r = barrel_resistance(0.3e-3, 25e-6, 1.6e-3, 5.8e7)
    assert r == pytest.approx(1.6e-3 / (5.8e7 * math.pi * (0.175e-3**2 - 0.15e-3**2)), rel=1e-12)
