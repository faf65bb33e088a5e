"""The case file a new user writes for a strip over a plane: no ``[mesh]``, no ``sublayers``.

A ``width`` wide, ``thickness`` thick strip ``height`` over a ``plane`` wide plane of the same
copper, closed by a via at the far end, port at the near end (all lengths in mm), swept at DC
and ``f`` Hz.
"""

W, H, T, PLANE = 1.0, 0.2, 0.035, 10.0          # mm


def case_text(length, *, width=W, height=H, thickness=T, plane=PLANE, f=1e8, sublayers=None,
              mesh=None):
    """The TOML text; ``sublayers`` (an int) and ``mesh`` ((max_edge, min_edge) mm) override."""
    sub = f"\nsublayers = {sublayers}" if sublayers is not None else ""
    w, p = width / 2, plane / 2
    lines = [f'title = "strip {length:g} mm over a plane"', 'units = "mm"',
             "[[layer]]", 'name = "top"', f"z = {thickness + height:g}", f"thickness = {thickness:g}{sub}",
             "[[layer]]", 'name = "bottom"', "z = 0", f"thickness = {thickness:g}{sub}",
             "[[copper]]", 'layer = "top"', f"rect = [0, {-w:g}, {length:g}, {w:g}]",
             "[[copper]]", 'layer = "bottom"', f"rect = [0, {-p:g}, {length:g}, {p:g}]",
             "[[via]]", f"at = [{length - w:g}, 0]", "drill = 0.3",
             "[[terminal]]", 'name = "S"', 'layer = "top"', f"rect = [0, {-w:g}, 0.1, {w:g}]",
             "[[terminal]]", 'name = "G"', 'layer = "bottom"', f"rect = [0, {-p:g}, 0.1, {p:g}]",
             "[[port]]", 'name = "p"', 'plus = "S"', 'minus = "G"',
             "[sweep]", f"frequencies = [0, {f:g}]"]
    if mesh is not None:
        lines += ["[mesh]", f"max_edge = {mesh[0]:g}", f"min_edge = {mesh[1]:g}"]
    return "\n".join(lines) + "\n"
