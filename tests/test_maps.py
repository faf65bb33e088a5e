"""write_maps: every picture of a solved case, named per port, layer and frequency."""
import json

import numpy as np

from copperpath.solver.output.maps import map_frequencies, primary, safe_name, write_maps
from tests.test_plot import distinct_colours
from tests.test_post import MM, neck_case


def test_write_maps_names_pictures_and_bottlenecks(tmp_path):
    case, mesh, system, result = neck_case()            # sweep: DC, 1 MHz, 100 MHz
    images, rankings, _ = write_maps(tmp_path, case, mesh, system, result)
    bottlenecks = primary(rankings)
    names = sorted(p.path.name for p in images)
    # 100 MHz lies below the quasi-static limit of a 12 mm strip (about 1.2 GHz): the map frequency
    assert names == sorted(["P_RL.png", "P_L1_J_DC.png", "P_L1_L_DC.png", "P_L1_R_DC.png",
                            "P_L1_V_DC.png", "P_L1_J_100MHz.png", "P_L1_L_100MHz.png",
                            "P_L1_R_100MHz.png"])
    for img in images:
        assert img.path.parent == tmp_path / "maps" and img.path.is_file()
        assert img.caption.startswith(f"Port {img.port}")
        colourful = distinct_colours(img.path, 0.003 if img.kind == "rl" else 0.03)
        assert colourful > (20 if img.kind == "rl" else 100), img.path.name
    assert not list((tmp_path / "maps").glob(".*"))
    # bottlenecks: JSON-ready, case units, ranked, at the map frequency, the first at the neck
    json.dumps(bottlenecks)
    assert 1 <= len(bottlenecks) <= 5
    assert [b["rank"] for b in bottlenecks] == list(range(1, len(bottlenecks) + 1))
    top = bottlenecks[0]
    assert top["port"] == "P" and top["layer"] == "L1" and top["frequency_hz"] == 1e8
    assert 4.5 <= top["x"] <= 7.5 and 1.0 <= top["y"] <= 2.0      # mm: the neck
    assert {"inductance_share", "resistance_share", "kind", "area"} <= set(top)
    shares = [b["inductance_share"] for b in bottlenecks]
    assert sum(shares) <= 1.0 + 1e-9
    per_length = [b["inductance_per_length_h_per_m"] for b in bottlenecks]   # the ranking key
    assert per_length == sorted(per_length, reverse=True)


def test_map_frequencies_without_dc():
    case, mesh, system, result = neck_case()
    dc, fmap, f_lim, d = map_frequencies(mesh, case, result)
    assert (dc, fmap) == (0, 2)
    assert 1e8 < f_lim < 1e10 and 12 * MM < d < 13 * MM
    assert np.isfinite(f_lim)


def test_safe_name():
    assert safe_name("hot loop") == "hot_loop"
    assert safe_name("L1") == "L1"
    assert safe_name("a/b\\c") == "a_b_c"
