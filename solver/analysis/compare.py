"""Layout variants side by side: R and L of one port, change against the first case, circuit
estimates, and which variant has the lowest loop inductance.

Choices (the design leaves them open):

- **Port.** ``port=None`` takes the first case's ``[circuit]`` port, or else the first case's
  first port. The port must exist in every case.
- **Frequencies.** ``frequencies=None`` takes, from the frequencies that every case swept
  (matched to a relative 1e-9): DC when swept, 1 MHz when swept, and the highest one.
  Explicit frequencies must each have been swept by every case. No interpolation.
- **Reference.** Changes are ``L_i - L_0`` and ``(L_i - L_0) / L_0`` against the **first**
  case (the baseline), at every chosen frequency; the same for R.
- **Best case.** The lowest inductance at the highest chosen frequency (the one a fast
  switching edge sees; ties go to the earlier case).
- **Circuit estimates.** Only for a case whose ``[circuit]`` names the compared port (its
  ``di_dt``, ``C_oss`` and ``V_in`` describe that loop's switch); computed from the result by
  :func:`copperpath.solver.analysis.circuit.estimates`, i.e. with L and R at the case's highest swept frequency.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from copperpath.geometry.errors import InputError, input_error
from copperpath.solver.analysis.circuit import estimates

#: Relative tolerance when matching a requested frequency to a swept one.
FREQ_RTOL = 1e-9
#: Frequency included by default when every case swept it, Hz.
MID_FREQUENCY = 1e6


@dataclass(frozen=True)
class CaseComparison:
    """One case of a comparison (SI units; tuples follow ``Comparison.frequencies``).

    Attributes
    ----------
    title : str
    source : str
        The case file.
    resistance_ohm, inductance_h : tuple of float
        ``Re Z_pp`` in ohm and ``L_pp`` in henry of the compared port (DC-limit ``L`` at 0 Hz).
    delta_inductance_h, delta_resistance_ohm : tuple of float
        Change against the first case, henry and ohm.
    relative_inductance, relative_resistance : tuple of float
        Change against the first case as a fraction (-0.62 is 62 % lower).
    overshoot_v, peak_switch_node_v, ringing_hz, damping_ratio : float or None
        Circuit estimates (volt, volt, hertz, 1); ``None`` without a ``[circuit]`` for the port.
    unknowns : int or None
        Current unknowns of the solve, from the summary when given.
    solve_seconds : float or None
        Mesh + assemble + solve time from the summary when given.
    """

    title: str
    source: str
    resistance_ohm: tuple
    inductance_h: tuple
    delta_inductance_h: tuple
    relative_inductance: tuple
    delta_resistance_ohm: tuple
    relative_resistance: tuple
    overshoot_v: float | None = None
    peak_switch_node_v: float | None = None
    ringing_hz: float | None = None
    damping_ratio: float | None = None
    unknowns: int | None = None
    solve_seconds: float | None = None


@dataclass(frozen=True)
class Comparison:
    """Variants of a layout compared on one port.

    Attributes
    ----------
    port : str
    frequencies : tuple of float
        Chosen frequencies in Hz, ascending (0 for DC).
    cases : tuple of CaseComparison
        In the order given; the first is the reference.
    best : int
        Index into ``cases`` of the lowest inductance at the highest chosen frequency.
    """

    port: str
    frequencies: tuple
    cases: tuple
    best: int

    @property
    def reference(self) -> CaseComparison:
        """The first case, against which changes are taken."""
        return self.cases[0]

    @property
    def best_case(self) -> CaseComparison:
        """The case with the lowest inductance at the highest chosen frequency."""
        return self.cases[self.best]


def _source(case):
    return str(getattr(case, "path", "") or getattr(case, "title", "case"))


def resolve_port(cases, port=None):
    """The port to compare, checked on the cases before anything is solved.

    Parameters
    ----------
    cases : sequence of copperpath.geometry.model.Case
        The variants, reference first.
    port : str, optional
        Default: the first case's ``[circuit]`` port, else its first port.

    Returns
    -------
    str

    Raises
    ------
    copperpath.geometry.errors.InputError
        A case without that port (naming the case file and the port), or no cases.
    """
    cases = list(cases)
    if not cases:
        raise InputError("compare: no cases given")
    names = [[p.name for p in c.ports] for c in cases]
    if port is None:
        circuit = getattr(cases[0], "circuit", None)
        port = circuit.port if circuit is not None and circuit.port else (names[0] or [None])[0]
    for c, have in zip(cases, names):
        if port is None or port not in have:
            raise _missing_port(c, port, have)
    return port


def _missing_port(case, port, have):
    return input_error(_source(case), f"[[port]] '{port}'",
                       f"port '{port}' is not in this case (it has "
                       + (", ".join(f"'{p}'" for p in have) or "no ports")
                       + "); every compared case needs it")


def _port_name(results, port):
    case, result, _ = results[0]
    if port is not None:
        return port
    circuit = getattr(case, "circuit", None)
    if circuit is not None and circuit.port is not None:
        return circuit.port
    if not result.ports:
        raise _missing_port(case, None, ())
    return result.ports[0]


def _port_index(case, result, port):
    if port not in result.ports:
        raise _missing_port(case, port, result.ports)
    return list(result.ports).index(port)


def _match(swept, freq):
    """Index of ``freq`` in ``swept`` (relative FREQ_RTOL), or -1."""
    hits = np.flatnonzero(np.abs(swept - freq) <= FREQ_RTOL * max(abs(freq), 1.0))
    return int(hits[0]) if hits.size else -1


def _choose_frequencies(results, frequencies):
    if frequencies is not None:
        chosen = sorted({float(f) for f in frequencies})
        if not chosen or min(chosen) < 0:
            raise InputError(f"compare: frequencies must be >= 0 Hz, got {list(frequencies)}")
        for case, result, _ in results:
            for f in chosen:
                if _match(np.asarray(result.frequencies, float), f) < 0:
                    raise input_error(_source(case), "[sweep]",
                                      f"{f:g} Hz was not swept; compared frequencies must be in "
                                      "every case's sweep")
        return tuple(chosen)
    common = np.asarray(results[0][1].frequencies, float)
    for _, result, _ in results[1:]:
        swept = np.asarray(result.frequencies, float)
        common = np.array([f for f in common if _match(swept, f) >= 0])
    if common.size == 0:
        names = ", ".join(_source(c) for c, _, _ in results)
        raise InputError(f"compare: the cases share no swept frequency ({names}); give them a "
                         "common [sweep]")
    chosen = {float(common.max())}
    if _match(common, 0.0) >= 0:
        chosen.add(0.0)
    if _match(common, MID_FREQUENCY) >= 0:
        chosen.add(MID_FREQUENCY)
    return tuple(sorted(chosen))


def _circuit_figures(case, result, port):
    """``overshoot, peak, ringing, damping`` or Nones when the case has no [circuit] for ``port``."""
    options = getattr(case, "circuit", None)
    if options is None:
        return None, None, None, None
    own = options.port if options.port is not None else result.ports[0]
    if own != port:
        return None, None, None, None
    est = estimates(result, replace(options, port=port), source=f"{_source(case)}: [circuit]")
    return est.overshoot_v, est.peak_switch_node_v, est.ringing_hz, est.damping_ratio


def _summary_figures(summary):
    """``(unknowns, seconds)`` from a ``result.json``-like summary, Nones where absent."""
    if not summary:
        return None, None
    unknowns = (summary.get("mesh") or {}).get("unknowns")
    timing = summary.get("timing_s") or {}
    parts = [timing.get(k) for k in ("mesh", "assemble", "solve")]
    seconds = float(sum(parts)) if parts and all(isinstance(v, (int, float)) for v in parts) else None
    return (int(unknowns) if unknowns is not None else None), seconds


def _relative(value, reference):
    return (value - reference) / reference if reference != 0 else math.nan


def compare(results, *, port=None, frequencies=None) -> Comparison:
    """Compare solved variants of a layout on one port.

    Parameters
    ----------
    results : sequence of (case, result, summary)
        ``case`` a :class:`copperpath.geometry.model.Case`, ``result`` its :class:`copperpath.solver.solve.result.Result`,
        ``summary`` the ``result.json`` data (or ``None``). The first is the reference.
    port : str, optional
        Port to compare; default: the first case's ``[circuit]`` port, else its first port.
    frequencies : sequence of float, optional
        Hz; each must have been swept by every case. Default: DC and 1 MHz where every case
        swept them, and the highest frequency every case swept.

    Returns
    -------
    Comparison

    Raises
    ------
    copperpath.geometry.errors.InputError
        No cases, a case without the port (naming the case file and the port), or a
        frequency not swept by every case.

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> from copperpath.solver.solve.result import Result
    >>> f = np.array([0.0, 1e8])
    >>> def loop(ell):  # 10 mohm and ``ell`` henry
    ...     z = (0.01 + 2j * np.pi * f * ell)[:, None, None]
    ...     return Result("x", ("loop",), f, z, dc_inductance=np.array([[ell]]))
    >>> a = SimpleNamespace(title="far", path="a.toml", circuit=None)
    >>> b = SimpleNamespace(title="near", path="b.toml", circuit=None)
    >>> c = compare([(a, loop(10e-9), None), (b, loop(4e-9), None)])
    >>> c.best_case.title, round(c.cases[1].relative_inductance[-1], 3)
    ('near', -0.6)
    """
    results = list(results)
    if not results:
        raise InputError("compare: no cases given")
    port = _port_name(results, port)
    index = [_port_index(case, result, port) for case, result, _ in results]
    chosen = _choose_frequencies(results, frequencies)
    rows = []
    for (case, result, summary), k in zip(results, index):
        swept = np.asarray(result.frequencies, float)
        at = [_match(swept, f) for f in chosen]
        r = tuple(float(result.resistance[i, k, k]) for i in at)
        ell = tuple(float(result.inductance[i, k, k]) for i in at)
        rows.append((case, result, summary, r, ell))
    r0, l0 = rows[0][3], rows[0][4]
    cases = []
    for case, result, summary, r, ell in rows:
        overshoot, peak, ring, zeta = _circuit_figures(case, result, port)
        unknowns, seconds = _summary_figures(summary)
        cases.append(CaseComparison(
            title=str(getattr(case, "title", "") or _source(case)), source=_source(case),
            resistance_ohm=r, inductance_h=ell,
            delta_inductance_h=tuple(a - b for a, b in zip(ell, l0)),
            relative_inductance=tuple(_relative(a, b) for a, b in zip(ell, l0)),
            delta_resistance_ohm=tuple(a - b for a, b in zip(r, r0)),
            relative_resistance=tuple(_relative(a, b) for a, b in zip(r, r0)),
            overshoot_v=overshoot, peak_switch_node_v=peak, ringing_hz=ring, damping_ratio=zeta,
            unknowns=unknowns, solve_seconds=seconds))
    top = [c.inductance_h[-1] for c in cases]
    best = int(np.argmin(top))
    return Comparison(port=port, frequencies=chosen, cases=tuple(cases), best=best)
