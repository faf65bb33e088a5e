"""Case files that read Gerber artwork, Excellon drills and fabrication folders.

The demo board (``scripts/make_demo_fab.py``) is written twice from one list of features:
as Gerber X2 + Excellon files read through ``[fabrication]`` (``cases/fab_demo.toml``) and
as ``[[copper]]``/``[[via]]`` tables (``cases/fab_demo_drawn.toml``). The drawn case is the
reference for the reader path; areas are also checked against the board's dimensions.
"""
from __future__ import annotations

import importlib.util
import math
import re
import shutil
from pathlib import Path

import numpy as np
import pytest

from copperpath.geometry.case import DEFAULT_PLATING, load_case
from copperpath.geometry.model import MeshOptions
from copperpath.solver.cli import main
from tests.bad_cases import GOOD, L2, write_case

ROOT = Path(__file__).resolve().parents[1]
CASES = ROOT / "cases"
FAB = CASES / "fab_demo"
MM = 1e-3


def _script():
    spec = importlib.util.spec_from_file_location("make_demo_fab", ROOT / "scripts" / "make_demo_fab.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


GEN = _script()


@pytest.fixture(scope="module")
def fab_case():
    return load_case(CASES / "fab_demo.toml")


@pytest.fixture(scope="module")
def drawn_case():
    return load_case(CASES / "fab_demo_drawn.toml")


def _polygon_disk_area(radius, n):
    """Area of a regular n-gon inscribed in a circle (elementary geometry: n/2 r^2 sin(2 pi/n))."""
    return 0.5 * n * radius ** 2 * math.sin(2 * math.pi / n)


def test_polygon_disk_area_reference():
    # the reference itself: the n-gon tends to the disk, pi r^2 (limit n -> infinity)
    assert _polygon_disk_area(1.0, 4) == pytest.approx(2.0)
    assert _polygon_disk_area(1.0, 100000) == pytest.approx(math.pi, rel=1e-8)


# ----------------------------------------------------------------------------- generator
def test_committed_files_are_what_the_generator_writes(tmp_path):
    GEN.write_all(tmp_path)
    for path in sorted((tmp_path / "fab_demo").iterdir()) + [tmp_path / "fab_demo.toml",
                                                             tmp_path / "fab_demo_drawn.toml"]:
        committed = CASES / path.relative_to(tmp_path)
        assert committed.read_text() == path.read_text(), f"{committed} is stale: rerun the script"


def test_gerber_uses_regions_flashes_draws_and_x2():
    top = (FAB / "fab_demo-L1-top.gbr").read_text()
    bottom = (FAB / "fab_demo-L2-bottom.gbr").read_text()
    drills = (FAB / "fab_demo-PTH.drl").read_text()
    assert "%TF.FileFunction,Copper,L1,Top*%" in top and "%FSLAX46Y46*%" in top and "%MOMM*%" in top
    assert "G36*" in top and "G37*" in top and "D03*" in top and "D01*" in top
    assert "%TF.FileFunction,Copper,L2,Bot*%" in bottom and "%LPC*%" in bottom
    assert "; #@! TF.FileFunction,Plated,1,2,PTH" in drills


# ----------------------------------------------------------------------------- wiring
def test_layers_match_the_drawn_case(fab_case, drawn_case):
    a, b = fab_case.layout.copper, drawn_case.layout.copper
    assert set(a) == set(b) == {"L1", "L2"}
    for name in a:
        # both polygonise the same circles with chords of at most 1 um (Gerber) and 2 um (shapes)
        assert a[name].symmetric_difference(b[name]).area < 0.005 * MM ** 2, name
        assert len(a[name].geoms) == len(b[name].geoms)
    assert len(a["L1"].geoms) == 3          # C1.1 + loop + Q1.D; C1.2 patch; Q1.S patch


def test_bottom_layer_area_from_the_board_dimensions(fab_case):
    # window 19 mm x 15 mm of solid pour, less the 1.5 mm x 8.5 mm slot, less 12 drill holes
    # (0.3 mm, each a regular octagon inscribed in its circle: copperpath.geometry.layout.drill_hole)
    expected = (19.0 * 15.0 - 1.5 * 8.5) * MM ** 2 - 12 * _polygon_disk_area(0.15 * MM, 8)
    assert fab_case.layout.copper["L2"].area == pytest.approx(expected, rel=1e-6)
    x0, y0, x1, y1 = fab_case.layout.copper["L2"].bounds
    assert (x0, y0, x1, y1) == pytest.approx((0.5 * MM, 0.5 * MM, 19.5 * MM, 15.5 * MM), abs=1e-9)


def test_vias_from_the_drill_file(fab_case, drawn_case):
    vias = fab_case.layout.vias
    assert len(vias) == 12 == len(drawn_case.layout.vias)      # the 13th lies outside the window
    got = sorted((round(v.x / MM, 6), round(v.y / MM, 6)) for v in vias)
    assert got == sorted(GEN.LOOP_VIAS)
    for v in vias:
        assert v.drill == pytest.approx(0.3 * MM) and v.pad == pytest.approx(0.6 * MM)
        assert v.plating == DEFAULT_PLATING and v.span == ("L1", "L2") and v.connects == ("L1", "L2")


def test_notes_say_what_went_where(fab_case):
    notes = "\n".join(fab_case.notes)
    assert "fabrication: L1 <- fab_demo-L1-top.gbr (FileFunction Copper,L1,Top)" in notes
    assert "fabrication: copper L1 (fab_demo-L1-top.gbr) -> layer 'L1'" in notes
    assert "fabrication: copper L2 (fab_demo-L2-bottom.gbr) -> layer 'L2'" in notes
    assert "skipped fab_demo-outline.gbr" in notes
    assert "fab_demo-PTH.drl: 13 plated holes -> vias on L1-L2" in notes
    assert "[window]: 1 of 13 vias lie outside the window and are dropped" in notes
    assert any("fab_demo-NPTH.drl: 2 non-plated holes skipped" in w for w in fab_case.warnings)
    assert not any("fabrication" in w for w in load_case(CASES / "fab_demo_drawn.toml").notes)


def test_without_window_the_whole_board_is_read(tmp_path):
    import shapely

    shutil.copytree(FAB, tmp_path / "fab_demo")
    text = re.sub(r"\[window\].*\nrect = .*\n", "", (CASES / "fab_demo.toml").read_text())
    case = load_case(write_case(tmp_path, text))
    assert len(case.layout.vias) == 13 and not any("[window]" in n for n in case.notes)
    cu = case.layout.copper["L2"]
    assert cu.bounds == pytest.approx((0, 0, 24 * MM, 16 * MM), abs=1e-9)
    # the whole pour less the slot, 13 drill holes (octagons) and the two 4.4 mm mounting
    # clearances, which the board edge cuts; those are measured with shapely on fine disks
    # (the Gerber's chords of 1 um cost at most perimeter x 1 um = 0.014 mm^2 each)
    board = shapely.box(0, 0, 24 * MM, 16 * MM)
    clear = sum(shapely.Point(22 * MM, y * MM).buffer(2.2 * MM, quad_segs=1024).intersection(board).area
                for y in (2, 14))
    expected = (24 * 16 - 1.5 * 8.5) * MM ** 2 - clear - 13 * _polygon_disk_area(0.15 * MM, 8)
    assert cu.area == pytest.approx(expected, abs=0.03 * MM ** 2)


def test_drill_table_span_plating_and_no_double_read(tmp_path):
    shutil.copytree(FAB, tmp_path / "fab")
    l3 = L2.replace('"L2"', '"L3"').replace("z = -1.0", "z = -2.0")
    # the strip of GOOD lies on none of the holes; fabrication copper L1 -> L1 (its own
    # artwork wins), L2 -> L2; the drill file named by [[drill]] is read once only
    text = (GOOD.replace("thickness = 0.035", 'thickness = 0.035\nartwork = "fab/fab_demo-L1-top.gbr"', 1)
            + L2 + l3 + '\n[[drill]]\nfile = "fab/fab_demo-PTH.drl"\nplating = 0.035\n'
            '\n[fabrication]\nsource = "fab"\n')
    case = load_case(write_case(tmp_path, text))
    vias = case.layout.vias
    assert len(vias) == 13
    assert all(v.span == ("L1", "L2") for v in vias)               # the file's X2 span 1-2
    assert all(v.plating == pytest.approx(35e-6) for v in vias)
    assert [v.name for v in vias[:2]] == ["drill1[0]", "drill1[1]"]
    notes = "\n".join(case.notes)
    assert "copper L1 (fab_demo-L1-top.gbr) not used: layer 'L1' names its own artwork" in notes
    assert "drill fab_demo-PTH.drl not read again" in notes
    assert "layer 'L1' <- fab_demo-L1-top.gbr (artwork" in notes


def test_plated_slot_becomes_a_via_and_npth_is_skipped(tmp_path):
    drl = ("M48\nMETRIC\n; #@! TA.AperFunction,Plated,PTH,ComponentDrill\nT1C0.800\n"
           "; #@! TA.AperFunction,NonPlated,NPTH,OtherDrill\nT2C1.000\n%\n"
           "T1\nX4.0Y0.5G85X6.0Y0.5\nT2\nX9.0Y3.0\nX9.0Y4.0\nM30\n")
    text = GOOD + L2 + '\n[[copper]]\nlayer = "L2"\nrect = [0, 0, 10, 1]\n[[drill]]\nfile = "pins.drl"\nlayers = ["L1", "L2"]\n'
    case = load_case(write_case(tmp_path, text, {"pins.drl": drl}))
    (via,) = case.layout.vias
    assert (via.x, via.y, via.drill) == pytest.approx((5 * MM, 0.5 * MM, 0.8 * MM))
    assert via.connects == ("L1", "L2")
    assert any("1 plated slot(s) modelled as vias" in w for w in case.warnings)
    assert any("pins.drl: 2 non-plated holes skipped" in w for w in case.warnings)


def test_cli_prints_the_notes(tmp_path, capsys):
    assert main(["inspect", str(CASES / "fab_demo.toml"), "--out", str(tmp_path)]) == 0
    out = capsys.readouterr().out
    assert "note: fabrication: copper L2 (fab_demo-L2-bottom.gbr) -> layer 'L2'" in out
    assert (tmp_path / "inspect.json").exists()


# ----------------------------------------------------------------------------- end to end
def _loop_inductance(case):
    from copperpath.geometry.meshing import triangulate
    from copperpath.solver.solve.sweep import solve
    from copperpath.solver.solve.system import assemble

    freqs = np.array([0.0, 1e6])
    mesh = triangulate(case.layout, MeshOptions(max_edge=2.0 * MM, min_edge=0.5 * MM))
    system = assemble(mesh, case.layout, case.ports, case.lumped, n_freqs=len(freqs), f_max=freqs[-1])
    return solve(system, freqs, title=case.title).inductance[:, 0, 0]


def test_gerber_and_drawn_cases_give_the_same_loop_inductance(fab_case, drawn_case):
    # the acceptance check: one board, two input paths, the same answer within 1 %
    lf, ld = _loop_inductance(fab_case), _loop_inductance(drawn_case)
    assert lf == pytest.approx(ld, rel=0.01)
    # a loop of about 13 mm x 10 mm: some nH, falling from DC to 1 MHz as the return current
    # moves under the loop (proximity effect; general physics, common practice)
    assert 1e-9 < lf[1] < lf[0] < 50e-9
