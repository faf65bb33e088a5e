"""Bad case files and the words their one-line error must contain.

``BAD_CASES`` is a list of ``(id, toml_text, [expected substrings], extra_files)``:
``toml_text`` is written to ``case.toml`` in an empty folder, ``extra_files`` maps further
file names (bases for ``extends``, artwork) to their text. Every entry must make
``load_case`` raise ``InputError`` (and the command line exit with status 2).
Use :func:`write_case` to lay an entry out in a folder.
"""
from __future__ import annotations

from pathlib import Path

#: A small valid case: one layer, a 10 x 1 mm strip with a terminal at each end.
GOOD = """\
[[layer]]
name = "L1"
z = 0.0
thickness = 0.035

[[copper]]
layer = "L1"
rect = [0, 0, 10, 1]

[[terminal]]
name = "A"
layer = "L1"
rect = [0, 0, 1, 1]

[[terminal]]
name = "B"
layer = "L1"
rect = [9, 0, 10, 1]

[[port]]
name = "p"
plus = "A"
minus = "B"
"""

#: A second layer under the first, for vias.
L2 = """
[[layer]]
name = "L2"
z = -1.0
thickness = 0.035
"""


#: GOOD with artwork ``top.gbr`` on L1.
_ARTWORK = GOOD.replace("thickness = 0.035", 'thickness = 0.035\nartwork = "top.gbr"', 1)
#: An empty Gerber X2 copper file for layer 1.
_COPPER_L1 = "%TF.FileFunction,Copper,L1,Top*%\n%FSLAX46Y46*%\n%MOMM*%\nM02*\n"


def write_case(folder, text, extra=None):
    """Write ``text`` to ``folder/case.toml`` and ``extra`` files beside it; return the path."""
    folder = Path(folder)
    for name, body in (extra or {}).items():
        (folder / name).parent.mkdir(parents=True, exist_ok=True)
        _write(folder / name, body)
    path = folder / "case.toml"
    _write(path, text)
    return path


def _write(path, body):
    """Write text, or bytes as they are (for binary and non-UTF-8 files)."""
    if isinstance(body, bytes):
        path.write_bytes(body)
    else:
        path.write_text(body)


#: A Gerber header in mm with a 0.1 mm round aperture selected.
_GERBER_HEAD = "%TF.FileFunction,Copper,L1,Top*%\n%FSLAX46Y46*%\n%MOMM*%\n%ADD10C,0.1*%\nD10*\n"
#: GOOD with a drill file ``vias.drl`` on both layers.
_DRILL = GOOD + L2 + '\n[[drill]]\nfile = "vias.drl"\n'


def _unknown_key(table, body):
    """An entry whose ``table`` holds an unknown key ``bogus``."""
    head = f"[[{table}]]" if table in ("layer", "copper", "via", "drill", "terminal", "port", "lumped") else f"[{table}]"
    return (f"unknown_key_{table}", GOOD + f"\n{head}\n{body}bogus = 1\n",
            [head, "unknown key 'bogus'"], {"board.gbr": ""})


BAD_CASES = [
    ("toml_syntax", GOOD + "\n[mesh]\nmax_edge = = 1\n", ["case.toml", "TOML syntax error", f"line {GOOD.count(chr(10)) + 3},"], {}),
    ("unknown_top_key", 'colour = "red"\n' + GOOD, ["unknown top-level key 'colour'"], {}),
    _unknown_key("copper", 'layer = "L1"\nrect = [0, 0, 1, 1]\n'),
    _unknown_key("via", "at = [5, 0.5]\ndrill = 0.3\n"),
    _unknown_key("terminal", 'name = "C"\nlayer = "L1"\nrect = [4, 0, 5, 1]\n'),
    _unknown_key("port", 'name = "q"\nplus = "A"\nminus = "B"\n'),
    _unknown_key("lumped", 'between = ["A", "B"]\n'),
    _unknown_key("sweep", "frequencies = [0]\n"),
    _unknown_key("mesh", ""),
    _unknown_key("window", "rect = [0, 0, 5, 1]\n"),
    _unknown_key("solver", ""),
    _unknown_key("circuit", ""),
    _unknown_key("fabrication", 'source = "board.gbr"\n'),
    ("unknown_key_layer", GOOD.replace("thickness = 0.035", "thickness = 0.035\nthick = 1"),
     ["[[layer]] 'L1'", "unknown key 'thick'"], {}),
    ("unknown_key_circle", GOOD + '\n[[copper]]\nlayer = "L1"\ncircle = { center = [5, 5], r = 1 }\n',
     ["[[copper]] #2", "'circle' has unknown key 'r'"], {}),
    ("wrong_type_thickness", GOOD.replace("thickness = 0.035", 'thickness = "thin"'),
     ["[[layer]] 'L1'", "'thickness' must be a positive length", "got 'thin'"], {}),
    ("wrong_type_rect", GOOD.replace("rect = [0, 0, 10, 1]", 'rect = "big"'),
     ["[[copper]] #1", "'rect' must be a list of 4 numbers"], {}),
    ("wrong_type_clear", GOOD + '\n[[copper]]\nlayer = "L1"\nrect = [4, 0, 5, 1]\nclear = "yes"\n',
     ["[[copper]] #2", "'clear' must be true or false"], {}),
    ("negative_drill", GOOD + L2 + "\n[[via]]\nat = [5, 0.5]\ndrill = -0.3\n",
     ["case.toml: [[via]] #1: 'drill' must be a positive length, got -0.3"], {}),
    ("zero_thickness", GOOD.replace("thickness = 0.035", "thickness = 0"),
     ["'thickness' must be a positive length, got 0"], {}),
    ("zero_trace_width", GOOD + '\n[[copper]]\nlayer = "L1"\ntrace = { path = [[0, 0], [5, 0]], width = 0 }\n',
     ["[[copper]] #2", "'trace' width must be a positive length, got 0"], {}),
    ("negative_radius", GOOD + '\n[[copper]]\nlayer = "L1"\ncircle = { center = [5, 5], radius = -1 }\n',
     ["'circle' radius must be a positive length, got -1"], {}),
    ("negative_pad", GOOD + L2 + "\n[[via]]\nname = \"v\"\nat = [5, 0.5]\ndrill = 0.3\npad = -0.6\n",
     ["[[via]] 'v'", "'pad' must be a positive length, got -0.6"], {}),
    ("pad_not_above_drill", GOOD + L2 + "\n[[via]]\nat = [5, 0.5]\ndrill = 0.3\npad = 0.2\n",
     ["'pad' 0.2 must exceed 'drill' 0.3"], {}),
    ("zero_max_edge", GOOD + "\n[mesh]\nmax_edge = 0\n", ["[mesh]", "'max_edge' must be a positive length"], {}),
    ("min_edge_above_max", GOOD + "\n[mesh]\nmax_edge = 0.2\nmin_edge = 0.5\n",
     ["[mesh]", "'min_edge' 0.5 must not exceed 'max_edge' 0.2"], {}),
    ("copper_no_shape", GOOD + '\n[[copper]]\nlayer = "L1"\n',
     ["[[copper]] #2", "exactly one shape key", "got none"], {}),
    ("copper_two_shapes", GOOD + '\n[[copper]]\nlayer = "L1"\nrect = [0, 0, 1, 1]\ncircle = { center = [0, 0], radius = 1 }\n',
     ["[[copper]] #2", "exactly one shape key", "got 2"], {}),
    ("copper_unknown_layer", GOOD + '\n[[copper]]\nlayer = "L9"\nrect = [0, 0, 1, 1]\n',
     ["[[copper]] #2", "unknown layer 'L9'"], {}),
    ("terminal_unknown_layer", GOOD.replace('name = "B"\nlayer = "L1"', 'name = "B"\nlayer = "Top"'),
     ["[[terminal]] 'B'", "unknown layer 'Top'"], {}),
    ("via_unknown_span_layer", GOOD + L2 + '\n[[via]]\nat = [5, 0.5]\ndrill = 0.3\nlayers = ["L1", "L3"]\n',
     ["[[via]] #1", "unknown layer 'L3'"], {}),
    ("terminal_off_copper", GOOD.replace("rect = [9, 0, 10, 1]", "rect = [20, 0, 21, 1]"),
     ["[[terminal]] 'B'", "does not lie on the copper of layer 'L1'"], {}),
    ("port_unknown_terminal", GOOD.replace('minus = "B"', 'minus = "Z"'),
     ["[[port]] 'p'", "'minus' names unknown terminal 'Z'"], {}),
    ("port_not_joined", GOOD + '\n[[copper]]\nlayer = "L1"\nrect = [4, 0, 5, 1]\nclear = true\n',
     ["[[port]] 'p'", "'plus' terminal 'A' and 'minus' terminal 'B' are not joined"], {}),
    ("lumped_unknown_terminal", GOOD + '\n[[lumped]]\nname = "Q1"\nbetween = ["A", "X"]\n',
     ["[[lumped]] 'Q1'", "unknown terminal 'X'"], {}),
    ("duplicate_layer", GOOD + L2.replace('"L2"', '"L1"'), ["[[layer]] 'L1'", "duplicate name 'L1'"], {}),
    ("duplicate_terminal", GOOD + '\n[[terminal]]\nname = "A"\nlayer = "L1"\nrect = [4, 0, 5, 1]\n',
     ["[[terminal]] 'A'", "duplicate name 'A'"], {}),
    ("duplicate_port", GOOD + '\n[[port]]\nname = "p"\nplus = "B"\nminus = "A"\n',
     ["[[port]] 'p'", "duplicate name 'p'"], {}),
    ("duplicate_via", GOOD + L2 + '\n[[via]]\nname = "v"\nat = [5, 0.5]\ndrill = 0.3\n'
     '\n[[via]]\nname = "v"\nat = [6, 0.5]\ndrill = 0.3\n', ["[[via]] 'v'", "duplicate name 'v'"], {}),
    ("duplicate_lumped", GOOD + '\n[[lumped]]\nname = "Q"\nbetween = ["A", "B"]\n'
     '\n[[lumped]]\nname = "Q"\nbetween = ["A", "B"]\n', ["[[lumped]] 'Q'", "duplicate name 'Q'"], {}),
    ("extends_loop", 'extends = "a.toml"\n', ["'extends' loop", "a.toml", "b.toml"],
     {"a.toml": 'extends = "b.toml"\n', "b.toml": 'extends = "a.toml"\n'}),
    ("extends_missing", 'extends = "nowhere.toml"\n', ["case.toml", "'extends' file not found", "nowhere.toml"], {}),
    ("remove_missing", 'extends = "base.toml"\n[[terminal]]\nname = "Q"\nremove = true\n',
     ["[[terminal]] 'Q'", "'remove = true' names 'Q'", "base has no [[terminal]]"], {"base.toml": GOOD}),
    ("bad_units", 'units = "cm"\n' + GOOD, ["'units' must be one of", "got 'cm'"], {}),
    ("negative_frequency", GOOD + "\n[sweep]\nfrequencies = [0, -1e6]\n", ["[sweep]", "'frequencies' must be >= 0 Hz"], {}),
    ("frequencies_not_list", GOOD + "\n[sweep]\nfrequencies = 1e6\n", ["[sweep]", "'frequencies' must be a non-empty list"], {}),
    ("sweep_list_and_range", GOOD + "\n[sweep]\nfrequencies = [1e6]\nstart = 1\nstop = 1e6\npoints = 4\n",
     ["[sweep]", "not both"], {}),
    ("missing_layer_z", GOOD.replace("z = 0.0\n", ""), ["[[layer]] 'L1'", "missing required key 'z'"], {}),
    ("missing_layer_thickness", GOOD.replace("thickness = 0.035\n", ""),
     ["[[layer]] 'L1'", "missing required key 'thickness'"], {}),
    ("missing_port_plus", GOOD.replace('plus = "A"\n', ""), ["[[port]] 'p'", "missing required key 'plus'"], {}),
    ("missing_port_minus", GOOD.replace('minus = "B"\n', ""), ["[[port]] 'p'", "missing required key 'minus'"], {}),
    _unknown_key("drill", 'file = "board.gbr"\n'),
    ("layer_not_array", GOOD.replace("[[layer]]", "[layer]"), ["case.toml: [[layer]]: must be an array of tables"], {}),
    ("single_table_as_array", GOOD + "\n[[mesh]]\nmax_edge = 1\n", ["case.toml: [mesh]: must be a table"], {}),
    ("name_not_string", GOOD + "\n[[copper]]\nname = 7\nlayer = \"L1\"\nrect = [0, 0, 1, 1]\n",
     ["[[copper]] #2", "'name' must be a string, got 7"], {}),
    ("layers_overlap", GOOD + L2.replace("z = -1.0", "z = 0.02"),
     ["[[layer]] 'L1'", "(z 0 to 0.035) overlaps layer 'L2' (z from 0.02)"], {}),
    ("bad_sublayers", GOOD.replace("thickness = 0.035", "thickness = 0.035\nsublayers = 0"),
     ["'sublayers' must be an integer >= 1 or \"auto\", got 0"], {}),
    ("log_sweep_from_zero", GOOD + "\n[sweep]\nstart = 0\nstop = 1e6\npoints = 5\n",
     ["[sweep]", "'start' must be a positive frequency"], {}),
    ("bad_solver_method", GOOD + '\n[solver]\nmethod = "lu"\n', ["[solver]", "'method' must be one of 'auto', 'dense', 'fast', got 'lu'"], {}),
    ("remove_with_other_keys", 'extends = "base.toml"\n[[port]]\nname = "p"\nremove = true\nplus = "A"\n',
     ["[[port]] 'p'", "takes only a 'name'"], {"base.toml": GOOD}),
    ("terminals_overlap", GOOD + '\n[[terminal]]\nname = "C"\nlayer = "L1"\nrect = [0.5, 0, 2, 1]\n',
     ["[[terminal]] 'C'", "overlaps terminal 'A' on layer 'L1'"], {}),
    ("polygon_two_points", GOOD + '\n[[copper]]\nlayer = "L1"\npolygon = [[0, 0], [1, 1]]\n',
     ["[[copper]] #2", "'polygon' must have at least 3 points, got 2"], {}),
    ("polygon_self_intersecting", GOOD + '\n[[copper]]\nlayer = "L1"\npolygon = [[0, 0], [2, 2], [2, 0], [0, 2]]\n',
     ["[[copper]] #2", "'polygon' self-intersecting near (1, 1)"], {}),
    ("empty_copper_terminal_layer", GOOD + L2 + '\n[[terminal]]\nname = "C"\nlayer = "L2"\nrect = [0, 0, 1, 1]\n',
     ["[[terminal]] 'C'", "layer 'L2' has no copper"], {}),
    ("artwork_missing", GOOD.replace("thickness = 0.035", 'thickness = 0.035\nartwork = "gone.gbr"'),
     ["[[layer]] 'L1'", "'artwork' names a file that does not exist: 'gone.gbr'"], {}),
    ("drill_file_missing", GOOD + '\n[[drill]]\nfile = "gone.drl"\n', ["[[drill]] #1", "does not exist"], {}),
    ("array_holes_overlap", GOOD + L2 + '\n[[via]]\nat = [5, 0.5]\ndrill = 0.3\narray = { pitch = [0.2, 0], count = [3, 1] }\n',
     ["[[via]] #1", "pitch 0.2 along x is less than the drill 0.3"], {}),
    ("circuit_both_didt_forms", GOOD + "\n[circuit]\ndi_dt = 1e9\ncurrent = 10\nrise_time = 1e-8\n",
     ["[circuit]", "not both"], {}),
    ("units_in_message_mil", 'units = "mil"\n' + GOOD + L2 + "\n[[via]]\nat = [5, 0.5]\ndrill = -12\n",
     ["'drill' must be a positive length, got -12"], {}),    # malformed fabrication files: the readers' one-line errors name the file and the line
    ("artwork_flash_without_aperture", _ARTWORK, ["top.gbr:3:", "flash (D03) before any aperture was selected"],
     {"top.gbr": "%FSLAX26Y26*%\n%MOMM*%\nX0Y0D03*\nM02*\n"}),
    ("artwork_is_a_drill_file", _ARTWORK, ["top.gbr", "this is an Excellon drill file; expected Gerber artwork"],
     {"top.gbr": "M48\nMETRIC\nT1C0.3\n%\nT1\nX1.0Y1.0\nM30\n"}),
    ("drill_tool_undefined", GOOD + L2 + '\n[[drill]]\nfile = "vias.drl"\n',
     ["vias.drl:4:", "tool T3 used before definition"], {"vias.drl": "M48\nMETRIC\n%\nT3\nX1.0Y0.5\nM30\n"}),
    ("fabrication_two_files_claim_L1", GOOD + '\n[fabrication]\nsource = "./"\n',
     ["two files claim copper layer L1", "a.gbr", "b.gbr"], {"a.gbr": _COPPER_L1, "b.gbr": _COPPER_L1}),
    # robustness (issue 10): every limit of copperpath.geometry.limits, named in the message
    ("binary_case_file", b"\xff\xfe\x00\x81 binary \x00", ["case.toml", "not UTF-8 text (byte 0xff at offset 0)"], {}),
    ("latin1_case_file", GOOD.replace('name = "A"', 'name = "\xc4"').encode("latin-1"),
     ["case.toml", "not UTF-8 text (byte 0xc4"], {}),
    ("coordinate_1e300", GOOD.replace("rect = [0, 0, 10, 1]", "rect = [0, 0, 1e300, 1]"),
     ["[[copper]] #1", "'rect' coordinate 1e+300 lies outside the board extent (within 2000 mm"], {}),
    ("coordinate_beyond_extent_mil", 'units = "mil"\n' + GOOD.replace("rect = [0, 0, 10, 1]", "rect = [0, 0, 90000, 1]"),
     ["[[copper]] #1", "'rect' coordinate 90000 lies outside the board extent (within 78740.2 mil"], {}),
    ("integer_too_large_for_float", GOOD.replace("rect = [0, 0, 10, 1]", "rect = [0, 0, 1" + "0" * 400 + ", 1]"),
     ["[[copper]] #1", "'rect' must be a list of 4 numbers"], {}),
    ("integer_too_large_thickness", GOOD.replace("thickness = 0.035", "thickness = 1" + "0" * 400),
     ["[[layer]] 'L1'", "'thickness' must be a positive length, got an integer of 401 digits"], {}),
    ("nan_coordinate", GOOD.replace("rect = [0, 0, 10, 1]", "rect = [0, 0, nan, 1]"),
     ["[[copper]] #1", "'rect' must be a list of 4 numbers, got [0, 0, nan, 1]"], {}),
    ("inf_via", GOOD + L2 + "\n[[via]]\nat = [inf, 0.5]\ndrill = 0.3\n", ["[[via]] #1", "'at' must be a list of 2 numbers"], {}),
    ("overflowing_float", GOOD.replace("z = 0.0", "z = 1e400"), ["[[layer]] 'L1'", "'z' must be a length (a number), got inf"], {}),
    ("z_beyond_extent", GOOD.replace("z = 0.0", "z = 5000"), ["[[layer]] 'L1'", "'z' 5000 lies outside the board extent"], {}),
    ("window_inverted", GOOD + "\n[window]\nrect = [10, 1, 0, 0]\n",
     ["[window]", "'rect' must be [x0, y0, x1, y1] with x0 < x1 and y0 < y1", "got [10, 1, 0, 0]"], {}),
    ("window_x_inverted", GOOD + "\n[window]\nrect = [10, 0, 0, 1]\n", ["[window]", "x0 < x1 and y0 < y1"], {}),
    ("name_control_character", GOOD.replace('name = "B"', 'name = "B\\u001b[31m"'),
     ["[[terminal]] #2", "'name' contains the control character U+001B"], {}),
    ("name_empty", GOOD.replace('name = "B"', 'name = ""'), ["[[terminal]] #2", "'name' is empty"], {}),
    ("title_control_character", 'title = "a\\nb"\n' + GOOD, ["case.toml", "'title' contains the control character U+000A"], {}),
    ("extends_nul", 'extends = "base\\u0000.toml"\n', ["case.toml", "'extends' contains the control character U+0000"], {}),
    ("artwork_nul", GOOD.replace("thickness = 0.035", 'thickness = 0.035\nartwork = "a\\u0000.gbr"'),
     ["[[layer]] 'L1'", "'artwork' contains the control character U+0000"], {}),
    ("via_array_1e8", GOOD + L2 + "\n[[via]]\nat = [5, 0.5]\ndrill = 0.3\narray = { pitch = [1, 1], count = [10000, 10000] }\n",
     ["[[via]] #1", "'array' count 10000 x 10000 makes 100000000 vias, more than the limit of 100000"], {}),
    ("via_array_beyond_extent", GOOD + L2 + "\n[[via]]\nat = [5, 0.5]\ndrill = 0.3\narray = { pitch = [500, 1], count = [10, 1] }\n",
     ["[[via]] #1", "'array (last via along x)' coordinate 4505 lies outside the board extent"], {}),
    ("via_count_in_all", GOOD + L2 + "".join(f"\n[[via]]\nat = [{k}, 0.5]\ndrill = 0.3\narray = {{ pitch = [0.001, 1], count = [1, 1] }}\n"
                                            .replace("pitch = [0.001, 1], count = [1, 1]", "pitch = [1, 1], count = [250, 250]")
                                            for k in range(2)),
     ["[[via]] #2", "125000 vias in all, more than the limit of 100000"], {}),
    ("circle_radius_1e20", GOOD + '\n[[copper]]\nlayer = "L1"\ncircle = { center = [5, 5], radius = 1e20 }\n',
     ["[[copper]] #2", "'circle.radius' must be a positive length from 1e-06 to 2000 mm, got 1e+20"], {}),
    ("width_underflows_to_zero", GOOD + '\n[[copper]]\nlayer = "L1"\ntrace = { path = [[0, 0], [5, 0]], width = 1e-320 }\n',
     ["[[copper]] #2", "'trace.width' must be a positive length from 1e-06 to 2000 mm, got 1e-320"], {}),
    ("width_below_grid_in_um", 'units = "um"\n' + GOOD.replace("rect = [0, 0, 10, 1]", "rect = [0, 0, 10000, 1000]")
     + '\n[[copper]]\nlayer = "L1"\ntrace = { path = [[0, 0], [5, 0]], width = 1e-4 }\n',
     ["'trace.width' must be a positive length from 0.001 to 2e+06 um, got 0.0001"], {}),
    ("thickness_1e-300", GOOD.replace("thickness = 0.035", "thickness = 1e-300"),
     ["[[layer]] 'L1'", "'thickness' must be a positive length from 1e-05 to 10 mm, got 1e-300"], {}),
    ("conductivity_1e-300", GOOD.replace("thickness = 0.035", "thickness = 0.035\nconductivity = 1e-300"),
     ["[[layer]] 'L1'", "'conductivity' must be a positive number (S/m) from 1000 to 1e+09, got 1e-300"], {}),
    ("plating_range", GOOD + L2 + "\n[[via]]\nat = [5, 0.5]\ndrill = 0.3\nplating = 50\n",
     ["[[via]] #1", "'plating' must be a positive length from 1e-05 to 10 mm, got 50"], {}),
    ("sublayers_too_many", GOOD.replace("thickness = 0.035", "thickness = 0.035\nsublayers = 100000"),
     ["'sublayers' must be an integer >= 1 or \"auto\", got 100000 (at most 32)"], {}),
    ("sweep_too_many_points", GOOD + "\n[sweep]\nstart = 1\nstop = 1e6\npoints = 100000000\n",
     ["[sweep]", "'points' must be an integer from 2 to 10000, got 100000000"], {}),
    ("frequency_too_high", GOOD + "\n[sweep]\nfrequencies = [0, 1e300]\n", ["[sweep]", "up to 1e+300"], {}),
    ("lumped_huge_inductance", GOOD + '\n[[lumped]]\nbetween = ["A", "B"]\ninductance = 1e300\n',
     ["[[lumped]] #1", "'inductance' must be a number >= 0 (henry) from 0 to 1, got 1e+300"], {}),
    ("circuit_tiny_rise_time", GOOD + "\n[circuit]\ncurrent = 10\nrise_time = 1e-300\n",
     ["[circuit]", "'rise_time' must be a positive number (SI) from 1e-30 to 1e+30"], {}),
    ("artwork_coordinate_1e8_mm", _ARTWORK, ["top.gbr:6:", "coordinate 100000000000000 lies outside the board extent"],
     {"top.gbr": _GERBER_HEAD + "X100000000000000Y0D03*\nM02*\n"}),
    ("artwork_coordinate_1e14", _ARTWORK, ["top.gbr:6:", "lies outside the board extent"],
     {"top.gbr": _GERBER_HEAD + "X100000000000000000000Y0D03*\nM02*\n"}),
    ("artwork_step_repeat_millions", _ARTWORK, ["top.gbr:", "more than 2000000 graphics objects"],
     {"top.gbr": _GERBER_HEAD + "%SRX1000Y100I0.001J0.001*%\n" + "X0Y0D03*\n" * 21 + "%SR*%\nM02*\n"}),
    ("artwork_moire_rings", _ARTWORK, ["top.gbr:", "moire with 100000 rings; expected 0 to 100"],
     {"top.gbr": "%FSLAX46Y46*%\n%MOMM*%\n%AMM*6,0,0,1,0.001,0.001,100000,0.01,1,0*%\n%ADD10M*%\nD10*\nX0Y0D03*\nM02*\n"}),
    ("artwork_binary", _ARTWORK, ["top.gbr", "binary data (a NUL byte at offset 0); expected a text file"],
     {"top.gbr": bytes(range(256)) * 4}),
    ("artwork_is_a_folder", _ARTWORK, ["top.gbr", "not a regular file (a folder)"], {"top.gbr/x": ""}),
    ("drill_file_format_3_400", _DRILL, ["vias.drl:2:", "digit format", "3:400", "expected 0 to 9 digits"],
     {"vias.drl": "M48\n;FILE_FORMAT=3:400\nMETRIC,TZ\nT1C0.3\n%\nT1\nX1000Y500\nM30\n"}),
    ("drill_repeats_until_memory_runs_out", _DRILL, ["vias.drl:", "more than 200000 drill hits and slots"],
     {"vias.drl": "M48\nMETRIC\nT1C0.3\n%\nT1\nX1.0Y0.5\n" + "R100000X0.0Y0.0\n" * 3 + "M30\n"}),
    ("drill_coordinate_beyond_extent", _DRILL, ["vias.drl:6:", "X coordinate 5000.0 lies outside the board extent"],
     {"vias.drl": "M48\nMETRIC\nT1C0.3\n%\nT1\nX5000.0Y0.5\nM30\n"}),
    ("drill_more_digits_than_format", _DRILL, ["vias.drl:6:", "more digits than the format 3:3"],
     {"vias.drl": "M48\nMETRIC,LZ,000.000\nT1C0.3\n%\nT1\nX0010000000Y0005\nM30\n"}),
    ("drill_huge_tool", _DRILL, ["vias.drl:3:", "tool T1 diameter 999999999.0 must be 0 or a positive size up to 2000 mm"],
     {"vias.drl": "M48\nMETRIC\nT1C999999999.0\n%\nT1\nX1.0Y0.5\nM30\n"}),
    ("fabrication_copper_layer_huge", GOOD + '\n[fabrication]\nsource = "fab"\n',
     ["fab/a.gbr", "copper layer number 99999999999999 out of range; expected 1 to 100"],
     {"fab/a.gbr": _COPPER_L1.replace("L1,Top", "L99999999999999,Top")}),
    ("fabrication_drill_span_huge", GOOD + '\n[fabrication]\nsource = "fab"\n',
     ["fab/a.drl", "drill span layer number 1000000 out of range"],
     {"fab/a.drl": "M48\n; #@! TF.FileFunction,Plated,1,1000000,PTH\nMETRIC\nT1C0.3\n%\nT1\nX1.0Y0.5\nM30\n"}),
]
