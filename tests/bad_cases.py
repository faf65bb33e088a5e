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
        (folder / name).write_text(body)
    path = folder / "case.toml"
    path.write_text(text)
    return path


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
]
