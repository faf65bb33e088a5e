"""Per-layer maps and R(f)/L(f) plots are written, are PNG pictures and are not blank."""
import numpy as np
import pytest

from copperpath.solver.output import plot
from copperpath.solver.analysis import post
from tests.test_post import neck_case


def distinct_colours(path, min_fraction=0.03):
    """Distinct colours among the coloured (not grey) pixels of a PNG, 0 if they cover less
    than ``min_fraction`` of it.

    Text, axes, outline and the grey terminal shading are grey; the map's colour scale is not,
    so a picture with an empty plot area scores 0.
    """
    import matplotlib.image as mpimg

    rgb = (np.asarray(mpimg.imread(path))[..., :3] * 255).round().astype(np.int64)
    chroma = rgb.max(axis=-1) - rgb.min(axis=-1)
    coloured = rgb[chroma > 24]
    if len(coloured) < min_fraction * chroma.size:
        return 0
    return len(np.unique(coloured[:, 0] * 65536 + coloured[:, 1] * 256 + coloured[:, 2]))


@pytest.fixture(scope="module")
def neck():
    case, mesh, system, result = neck_case()
    maps = post.port_maps(mesh, system, result, freq_index=1, port_index=0)
    return case, mesh, result, maps, post.find_bottlenecks(mesh, maps)[:5]


@pytest.mark.parametrize("draw", [plot.current_density_map, plot.inductance_share_map,
                                  plot.loss_share_map, plot.ir_drop_map])
def test_layer_maps_written_and_not_blank(tmp_path, neck, draw):
    case, mesh, result, maps, found = neck
    path = tmp_path / f"{draw.__name__}.png"
    marks = [(n, b.x, b.y, b.layers) for n, b in enumerate(found, start=1)]
    kwargs = {} if draw is plot.ir_drop_map else {"markers": marks}
    draw(path, mesh, case, maps, layer_index=0, **kwargs)
    assert path.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert distinct_colours(path) > 100          # a colour scale, not an empty frame
    assert not list(tmp_path.glob(".*"))         # no temporary file left behind


def test_linear_current_scale_and_empty_layer(tmp_path):
    case, mesh, system, result = neck_case()
    m = post.port_maps(mesh, system, result, freq_index=0, port_index=0)
    plot.current_density_map(tmp_path / "lin.png", mesh, case, m, layer_index=0, log=False)
    assert distinct_colours(tmp_path / "lin.png") > 100
    # A layer that carries no current still gives a readable picture (outline, scale bar).
    zero = post.PortMaps(**{**m.__dict__, "current_density": np.zeros_like(m.current_density)})
    plot.current_density_map(tmp_path / "zero.png", mesh, case, zero, layer_index=0)
    assert (tmp_path / "zero.png").stat().st_size > 1000


def test_impedance_plot(tmp_path):
    case, mesh, system, result = neck_case()
    path = plot.impedance_plot(tmp_path / "rl.png", result, 0, f_limit=1e9)
    assert distinct_colours(path, min_fraction=0.003) > 20      # the R and L curves
    dc_only = type(result)(title="", ports=result.ports, frequencies=result.frequencies[:1],
                           impedance=result.impedance[:1], dc_inductance=result.dc_inductance)
    assert distinct_colours(plot.impedance_plot(tmp_path / "dc.png", dc_only, 0), 0.001) > 5


def test_format_frequency():
    assert plot.format_frequency(0) == "DC"
    assert plot.format_frequency(1e6, sep="") == "1MHz"
    assert plot.format_frequency(150e3) == "150 kHz"
    assert plot.format_frequency(2.5) == "2.5 Hz"
