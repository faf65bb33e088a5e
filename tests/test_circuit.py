"""Circuit estimates of the switching loop: spike, ringing, damping, snubber start."""
import math

import numpy as np
import pytest
from scipy.optimize import brentq

from copperpath.geometry.errors import InputError
from copperpath.geometry.model import CircuitOptions
from copperpath.solver.analysis.circuit import CAUTION, FORMULAS, estimates
from copperpath.solver.solve.result import Result


def loop_result(ell_hf=50e-9, r_hf=0.1, ports=("loop",)):
    """A loop whose inductance falls and resistance rises with frequency (skin-effect shape);
    the values at the highest swept frequency (100 MHz) are ``ell_hf`` and ``r_hf``."""
    f = np.array([0.0, 1e3, 1e6, 1e8])
    ell = np.array([1.3, 1.25, 1.1, 1.0]) * ell_hf
    res = np.array([0.2, 0.21, 0.5, 1.0]) * r_hf
    z = res + 2j * np.pi * f * ell
    n = len(ports)
    zz = np.zeros((len(f), n, n), dtype=complex)
    zz[:, range(n), range(n)] = z[:, None]
    return Result("loop", tuple(ports), f, zz, dc_inductance=np.eye(n) * ell[0])


# --- reference formulas, checked before use ------------------------------------------------

def thomson_hz(ell, c):
    """LC resonance ``1 / (2 pi sqrt(L C))`` (Thomson 1853)."""
    return 1.0 / (2 * math.pi * math.sqrt(ell * c))


def series_rlc_zeta(r, ell, c):
    """Damping ratio of a series R-L-C: ``s^2 + (R/L) s + 1/(LC)`` compared with
    ``s^2 + 2 zeta w0 s + w0^2`` gives ``zeta = (R/2) sqrt(C/L)`` (any circuit-theory text,
    e.g. Desoer & Kuh 1969, *Basic Circuit Theory*, ch. 5; cited from memory)."""
    return 0.5 * r * math.sqrt(c / ell)


def test_reference_thomson_is_the_zero_of_the_series_reactance():
    # The reactance w L - 1/(w C) of a series L-C vanishes at the resonance: find it numerically.
    ell, c = 10e-9, 1e-9
    w0 = brentq(lambda w: w * ell - 1 / (w * c), 1e6, 1e10, xtol=1e-6)
    assert thomson_hz(ell, c) == pytest.approx(w0 / (2 * math.pi), rel=1e-9)


def test_reference_zeta_from_the_roots_of_the_characteristic_polynomial():
    # For an underdamped pair of roots s = -zeta w0 +- j w0 sqrt(1 - zeta^2): zeta = -Re s / |s|.
    r, ell, c = 0.1, 10e-9, 1e-9
    roots = np.roots([1.0, r / ell, 1 / (ell * c)])
    assert series_rlc_zeta(r, ell, c) == pytest.approx(-roots[0].real / abs(roots[0]), rel=1e-9)


# --- the estimates ---------------------------------------------------------------------------

def test_overshoot_50nH_at_20A_per_us_is_1V():
    # V = L di/dt: 50 nH at 20 A/us gives 1.0 V (common practice, rule of thumb of the trade).
    est = estimates(loop_result(ell_hf=50e-9), CircuitOptions(di_dt=20e6, input_voltage=24.0))
    assert est.loop_inductance_h == pytest.approx(50e-9, rel=1e-12)
    assert est.frequency_hz == 1e8
    assert est.overshoot_v == pytest.approx(1.0, rel=1e-12)
    assert est.peak_switch_node_v == pytest.approx(25.0, rel=1e-12)


def test_di_dt_from_current_and_rise_time():
    # 20 A in 1 us is 20 A/us: the same 1.0 V (common practice).
    est = estimates(loop_result(), CircuitOptions(current=20.0, rise_time=1e-6))
    assert est.di_dt_a_per_s == pytest.approx(20e6)
    assert est.overshoot_v == pytest.approx(1.0, rel=1e-12)
    assert est.peak_switch_node_v is None
    assert "input_voltage" in est.missing["peak_switch_node_v"]


def test_ringing_damping_and_snubber_against_hand_values():
    # L = 10 nH, C_oss = 1 nF, R = 0.1 ohm, computed by hand:
    #   f = 1 / (2 pi sqrt(1e-17)) = 1 / (2 pi * 3.16228e-9 s) = 50.329 MHz     (Thomson 1853)
    #   Z0 = sqrt(10e-9 / 1e-9) = 3.1623 ohm, zeta = 0.05 * sqrt(0.1) = 0.015811
    #   R_s = Z0 = 3.1623 ohm, C_s = 4 * 1 nF = 4 nF       (common practice for RC snubbers)
    est = estimates(loop_result(ell_hf=10e-9, r_hf=0.1), CircuitOptions(output_capacitance=1e-9))
    assert est.ringing_hz == pytest.approx(50.329e6, rel=1e-4)
    assert est.ringing_hz == pytest.approx(thomson_hz(10e-9, 1e-9), rel=1e-12)
    assert est.characteristic_impedance_ohm == pytest.approx(3.1623, rel=1e-4)
    assert est.damping_ratio == pytest.approx(0.015811, rel=1e-4)
    assert est.damping_ratio == pytest.approx(series_rlc_zeta(0.1, 10e-9, 1e-9), rel=1e-12)
    assert est.snubber_r_ohm == pytest.approx(3.1623, rel=1e-4)
    assert est.snubber_c_f == pytest.approx(4e-9, rel=1e-12)
    assert est.overshoot_v is None and "di_dt" in est.missing["overshoot_v"]
    assert any("underdamped" in n for n in est.notes)


def test_loop_values_come_from_the_highest_swept_frequency():
    r = loop_result(ell_hf=20e-9, r_hf=0.05)
    est = estimates(r, CircuitOptions(di_dt=1e9))
    k = len(r.frequencies) - 1
    assert est.loop_inductance_h == pytest.approx(r.impedance[k, 0, 0].imag / (2 * math.pi * 1e8))
    assert est.loop_resistance_ohm == pytest.approx(r.impedance[k, 0, 0].real)


def test_dc_only_sweep_uses_the_dc_limit_and_says_so():
    r = Result("dc", ("loop",), np.array([0.0]), np.array([[[0.01 + 0j]]]),
               dc_inductance=np.array([[30e-9]]))
    est = estimates(r, CircuitOptions(di_dt=1e9))
    assert est.loop_inductance_h == 30e-9
    assert est.overshoot_v == pytest.approx(30.0)
    assert any("DC-limit" in n for n in est.notes)


def test_chosen_port_and_to_dict():
    r = loop_result(ports=("gate", "loop"))
    est = estimates(r, CircuitOptions(port="loop", di_dt=2e9, output_capacitance=800e-12,
                                      input_voltage=24.0))
    d = est.to_dict()
    assert d["port"] == "loop"
    for key in ("overshoot_v", "peak_switch_node_v", "ringing_hz", "characteristic_impedance_ohm",
                "damping_ratio", "snubber_r_ohm", "snubber_c_f", "loop_inductance_h",
                "loop_resistance_ohm", "di_dt_a_per_s"):
        assert isinstance(d[key], float), key
        assert key in d["formulas"]
    assert d["formulas"] == FORMULAS
    assert d["missing"] == {}


def test_missing_capacitance_leaves_none_with_reasons():
    d = estimates(loop_result(), CircuitOptions(di_dt=1e9)).to_dict()
    for key in ("ringing_hz", "characteristic_impedance_ohm", "damping_ratio", "snubber_r_ohm",
                "snubber_c_f"):
        assert d[key] is None
        assert "output_capacitance" in d["missing"][key]


def test_bad_input_is_one_clear_line():
    with pytest.raises(InputError, match=r"case\.toml: \[circuit\]: 'port' must name a port"):
        estimates(loop_result(), CircuitOptions(port="nope"), source="case.toml")
    with pytest.raises(InputError, match=r"'di_dt' must be a positive number, got -1"):
        estimates(loop_result(), CircuitOptions(di_dt=-1.0))
    with pytest.raises(InputError, match=r"'output_capacitance'"):
        estimates(loop_result(), CircuitOptions(output_capacitance=float("nan")))


def test_caution_names_the_standards_and_the_limits():
    for word in ("measurement", "creepage", "clearance", "insulation", "IEC 62368-1", "IPC-2221",
                 "qualified engineer"):
        assert word in CAUTION
