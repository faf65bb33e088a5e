"""Tests of copperpath.geometry.case: the bad-case table, good-path reading, variants and warnings."""
from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

from copperpath.geometry.case import DEFAULT_PLATING, load_case, quasi_static_limit
from copperpath.geometry.errors import InputError
from tests.bad_cases import BAD_CASES, GOOD, L2, write_case

ROOT = Path(__file__).resolve().parents[1]


@pytest.mark.parametrize("entry", BAD_CASES, ids=[e[0] for e in BAD_CASES])
def test_bad_case(tmp_path, entry):
    _, text, expected, extra = entry
    path = write_case(tmp_path, text, extra)
    with pytest.raises(InputError) as info:
        load_case(path)
    msg = str(info.value)
    assert "\n" not in msg
    assert msg.startswith(str(tmp_path)), msg
    for part in expected:
        assert part in msg, f"{part!r} not in {msg!r}"


def test_bad_case_ids_unique_and_enough():
    ids = [e[0] for e in BAD_CASES]
    assert len(ids) == len(set(ids)) and len(ids) >= 20


def test_good_minimal(tmp_path):
    case = load_case(write_case(tmp_path, GOOD))
    assert case.unit == "mm" and case.unit_scale == 1e-3
    assert case.title == "case"
    assert math.isclose(case.layout.copper["L1"].area, 10e-6, rel_tol=1e-9)
    assert [p.name for p in case.ports] == ["p"]
    np.testing.assert_array_equal(case.frequencies, [0.0])
    assert case.warnings == ()


def test_units_apply_to_every_length(tmp_path):
    text = 'units = "mil"\n' + GOOD + L2 + "\n[[via]]\nat = [100, 20]\ndrill = 12\n\n[mesh]\nmax_edge = 20\nmin_edge = 4\n"
    text = text.replace("rect = [0, 0, 10, 1]", "rect = [0, 0, 400, 40]")
    text = text.replace("rect = [9, 0, 10, 1]", "rect = [390, 0, 400, 40]")
    case = load_case(write_case(tmp_path, text))
    mil = 25.4e-6
    via = case.layout.vias[0]
    assert math.isclose(via.x, 100 * mil) and math.isclose(via.drill, 12 * mil)
    # default pad: drill + 0.3 mm, the 0.3 mm taken in metres whatever the file's unit
    assert math.isclose(via.pad, 12 * mil + 0.3e-3)
    assert via.plating == DEFAULT_PLATING
    assert via.span == ("L1", "L2") and via.connects == ("L1",)
    assert math.isclose(case.mesh.max_edge, 20 * mil) and math.isclose(case.mesh.min_edge, 4 * mil)
    assert math.isclose(case.layout.layer("L2").z, -1 * mil)


def test_sweep_log_spaced_and_sorted(tmp_path):
    case = load_case(write_case(tmp_path, GOOD + "\n[sweep]\nstart = 1e3\nstop = 1e7\npoints = 5\n"))
    np.testing.assert_allclose(case.frequencies, [1e3, 1e4, 1e5, 1e6, 1e7])
    case = load_case(write_case(tmp_path, GOOD + "\n[sweep]\nfrequencies = [1e6, 0, 1e3, 1e3]\n"))
    np.testing.assert_array_equal(case.frequencies, [0, 1e3, 1e6])


def test_options_tables(tmp_path):
    text = GOOD + """
[window]
rect = [0, -1, 10, 2]

[solver]
method = "dense"
tolerance = 1e-6

[circuit]
di_dt = 2e9
output_capacitance = 800e-12
input_voltage = 24
"""
    case = load_case(write_case(tmp_path, text))
    assert case.window == pytest.approx((0.0, -1e-3, 10e-3, 2e-3))
    assert case.solver.method == "dense" and case.solver.tolerance == 1e-6
    c = case.circuit
    assert c.port == "p" and c.di_dt == 2e9 and c.output_capacitance == 800e-12 and c.input_voltage == 24
    case = load_case(write_case(tmp_path, GOOD + "\n[circuit]\ncurrent = 10\nrise_time = 5e-9\n"))
    assert math.isclose(case.circuit.di_dt, 2e9)


def test_paths_resolve_against_case_folder(tmp_path):
    (tmp_path / "fab").mkdir()
    (tmp_path / "fab" / "board-PTH.drl").write_text("M48\n")
    (tmp_path / "art.gbr").write_text("")
    text = GOOD.replace("thickness = 0.035", 'thickness = 0.035\nartwork = "art.gbr"\nsublayers = "auto"')
    text += L2 + '\n[[drill]]\nfile = "fab/board-PTH.drl"\nlayers = ["L2", "L1"]\n\n[fabrication]\nsource = "fab/"\n'
    case = load_case(write_case(tmp_path, text))
    assert case.layout.layer("L1").artwork == tmp_path / "art.gbr"
    assert case.layout.layer("L1").sublayers == "auto"
    (drill,) = case.drills
    assert drill["file"] == tmp_path / "fab/board-PTH.drl" and drill["span"] == ("L1", "L2")
    assert drill["name"] == "drill1" and drill["plating"] == DEFAULT_PLATING
    assert case.fabrication == tmp_path / "fab"
    # the artwork is read by default now: the empty file gives no copper, and says so
    assert any("artwork art.gbr holds no copper" in w for w in case.warnings)


def test_artwork_reader_adds_copper(tmp_path):
    import shapely
    (tmp_path / "art.gbr").write_text("")
    text = GOOD.replace("thickness = 0.035", 'thickness = 0.035\nartwork = "art.gbr"')
    seen = []

    def reader(p):
        seen.append(p)
        return shapely.box(0, 1e-3, 10e-3, 3e-3)

    case = load_case(write_case(tmp_path, text), read_artwork=reader)
    assert seen == [tmp_path / "art.gbr"]
    assert math.isclose(case.layout.copper["L1"].area, 30e-6, rel_tol=1e-9)


BASE = GOOD + """
[[copper]]
name = "island"
layer = "L1"
rect = [0, 5, 2, 7]

[[copper]]
layer = "L1"
rect = [4, 0, 5, 1]
clear = true

[[lumped]]
name = "R1"
between = ["A", "B"]

[sweep]
frequencies = [0, 1e6]

[mesh]
max_edge = 0.4
"""


def test_extends_remove_and_replace(tmp_path):
    (tmp_path / "base.toml").write_text(BASE)
    base = load_case(tmp_path / "base.toml")
    assert math.isclose(base.layout.copper["L1"].area, (10 - 1 + 4) * 1e-6, rel_tol=1e-9)
    assert any("island" in w for w in base.warnings)
    variant = """extends = "base.toml"
units = "um"
title = "variant"

[[copper]]
name = "island"
remove = true

[[copper]]
name = "copper3"             # the base's third, unnamed copper (the clear)
remove = true

[[copper]]
layer = "L1"
rect = [0, 1000, 10000, 2000]

[sweep]
start = 1e3
stop = 1e6
points = 4
"""
    case = load_case(write_case(tmp_path, variant))
    assert case.title == "variant" and case.unit == "um"
    # island and the (default-named) clear removed; the variant's strip is in micrometres
    assert math.isclose(case.layout.copper["L1"].area, 20e-6, rel_tol=1e-9)
    assert len(case.layout.copper["L1"].geoms) == 1
    assert case.warnings == ()
    np.testing.assert_allclose(case.frequencies, [1e3, 1e4, 1e5, 1e6])  # [sweep] replaced
    assert math.isclose(case.mesh.max_edge, 0.4e-3)                    # [mesh] kept, base's mm
    assert [x.name for x in case.lumped] == ["R1"]


def test_extends_chain(tmp_path):
    (tmp_path / "a.toml").write_text(GOOD)
    (tmp_path / "b.toml").write_text('extends = "a.toml"\n[sweep]\nfrequencies = [5]\n')
    case = load_case(write_case(tmp_path, 'extends = "b.toml"\ntitle = "c"\n'))
    assert case.title == "c" and list(case.frequencies) == [5.0]


def test_default_names_skip_taken(tmp_path):
    text = GOOD + L2 + '\n[[via]]\nname = "via2"\nat = [3, 0.5]\ndrill = 0.3\n\n[[via]]\nat = [5, 0.5]\ndrill = 0.3\n'
    case = load_case(write_case(tmp_path, text))
    assert [v.name for v in case.layout.vias] == ["via2", "via3"]


def test_floating_island_warning(tmp_path):
    text = GOOD + '\n[[copper]]\nlayer = "L1"\nrect = [0, 5, 2, 7]\n'
    case = load_case(write_case(tmp_path, text))
    (w,) = case.warnings
    assert "layer 'L1'" in w and "joined to no port" in w and "(4 mm^2)" in w
    assert math.isclose(case.layout.copper["L1"].area, 14e-6, rel_tol=1e-9)   # kept


def test_lumped_and_vias_join_bodies(tmp_path):
    # the strip cut in two: a lumped branch across the cut, or a bridge on L2 through vias
    cut = GOOD + '\n[[copper]]\nlayer = "L1"\nrect = [4, 0, 5, 1]\nclear = true\n'
    lump = cut + '\n[[terminal]]\nname = "C"\nlayer = "L1"\nrect = [3, 0, 4, 1]\n' \
        '\n[[terminal]]\nname = "D"\nlayer = "L1"\nrect = [5, 0, 6, 1]\n' \
        '\n[[lumped]]\nbetween = ["C", "D"]\nresistance = 1e-3\n'
    case = load_case(write_case(tmp_path, lump))
    assert case.lumped[0].resistance == 1e-3 and case.warnings == ()
    bridge = cut + L2 + '\n[[copper]]\nlayer = "L2"\nrect = [3, 0, 6, 1]\n' \
        '\n[[via]]\nat = [3.5, 0.5]\ndrill = 0.3\narray = { pitch = [2, 0], count = [2, 1] }\n'
    case = load_case(write_case(tmp_path, bridge))
    assert [v.connects for v in case.layout.vias] == [("L1", "L2")] * 2
    assert case.warnings == ()


def test_quasi_static_warning(tmp_path):
    # D = hypot(10 mm, 1 mm, 0.035 mm): limit c0 / (10 sqrt(4.5) D) ~ 1.41 GHz (common practice)
    d = math.sqrt(10e-3 ** 2 + 1e-3 ** 2 + 0.035e-3 ** 2)
    f_lim = 299_792_458.0 / (10 * math.sqrt(4.5) * d)
    assert 1.40e9 < f_lim < 1.42e9
    case = load_case(write_case(tmp_path, GOOD + "\n[sweep]\nfrequencies = [0, 1e9]\n"))
    assert case.warnings == ()
    assert quasi_static_limit(case.layout)[0] == pytest.approx(f_lim)
    case = load_case(write_case(tmp_path, GOOD + "\n[sweep]\nfrequencies = [0, 2e9]\n"))
    (w,) = case.warnings
    assert "[sweep]" in w and "quasi-static" in w and "2e+09 Hz" in w


def test_bundled_case_loads():
    case = load_case(ROOT / "cases" / "two_layer_pour.toml")
    lay = case.layout
    assert [la.name for la in lay.layers] == ["L1", "L2"]
    assert len(lay.vias) == 12 and all(v.connects == ("L1", "L2") for v in lay.vias)
    assert {t.name for t in lay.terminals} == {"C1.1", "C1.2", "Q1.D", "Q1.S"}
    assert [p.name for p in case.ports] == ["loop"] and case.lumped[0].resistance == 5e-3
    assert case.frequencies[-1] == 1e8 and case.mesh.max_edge == 0.5e-3 and case.mesh.min_edge == 0.1e-3
    assert case.circuit.port == "loop"
    assert case.warnings == ()
    total = sum(cu.area for cu in lay.copper.values())
    assert 1e-4 < total < 1e-3        # a few cm^2
