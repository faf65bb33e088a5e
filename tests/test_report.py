"""report.html (self-contained) and report.md: content, embedding and a headless render."""
import base64
import html
import re
import shutil
import subprocess

import pytest

from copperpath.solver.output.maps import primary, write_maps
from copperpath.solver.output.formatting import engineering
from copperpath.solver.output.report import CAUTION, write_report
from tests.test_plot import distinct_colours
from tests.test_post import lumped_case

CHROMIUM = shutil.which("chromium")


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    out = tmp_path_factory.mktemp("report")
    case, mesh, system, result = lumped_case()
    images, rankings, _ = write_maps(out, case, mesh, system, result)
    bottlenecks = primary(rankings)
    summary = {"mesh": {"triangles": mesh.n_triangles, "unknowns": system.network.n_branches},
               "timing_s": {"solve": 0.5}, "bottlenecks": bottlenecks,
               "bottlenecks_by_frequency": rankings}
    extra = [("Circuit estimate", "<p>extra-html-section</p>", "extra-md-section")]
    html_path, md_path = write_report(out, case, result, summary, images, warnings=["a <test> warning"],
                                      extra_sections=extra)
    return out, case, result, images, bottlenecks, html_path, md_path


def test_html_is_self_contained(report):
    out, case, result, images, bottlenecks, html_path, md_path = report
    text = html_path.read_text(encoding="utf-8")
    assert text.count('src="data:image/png;base64,') == len(images)
    for img in images:                                   # every map, embedded byte for byte
        assert base64.b64encode(img.path.read_bytes()).decode("ascii") in text
    assert "http://" not in text and "https://" not in text and "<script" not in text
    assert "<link" not in text
    assert html.escape(CAUTION) in text
    assert "IEC 62368-1" in text and "IPC-2221" in text
    assert "extra-html-section" in text and "Circuit estimate" in text
    assert "a &lt;test&gt; warning" in text             # escaped
    # R/L table: every port and frequency, values in mohm and nH
    for k, port in enumerate(result.ports):
        assert f"Port {port}" in text
        for i in range(len(result.frequencies)):
            assert f"{result.resistance[i, k, k] * 1e3:.5g}" in text
            assert f"{result.inductance[i, k, k] * 1e9:.5g}" in text
    assert "ESL" in text                                 # the lumped branch, in the bottleneck table
    assert not list(out.glob(".*"))


def test_the_answer_comes_first_with_a_contents_list(report):
    out, case, result, images, bottlenecks, html_path, md_path = report
    text = html_path.read_text(encoding="utf-8")
    heads = re.findall(r'<h2 id="(s\d+)">([^<]*)</h2>', text)
    titles = [t for _, t in heads]
    assert titles[0] == "The answer"
    assert titles.index("Warnings") < titles.index("Maps")
    assert titles[-1] == "Cautions"
    toc = text[text.index('<nav class="toc">'):text.index("</nav>")]
    for anchor, title in heads:                            # every section in the contents list
        assert f'<a href="#{anchor}">{html.escape(title)}</a>' in toc
    answer = text[text.index('id="s1"'):text.index('id="s2"')]
    k = 0
    top = len(result.frequencies) - 1                      # R and L at DC and the top frequency
    assert engineering(result.inductance[top, k, k], "H") in answer
    assert engineering(result.resistance[0, k, k], "ohm") in answer
    assert "#1" in answer and "% of L" in answer           # where the inductance lives


def test_markdown_refers_to_files(report):
    out, case, result, images, bottlenecks, html_path, md_path = report
    text = md_path.read_text(encoding="utf-8")
    for img in images:
        rel = img.path.relative_to(out).as_posix()
        assert f"]({rel})" in text
        assert (out / rel).is_file()
    assert CAUTION in text and "extra-md-section" in text
    assert "| frequency | R (mohm) | L (nH) |" in text


@pytest.mark.skipif(CHROMIUM is None, reason="chromium not installed")
def test_renders_in_headless_chromium(report, tmp_path):
    out, *_, html_path, md_path = report
    shot = tmp_path / "shot.png"
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
           "--disable-component-update", "--disable-sync", "--no-first-run",
           f"--user-data-dir={tmp_path / 'profile'}", f"--screenshot={shot}", "--window-size=1200,2000",
           html_path.resolve().as_uri()]
    subprocess.run(cmd, check=True, capture_output=True, timeout=120)
    assert shot.is_file()
    # not blank: the R(f)/L(f) curves and table borders give colour and many grey levels
    assert distinct_colours(shot, 0.001) > 20
