"""SPICE subcircuit: a passive R-L fit of Z(f), checked by hand and by ngspice AC analysis."""
import re
import shutil
import subprocess

import numpy as np
import pytest

from copperpath.solver.output.exports.spice import fit, netlist, write_spice
from copperpath.solver.solve.result import Result

MU0 = 4e-7 * np.pi
SIGMA = 5.8e7
F = np.concatenate([[0.0], np.logspace(3, 8.5, 23)])


# --- reference: internal impedance of a copper slab ------------------------------------------

def slab(f, r_dc, t):
    """Internal impedance of a slab of thickness ``t`` with the field on one face:
    ``Z = R_dc (k t) coth(k t)``, ``k = (1 + j) / delta``, ``delta = 1 / sqrt(pi f mu0 sigma)``
    (exact 1-D diffusion solution; Wheeler 1942, "Formulas for the skin effect", Proc. IRE 30;
    Ramo, Whinnery & Van Duzer, *Fields and Waves in Communication Electronics*)."""
    f = np.asarray(f, dtype=float)
    out = np.full(f.shape, r_dc, dtype=complex)
    pos = f > 0
    kt = (1 + 1j) * np.sqrt(np.pi * f[pos] * MU0 * SIGMA) * t
    out[pos] = r_dc * kt / np.tanh(kt)
    return out


def slab_dc_inductance(r_dc, t):
    """Low-frequency limit of ``Im Z / w`` of :func:`slab`: ``R_dc mu0 sigma t^2 / 3``
    (uniform current; ``x coth x = 1 + x^2 / 3 + ...``)."""
    return r_dc * MU0 * SIGMA * t * t / 3


def test_reference_slab_limits():
    r_dc, t = 2e-3, 70e-6
    low = slab([10.0], r_dc, t)[0]
    assert low.real == pytest.approx(r_dc, rel=1e-6)
    assert low.imag / (2 * np.pi * 10.0) == pytest.approx(slab_dc_inductance(r_dc, t), rel=1e-6)
    # High frequency: R = R_dc t / delta (current in one skin depth)
    f = 1e9
    delta = 1 / np.sqrt(np.pi * f * MU0 * SIGMA)
    assert slab([f], r_dc, t)[0].real == pytest.approx(r_dc * t / delta, rel=1e-6)


# --- synthetic results ---------------------------------------------------------------------

def one_port():
    z = slab(F, 2e-3, 70e-6) + 2j * np.pi * F * 8e-9
    ell_dc = 8e-9 + slab_dc_inductance(2e-3, 70e-6)
    return Result("hot loop", ("loop",), F, z[:, None, None], dc_inductance=np.array([[ell_dc]]))


def two_port(l_a=10e-9, l_b=60e-9, m=20e-9, r_a=1e-3, r_b=3e-3, ports=("hot", "gate")):
    """Two loops sharing a return conductor c: Z = [[Za + Zc, Zc], [Zc, Zb + Zc]] + jw L_ext.
    The defaults give a non-diagonally-dominant inductance matrix (M = 20 nH > L11 = 10 nH)."""
    r_c, t = 1.5e-3, 35e-6
    za, zb, zc = slab(F, r_a, t), slab(F, r_b, 2 * t), slab(F, r_c, t)
    w = 2j * np.pi * F
    z = np.empty((len(F), 2, 2), dtype=complex)
    z[:, 0, 0] = za + zc + w * l_a
    z[:, 1, 1] = zb + zc + w * l_b
    z[:, 0, 1] = z[:, 1, 0] = zc + w * m
    lc = slab_dc_inductance(r_c, t)
    ell = np.array([[l_a + slab_dc_inductance(r_a, t) + lc, m + lc],
                    [m + lc, l_b + slab_dc_inductance(r_b, 2 * t) + lc]])
    return Result("two loops", ports, F, z, dc_inductance=ell)


def symmetric_two_port():
    return two_port(l_a=20e-9, l_b=20e-9, m=8e-9, r_a=2e-3, r_b=2e-3, ports=("hot.loop", "gate drive"))


def scaled_error(a, b):
    """``|a_ij - b_ij| / sqrt(|b_ii| |b_jj|)`` (``|a - b| / |b|`` for a one-port)."""
    d = np.abs(np.diagonal(b, axis1=1, axis2=2))
    return np.abs(a - b) / np.sqrt(d[:, :, None] * d[:, None, :])


def network_impedance(fitted, f):
    """Z of the fitted network, recomputed here from its element values: each branch is
    R0 + jwL + sum_k (R_k || jwL_k), coupled to the ports by ideal transformers u u^T."""
    w = 2 * np.pi * np.asarray(f)
    z = np.zeros((len(w), len(fitted.ports), len(fitted.ports)), dtype=complex)
    for b in fitted.branches:
        zb = b.resistance + 1j * w * b.inductance
        for r, ell in b.stages:
            zl = 1j * w * ell
            zb = zb + r * zl / (r + zl)  # R_k in parallel with L_k
        z += zb[:, None, None] * np.outer(b.ratios, b.ratios)
    return z


def not_an_rl_network():
    """``R = R0 (1 + sqrt(f / f0))`` with an independently chosen falling ``L(f)``: a rise of R
    already far below ``f0`` that no R-L network has (its R rises as ``f^2`` at first)."""
    z = 2e-3 * (1 + np.sqrt(F / 1e5)) + 2j * np.pi * F * (9e-9 + 5e-9 / (1 + F / 3e5))
    return Result("curve", ("loop",), F, z[:, None, None], dc_inductance=np.array([[14e-9]]))


CASES = {"one-port": one_port, "two-port": two_port, "symmetric two-port": symmetric_two_port}


# --- the fit, without a simulator ----------------------------------------------------------

@pytest.mark.parametrize("case", [*CASES, "not an R-L network"])
def test_fit_is_passive_and_reports_its_error_truthfully(case):
    r = CASES[case]() if case in CASES else not_an_rl_network()
    fitted = fit(r)
    values = [v for b in fitted.branches for v in (b.resistance, b.inductance)]
    values += [v for b in fitted.branches for st in b.stages for v in st]
    assert values and min(values) >= 0.0
    z_net = network_impedance(fitted, r.frequencies)
    err = scaled_error(z_net, r.impedance).max()
    assert fitted.max_relative_error == pytest.approx(err, rel=1e-6, abs=1e-12)
    if case in CASES:
        assert err < 0.01
    else:  # the limit of the model shows in the reported error, it is not hidden
        assert err > 0.05
    # Passive: Re Z of the network is positive semi-definite at every frequency, also between
    # and beyond the swept points.
    dense = np.logspace(0, 10, 400)
    eig = np.linalg.eigvalsh(network_impedance(fitted, dense).real)
    assert eig.min() >= -1e-12 * np.abs(eig).max()


def test_fit_matches_the_dc_inductance():
    r = two_port()
    fitted = fit(r)
    ell_dc = np.zeros((2, 2))
    for b in fitted.branches:
        ell_dc += (b.inductance + sum(ell for _, ell in b.stages)) * np.outer(b.ratios, b.ratios)
    np.testing.assert_allclose(ell_dc, r.dc_inductance, rtol=0.01)


def test_dc_only_sweep_gives_r_and_l():
    r = Result("dc", ("loop",), np.array([0.0]), np.array([[[3e-3 + 0j]]]),
               dc_inductance=np.array([[25e-9]]))
    fitted = fit(r)
    (b,) = fitted.branches
    assert (b.resistance, b.inductance, b.stages) == (pytest.approx(3e-3), pytest.approx(25e-9), ())


def test_netlist_text(tmp_path):
    r = symmetric_two_port()
    fitted = write_spice(tmp_path / "copper.lib", r, name="hot loop")
    text = (tmp_path / "copper.lib").read_text()
    assert fitted.name == "hot_loop"
    assert ".subckt hot_loop hot_loop_p hot_loop_m gate_drive_p gate_drive_m" in text
    assert text.rstrip().endswith(".ends hot_loop")
    shown = float(re.search(r"fit error: .* = ([0-9.eE+-]+) %", text).group(1))
    assert shown == pytest.approx(100 * fitted.max_relative_error, rel=1e-2)
    assert text == netlist(fitted, title=r.title)


# --- ngspice -------------------------------------------------------------------------------

def ngspice_impedance(fitted, frequencies, tmp_path):
    """Z from an ngspice AC analysis: a 1 A AC current source into each port in turn, every
    ``_m`` pin grounded (the ports are coupled only through controlled sources), the port
    voltages written with ``wrdata`` at each swept frequency (``ac lin 1 f f``)."""
    lib = tmp_path / "copper.lib"
    out = tmp_path / "out.txt"
    n = len(fitted.ports)
    z = np.zeros((len(frequencies), n, n), dtype=complex)
    pins = " ".join(f"{p} 0" for p, _ in fitted.pins)
    probes = " ".join(f"v({p})" for p, _ in fitted.pins)
    for j, (pin, _) in enumerate(fitted.pins):
        lines = ["* bench", f".include {lib}", f"X1 {pins} {fitted.name}",
                 f"Idrive 0 {pin} DC 0 AC 1", ".control", "set wr_singlescale"]
        for k, f in enumerate(frequencies):
            lines += [f"ac lin 1 {f:.17g} {f:.17g}", f"wrdata {out} {probes}"]
            lines += ["set appendwrite"] if k == 0 else []
        lines += ["quit 0", ".endc", ".end"]
        deck = tmp_path / f"bench{j}.cir"
        deck.write_text("\n".join(lines) + "\n")
        run = subprocess.run(["ngspice", "-b", str(deck)], capture_output=True, text=True,
                             timeout=60)
        log = run.stdout + run.stderr
        assert run.returncode == 0 and not re.search(r"error|unknown|warning", log, re.I), log
        data = np.loadtxt(out, ndmin=2)
        np.testing.assert_allclose(data[:, 0], frequencies, rtol=1e-8)
        z[:, :, j] = data[:, 1::2] + 1j * data[:, 2::2]
    return z


@pytest.mark.skipif(shutil.which("ngspice") is None, reason="ngspice is not installed")
@pytest.mark.parametrize("case", CASES)
def test_ngspice_reproduces_z(case, tmp_path):
    r = CASES[case]()
    fitted = write_spice(tmp_path / "copper.lib", r)
    z_sim = ngspice_impedance(fitted, r.frequencies, tmp_path)
    # The simulator reproduces the fitted network (wrdata prints 9 significant digits) ...
    assert scaled_error(z_sim, fitted.impedance(r.frequencies)).max() < 1e-6
    # ... and the extracted Z within 2 % at every swept frequency: |Z_sim - Z| / |Z| (for
    # coupling terms relative to sqrt(|Z_ii| |Z_jj|)), which bounds both real and imaginary parts.
    assert scaled_error(z_sim, r.impedance).max() < 0.02
