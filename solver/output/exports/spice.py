"""A passive SPICE subcircuit whose port impedances reproduce the extracted Z(f).

Model. The copper is a network of resistors and (coupled) inductors, so its impedance matrix has
the form of an R-L Foster expansion with poles on the negative real axis. It is fitted as

    Z(s) = sum_b  u_b u_b^T  z_b(s),   z_b(s) = R0_b + s L_b + sum_k c_bk s / (s + p_k)

- ``u_b`` are fixed real vectors ("turns ratios", one entry per port): each port alone
  (``e_i``), each pair in and against phase (``e_i +- e_j``), and the eigenvectors of
  ``Re Z`` and ``Im Z / (2 pi f)`` at a few swept frequencies. A one-port has only ``u = [1]``.
- ``p_k`` are fixed poles, log-spaced (``poles_per_decade``) from a decade below the lowest to a
  decade above the highest positive swept frequency.
- The coefficients ``R0_b, L_b, c_bk`` come from non-negative least squares on the real and
  imaginary parts of every entry ``Z_ij`` (``i <= j``) at every swept frequency, each equation
  divided by ``sqrt(|Z_ii| |Z_jj|)`` (relative weighting; for a one-port ``|Z|``). Where the
  sweep holds ``f = 0`` and the result a DC-limit inductance, that inductance is fitted as well.

Realisation. Each term ``c s / (s + p)`` is a resistor ``R = c`` in parallel with an inductor
``L = c / p``; ``z_b`` is ``R0`` in series with ``L`` and those parallel pairs. All values are
``>= 0``, so every ``z_b`` is passive. A branch with ``u = e_i`` sits in series in port ``i``.
Every other branch is coupled to the ports by ideal transformers with ratios ``u_b``, written as
voltage-controlled voltage sources in each port's series path and current-controlled current
sources feeding the branch; an ideal transformer neither stores nor dissipates energy, so the
subcircuit is passive. Port ``i`` has the pins ``<port>_p`` (where the port current enters) and
``<port>_m``; the transformer branches refer to the global ground node ``0`` but are coupled
to the pins only through the controlled sources, so the ports stay floating.

The fit error reported is ``max |Z_fit,ij - Z_ij| / sqrt(|Z_ii| |Z_jj|)`` over the sweep and all
port pairs (``|Z_fit - Z| / |Z|`` for a one-port).
"""
from __future__ import annotations

import itertools
import re
from dataclasses import dataclass

import numpy as np
from scipy.optimize import nnls

from copperpath.solver.output.files import write_text


@dataclass(frozen=True)
class Branch:
    """One series R-L chain, coupled to the ports with the turns ratios ``ratios``.

    Attributes
    ----------
    ratios : tuple of float
        Turns ratio to each port (``u_b``).
    resistance : float
        Series resistance ``R0`` in ohm.
    inductance : float
        Series inductance in henry.
    stages : tuple of (float, float)
        ``(R_k, L_k)`` in ohm and henry: a resistor in parallel with an inductor, in series.
    """

    ratios: tuple
    resistance: float
    inductance: float
    stages: tuple

    def impedance(self, frequencies):
        """Impedance of the chain in ohm, shape (F,), at ``frequencies`` in Hz."""
        s = 2j * np.pi * np.asarray(frequencies, dtype=float)
        z = self.resistance + s * self.inductance
        for r, ell in self.stages:
            z = z + r * s * ell / (r + s * ell)
        return z


@dataclass(frozen=True, eq=False)
class SpiceFit:
    """The fitted passive network and how well it reproduces the extracted Z.

    Attributes
    ----------
    name : str
        Subcircuit name.
    ports : tuple of str
        Port names, in the order of the result.
    pins : tuple of (str, str)
        SPICE node names ``(<port>_p, <port>_m)`` of each port.
    branches : tuple of Branch
    poles_hz : ndarray
        The fixed poles ``p_k / (2 pi)`` in Hz.
    frequencies : ndarray
        The swept frequencies in Hz.
    relative_error : ndarray, shape (F, P, P)
        ``|Z_fit,ij - Z_ij| / sqrt(|Z_ii| |Z_jj|)`` at each frequency.
    max_relative_error : float
        The largest of ``relative_error``.
    """

    name: str
    ports: tuple
    pins: tuple
    branches: tuple
    poles_hz: np.ndarray
    frequencies: np.ndarray
    relative_error: np.ndarray
    max_relative_error: float

    def impedance(self, frequencies):
        """Impedance matrix of the network in ohm, shape (F, P, P), at ``frequencies`` in Hz."""
        return _network_impedance(self.branches, len(self.ports), frequencies)


def fit(result, *, name="copper", poles_per_decade=3):
    """Fit a passive R-L network to ``result.impedance`` (see the module docstring).

    Parameters
    ----------
    result : copperpath.solver.solve.result.Result
    name : str
        Subcircuit name (characters other than letters, digits and ``_`` become ``_``).
    poles_per_decade : int
        Density of the fixed poles.

    Returns
    -------
    SpiceFit
    """
    f = np.asarray(result.frequencies, dtype=float)
    z = np.asarray(result.impedance, dtype=complex)
    poles = _poles(f, poles_per_decade)
    vectors = _ratio_vectors(f, z)
    a, b = _equations(f, z, result.dc_inductance, vectors, poles)
    norm = np.linalg.norm(a, axis=0)
    norm[norm == 0] = 1.0
    x, _ = nnls(a / norm, b, maxiter=50 * a.shape[1])
    coef = (x / norm).reshape(len(vectors), len(poles) + 2)
    branches = tuple(_branch(u, c, poles) for u, c in zip(vectors, coef) if np.any(c > 0))
    err = np.abs(_network_impedance(branches, z.shape[1], f) - z) / _scale(z)
    return SpiceFit(_identifier(name), tuple(result.ports), _pins(result.ports), branches,
                    poles / (2 * np.pi), f, err, float(err.max()))


def write_spice(path, result, *, name="copper", poles_per_decade=3):
    """Fit ``result`` and write the subcircuit as an ngspice-compatible netlist.

    Parameters
    ----------
    path : str or os.PathLike
        Target file, e.g. ``OUT/copper.lib``; include it with ``.include`` and instantiate
        ``X1 <port>_p <port>_m ... <name>``.
    result : copperpath.solver.solve.result.Result
    name : str
        Subcircuit name.
    poles_per_decade : int
        Density of the fixed poles of the fit.

    Returns
    -------
    SpiceFit
        The fit report; ``max_relative_error`` is also written in the file's header.
    """
    fitted = fit(result, name=name, poles_per_decade=poles_per_decade)
    write_text(path, netlist(fitted, title=result.title))
    return fitted


def netlist(fitted, *, title=""):
    """The subcircuit text of a :class:`SpiceFit`."""
    f = fitted.frequencies
    lines = [f"* {title}".rstrip(),
             "* copper as a passive SPICE subcircuit, generated by copperpath",
             "* model: Z(s) = sum_b u_b u_b^T [R0 + s L + sum_k R_k s / (s + R_k / L_k)], all R, L >= 0;",
             "*   branches with u other than a single port are coupled by ideal transformers (E/F sources)",
             f"* fit error: max |Z_fit - Z| / sqrt(|Z_ii| |Z_jj|) = {100 * fitted.max_relative_error:.3g} %"
             f" over {len(f)} frequencies, {f.min():.4g} Hz to {f.max():.4g} Hz",
             "* pins: for each port <port>_p (port current enters) and <port>_m"]
    lines += [f"*   {p}: {a} {m}" for p, (a, m) in zip(fitted.ports, fitted.pins)]
    lines.append(f".subckt {fitted.name} " + " ".join(a + " " + m for a, m in fitted.pins))
    own = [[b for b in fitted.branches if _single_port(b) == i] for i in range(len(fitted.ports))]
    coupled = [b for b in fitted.branches if _single_port(b) is None]
    for i, (p, m) in enumerate(fitted.pins):
        lines += _port_chain(i, p, m, own[i], coupled)
    for k, b in enumerate(coupled):
        lines += _coupled_branch(k, b)
    lines.append(f".ends {fitted.name}")
    return "\n".join(lines) + "\n"


def _network_impedance(branches, n_ports, frequencies):
    """``sum_b u_b u_b^T z_b(f)`` in ohm, shape (F, P, P)."""
    f = np.atleast_1d(np.asarray(frequencies, dtype=float))
    z = np.zeros((len(f), n_ports, n_ports), dtype=complex)
    for b in branches:
        z += b.impedance(f)[:, None, None] * np.outer(b.ratios, b.ratios)
    return z


def _poles(f, per_decade):
    """Fixed poles in rad/s, log-spaced a decade beyond the positive swept frequencies."""
    pos = f[f > 0]
    if pos.size == 0:
        return np.zeros(0)
    lo, hi = np.log10(pos.min()) - 1, np.log10(pos.max()) + 1
    n = int(np.ceil((hi - lo) * per_decade)) + 1
    return 2 * np.pi * np.logspace(lo, hi, n)


def _ratio_vectors(f, z):
    """Candidate turns-ratio vectors ``u_b`` (rows), largest entry +1, without repeats."""
    n = z.shape[1]
    eye = np.eye(n)
    cand = list(eye)
    for i in range(n):
        for j in range(i + 1, n):
            cand += [eye[i] + eye[j], eye[i] - eye[j]]
    if n > 1:
        w = 2 * np.pi * f
        for k in np.unique(np.linspace(0, len(f) - 1, min(len(f), 6)).round().astype(int)):
            parts = [z[k].real] + ([z[k].imag / w[k]] if w[k] > 0 else [])
            for m in parts:
                cand += list(np.linalg.eigh(0.5 * (m + m.T))[1].T)
    out = {}
    for u in cand:
        u = u / u[np.argmax(np.abs(u))]
        u[np.abs(u) < 1e-9] = 0.0
        out.setdefault(tuple(np.round(u, 9)), u)
    return list(out.values())


def _equations(f, z, dc_inductance, vectors, poles):
    """Weighted real equations ``a x = b`` for the coefficients of all branches."""
    s = 2j * np.pi * f
    h = np.column_stack([np.ones_like(s), s] + [s / (s + p) for p in poles])      # (F, K+2)
    iu, ju = np.triu_indices(z.shape[1])
    uu = np.array([u[iu] * u[ju] for u in vectors])                               # (B, E)
    scale = _scale(z)[:, iu, ju]                                                   # (F, E)
    cols = h[:, None, None, :] * uu.T[None, :, :, None] / scale[:, :, None, None]  # (F, E, B, K+2)
    target = z[:, iu, ju] / scale
    dc = f == 0
    rows = [cols.real.reshape(-1, cols[0, 0].size), cols[~dc].imag.reshape(-1, cols[0, 0].size)]
    rhs = [target.real.ravel(), target[~dc].imag.ravel()]
    if dc.any() and dc_inductance is not None and np.all(np.isfinite(dc_inductance)):
        ell = np.asarray(dc_inductance, dtype=float)
        ell_scale = np.sqrt(np.abs(np.outer(np.diag(ell), np.diag(ell))))[iu, ju]
        g = np.concatenate([[0.0, 1.0], 1.0 / poles])
        rows.append((uu.T[:, :, None] * g / ell_scale[:, None, None]).reshape(len(iu), -1))
        rhs.append(ell[iu, ju] / ell_scale)
    return np.vstack(rows), np.concatenate(rhs)


def _scale(z):
    """``sqrt(|Z_ii| |Z_jj|)`` per frequency, shape (F, P, P), never zero."""
    d = np.abs(np.diagonal(z, axis1=1, axis2=2))
    out = np.sqrt(d[:, :, None] * d[:, None, :])
    return np.maximum(out, 1e-30)


def _branch(u, c, poles):
    stages = tuple((float(ck), float(ck / pk)) for ck, pk in zip(c[2:], poles) if ck > 0)
    return Branch(tuple(float(v) for v in u), float(c[0]), float(c[1]), stages)


def _single_port(branch):
    """Index of the port a branch belongs to alone, or ``None`` for a coupled branch."""
    nz = np.flatnonzero(branch.ratios)
    return int(nz[0]) if len(nz) == 1 and branch.ratios[nz[0]] == 1.0 else None


def _port_chain(i, pin_p, pin_m, own, coupled):
    """Series path of port ``i``: current sense, transformer windings, own R-L chains."""
    node = (f"n{i}_{k}" for k in itertools.count())
    lines, at = [f"* port {i + 1}"], next(node)
    lines.append(f"Vsense{i} {pin_p} {at} 0")
    for k, b in enumerate(coupled):
        if b.ratios[i] != 0:
            nxt = next(node)
            lines.append(f"Ewind{k}_{i} {at} {nxt} xb{k} 0 {_v(b.ratios[i])}")
            at = nxt
    elements = [e for b in own for e in _chain(b)]
    for idx, (kind, value) in enumerate(elements):
        nxt = pin_m if idx == len(elements) - 1 else next(node)
        lines += _element(kind, f"{i}_{idx}", at, nxt, value)
        at = nxt
    if at != pin_m:
        lines.append(f"Vshort{i} {at} {pin_m} 0")
    return lines


def _coupled_branch(k, branch):
    """A transformer-coupled R-L chain from node ``xb<k>`` to ground."""
    lines = [f"* coupled branch {k}: ratios {' '.join(f'{v:.6g}' for v in branch.ratios)}"]
    lines += [f"Ffeed{k}_{i} 0 xb{k} Vsense{i} {_v(r)}" for i, r in enumerate(branch.ratios) if r != 0]
    elements = list(_chain(branch))
    at = f"xb{k}"
    for idx, (kind, value) in enumerate(elements):
        nxt = "0" if idx == len(elements) - 1 else f"xb{k}_{idx}"
        lines += _element(kind, f"b{k}_{idx}", at, nxt, value)
        at = nxt
    return lines


def _chain(branch):
    """Series elements of a branch: ``("R", r)``, ``("L", l)`` or ``("RL", (r, l))``."""
    if branch.resistance > 0:
        yield "R", branch.resistance
    if branch.inductance > 0:
        yield "L", branch.inductance
    for r, ell in branch.stages:
        yield "RL", (r, ell)


def _element(kind, tag, a, b, value):
    if kind == "RL":
        return [f"R{tag} {a} {b} {_v(value[0])}", f"L{tag} {a} {b} {_v(value[1])}"]
    return [f"{kind}{tag} {a} {b} {_v(value)}"]


def _pins(ports):
    """SPICE node names ``(<port>_p, <port>_m)``, unique without regard to case."""
    seen, out = set(), []
    for k, p in enumerate(ports):
        base = _identifier(p)
        if base.lower() in seen:
            base = f"{base}_{k + 1}"
        seen.add(base.lower())
        out.append((f"{base}_p", f"{base}_m"))
    return tuple(out)


def _identifier(text):
    ident = re.sub(r"[^A-Za-z0-9_]", "_", str(text)) or "x"
    return ident if ident[0].isalpha() else "x" + ident


def _v(x):
    return f"{x:.10e}"
