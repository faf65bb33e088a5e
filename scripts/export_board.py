"""Export Gerber X2, a Gerber job file and Excellon drill files of a KiCad board (test data).

Runs under the Python that carries KiCad's ``pcbnew`` module (KiCad 6, Debian 12:
``apt-get install kicad kicad-demos``; run with ``/usr/bin/python3``, not the project's
interpreter). KiCad 6 has no ``kicad-cli``; the plot and drill writers of ``pcbnew`` do the
same job::

    /usr/bin/python3 scripts/export_board.py \\
        /usr/share/kicad/demos/pic_programmer/pic_programmer.kicad_pcb cases/pic_programmer \\
        --reference tests/data/pic_programmer
    /usr/bin/python3 scripts/export_board.py --job-only \\
        /usr/share/kicad/demos/kit-dev-coldfire-xilinx_5213/kit-dev-coldfire-xilinx_5213.kicad_pcb \\
        tests/data/coldfire_stackup

Writes into the output folder (the reference files into ``--reference`` if given):

- ``<board>-<layer>.gbr``: the copper layers and the board outline, Gerber X2 with the
  object attributes ``%TO.P`` (pad), ``%TO.N`` (net), ``%TO.C`` (component);
- ``<board>-job.gbrjob``: the Gerber job file (JSON: ``FilesAttributes``, ``MaterialStackup``);
- ``<board>-PTH.drl`` / ``<board>-NPTH.drl``: Excellon, metric, with X2 file attributes;
- ``stackup.kicad_sexpr``: the board file's own ``(stackup ...)`` section, copied verbatim,
  so that tests can compare the job file with what the board states;
- ``pads.json``: every pad as ``pcbnew`` sees it (reference, number, net, centre in the
  Gerber frame in mm, shape, size, orientation, copper layers), a reference for the X2 reader.

``--job-only`` writes only the job file (with the copper and outline Gerber files it names
deleted again), ``stackup.kicad_sexpr`` and nothing else.
"""
from __future__ import annotations

import argparse
import json
import os
import re
import shutil
import sys
import tempfile

try:
    import pcbnew
except ImportError:
    sys.exit("export_board.py: KiCad's pcbnew module is not importable; run it with the Python "
             "KiCad was built for (Debian 12: /usr/bin/python3 after 'apt-get install kicad')")


def stackup_section(path):
    """The ``(stackup ...)`` s-expression of a .kicad_pcb file, verbatim (balanced parentheses)."""
    text = open(path, encoding="utf-8").read()
    start = text.find("(stackup")
    if start < 0:
        return None
    depth, in_string = 0, False
    for k in range(start, len(text)):
        c = text[k]
        if c == '"' and text[k - 1] != "\\":
            in_string = not in_string
        elif not in_string and c == "(":
            depth += 1
        elif not in_string and c == ")":
            depth -= 1
            if depth == 0:
                return text[start:k + 1] + "\n"
    return None


def plot_gerbers(board, out, base):
    """Plot the copper layers and Edge.Cuts as Gerber X2 with netlist attributes; write the job file."""
    pc = pcbnew.PLOT_CONTROLLER(board)
    po = pc.GetPlotOptions()
    po.SetOutputDirectory(out)
    po.SetPlotFrameRef(False)
    po.SetUseGerberProtelExtensions(False)
    po.SetUseGerberAttributes(True)
    po.SetUseGerberX2format(True)
    po.SetIncludeGerberNetlistInfo(True)
    po.SetCreateGerberJobFile(True)
    po.SetDisableGerberMacros(False)
    po.SetUseAuxOrigin(False)
    po.SetSubtractMaskFromSilk(False)
    po.SetExcludeEdgeLayer(True)
    po.SetGerberPrecision(6)
    po.SetDrillMarksType(pcbnew.PCB_PLOT_PARAMS.NO_DRILL_SHAPE)
    po.SetSkipPlotNPTH_Pads(False)
    job = pcbnew.GERBER_JOBFILE_WRITER(board)
    layers = list(board.GetEnabledLayers().CuStack()) + [pcbnew.Edge_Cuts]
    written = []
    for layer in layers:
        suffix = board.GetLayerName(layer).replace(".", "_")
        pc.SetLayer(layer)
        pc.OpenPlotfile(suffix, pcbnew.PLOT_FORMAT_GERBER, board.GetLayerName(layer))
        pc.PlotLayer()
        name = pc.GetPlotFileName()
        pc.ClosePlot()
        job.AddGbrFile(layer, os.path.basename(name))
        written.append(name)
    job.CreateJobFile(os.path.join(out, f"{base}-job.gbrjob"))
    return written


def write_drills(board, out):
    """Excellon drill files, metric, PTH and NPTH apart, no map files."""
    w = pcbnew.EXCELLON_WRITER(board)
    w.SetOptions(False, False, pcbnew.wxPoint(0, 0), False)     # mirror, minimal header, offset, merge
    w.SetFormat(True, pcbnew.EXCELLON_WRITER.DECIMAL_FORMAT, 3, 3)
    w.CreateDrillandMapFilesSet(out, True, False)


def pad_table(board):
    """Every pad: reference, number, net, centre (Gerber frame: y up, mm), shape, size (mm) and
    orientation (degrees, board frame), copper layers."""
    rows = []
    enabled = set(board.GetEnabledLayers().CuStack())
    for fp in board.GetFootprints():
        for pad in fp.Pads():
            pos = pad.GetPosition()
            layers = [board.GetLayerName(la) for la in pad.GetLayerSet().CuStack() if la in enabled]
            rows.append({"ref": fp.GetReference(), "pad": pad.GetNumber(), "net": pad.GetNetname(),
                         "x_mm": pcbnew.ToMM(pos.x), "y_mm": -pcbnew.ToMM(pos.y),
                         "shape": pcbnew.PAD_SHAPE_T_asString(pad.GetShape()),
                         "size_mm": [pcbnew.ToMM(pad.GetSize().x), pcbnew.ToMM(pad.GetSize().y)],
                         "angle_deg": pad.GetOrientationDegrees(),
                         "layers": layers, "through_hole": pad.GetAttribute() == pcbnew.PAD_ATTRIB_PTH})
    return rows


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("board", help="a .kicad_pcb file")
    ap.add_argument("out", help="output folder (created)")
    ap.add_argument("--reference", help="folder for stackup.kicad_sexpr and pads.json (default: out)")
    ap.add_argument("--job-only", action="store_true", help="keep only the job file and the stackup")
    args = ap.parse_args(argv)
    ref = os.path.abspath(args.reference or args.out)
    os.makedirs(ref, exist_ok=True)
    args.out = os.path.abspath(args.out)          # pcbnew resolves relative folders against the board
    os.makedirs(args.out, exist_ok=True)
    board = pcbnew.LoadBoard(args.board)
    base = re.sub(r"\.kicad_pcb$", "", os.path.basename(args.board))
    stackup = stackup_section(args.board)
    if stackup:
        with open(os.path.join(ref, "stackup.kicad_sexpr"), "w", encoding="utf-8") as f:
            f.write(stackup)
    if args.job_only:
        with tempfile.TemporaryDirectory() as tmp:
            plot_gerbers(board, tmp, base)
            shutil.copy(os.path.join(tmp, f"{base}-job.gbrjob"), args.out)
        return
    plot_gerbers(board, args.out, base)
    write_drills(board, args.out)
    with open(os.path.join(ref, "pads.json"), "w", encoding="utf-8") as f:
        rows = ",\n".join(json.dumps(r) for r in pad_table(board))       # one pad a line
        f.write(f'{{"board": {json.dumps(os.path.basename(args.board))}, '
                f'"kicad": {json.dumps(pcbnew.Version())},\n"pads": [\n{rows}\n]}}\n')


if __name__ == "__main__":
    main()
