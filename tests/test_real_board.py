"""Real-board inputs on exports of a real layout tool: pads, nets and stackup from X2 and the job file.

The data (``cases/pic_programmer/``, ``tests/data/``; GPL-2+, see ``tests/data/LICENSE.md``)
were exported by ``scripts/export_board.py`` from KiCad 6.0.11's demo boards ``pic_programmer``
(two layers, an LT1373 boost stage) and ``kit-dev-coldfire-xilinx_5213`` (four layers). The
references are independent of our readers: ``pads.json`` is the pad table of KiCad's own board
model (``pcbnew``), ``stackup.kicad_sexpr`` the ``(stackup ...)`` section of the board file as
the designer stated it.
"""
from __future__ import annotations

import json
import math
import re
from pathlib import Path

import numpy as np
import pytest
import shapely

from copperpath.geometry.case import load_case
from copperpath.geometry.errors import InputError
from copperpath.geometry.formats import board, gerber, gerber_job
from copperpath.geometry.formats.fabrication import scan
from copperpath.geometry.model import MeshOptions
from copperpath.solver.cli import main
from tests.bad_cases import write_case

ROOT = Path(__file__).resolve().parents[1]
FAB = ROOT / "cases" / "pic_programmer"
DATA = Path(__file__).resolve().parent / "data"
LAYER_FILES = {"top_layer": "pic_programmer-top_layer.gbr", "bottom_layer": "pic_programmer-bottom_layer.gbr"}
MM = 1e-3
#: The boost stage of pic_programmer (window of the bundled case, Gerber frame, mm).
WINDOW = "[108, -85, 140, -52]"


@pytest.fixture(scope="module")
def artwork():
    return {name: gerber.read(FAB / f) for name, f in LAYER_FILES.items()}


@pytest.fixture(scope="module")
def kicad_pads():
    return [p for p in json.loads((DATA / "pic_programmer" / "pads.json").read_text())["pads"]
            if p["pad"] and p["layers"]]


def _sexpr(text):
    """Parse an s-expression into nested lists of strings (quoted strings unquoted)."""
    tokens = re.findall(r'"(?:[^"\\]|\\.)*"|[()]|[^\s()"]+', text)
    stack = [[]]
    for t in tokens:
        if t == "(":
            stack.append([])
        elif t == ")":
            done = stack.pop()
            stack[-1].append(done)
        else:
            stack[-1].append(t[1:-1] if t.startswith('"') else t)
    return stack[0][0]


def board_file_stackup(path):
    """``[(name, type, thickness in metres or None)]`` of a KiCad ``(stackup ...)`` section."""
    out = []
    for item in _sexpr(path.read_text())[1:]:
        if isinstance(item, list) and item[0] == "layer":
            keys = {k[0]: k[1] for k in item[2:] if isinstance(k, list)}
            t = keys.get("thickness")
            out.append((item[1], keys.get("type"), None if t is None else float(t) * MM))
    return out


# ----------------------------------------------------------------------------- pads and nets
def test_x2_pads_match_the_layout_tools_pad_table(artwork, kicad_pads):
    # every copper pad of KiCad's board model is found by name on each of its layers, on the
    # same net, centred where KiCad puts it and of KiCad's size (source: KiCad 6.0.11 pcbnew)
    checked = 0
    count = {}
    for p in kicad_pads:
        count[p["ref"], p["pad"]] = count.get((p["ref"], p["pad"]), 0) + 1
    for p in kicad_pads:
        for layer in p["layers"]:
            pad = artwork[layer].pads[f"{p['ref']}.{p['pad']}"]
            assert pad.net == (p["net"] or "N/C"), (p, pad.net)   # X2 marks a pad on no net N/C
            if count[p["ref"], p["pad"]] > 1 or p["shape"].endswith("CUSTOM"):
                continue                    # pads of one name (mounting holes) are one pad here;
                                            # a custom pad's anchor is not its centre
            x0, y0, x1, y1 = pad.geometry.bounds
            assert (x0 + x1) / 2 == pytest.approx(p["x_mm"] * MM, abs=1e-6)
            assert (y0 + y1) / 2 == pytest.approx(p["y_mm"] * MM, abs=1e-6)
            w, h = p["size_mm"] if round(p["angle_deg"]) % 180 == 0 else p["size_mm"][::-1]
            assert (x1 - x0, y1 - y0) == pytest.approx((w * MM, h * MM), abs=2e-6)
            checked += 1
    assert checked > 400
    for name, art in artwork.items():                          # and no pad that KiCad lacks
        assert {p.ref for p in art.pads.values()} == {p["ref"] for p in kicad_pads if name in p["layers"]}


def test_nets_are_disjoint_and_hold_their_pads(artwork, kicad_pads):
    for layer, art in artwork.items():
        nets = art.nets
        total = sum(g.area for g in nets.values())
        union = shapely.union_all(list(nets.values())).area
        assert union == pytest.approx(total, rel=1e-9)          # no copper on two nets
        assert total <= art.geometry.area * (1 + 1e-9)
        for p in kicad_pads:
            if layer in p["layers"]:
                point = shapely.Point(p["x_mm"] * MM, p["y_mm"] * MM)
                assert nets[p["net"] or "N/C"].intersects(point), (layer, p)


@pytest.mark.parametrize("others", ["drop", "float"])
def test_net_filter_keeps_exactly_the_listed_nets(artwork, kicad_pads, others):
    listed = ("GND", "VPP", "Net-(D10-Pad2)")
    fab = scan(FAB)
    got = board.fabrication_inputs(fab, ["L1", "L2"], plating=25e-6, annulus=0.3e-3,
                                   nets=listed, others=others, where=("case.toml", "[fabrication]"))
    for name, layer in (("top_layer", "L1"), ("bottom_layer", "L2")):
        art, kept = artwork[name], got.artwork[layer]
        if others == "float":
            assert kept.area == pytest.approx(art.geometry.area, rel=2e-3)   # all, simplified
            continue
        expected = shapely.union_all([art.nets[n] for n in listed])
        # the kept copper is the listed nets' copper, up to the 5 um simplification
        assert kept.area == pytest.approx(expected.area, rel=1e-3)
        assert shapely.symmetric_difference(kept, expected).area < 1e-3 * expected.area
        assert kept.area < 0.95 * art.geometry.area
        for p in kicad_pads:                                    # pcbnew's netlist decides
            if name in p["layers"]:
                inside = kept.intersects(shapely.Point(p["x_mm"] * MM, p["y_mm"] * MM))
                assert inside == (p["net"] in listed), p
    if others == "drop":
        assert any("nets GND, VPP, Net-(D10-Pad2) hold" in n for n in got.notes)


# ----------------------------------------------------------------------------- stackup
@pytest.mark.parametrize("folder, job_file", [
    (FAB, "pic_programmer-job.gbrjob"),
    (DATA / "coldfire_stackup", "kit-dev-coldfire-xilinx_5213-job.gbrjob")])
def test_job_file_stackup_equals_the_board_files_stackup(folder, job_file):
    sexpr = DATA / ("pic_programmer" if folder == FAB else "coldfire_stackup") / "stackup.kicad_sexpr"
    stated = board_file_stackup(sexpr)
    copper = [i for i, (_, kind, _) in enumerate(stated) if kind == "copper"]
    between = stated[copper[0]:copper[-1] + 1]
    job = gerber_job.read(folder / job_file)
    assert len(job.copper) == len(copper)
    # elevations: z of a copper layer's bottom face = sum of everything below it down to the
    # bottom copper's bottom face, from the board file's thicknesses
    z, expected = 0.0, []
    for _, kind, t in reversed(between):
        if kind == "copper":
            expected.append((z, t))
        z += t
    expected.reverse()
    assert [v for c in job.copper for v in (c.z, c.thickness)] == pytest.approx(
        [v for pair in expected for v in pair], abs=1e-12)
    assert [d[1] for d in job.dielectrics] == pytest.approx(
        [t for _, kind, t in between if kind != "copper"], abs=1e-12)
    # the board's stated total (masks included) is the job file's board thickness
    assert sum(t for *_, t in stated if t) == pytest.approx(job.board_thickness, abs=1e-9)


def _job_case(tmp_path, extra=""):
    text = f"""
[fabrication]
source = "{FAB}"
stackup = "job"
nets = ["Net-(D10-Pad2)"]
[window]
rect = {WINDOW}
[[port]]
name = "sw"
plus = "U4.8"
minus = "D10.2"
{extra}"""
    return write_case(tmp_path, text)


def test_stackup_job_gives_the_layers_and_explicit_tables_win(tmp_path):
    case = load_case(_job_case(tmp_path))
    stated = board_file_stackup(DATA / "pic_programmer" / "stackup.kicad_sexpr")
    cu = [t for _, kind, t in stated if kind == "copper"]
    core = [t for _, kind, t in stated if kind == "core"][0]
    assert [la.name for la in case.layout.layers] == ["L1", "L2"]
    assert [la.thickness for la in case.layout.layers] == pytest.approx(cu)
    assert [la.z for la in case.layout.layers] == pytest.approx([cu[1] + core, 0.0])
    case = load_case(_job_case(tmp_path, '[[layer]]\nname = "L1"\nthickness = 0.07\nsublayers = 2\n'))
    top = case.layout.layer("L1")
    assert (top.thickness, top.sublayers, top.z) == (pytest.approx(70e-6), 2, pytest.approx(cu[1] + core))
    assert any("[[layer]] 'L1' sets thickness, sublayers" in n for n in case.notes)


# ----------------------------------------------------------------------------- pads as terminals
def test_a_through_hole_pad_is_one_terminal_on_all_its_layers(tmp_path):
    case = load_case(_job_case(tmp_path))
    layers = {t.name: [] for t in case.layout.terminals}
    for t in case.layout.terminals:
        layers[t.name].append(t.layer)
    assert layers == {"U4.8": ["L1", "L2"], "D10.2": ["L1", "L2"]}


@pytest.mark.parametrize("key, value, closest", [
    ("plus", "U4.88", "'U4.8'"), ("plus", "U44.8", "'U4.8'"), ("minus", "D10.3", "'D10.2'")])
def test_unknown_pad_is_an_input_error_with_the_closest_matches(tmp_path, capsys, key, value, closest):
    path = _job_case(tmp_path)
    text = path.read_text().replace(f'{key} = "{"U4.8" if key == "plus" else "D10.2"}"', f'{key} = "{value}"')
    path.write_text(text)
    assert main(["inspect", str(path), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "[[port]] 'sw'" in err[0] and value in err[0] and closest in err[0]


def test_unknown_pad_in_a_terminal_table_and_unknown_net(tmp_path):
    path = _job_case(tmp_path, '[[terminal]]\nname = "x"\npad = "U4.9"\n')
    with pytest.raises(InputError, match=r"\[\[terminal\]\] 'x': 'pad' names pad 'U4.9'.*closest: .*'U4.8'"):
        load_case(path)
    path = _job_case(tmp_path)
    path.write_text(path.read_text().replace('nets = ["Net-(D10-Pad2)"]', 'nets = ["VPP2"]'))
    with pytest.raises(InputError, match=r"\[fabrication\]: 'nets' names net 'VPP2'.*closest: 'VPP'"):
        load_case(path)
    path.write_text(path.read_text().replace('nets = ["VPP2"]', 'nets = ["VPP"]'))
    with pytest.raises(InputError, match=r"pad 'U4.8' on net 'Net-\(D10-Pad2\)', which \[fabrication\] 'nets' drops"):
        load_case(path)


def _drawn(p, layers, grow=0.002):
    """A pad of pcbnew's table drawn by coordinates: a circle, rectangle or obround polygon,
    ``grow`` mm larger all round: an outline on the pad's own edge, polygonised otherwise than
    the Gerber reader's, would leave slivers of bulk copper between two nearly equal curves.
    (The loop below loses about 3.5 nH per mm that its four terminals grow, measured with
    grow = 0.02 to 0.1 mm: 2 um cost about 0.1 %.)"""
    x, y = p["x_mm"], p["y_mm"]
    w, h = p["size_mm"] if round(p["angle_deg"]) % 180 == 0 else p["size_mm"][::-1]
    w, h = w + 2 * grow, h + 2 * grow
    on = f"layer = {json.dumps(layers)}"
    if p["shape"].endswith("RECT"):
        return f"rect = [{x - w / 2}, {y - h / 2}, {x + w / 2}, {y + h / 2}]\n{on}"
    if w == h:
        return f"circle = {{ center = [{x}, {y}], radius = {w / 2} }}\n{on}"
    r, half = min(w, h) / 2, (abs(w - h) / 2, 0.0) if w > h else (0.0, abs(w - h) / 2)
    pts = []
    for sx, a0 in ((1, -90), (-1, 90)):                        # two half circles, 64 chords each
        for a in np.linspace(a0, a0 + 180, 65):
            pts.append([round(x + sx * half[0] + r * math.cos(math.radians(a)), 6),
                        round(y + sx * half[1] + r * math.sin(math.radians(a)), 6)])
    return f"polygon = {json.dumps(pts)}\n{on}"


def _inductance(case):
    from copperpath.geometry.meshing import triangulate
    from copperpath.solver.solve.sweep import solve
    from copperpath.solver.solve.system import assemble

    freqs = np.array([1e6])
    mesh = triangulate(case.layout, MeshOptions(max_edge=0.5 * MM, min_edge=0.15 * MM))
    system = assemble(mesh, case.layout, case.ports, case.lumped, n_freqs=1, f_max=freqs[-1])
    return solve(system, freqs, title=case.title).inductance[0, 0, 0]


def test_pad_named_case_gives_the_same_inductance_as_terminals_drawn_by_coordinates(tmp_path, kicad_pads):
    # the switch node and the output of the boost stage: U4.8 -> D10 (a lumped branch) -> C3.1
    head = f"""
[fabrication]
source = "{FAB}"
stackup = "job"
nets = ["Net-(D10-Pad2)", "VPP"]
[window]
rect = {WINDOW}
"""
    by_pad = head + """
[[port]]
name = "p"
plus = "U4.8"
minus = "C3.1"
[[lumped]]
name = "D10"
between = ["D10.2", "D10.1"]
"""
    pads = {f"{p['ref']}.{p['pad']}": p for p in kicad_pads}
    drawn = head + "".join(f'[[terminal]]\nname = "{n}"\n{_drawn(pads[n], ["L1", "L2"])}\n'
                           for n in ("U4.8", "C3.1", "D10.2", "D10.1")) + by_pad[by_pad.index("[[port]]"):]
    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    la = _inductance(load_case(write_case(tmp_path / "a", by_pad)))
    lb = _inductance(load_case(write_case(tmp_path / "b", drawn)))
    assert la == pytest.approx(lb, rel=0.005)
    # about 40 mm of 0.6-1.5 mm wide trace: some tens of nH (about 1 nH/mm for a thin trace far
    # from its return, common practice)
    assert 5e-9 < la < 80e-9


def test_inspect_lists_components_nets_and_stackup(tmp_path, capsys, kicad_pads):
    path = _job_case(tmp_path)
    assert main(["inspect", str(path), "--out", str(tmp_path / "out")]) == 0
    out = capsys.readouterr().out
    info = json.loads((tmp_path / "out" / "inspect.json").read_text())
    assert {"layers", "vias", "terminals", "ports", "mesh", "dense_memory_bytes"} <= set(info)
    fab = info["fabrication"]
    # every pad of pcbnew's table, with its net and layers
    for p in kicad_pads:
        entry = fab["components"][p["ref"]][p["pad"]]
        assert entry["net"] == (p["net"] or "N/C")
        assert entry["layers"] == [{"top_layer": "L1", "bottom_layer": "L2"}[n] for n in p["layers"]]
    assert fab["window"] is True and fab["net_filter"] == {"nets": ["Net-(D10-Pad2)"], "others": "drop"}
    # net areas per layer inside the window: the switch node's copper is what the case keeps
    sw = fab["nets"]["Net-(D10-Pad2)"]
    assert set(sw) == {"L1", "L2"} and all(a > 0 for a in sw.values())
    assert [la["job_name"] for la in fab["stackup"]] == ["top_layer", "bottom_layer"]
    assert fab["job"]["board_thickness_m"] == pytest.approx(1.6e-3)
    assert "U4: 1 = Net-(C4-Pad1), 2 = Net-(RV1-Pad2)" in out and "L1: z 1.545 mm" in out


def test_bundled_case_needs_no_coordinates_and_no_stackup():
    import tomllib

    path = ROOT / "cases" / "pic_programmer_loop.toml"
    doc = tomllib.loads(path.read_text())
    assert "layer" not in doc and "terminal" not in doc and "copper" not in doc and "via" not in doc
    case = load_case(path)
    assert [la.name for la in case.layout.layers] == ["L1", "L2"]
    assert {t.name for t in case.layout.terminals} == {"U4.8", "U4.7", "D10.2", "D10.1", "C3.1", "C3.2"}
    kept = [n for n in case.notes if "hold" in n and "others = \"drop\" keeps" in n]
    assert len(kept) == 2                                       # one line per layer


def test_job_files_attributes_are_checked_against_the_copper_files(tmp_path):
    import shutil

    fab = tmp_path / "fab"
    shutil.copytree(FAB, fab)
    job = fab / "pic_programmer-job.gbrjob"
    job.write_text(job.read_text().replace('"Copper,L1,Top"', '"Copper,L9,Top"'))
    case = load_case(write_case(tmp_path, _job_case(tmp_path).read_text().replace(str(FAB), str(fab))))
    assert any("lists pic_programmer-top_layer.gbr as copper L9, its own FileFunction says L1" in w
               for w in case.warnings)
    assert any("FilesAttributes agree" in n for n in load_case(_job_case(tmp_path)).notes)
