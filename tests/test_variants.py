"""The comparison report: per-variant sections (own report link, loop contents, bottlenecks) and
side-by-side maps on the layers each variant has, top layer first."""
import re

import pytest

from copperpath.solver.cli import main
from tests.bad_cases import GOOD, L2, write_case

COARSE = "\n[mesh]\nmax_edge = 0.5\nmin_edge = 0.25\n[sweep]\nfrequencies = [0, 1e8]\n"

#: Two strips on L1 joined by a lumped 5 nH branch (a component in series with the copper).
SPLIT = """\
[[layer]]
name = "L1"
z = 0.0
thickness = 0.035
""" + L2 + """
[[copper]]
layer = "L1"
rect = [0, 0, 4, 1]

[[copper]]
layer = "L1"
rect = [6, 0, 10, 1]

[[copper]]
layer = "L2"
rect = [0, -3, 10, -2]

[[terminal]]
name = "A"
layer = "L1"
rect = [0, 0, 1, 1]

[[terminal]]
name = "C"
layer = "L1"
rect = [3, 0, 4, 1]

[[terminal]]
name = "D"
layer = "L1"
rect = [6, 0, 7, 1]

[[terminal]]
name = "B"
layer = "L1"
rect = [9, 0, 10, 1]

[[lumped]]
name = "Q"
between = ["C", "D"]
inductance = 5e-9

[[port]]
name = "p"
plus = "A"
minus = "B"
"""


@pytest.fixture(scope="module")
def compared(tmp_path_factory):
    root = tmp_path_factory.mktemp("variants")
    (root / "a").mkdir()
    (root / "b").mkdir()
    a = write_case(root / "a", GOOD + COARSE).rename(root / "strip.toml")
    b = write_case(root / "b", SPLIT + COARSE).rename(root / "split.toml")
    out = root / "out"
    assert main(["compare", str(a), str(b), "--out", str(out)]) == 0
    return out, (out / "report.html").read_text(encoding="utf-8")


def test_each_variant_has_a_section_with_a_link_to_its_own_report(compared):
    out, text = compared
    for stem in ("strip", "split"):
        assert f'href="{stem}/report.html"' in text
        assert (out / stem / "report.html").is_file()
    assert text.count("<h2") >= 4 and "Variant: " in text


def test_the_loop_contents_name_the_lumped_share(compared):
    # A series lumped branch with no mutual coupling holds exactly L_Q |I|^2 = 5 nH of the
    # port's loop inductance at 1 A (Ruehli 1972: loop L as the sum of partial inductances).
    _, text = compared
    assert re.search(r"includes the lumped branches Q 5 nH \(\d+ %\)", text)
    assert "all of it copper and vias" in text                  # the plain strip


def test_side_by_side_maps_cover_the_layers_top_first(compared):
    out, text = compared
    names = re.findall(r"compare_p_(L\d)_([JL])\.png", " ".join(p.name for p in (out / "maps").iterdir()))
    assert sorted(names) == [("L1", "J"), ("L1", "L"), ("L2", "J"), ("L2", "L")]
    caps = re.findall(r"<figcaption>Layer (L\d):", text)
    assert caps == ["L1", "L1", "L2", "L2"]                      # L1 (z = 0) above L2 (z = -1)


def test_compare_names_a_missing_port_before_solving(tmp_path, capsys):
    a = write_case(tmp_path, GOOD + COARSE)
    b = a.with_name("other.toml")
    b.write_text(a.read_text())
    assert main(["compare", str(a), str(b), "--port", "nope", "--out", str(tmp_path / "o")]) == 2
    assert "'nope'" in capsys.readouterr().err
    assert not (tmp_path / "o").exists()
