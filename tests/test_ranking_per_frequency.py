"""One bottleneck ranking per reported frequency: the maps' numbered markers are that
frequency's table (the data handed to the plotting, not pixels), and result.json holds one
list per reported frequency."""
import json
import re

import pytest

from copperpath.solver.output import maps as maps_module
from copperpath.solver.output.maps import primary, reported_frequencies, write_maps
from copperpath.solver.output.outputs import format_table, write_outputs
from tests.test_post import neck_case


@pytest.fixture(scope="module")
def neck():
    return neck_case()                               # sweep DC, 1 MHz, 100 MHz


def test_markers_are_the_table_of_their_frequency(tmp_path, neck, monkeypatch):
    case, mesh, system, result = neck
    drawn = []

    def record(draw, path, *args, **kwargs):
        drawn.append((path.name, kwargs.get("markers")))
    monkeypatch.setattr(maps_module, "_draw", record)
    _, rankings, _ = write_maps(tmp_path, case, mesh, system, result)
    assert [r["frequency_hz"] for r in rankings] == [0.0, 1e8]        # DC and the map frequency
    assert all(r["bottlenecks"] for r in rankings)
    table = {("DC" if r["frequency_hz"] == 0 else "100MHz"): r["bottlenecks"] for r in rankings}
    checked = 0
    for name, marks in drawn:
        m = re.match(r"P_L1_[JLR]_(DC|100MHz)\.png", name)
        if not m:
            continue
        rows = table[m.group(1)]
        s = case.unit_scale
        assert [n for n, *_ in marks] == [b["rank"] for b in rows]
        for (_, x, y, layers), b in zip(marks, rows):
            assert (x / s, y / s) == pytest.approx((b["x"], b["y"]), abs=1e-12)
            assert list(layers) == b["layers"] and b["frequency_hz"] == (0.0 if m.group(1) == "DC" else 1e8)
        checked += 1
    assert checked == 6                               # J, L, R at DC and at 100 MHz
    assert primary(rankings) == rankings[-1]["bottlenecks"]


def test_result_json_and_printout_carry_one_ranking_per_frequency(tmp_path, neck):
    case, mesh, system, result = neck
    summary = write_outputs(case, mesh, system, result, tmp_path)
    data = json.loads((tmp_path / "result.json").read_text())
    shown = [float(result.frequencies[i]) for i in reported_frequencies(mesh, case, result)]
    by_f = data["bottlenecks_by_frequency"]
    assert [r["frequency_hz"] for r in by_f] == shown == [0.0, 1e8]
    for r in by_f:
        assert [b["rank"] for b in r["bottlenecks"]] == list(range(1, len(r["bottlenecks"]) + 1))
        assert {b["frequency_hz"] for b in r["bottlenecks"]} == {r["frequency_hz"]}
    assert data["bottlenecks"] == by_f[-1]["bottlenecks"]
    text = format_table(case, result, summary)
    assert "bottlenecks at DC (the numbers on the DC maps)" in text
    assert "bottlenecks at 100 MHz (the numbers on the 100 MHz maps)" in text
    report = (tmp_path / "report.md").read_text()
    assert "Bottlenecks at DC: the numbers on the maps below." in report
