"""From fabrication data to layout inputs: artwork copper per layer and plated holes as vias.

The case reader (:mod:`copperpath.geometry.case`) calls these functions for a layer's ``artwork``, a
``[[drill]]`` table and ``[fabrication] source``; they return plain inputs for
:func:`copperpath.geometry.layout.build_layout` plus one-line *notes* (what went where, what was
skipped) and *warnings* (findings the user should look at).

Decisions:

- Copper layer ``n`` of the fabrication data (X2 ``.FileFunction,Copper,Ln``) and drill
  span numbers ``a``-``b`` refer to the ``n``-th layer of the stackup from the top (highest
  z). A span reaching past the stackup is clipped to it (with a note); a drill file whose
  span keeps fewer than two layers is skipped (with a note).
- Every plated hole becomes a :class:`~copperpath.geometry.model.Via` with the hole diameter as
  ``drill``, the given plating and ``pad = drill + annulus``. Non-plated holes and slots
  carry no current between layers: they are skipped with a warning.
- A plated slot becomes one via at the slot's centre with the slot's width as ``drill``,
  and a warning: a slot joins the layers like a via of its width (the extra barrel wall
  along its length is not modelled, which slightly overestimates the slot's inductance).
- Holes of zero diameter (tool ``C0``) are skipped with a warning.
- A net list (``[fabrication] nets``) keeps, on each copper layer of the fabrication data,
  only the copper that X2 object attributes (``%TO.N``) put on those nets
  (``others = "drop"``), or keeps all copper and only reports the split
  (``others = "float"``: the other nets' copper stays as floating metal that carries eddy
  currents). Copper without a net attribute (text, logos) counts as another net's.
- Fabrication copper is simplified to :data:`SIMPLIFY` (Douglas-Peucker, topology kept),
  then the exact pads (X2 ``%TO.P``) of the kept copper are united back in: pours exported
  by layout tools carry vertices micrometres apart, each of which the mesher's quality bound
  would surround with tiny triangles, and a pad terminal must meet the copper edge exactly.
"""
from __future__ import annotations

import difflib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import shapely

from copperpath.geometry.errors import input_error
from copperpath.geometry.limits import MAX_VIAS
from copperpath.geometry.model import Via

SIMPLIFY = 2e-6
"""Tolerance in metres to which fabrication copper is simplified (see the module docstring)."""

__all__ = ["BoardInputs", "BoardContents", "span_layers", "file_span", "drill_vias", "fabrication_inputs"]


@dataclass(frozen=True)
class BoardContents:
    """What the fabrication files of a case hold, for ``copperpath inspect``.

    Attributes
    ----------
    pads : dict of str to dict
        Layer name -> {pad name -> :class:`copperpath.geometry.formats.x2.Pad`}, whole board.
    net_area : dict of str to dict
        Net -> {layer name -> copper area in m^2}, inside the window if there is one.
    job : copperpath.geometry.formats.gerber_job.Job or None
        The Gerber job file, if the set has one.
    nets : tuple of str or None
        ``[fabrication] nets``; None: no filter.
    others : str
        ``"drop"`` or ``"float"``.
    windowed : bool
        True when ``net_area`` covers only a window.
    """

    pads: dict
    net_area: dict
    job: object = None
    nets: tuple | None = None
    others: str = "drop"
    windowed: bool = False


@dataclass(frozen=True)
class BoardInputs:
    """Layout inputs taken from fabrication data.

    Attributes
    ----------
    artwork : dict of str to shapely geometry
        Copper per layer name, in metres.
    vias : tuple of copperpath.geometry.model.Via
    notes : tuple of str
        What went where and what was skipped, one line each.
    warnings : tuple of str
        Findings to look at (reader warnings, skipped holes, slots), one line each.
    pads : dict of str to dict
        Layer name -> {pad name -> :class:`copperpath.geometry.formats.x2.Pad`} of the fabrication copper
        (whole board, not cropped to the window).
    net_area : dict of str to dict
        Net -> {layer name -> copper area in m^2} as read (inside the window if there is
        one), before any net filter.
    """

    artwork: dict
    vias: tuple[Via, ...] = ()
    notes: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()
    pads: dict = field(default_factory=dict)
    net_area: dict = field(default_factory=dict)


def span_layers(span, names):
    """Names of the stackup layers joined by copper layers ``span = (a, b)`` (1 = top).

    Parameters
    ----------
    span : tuple of int
        First and last copper layer, either order.
    names : sequence of str
        Layer names from the top (highest z) down.

    Returns
    -------
    tuple of str
        The layers from ``min(a, b)`` to ``max(a, b)`` that exist in the stackup, top down
        (possibly fewer than asked for, possibly empty).

    Examples
    --------
    >>> span_layers((2, 1), ["L1", "L2", "L3"]), span_layers((2, 4), ["L1", "L2", "L3"])
    (('L1', 'L2'), ('L2', 'L3'))
    """
    a, b = sorted(span)
    return tuple(names[max(a, 1) - 1:b])


def file_span(span, names, label):
    """The layers a drill file's X2 span joins, clipped to the stackup, with a note.

    Parameters
    ----------
    span : tuple of int or None
        ``(a, b)`` from the file (see :attr:`copperpath.geometry.formats.excellon.Drills.span`);
        None: all layers.
    names : sequence of str
        Layer names from the top down.
    label : str
        How the note names the file.

    Returns
    -------
    tuple
        ``(layers, note)``: the layers top down, empty when fewer than two remain (the
        file is then skipped); ``note`` is None unless the span was clipped or the file
        is skipped.

    Examples
    --------
    >>> file_span((1, 4), ["L1", "L2"], "b.drl")
    (('L1', 'L2'), 'b.drl: span L1-L4 clipped to the stackup, L1-L2')
    """
    if span is None:
        return tuple(names), None
    a, b = sorted(span)
    got = span_layers(span, names)
    if len(got) < 2:
        return (), (f"{label} skipped: its span L{a}-L{b} leaves fewer than two of the "
                    f"{len(names)} layers")
    if len(got) < b - a + 1:
        return got, f"{label}: span L{a}-L{b} clipped to the stackup, {got[0]}-{got[-1]}"
    return got, None


def _fmt(length, scale):
    return f"{length / scale:g}"


def drill_vias(drills, span, *, plating, annulus, prefix, label, scale=1e-3, unit="mm"):
    """Turn the plated holes and slots of one drill file into vias.

    Parameters
    ----------
    drills : copperpath.geometry.formats.excellon.Drills
        The holes, in metres.
    span : tuple of str
        Layers every via passes, top down (at least two).
    plating : float
        Barrel wall thickness in metres.
    annulus : float
        Pad diameter minus drill diameter in metres.
    prefix : str
        Via names are ``"<prefix>[k]"``, ``k`` counted from 0 in file order (holes, then slots).
    label : str
        How the notes and warnings name the drill file.
    scale : float, optional
        Metres per unit of the lengths quoted in messages.
    unit : str, optional
        Name of that unit.

    Returns
    -------
    tuple
        ``(vias, note, warnings)``: a tuple of Via, one note line, a list of warning lines.

    Examples
    --------
    >>> import io
    >>> from copperpath.geometry.formats import read_drills
    >>> d = read_drills(io.StringIO("M48\\nMETRIC\\nT1C0.3\\n%\\nT1\\nX1.0Y2.0\\nX3.0Y2.0\\nM30\\n"), name="b.drl")
    >>> vias, note, warnings = drill_vias(d, ("L1", "L2"), plating=25e-6, annulus=0.3e-3,
    ...                                   prefix="b.drl", label="b.drl")
    >>> [(v.name, round(v.x * 1e3, 6), round(v.pad * 1e3, 6)) for v in vias], note
    ([('b.drl[0]', 1.0, 0.6), ('b.drl[1]', 3.0, 0.6)], 'b.drl: 2 plated holes -> vias on L1-L2')
    """
    xy = np.asarray(drills.xy, float).reshape(-1, 2)
    diameter = np.asarray(drills.diameter, float)
    plated = np.asarray(drills.plated, bool)
    centres, widths, warnings = [], [], list(drills.warnings)
    use = plated & (diameter > 0)
    centres += [tuple(p) for p in xy[use]]
    widths += list(diameter[use])
    zero = int(np.sum(plated & (diameter <= 0)))
    skipped = int(np.sum(~plated)) + sum(1 for s in drills.slots if not s.plated)
    slots = [s for s in drills.slots if s.plated and s.diameter > 0]
    if int(use.sum()) + len(slots) > MAX_VIAS:
        raise input_error(label, None, f"{int(use.sum()) + len(slots)} plated holes and slots, more than "
                                       f"the limit of {MAX_VIAS} vias in a case")
    zero += sum(1 for s in drills.slots if s.plated and s.diameter <= 0)
    for s in slots:
        centres.append((0.5 * (s.start[0] + s.end[0]), 0.5 * (s.start[1] + s.end[1])))
        widths.append(s.diameter)
    if slots:
        longest = max(np.hypot(s.end[0] - s.start[0], s.end[1] - s.start[1]) + s.diameter for s in slots)
        warnings.append(f"{label}: {len(slots)} plated slot(s) modelled as vias of the slot width at "
                        f"the slot centre (longest slot {_fmt(longest, scale)} {unit}; the barrel "
                        "along its length is not modelled)")
    if skipped:
        warnings.append(f"{label}: {skipped} non-plated holes skipped")
    if zero:
        warnings.append(f"{label}: {zero} holes of zero diameter skipped")
    vias = tuple(Via(name=f"{prefix}[{k}]", x=float(x), y=float(y), drill=float(w), plating=plating,
                     pad=float(w) + annulus, span=tuple(span))
                 for k, ((x, y), w) in enumerate(zip(centres, widths)))
    n_holes = len(vias) - len(slots)
    parts = [f"{n_holes} plated holes"] + ([f"{len(slots)} plated slots"] if slots else [])
    if vias:
        note = f"{label}: {' and '.join(parts)} -> vias on {span[0]}-{span[-1]}"
    else:
        note = f"{label}: no plated holes"
    if skipped:
        note += f"; {skipped} non-plated holes skipped"
    if zero:
        note += f"; {zero} holes of zero diameter skipped"
    return vias, note, warnings


def fabrication_inputs(fab, names, *, own_artwork=(), drill_files=(), plating, annulus,
                       clip=None, scale=1e-3, unit="mm", nets=None, others="drop", where=("", None)):
    """Read the copper and drill files that a fabrication scan found and map them to layers.

    Parameters
    ----------
    fab : copperpath.geometry.formats.fabrication.Fabrication
        The scan of the folder or archive.
    names : sequence of str
        Layer names from the top (highest z) down; copper layer ``n`` goes to ``names[n-1]``.
    own_artwork : collection of str, optional
        Layers that name their own ``artwork``: the fabrication copper for them is not used.
    drill_files : collection of pathlib.Path, optional
        Drill files already read through ``[[drill]]`` tables (resolved paths): not read again.
    plating, annulus : float
        Barrel wall thickness and pad-minus-drill of the vias, in metres.
    clip : tuple of float, optional
        ``(x0, y0, x1, y1)`` in metres: read only the copper inside (the window).
    scale, unit : optional
        Unit of the lengths quoted in messages.
    nets : sequence of str, optional
        Keep only these nets' copper (see the module docstring); None: all copper.
    others : str, optional
        ``"drop"`` or ``"float"``: what becomes of the other copper when ``nets`` is given.
    where : tuple, optional
        ``(file, item)`` named by errors about ``nets``.

    Returns
    -------
    BoardInputs
        Notes start with the scan's own lines (``"fabrication: ..."``), then the mapping.

    Raises
    ------
    copperpath.geometry.errors.InputError
        From the readers, naming the file and line; a net of ``nets`` that no copper file
        names (with the closest names), or copper files without net attributes.
    """
    notes = [f"fabrication: {line}" for line in fab.lines]
    warnings, artwork, vias, pads, net_area, read = [], {}, [], {}, {}, {}
    for n, label in fab.copper.items():
        short = Path(label).name
        if n > len(names):
            notes.append(f"fabrication: copper L{n} ({short}) not used: the stackup has {len(names)} layers")
        elif names[n - 1] in own_artwork:
            notes.append(f"fabrication: copper L{n} ({short}) not used: layer '{names[n - 1]}' "
                         "names its own artwork")
        else:
            art = fab.read_copper(n, clip=clip)
            read[names[n - 1]] = art
            artwork[names[n - 1]] = art.geometry
            pads[names[n - 1]] = art.pads
            for net, geom in art.nets.items():
                net_area.setdefault(net, {})[names[n - 1]] = float(geom.area)
            warnings += art.warnings
            inside = " inside the window" if clip is not None else ""
            notes.append(f"fabrication: copper L{n} ({short}) -> layer '{names[n - 1]}' "
                         f"({_fmt(art.geometry.area, scale ** 2)} {unit}^2 of copper{inside})")
    if nets is not None:
        notes += _filter_nets(read, artwork, nets, others, where, scale, unit)
    for layer, art in read.items():
        artwork[layer] = _simplified(artwork[layer], art.pads.values(), clip,
                                     nets if nets is not None and others == "drop" else None)
    for d in fab.drills:
        short = Path(d.name).name
        if Path(d.name).resolve() in drill_files:
            notes.append(f"fabrication: drill {short} not read again: a [[drill]] table names it")
            continue
        span, note = file_span(d.span, names, f"fabrication: drill {short}")
        if note:
            notes.append(note)
        if not span:
            continue
        made, note, warns = drill_vias(fab.read_drills(d), span, plating=plating, annulus=annulus,
                                       prefix=short, label=short, scale=scale, unit=unit)
        vias += made
        notes.append(f"fabrication: drill {note}")
        warnings += [f"fabrication: {w}" for w in warns]
    return BoardInputs(artwork, tuple(vias), tuple(notes), tuple(warnings), pads,
                       dict(sorted(net_area.items())))


def _simplified(geom, pads, clip, nets):
    """``geom`` simplified to SIMPLIFY with the exact pads (of ``nets``, None: all) united back."""
    keep = [p.geometry for p in pads if nets is None or p.net in nets]
    if clip is not None:
        box = shapely.box(*clip)
        keep = [shapely.clip_by_rect(g, *clip) for g in keep if g.intersects(box)]
    simple = shapely.simplify(geom, SIMPLIFY, preserve_topology=True)
    return shapely.union_all([simple, *keep]) if keep else simple


def _filter_nets(read, artwork, nets, others, where, scale, unit):
    """Apply a net list to the artwork of each layer (in place); return the notes."""
    bare = [art.source for art in read.values() if not art.object_attributes]
    if bare:
        raise input_error(where[0], where[1], f"'nets' needs X2 net attributes (%TO.N), but "
                          f"{Path(bare[0]).name} has none; export Gerber X2 with netlist attributes")
    known = sorted({net for art in read.values() for net in art.nets})
    for net in nets:
        if net not in known:
            close = difflib.get_close_matches(net, known, n=5, cutoff=0.5)
            hint = ("closest: " + ", ".join(repr(c) for c in close)) if close else \
                f"the files name {len(known)} nets (see 'copperpath inspect')"
            raise input_error(where[0], where[1], f"'nets' names net {net!r}, which no copper file has; {hint}")
    notes = []
    listed = ", ".join(nets)
    for layer, art in read.items():
        kept = shapely.union_all([art.nets[n] for n in nets if n in art.nets])
        total = art.geometry.area
        if others == "drop":
            artwork[layer] = kept
        notes.append(f"fabrication: layer '{layer}': nets {listed} hold {_fmt(kept.area, scale ** 2)} "
                     f"of {_fmt(total, scale ** 2)} {unit}^2; others = \"{others}\" keeps "
                     + (f"{_fmt(kept.area, scale ** 2)} {unit}^2 (\"float\" would keep all "
                        f"{_fmt(total, scale ** 2)})" if others == "drop" else
                        f"all {_fmt(total, scale ** 2)} {unit}^2 (\"drop\" would keep "
                        f"{_fmt(kept.area, scale ** 2)})"))
    return notes
