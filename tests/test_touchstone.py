"""Touchstone v1.1 export, read back with scikit-rf (a general-purpose RF library)."""
import numpy as np
import pytest

skrf = pytest.importorskip("skrf")

from copperpath.solver.output.exports.touchstone import s_from_z, write_touchstone  # noqa: E402
from copperpath.solver.solve.result import Result  # noqa: E402

F = np.concatenate([[0.0], np.logspace(3, 8.5, 12)])


def skin_r(f, r0, f0):
    """Resistance rising as ``R0 (1 + sqrt(f / f0))`` (skin-effect shape, synthetic)."""
    return r0 * (1 + np.sqrt(f / f0))


def falling_l(f, l_dc, l_hf, f1):
    """Inductance falling from ``l_dc`` to ``l_hf`` around ``f1`` (synthetic)."""
    return l_hf + (l_dc - l_hf) / (1 + f / f1)


def one_port():
    z = skin_r(F, 2e-3, 1e5) + 2j * np.pi * F * falling_l(F, 14e-9, 9e-9, 3e5)
    return Result("buck hot loop", ("loop",), F, z[:, None, None], dc_inductance=np.array([[14e-9]]))


def two_port_symmetric():
    """Two equal loops with a shared return path: Z11 = Z22, Z12 = Z21 (reciprocal)."""
    own = skin_r(F, 3e-3, 1e5) + 2j * np.pi * F * falling_l(F, 20e-9, 12e-9, 3e5)
    mutual = skin_r(F, 1e-3, 1e5) + 2j * np.pi * F * falling_l(F, 6e-9, 3e-9, 3e5)
    z = np.stack([np.stack([own, mutual], -1), np.stack([mutual, own], -1)], -2)
    return Result("two loops", ("phase_a", "phase_b"), F, z)


def relative(a, b):
    """Largest ``|a_ij - b_ij| / sqrt(|b_ii| |b_jj|)``: ``|a - b| / |b|`` for a one-port."""
    d = np.abs(np.diagonal(b, axis1=1, axis2=2))
    return np.max(np.abs(a - b) / np.sqrt(d[:, :, None] * d[:, None, :]))


def test_one_port_z_round_trip_keeps_dc(tmp_path):
    r = one_port()
    path = write_touchstone(tmp_path / "loop.s1p", r)
    net = skrf.Network(str(path))
    assert net.f[0] == 0.0  # the DC record is kept
    np.testing.assert_allclose(net.f, F, rtol=1e-12)
    assert relative(net.z, r.impedance) < 1e-6
    assert net.port_names == ["loop"]
    assert [p.name for p in tmp_path.iterdir()] == ["loop.s1p"]  # no temporary left behind


def test_option_line_and_normalized_values(tmp_path):
    # Touchstone v1.1: Z data are normalized to the reference resistance (file value = Z / R).
    r = one_port()
    text = write_touchstone(tmp_path / "loop.s1p", r).read_text()
    lines = text.splitlines()
    assert "# HZ Z RI R 50" in lines
    assert lines[0] == "! buck hot loop"
    data = [ln.split() for ln in lines if ln and ln[0] not in "!#"]
    assert len(data) == len(F)
    f1, re1, im1 = (float(v) for v in data[1])
    assert f1 == F[1]
    assert re1 * 50 == pytest.approx(r.impedance[1, 0, 0].real, rel=1e-14)
    assert im1 * 50 == pytest.approx(r.impedance[1, 0, 0].imag, rel=1e-14)


def test_two_port_symmetric_round_trip(tmp_path):
    r = two_port_symmetric()
    net = skrf.Network(str(write_touchstone(tmp_path / "pair.s2p", r)))
    assert relative(net.z, r.impedance) < 1e-6
    assert net.port_names == ["phase_a", "phase_b"]


def test_two_port_entry_order(tmp_path):
    # A 2-port record is ordered N11 N21 N12 N22. Reciprocal copper gives Z12 = Z21, so an
    # asymmetric (non-physical) matrix is used here only to pin the order down.
    r = two_port_symmetric()
    z = r.impedance.copy()
    z[:, 0, 1] *= 2.0
    r = Result("order", r.ports, F, z)
    net = skrf.Network(str(write_touchstone(tmp_path / "order.s2p", r)))
    assert relative(net.z, z) < 1e-6


@pytest.mark.parametrize("n", [3, 5])
def test_many_ports_row_layout(tmp_path, n):
    # From 3 ports every matrix row starts a new line, at most 4 pairs per line.
    rng = np.random.default_rng(n)
    a = rng.normal(size=(len(F), n, n)) * 1e-3
    ell = np.einsum("fij,fkj->fik", a, a) * 1e-5 + np.eye(n) * 10e-9
    z = 2e-3 * np.eye(n) + 2j * np.pi * F[:, None, None] * ell
    r = Result("many", tuple(f"p{k}" for k in range(n)), F, z)
    path = write_touchstone(tmp_path / f"many.s{n}p", r)
    net = skrf.Network(str(path))
    assert relative(net.z, z) < 1e-6
    data = [ln for ln in path.read_text().splitlines() if ln and ln[0] not in "!#"]
    assert len(data) == len(F) * n * -(-n // 4)


def test_s_parameters_against_scikit_rf(tmp_path):
    # S = (Z - Z0)(Z + Z0)^-1, compared with scikit-rf's own conversion, then read back as Z.
    r = two_port_symmetric()
    np.testing.assert_allclose(s_from_z(r.impedance, 50.0),
                               skrf.network.z2s(r.impedance, 50.0), rtol=0, atol=1e-12)
    path = write_touchstone(tmp_path / "pair.s2p", r, parameter="S", reference_ohm=25.0)
    assert "# HZ S RI R 25" in path.read_text().splitlines()
    net = skrf.Network(str(path))
    np.testing.assert_allclose(net.z0, 25.0)
    assert relative(net.z, r.impedance) < 1e-6


def test_bad_arguments(tmp_path):
    with pytest.raises(ValueError, match=r"must end in '\.s1p'"):
        write_touchstone(tmp_path / "loop.s2p", one_port())
    with pytest.raises(ValueError, match="parameter"):
        write_touchstone(tmp_path / "loop.s1p", one_port(), parameter="Y")
    with pytest.raises(ValueError, match="reference_ohm"):
        write_touchstone(tmp_path / "loop.s1p", one_port(), reference_ohm=0.0)
