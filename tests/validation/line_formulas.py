"""Published closed forms for the inductance of a strip over a ground plane, implemented here
from the published expressions (and checked in test_line_formulas.py) to judge the solver.

Air-filled lines: ``L' = Z0 / c0`` (TEM, eps_r = 1).
"""
import numpy as np

MU0 = 4e-7 * np.pi
C0 = 299_792_458.0
ETA0 = MU0 * C0


def microstrip_z0_hammerstad_jensen(w, h, t=0.0):
    """Characteristic impedance of an air microstrip (ohm).

    Hammerstad & Jensen 1980, "Accurate models for microstrip computer-aided design",
    IEEE MTT-S Int. Microwave Symp. Digest, pp. 407-409: the zero-thickness formula (stated
    accuracy 0.01 % for 0.01 <= w/h <= 100) and its thickness correction for eps_r = 1
    (written from memory; checked by its limits and against Wheeler 1977 in the tests).

    Parameters
    ----------
    w : float
        Strip width (m).
    h : float
        Height of the strip's bottom face above the plane's top face (m).
    t : float
        Strip thickness (m).
    """
    u = w / h
    if t > 0:
        tn = t / h
        u = u + (tn / np.pi) * np.log(1 + 4 * np.e / (tn / np.tanh(np.sqrt(6.517 * u)) ** 2))
    f = 6 + (2 * np.pi - 6) * np.exp(-((30.666 / u) ** 0.7528))
    return ETA0 / (2 * np.pi) * np.log(f / u + np.sqrt(1 + (2 / u) ** 2))


def microstrip_z0_wheeler(w, h):
    """Air microstrip impedance of zero thickness (ohm), Wheeler 1977, "Transmission-line
    properties of a strip on a dielectric sheet on a plane", IEEE Trans. MTT 25(8), with
    eps_r = 1 (from memory; checked by its wide and narrow limits in the tests)."""
    a = 4 * h / w
    return ETA0 / (4 * np.pi) * np.log(1 + a * (2 * a + np.sqrt((2 * a) ** 2 + np.pi**2)))


def microstrip_inductance_per_length(w, h, t=0.0):
    """External inductance per unit length of an air microstrip, ``Z0 / c0`` (H/m)."""
    return microstrip_z0_hammerstad_jensen(w, h, t) / C0


def parallel_plate_inductance_per_length(w, h, t=0.0):
    """Two plates of width ``w``, gap ``h`` (between the facing faces), thickness ``t``, with the
    current uniform through the thickness and across the width: ``mu0 (h + 2t/3) / w`` (H/m),
    Ampere's law plus the internal inductance of a flat conductor (Ramo, Whinnery & Van Duzer,
    Fields and Waves in Communication Electronics)."""
    return MU0 * (h + 2 * t / 3) / w


def skin_depth(f, sigma=5.8e7):
    """``1 / sqrt(pi f mu0 sigma)`` (m)."""
    return 1.0 / np.sqrt(np.pi * f * MU0 * sigma)


def microstrip_inductance_with_skin(w, h, t, f, sigma=5.8e7):
    """Loop inductance per length of an air microstrip of copper many skin depths thick (H/m).

    Wheeler's incremental-inductance rule (Wheeler 1942, "Formulas for the skin effect",
    Proc. IRE 30, pp. 412-424): the internal inductance of good conductors equals the rise of
    the external inductance when every conductor surface recedes by ``delta / 2``. Applied to
    Hammerstad & Jensen's external inductance (:func:`microstrip_inductance_per_length`): the
    strip narrows and thins by ``delta``, the gap grows by ``delta`` (strip bottom and plane
    top each recede). Its resistance per length is ``omega`` times the internal inductance.
    """
    d = skin_depth(f, sigma)
    return microstrip_inductance_per_length(w - d, h + d, t - d)
