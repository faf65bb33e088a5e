"""What the extracted copper means for the converter: spike, ringing, damping, snubber start.

The loop of one port is treated as a series R-L-C circuit: the copper's loop inductance ``L``
and resistance ``R`` in series with the switch's output capacitance ``C_oss``. All values in
SI units (H, ohm, F, V, A/s, Hz).

Choice of ``L`` and ``R``: both are taken at the **highest swept frequency** (``Im Z / 2 pi f``
and ``Re Z`` of the port's own impedance). A fast switching edge and the ringing it excites
lie at tens to hundreds of MHz, where the return current has crowded under the forward path
and the skin effect has set in, so the high-frequency inductance (the lowest of the sweep) and
the high-frequency resistance (the highest) are the ones the edge sees. Where the sweep holds
only ``f = 0`` the DC-limit inductance is used instead, and the estimate says so.

The snubber's dissipation ``C_s V^2 f_sw`` needs the switching frequency, which a case does not
hold, so it is not estimated.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

from copperpath.geometry.errors import input_error
from copperpath.geometry.model import CircuitOptions

CAUTION = (
    "These figures are estimates of the copper's parasitics and of their effect on a simple "
    "series R-L-C model of the switching loop; they do not replace measurement of the built "
    "board. copperpath does not check creepage, clearance or insulation: mains-connected and "
    "high-voltage designs must follow the applicable safety standards (e.g. IEC 62368-1, "
    "IPC-2221) and local codes, and the design remains the responsibility of a qualified "
    "engineer."
)

SNUBBER_C_RATIO = (3.0, 4.0)
"""Snubber capacitance as a multiple of ``C_oss`` (common practice); the estimate uses the upper end."""

FORMULAS = {
    "loop_inductance_h": "L = Im Z_pp(f_max) / (2 pi f_max), the port's own loop at the highest swept frequency",
    "loop_resistance_ohm": "R = Re Z_pp(f_max), at the same frequency as L",
    "di_dt_a_per_s": "di/dt as given, or current / rise_time",
    "overshoot_v": "V_os = L * di/dt",
    "peak_switch_node_v": "V_peak = V_in + V_os",
    "ringing_hz": "f_ring = 1 / (2 pi sqrt(L * C_oss))",
    "characteristic_impedance_ohm": "Z_0 = sqrt(L / C_oss)",
    "damping_ratio": "zeta = (R / 2) * sqrt(C_oss / L)  (series R-L-C, R of the extracted loop only)",
    "snubber_r_ohm": "R_s = Z_0 = sqrt(L / C_oss)  (common practice)",
    "snubber_c_f": "C_s = 4 * C_oss  (common practice: 3 to 4 times C_oss)",
}
"""Formula of every quantity, for reports."""


@dataclass(frozen=True)
class CircuitEstimate:
    """Circuit figures for one port's loop (SI units; ``None`` where an input is missing).

    Attributes
    ----------
    port : str
        The port whose loop was used.
    frequency_hz : float
        Frequency at which ``loop_inductance_h`` and ``loop_resistance_ohm`` were taken.
    loop_inductance_h, loop_resistance_ohm : float
        Henry and ohm.
    di_dt_a_per_s, overshoot_v, peak_switch_node_v, ringing_hz, characteristic_impedance_ohm,
    damping_ratio, snubber_r_ohm, snubber_c_f : float or None
        A/s, V, V, Hz, ohm, 1, ohm, F.
    formulas : dict of str to str
        The formula behind each quantity.
    missing : dict of str to str
        For each quantity that is ``None``: why it could not be computed.
    notes : tuple of str
        Remarks on how far the figures can be trusted.
    """

    port: str
    frequency_hz: float
    loop_inductance_h: float
    loop_resistance_ohm: float
    di_dt_a_per_s: float | None = None
    overshoot_v: float | None = None
    peak_switch_node_v: float | None = None
    ringing_hz: float | None = None
    characteristic_impedance_ohm: float | None = None
    damping_ratio: float | None = None
    snubber_r_ohm: float | None = None
    snubber_c_f: float | None = None
    formulas: dict = field(default_factory=lambda: dict(FORMULAS))
    missing: dict = field(default_factory=dict)
    notes: tuple = ()

    def to_dict(self) -> dict:
        """The figures as plain JSON-ready values (``None`` for what could not be computed)."""
        keys = ("overshoot_v", "peak_switch_node_v", "ringing_hz", "characteristic_impedance_ohm",
                "damping_ratio", "snubber_r_ohm", "snubber_c_f", "loop_inductance_h",
                "loop_resistance_ohm", "di_dt_a_per_s")
        out = {k: getattr(self, k) for k in keys}
        out.update(port=self.port, frequency_hz=self.frequency_hz, formulas=dict(self.formulas),
                   missing=dict(self.missing), notes=list(self.notes))
        return out


def estimates(result, options: CircuitOptions, *, source="[circuit]") -> CircuitEstimate:
    """Overshoot, ringing, damping and a starting RC snubber for one port's loop.

    Parameters
    ----------
    result : copperpath.solver.solve.result.Result
        The extracted impedances.
    options : copperpath.geometry.model.CircuitOptions
        ``port`` (default: the first port), ``di_dt`` in A/s or else ``current`` (A) and
        ``rise_time`` (s) (``di_dt`` wins when both are given), ``output_capacitance`` (F),
        ``input_voltage`` (V).
    source : str
        Where the options came from, for error messages (e.g. the case file's path).

    Returns
    -------
    CircuitEstimate

    Raises
    ------
    copperpath.geometry.errors.InputError
        The port is unknown or a given value is not a positive number.

    Examples
    --------
    >>> import numpy as np
    >>> from copperpath.solver.solve.result import Result
    >>> f = np.array([1e8])
    >>> z = (0.01 + 2j * np.pi * f * 50e-9)[:, None, None]
    >>> r = Result("loop", ("loop",), f, z)
    >>> round(estimates(r, CircuitOptions(di_dt=20e6)).overshoot_v, 6)
    1.0
    """
    k, port = _port_index(result, options, source)
    f_used, ell, res, notes = _loop_values(result, k)
    di_dt, missing = _di_dt(options, source)
    c_oss = _positive(options.output_capacitance, "output_capacitance", source)
    v_in = _finite(options.input_voltage, "input_voltage", source)
    est = {"port": port, "frequency_hz": f_used, "loop_inductance_h": ell, "loop_resistance_ohm": res,
               "di_dt_a_per_s": di_dt}
    if di_dt is None:
        missing["overshoot_v"] = missing["peak_switch_node_v"] = missing["di_dt_a_per_s"]
    else:
        est["overshoot_v"] = ell * di_dt
        if v_in is None:
            missing["peak_switch_node_v"] = "needs 'input_voltage'"
        else:
            est["peak_switch_node_v"] = v_in + est["overshoot_v"]
    if c_oss is None:
        for key in ("ringing_hz", "characteristic_impedance_ohm", "damping_ratio",
                    "snubber_r_ohm", "snubber_c_f"):
            missing[key] = "needs 'output_capacitance' (the switch's C_oss)"
    else:
        est.update(_ringing(ell, res, c_oss))
        notes += _ringing_notes(est["ringing_hz"], f_used, est["damping_ratio"])
    return CircuitEstimate(**est, missing=missing, notes=tuple(notes))


def _port_index(result, options, source):
    if options.port is None:
        return 0, result.ports[0]
    if options.port not in result.ports:
        raise input_error(source, "[circuit]", f"'port' must name a port, one of "
                          f"{list(result.ports)}, got {options.port!r}")
    return list(result.ports).index(options.port), options.port


def _loop_values(result, k):
    """``(f, L, R, notes)`` of port ``k`` at the highest swept frequency."""
    f = float(result.frequencies[-1])
    ell = float(result.inductance[-1, k, k])
    res = float(result.resistance[-1, k, k])
    notes = []
    if f == 0:
        notes.append("the sweep holds only f = 0: L is the DC-limit inductance, higher than "
                     "what a fast edge sees")
    if not (math.isfinite(ell) and ell > 0):
        raise ValueError(f"port {result.ports[k]!r}: loop inductance {ell!r} H at "
                         f"{f:g} Hz is not a positive number")
    return f, ell, res, notes


def _di_dt(options, source):
    """``(di/dt or None, missing)`` from ``di_dt`` or ``current / rise_time``."""
    given = _positive(options.di_dt, "di_dt", source)
    if given is not None:
        return given, {}
    current = _positive(options.current, "current", source)
    rise = _positive(options.rise_time, "rise_time", source)
    if current is not None and rise is not None:
        return current / rise, {}
    return None, {"di_dt_a_per_s": "needs 'di_dt', or 'current' and 'rise_time'"}


def _ringing(ell, res, c_oss):
    z0 = math.sqrt(ell / c_oss)
    return {"ringing_hz": 1.0 / (2 * math.pi * math.sqrt(ell * c_oss)),
            "characteristic_impedance_ohm": z0,
            "damping_ratio": 0.5 * res * math.sqrt(c_oss / ell),
            "snubber_r_ohm": z0,
            "snubber_c_f": SNUBBER_C_RATIO[1] * c_oss}


def _ringing_notes(f_ring, f_used, zeta):
    notes = ["the damping ratio counts only the resistance of the extracted loop (copper and the "
             "case's lumped branches); capacitor ESR not modelled, switching and core losses add damping"]
    if f_ring > f_used > 0:
        notes.append(f"the ringing frequency {f_ring:.4g} Hz lies above the highest swept "
                     f"frequency {f_used:.4g} Hz: L and R were taken at {f_used:.4g} Hz")
    if zeta < 1:
        notes.append("underdamped (zeta < 1): the switch node rings after each edge")
    return notes


def _positive(value, key, source):
    if value is None:
        return None
    if not (isinstance(value, (int, float)) and math.isfinite(value) and value > 0):
        raise input_error(source, "[circuit]", f"'{key}' must be a positive number, got {value!r}")
    return float(value)


def _finite(value, key, source):
    if value is None:
        return None
    if not (isinstance(value, (int, float)) and math.isfinite(value)):
        raise input_error(source, "[circuit]", f"'{key}' must be a number, got {value!r}")
    return float(value)
