"""Tests of copperpath.geometry.units against the defined sizes of the units."""
import numpy as np
import pytest

from copperpath.geometry.units import UNITS, to_si, unit_scale

# Exact definitions: 1 inch = 25.4 mm (international yard and pound agreement, 1959;
# NIST SP 811, 2008, appendix B), 1 mil = 1/1000 inch, SI prefixes milli and micro.
DEFINED = {"m": 1.0, "mm": 1e-3, "um": 1e-6, "inch": 0.0254, "mil": 0.0254 / 1000}


def test_table_matches_definitions():
    assert set(UNITS) == set(DEFINED)


@pytest.mark.parametrize("unit", sorted(DEFINED))
def test_every_unit(unit):
    assert unit_scale(unit) == pytest.approx(DEFINED[unit], rel=1e-15)
    assert to_si(2.5, unit) == pytest.approx(2.5 * DEFINED[unit], rel=1e-15)
    assert isinstance(to_si(1, unit), float)


def test_arrays_and_cross_checks():
    np.testing.assert_allclose(to_si([[1, 2], [3, 4]], "mm"), [[1e-3, 2e-3], [3e-3, 4e-3]])
    assert to_si(1000, "mil") == pytest.approx(to_si(1, "inch"), rel=1e-15)
    assert to_si(1000, "um") == pytest.approx(to_si(1, "mm"), rel=1e-15)
    assert to_si(39.37, "inch") == pytest.approx(1.0, rel=1e-4)   # about a metre


@pytest.mark.parametrize("bad", ["cm", "MM", "", None, 3])
def test_unknown_unit(bad):
    with pytest.raises(ValueError, match="expected one of 'mm', 'um', 'mil', 'inch', 'm'"):
        unit_scale(bad)
