"""Layout variants side by side (copperpath.solver.analysis.compare) and the bundled buck hot-loop demo cases."""
import math
from dataclasses import replace
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest

from copperpath.geometry.case import load_case
from copperpath.geometry.errors import InputError
from copperpath.geometry.model import CircuitOptions, MeshOptions
from copperpath.solver.analysis.compare import compare, resolve_port
from copperpath.solver.output.comparison import comparison_sections, format_comparison, verdict
from copperpath.solver.solve.result import Result

CASES = Path(__file__).resolve().parent.parent / "cases"
DEMO = ("buck_baseline.toml", "buck_cap_near.toml", "buck_pour.toml")


def series_loop(ell_dc, ell_hf, r_dc, r_hf, *, freqs=(0.0, 1e3, 1e6, 1e8), ports=("loop",)):
    """A synthetic one- or more-port result: port ``k`` has R and L interpolated (in log f)
    from the DC values to the values at the top frequency, other ports twice that."""
    f = np.asarray(freqs, float)
    w = np.where(f > 0, np.log10(np.maximum(f, 1.0)) / np.log10(f.max()), 0.0)
    ell = ell_dc + (ell_hf - ell_dc) * w
    res = r_dc + (r_hf - r_dc) * w
    n = len(ports)
    z = np.zeros((len(f), n, n), complex)
    for k in range(n):
        z[:, k, k] = (k + 1) * (res + 2j * np.pi * f * ell)
    dc = np.diag([(k + 1) * ell_dc for k in range(n)])
    return Result("synthetic", tuple(ports), f, z, dc_inductance=dc)


def case(title, path, circuit=None):
    """The parts of a Case that the comparison reads."""
    return SimpleNamespace(title=title, path=path, circuit=circuit)


def three_variants(circuit=None):
    # L at the top frequency 10, 4 and 2.5 nH; DC-limit 12, 6 and 5 nH; R 5/8, 4/7, 3/9 mohm.
    return [
        (case("far", "a.toml", circuit), series_loop(12e-9, 10e-9, 5e-3, 8e-3),
         {"mesh": {"unknowns": 4000}, "timing_s": {"mesh": 1.0, "assemble": 2.0, "solve": 3.0}}),
        (case("near", "b.toml", circuit), series_loop(6e-9, 4e-9, 4e-3, 7e-3), None),
        (case("pour", "c.toml", circuit), series_loop(5e-9, 2.5e-9, 3e-3, 9e-3), None),
    ]


# --- the comparison logic on synthetic results ------------------------------------------------

def test_changes_against_the_first_case_hand_computed():
    c = compare(three_variants())
    assert c.port == "loop"
    assert c.frequencies == (0.0, 1e6, 1e8)            # DC, 1 MHz and the top frequency
    near, pour = c.cases[1], c.cases[2]
    # Top frequency: (4 - 10) / 10 = -0.6 and (2.5 - 10) / 10 = -0.75; -6 nH and -7.5 nH.
    assert near.relative_inductance[-1] == pytest.approx(-0.6, rel=1e-12)
    assert pour.relative_inductance[-1] == pytest.approx(-0.75, rel=1e-12)
    assert near.delta_inductance_h[-1] == pytest.approx(-6e-9, rel=1e-12)
    assert pour.delta_inductance_h[-1] == pytest.approx(-7.5e-9, rel=1e-12)
    # DC: DC-limit inductances 12, 6, 5 nH -> -50 % and -58.33 %.
    assert near.relative_inductance[0] == pytest.approx(-0.5, rel=1e-12)
    assert pour.relative_inductance[0] == pytest.approx(-7 / 12, rel=1e-12)
    # 1 MHz is 6/8 of the way in log f: L_near = 6 - 2 * 0.75 = 4.5 nH, L_far = 12 - 1.5 = 10.5 nH.
    assert near.inductance_h[1] == pytest.approx(4.5e-9, rel=1e-12)
    assert near.relative_inductance[1] == pytest.approx(4.5 / 10.5 - 1, rel=1e-12)
    # R: 9 mohm vs 8 mohm at the top, +12.5 %; 3 vs 5 mohm at DC, -40 %.
    assert pour.relative_resistance[-1] == pytest.approx(0.125, rel=1e-12)
    assert pour.delta_resistance_ohm[0] == pytest.approx(-2e-3, rel=1e-12)
    assert c.cases[0].relative_inductance == (0.0, 0.0, 0.0)
    assert c.best == 2 and c.best_case.title == "pour" and c.reference.title == "far"


def test_summary_gives_unknowns_and_time():
    c = compare(three_variants())
    assert c.cases[0].unknowns == 4000 and c.cases[0].solve_seconds == pytest.approx(6.0)
    assert c.cases[1].unknowns is None and c.cases[1].solve_seconds is None


def test_best_is_lowest_at_the_top_frequency_not_at_dc():
    # A case that is better at DC but worse at the top frequency does not win.
    runs = [(case("a", "a.toml"), series_loop(4e-9, 3.0e-9, 1e-3, 2e-3), None),
            (case("b", "b.toml"), series_loop(8e-9, 2.0e-9, 1e-3, 2e-3), None)]
    c = compare(runs)
    assert c.best == 1
    assert c.cases[1].relative_inductance[0] == pytest.approx(1.0, rel=1e-12)


def test_common_frequencies_only_and_no_1MHz_when_not_swept():
    runs = [(case("a", "a.toml"), series_loop(4e-9, 3e-9, 1e-3, 2e-3, freqs=(0, 1e5, 1e7, 1e8)), None),
            (case("b", "b.toml"), series_loop(4e-9, 2e-9, 1e-3, 2e-3, freqs=(0, 1e5, 1e7)), None)]
    assert compare(runs).frequencies == (0.0, 1e7)     # 1e8 is not common; 1 MHz not swept
    with pytest.raises(InputError, match=r"a\.toml: \[sweep\]: 1e\+06 Hz was not swept"):
        compare(runs, frequencies=[1e6])
    c = compare(runs, frequencies=[1e5, 0])
    assert c.frequencies == (0.0, 1e5)


def test_no_common_frequency_is_an_input_error():
    runs = [(case("a", "a.toml"), series_loop(4e-9, 3e-9, 1e-3, 2e-3, freqs=(1e5, 1e6)), None),
            (case("b", "b.toml"), series_loop(4e-9, 2e-9, 1e-3, 2e-3, freqs=(1e7, 1e8)), None)]
    with pytest.raises(InputError, match="share no swept frequency"):
        compare(runs)


def test_missing_port_names_the_case_and_the_port():
    runs = three_variants()
    runs[1] = (runs[1][0], series_loop(6e-9, 4e-9, 4e-3, 7e-3, ports=("other",)), None)
    with pytest.raises(InputError, match=r"^b\.toml: \[\[port\]\] 'loop': port 'loop' is not in this case"):
        compare(runs)
    with pytest.raises(InputError, match=r"^a\.toml: .*'nope'"):
        compare(three_variants(), port="nope")
    with pytest.raises(InputError):
        compare([])


def test_resolve_port_checks_the_cases_before_solving(demo_cases):
    assert resolve_port(demo_cases) == "hot_loop"              # the [circuit] port
    assert resolve_port(demo_cases, "hot_loop") == "hot_loop"
    with pytest.raises(InputError, match=r"buck_baseline\.toml: \[\[port\]\] 'loop': port 'loop' is "
                                         r"not in this case \(it has 'hot_loop'\)"):
        resolve_port(demo_cases, "loop")
    bare = SimpleNamespace(title="x", path="x.toml", circuit=None, ports=())
    with pytest.raises(InputError, match=r"^x\.toml: .*it has no ports"):
        resolve_port([demo_cases[0], bare])
    with pytest.raises(InputError, match="no cases"):
        resolve_port([])


def test_port_selection_by_name_and_default_from_circuit():
    runs = [(case("a", "a.toml", CircuitOptions(port="sw")),
             series_loop(4e-9, 3e-9, 1e-3, 2e-3, ports=("in", "sw")), None),
            (case("b", "b.toml"), series_loop(4e-9, 2e-9, 1e-3, 2e-3, ports=("in", "sw")), None)]
    c = compare(runs)
    assert c.port == "sw"                           # the first case's [circuit] port
    assert c.cases[0].inductance_h[-1] == pytest.approx(6e-9)   # port 2 is twice the loop
    assert compare(runs, port="in").cases[0].inductance_h[-1] == pytest.approx(3e-9)


def test_circuit_estimates_per_case():
    di_dt, c_oss = 8.0 / 5e-9, 700e-12
    opts = CircuitOptions(port="loop", di_dt=di_dt, output_capacitance=c_oss, input_voltage=24.0)
    runs = three_variants(opts)
    runs[1] = (case("near", "b.toml"), runs[1][1], None)          # no [circuit]
    c = compare(runs)
    far, near, pour = c.cases
    # V = L di/dt (common practice): 10 nH x 1.6 A/ns = 16 V; 2.5 nH -> 4 V.
    assert far.overshoot_v == pytest.approx(16.0, rel=1e-12)
    assert pour.overshoot_v == pytest.approx(4.0, rel=1e-12)
    assert pour.peak_switch_node_v == pytest.approx(28.0, rel=1e-12)
    # Thomson: f = 1 / (2 pi sqrt(L C)).
    assert far.ringing_hz == pytest.approx(1 / (2 * math.pi * math.sqrt(10e-9 * c_oss)), rel=1e-12)
    assert near.overshoot_v is None and near.ringing_hz is None
    # A [circuit] for another port gives no estimate for this one.
    other = [(case("x", "x.toml", replace(opts, port="in")),
              series_loop(4e-9, 3e-9, 1e-3, 2e-3, ports=("loop", "in")), None)]
    assert compare(other, port="loop").cases[0].overshoot_v is None


def test_format_comparison_columns_and_verdict():
    opts = CircuitOptions(port="loop", di_dt=1.6e9, output_capacitance=700e-12, input_voltage=24.0)
    text = format_comparison(compare(three_variants(opts)))
    lines = text.splitlines()
    head = lines[1]
    for label in ("case", "L DC (nH)", "L 1 MHz (nH)", "L 100 MHz (nH)", "dL 100 MHz (nH)",
                  "dL 100 MHz (%)", "R DC (mohm)", "R 100 MHz (mohm)", "overshoot (V)"):
        assert label in head
    pour = next(line for line in lines if line.startswith("pour"))
    cells = pour.split()
    # pour: L 5.000 / 3.125 / 2.500 nH, dL -7.500 nH, -75.0 %, R 3.000 / 9.000 mohm, 4.00 V.
    assert cells[1:9] == ["5.000", "3.125", "2.500", "-7.500", "-75.0", "3.000", "9.000", "4.00"]
    assert lines[-1] == "lowest loop inductance (port 'loop' at 100 MHz): pour (-75 % vs far)"
    assert lines[-1] == verdict(compare(three_variants(opts)))


def test_titles_lose_their_shared_head():
    runs = three_variants()
    runs = [(case(f"buck, hot loop: {c.title}", c.path), r, s) for c, r, s in runs]
    text = format_comparison(compare(runs))
    assert text.splitlines()[0] == "buck, hot loop: port 'loop', changes against the first case"
    assert text.splitlines()[3].startswith("far ")
    assert text.splitlines()[-1].endswith(": pour (-75 % vs far)")
    html = comparison_sections(compare(runs))[0][1]
    assert "<td class=\"l\">near</td>" in html and "buck, hot loop: port" in html


def test_verdict_when_the_first_case_is_best():
    runs = list(reversed(three_variants()))
    assert verdict(compare(runs)).endswith(": pour (the first case)")


def test_comparison_sections_are_tables_with_escaped_titles():
    runs = three_variants(CircuitOptions(port="loop", di_dt=1e9, output_capacitance=1e-9))
    runs[0] = (case("far <A&B>", "a.toml", runs[0][0].circuit), runs[0][1], runs[0][2])
    sections = comparison_sections(compare(runs))
    assert [s[0] for s in sections] == ["Variant comparison", "Circuit estimates per variant"]
    title, html, md = sections[0]
    assert "<table>" in html and "far &lt;A&amp;B&gt;" in html and "far <A&B>" not in html
    rows = [line for line in md.splitlines() if line.startswith("|")]
    assert len(rows) == 2 + 3                          # header, rule, three cases
    assert "lowest loop inductance" in md
    assert all(len(s) == 3 and all(isinstance(x, str) for x in s) for s in sections)
    no_circuit = comparison_sections(compare(three_variants()))
    assert [s[0] for s in no_circuit] == ["Variant comparison"]


# --- the bundled demo cases -------------------------------------------------------------------

@pytest.fixture(scope="module")
def demo_cases():
    return [load_case(CASES / name) for name in DEMO]


def test_demo_cases_load_and_share_the_loop(demo_cases):
    for c in demo_cases:
        assert c.warnings == ()
        assert [la.name for la in c.layout.layers] == ["L1", "L2", "L3", "L4"]
        assert [(p.name, p.plus, p.minus) for p in c.ports] == [("hot_loop", "C1.1", "C1.2")]
        assert [(x.name, x.between, x.resistance, x.inductance) for x in c.lumped] == [
            ("Q1", ("Q1.D", "Q1.S"), 4e-3, 0.3e-9), ("Q2", ("Q2.D", "Q2.S"), 4e-3, 0.3e-9)]
        assert sorted(t.name for t in c.layout.terminals) == ["C1.1", "C1.2", "Q1.D", "Q1.S", "Q2.D", "Q2.S"]
        assert c.circuit.port == "hot_loop"
        assert c.circuit.di_dt == pytest.approx(8.0 / 5e-9)
        assert c.mesh == demo_cases[0].mesh
        np.testing.assert_array_equal(c.frequencies, [0, 1e4, 1e5, 1e6, 1e7, 3e7, 1e8, 2e8])
    # 1.6 mm board: L1 top face at 1.6 mm, L4 bottom face at 0; 0.2 mm prepreg under L1.
    top, l2 = demo_cases[0].layout.layers[:2]
    assert top.z_top == pytest.approx(1.6e-3) and top.z - l2.z_top == pytest.approx(0.2e-3)


def test_demo_extends_and_remove_chain(demo_cases):
    base, near, pour = demo_cases
    area = {k: [c.layout.copper[k].area * 1e6 for c in demo_cases] for k in ("L1", "L2", "L3", "L4")}
    # Baseline: far C1, return on L4 through 2 x 2 + 2 through vias joining L1 and L4 only.
    assert len(base.layout.vias) == 6
    assert all(v.connects == ("L1", "L4") for v in base.layout.vias)
    assert area["L2"][0] == 0 and area["L3"][0] == 0 and area["L4"][0] > 50
    # C1 near: the far route, L4 return and its vias removed; C1's lands moved next to Q1/Q2.
    assert near.layout.vias == () and area["L4"][1] == 0 and area["L2"][1] == 0
    lands = {t.name: t.shape.bounds for t in near.layout.terminals}
    assert lands["C1.1"] == pytest.approx((7.0e-3, 5.4e-3, 8.1e-3, 8.1e-3))
    assert lands["C1.2"] == pytest.approx((10.1e-3, 5.4e-3, 11.2e-3, 8.1e-3))
    assert {t.name: t.shape.bounds for t in base.layout.terminals}["C1.1"][1] > 15e-3
    # Pour: C1 near plus an L2 pour and 2 x 2 + 2 stitching vias joining L1 to it.
    assert area["L1"][2] == pytest.approx(area["L1"][1], rel=0.02)   # less the drill holes
    assert area["L2"][2] > 150
    assert len(pour.layout.vias) == 6
    assert all(v.connects == ("L1", "L2") for v in pour.layout.vias)
    assert sorted({v.name.split("[")[0] for v in pour.layout.vias}) == ["C1 stitching vias",
                                                                        "Q2 stitching vias"]
    assert [c.title for c in demo_cases] == [
        "24 V to 5 V buck, hot loop: baseline",
        "24 V to 5 V buck, hot loop: C1 next to the switches",
        "24 V to 5 V buck, hot loop: C1 near + L2 ground pour"]


# --- physics: the pour variant has the lowest hot-loop inductance ------------------------------

def _solve(cases, freqs=None):
    import copperpath
    return [(c, copperpath.solve(c, frequencies=freqs).result, None) for c in cases]


COARSE = MeshOptions(max_edge=1.6e-3, min_edge=0.6e-3)


def test_demo_ordering_on_a_coarse_mesh(demo_cases):
    # Physics (any text on loop inductance, e.g. C. R. Paul 2010, Inductance: Loop and Partial,
    # ch. 5, from memory): a smaller loop area and a return plane right under the forward
    # current lower the loop inductance, so L(pour) < L(cap near) < L(baseline) at 200 MHz.
    coarse = [replace(c, mesh=COARSE) for c in demo_cases]
    comp = compare(_solve(coarse, freqs=[2e8]))
    ell = [c.inductance_h[-1] for c in comp.cases]
    assert ell[2] < ell[1] < ell[0]
    assert comp.best == 2


@pytest.mark.slow
def test_demo_ordering_at_the_case_mesh(demo_cases):
    comp = compare(_solve(demo_cases))
    ell = [c.inductance_h[-1] for c in comp.cases]
    assert comp.frequencies == (0.0, 1e6, 2e8)
    assert ell[2] < ell[1] < ell[0]
    text = format_comparison(comp)
    assert text.splitlines()[0].startswith("24 V to 5 V buck, hot loop: port 'hot_loop'")
    assert text.splitlines()[-1].startswith(
        "lowest loop inductance (port 'hot_loop' at 200 MHz): C1 near + L2 ground pour (")
    assert text.splitlines()[-1].endswith(" % vs baseline)")
    assert all(c.overshoot_v > 0 and c.ringing_hz > 0 for c in comp.cases)
