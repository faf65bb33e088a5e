"""A case whose ``units`` is wrong by 1000x names the suspicion; a plausible case stays silent."""
import pytest

from copperpath.geometry.case import load_case
from copperpath.geometry.errors import InputError
from copperpath.geometry.unit_check import suspicion

STRIP = """
title = "strip"
units = "{unit}"

[[layer]]
name = "L1"
z = {z1}
thickness = {t}

[[layer]]
name = "L2"
z = 0
thickness = {t}

[[copper]]
layer = "L1"
rect = [0, 0, {length}, {width}]

[[copper]]
layer = "L2"
rect = [0, 0, {length}, {width}]

[[via]]
at = [{via}, {half}]
drill = {drill}

[[terminal]]
name = "a"
layer = "L1"
rect = [0, 0, {width}, {width}]

[[terminal]]
name = "b"
layer = "L2"
rect = [0, 0, {width}, {width}]

[[port]]
name = "loop"
plus = "a"
minus = "b"
"""


def _write(tmp_path, unit, k):
    """The same 40 mm strip over a plane, its numbers written ``k`` times too large for ``unit``."""
    mm = {"z1": 0.235, "t": 0.035, "length": 40, "width": 1, "via": 39, "half": 0.5, "drill": 0.3}
    path = tmp_path / "strip.toml"
    path.write_text(STRIP.format(unit=unit, **{key: v * k for key, v in mm.items()}), encoding="utf-8")
    return path


def test_values_in_um_labelled_mm_are_an_error_naming_the_units(tmp_path):
    path = _write(tmp_path, "mm", 1000)          # 40 m of copper, 35 mm thick
    with pytest.raises(InputError) as exc:
        load_case(path)
    line = str(exc.value)
    assert "\n" not in line and str(path) in line
    assert 'copper spans 40 m and layers are 35 mm thick: is `units` right ("mm" given, values look like um)?' in line


def test_values_in_mm_labelled_um_warn_naming_the_units(tmp_path):
    case = load_case(_write(tmp_path, "um", 1))  # 35 nm copper, 40 um long: loads, but is wrong
    hints = [w for w in case.warnings if "`units`" in w]
    assert hints == [f'{tmp_path / "strip.toml"}: layers are 35 nm thick: is `units` right '
                     '("um" given, values look like mm)?']


@pytest.mark.parametrize("unit, k", [("mm", 1), ("um", 1000), ("mil", 1 / 0.0254), ("m", 1e-3)])
def test_plausible_units_stay_silent(tmp_path, unit, k):
    case = load_case(_write(tmp_path, unit, k))
    assert not [w for w in case.warnings if "units" in w]


def test_thin_film_and_bus_bar_are_plausible():
    # 1 um to 1 mm copper within 1 m: no suspicion (common practice for PCBs and bus bars).
    assert suspicion("mm", [0.001, 1.0], 999.0) is None
    assert suspicion("mm", [2.0], 10.0).startswith("the layer is 2 mm thick")
