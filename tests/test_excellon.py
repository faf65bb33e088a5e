"""Tests of the Excellon reader on hand-written drill files.

File text follows the Excellon command set as documented in IPC-NC-349 (1985), "Computer
Numerical Control Formatting for Drillers and Routers", and the header conventions that
layout tools write (METRIC/INCH with LZ/TZ, ";FILE_FORMAT=", X2 attributes as "; #@!"
comments per the Ucamco Gerber specification 2023.08, section on drill files) -- all cited
from memory. Positions are compared in metres.
"""
import io
import random
import re

import numpy as np
import pytest

from copperpath.geometry.errors import InputError
from copperpath.geometry.formats import excellon, read_drills

MM, INCH = 1e-3, 25.4e-3


def drl(text, name="t.drl"):
    return excellon.read(io.StringIO(text), name=name)


METRIC_FILE = """M48
; #@! TF.GenerationSoftware,Test,1
; #@! TF.FileFunction,Plated,1,4,PTH
FMAT,2
METRIC,TZ
T1C0.300
T2C0.800
%
G90
G05
T1
X10.0Y5.0
X12.5
Y-3.25
T2
X0Y0
X1.0Y1.0G85X3.0Y1.0
G00X5.0Y5.0
M15
G01X5.0Y8.0
M16
G05
X20.0Y20.0
M30
X99.0Y99.0
"""


def test_metric_hits_tools_and_modal_coordinates():
    d = drl(METRIC_FILE)
    assert d.units == "mm"
    np.testing.assert_allclose(d.xy / MM, [[10, 5], [12.5, 5], [12.5, -3.25], [0, 0], [20, 20]])
    np.testing.assert_allclose(d.diameter / MM, [0.3, 0.3, 0.3, 0.8, 0.8])
    assert d.plated.all()
    assert d.span == (1, 4)
    assert d.file_attributes["FileFunction"] == ("Plated", "1", "4", "PTH")


def test_g85_and_routed_slots():
    d = drl(METRIC_FILE)
    assert len(d.slots) == 2
    (s0, e0, d0, p0), (s1, e1, d1, p1) = d.slots
    assert np.allclose(s0, (1 * MM, 1 * MM)) and np.allclose(e0, (3 * MM, 1 * MM))
    assert np.allclose(s1, (5 * MM, 5 * MM)) and np.allclose(e1, (5 * MM, 8 * MM))
    assert d0 == pytest.approx(0.8 * MM) and d1 == pytest.approx(0.8 * MM)
    assert p0 and p1


@pytest.mark.parametrize("header, x, y", [
    ("INCH,LZ", "X015Y0075", (1.5, 0.75)),          # leading zeros kept: digits from the left (2.4)
    ("INCH,TZ", "X15000Y7500", (1.5, 0.75)),        # trailing zeros kept: digits from the right
    ("INCH,TZ,00.000", "X1500Y750", (1.5, 0.75)),   # explicit 2.3 format
    ("INCH", "X1.5Y.75", (1.5, 0.75)),              # decimal point wins
])
def test_inch_zero_modes(header, x, y):
    d = drl(f"M48\n{header}\nT1C0.0118\n%\nT1\n{x}\nM30\n")
    assert d.units == "inch"
    assert np.allclose(d.xy[0], np.array(y) * INCH)
    assert d.diameter[0] == pytest.approx(0.0118 * INCH)


@pytest.mark.parametrize("header, x, value_mm", [
    ("METRIC,LZ,0000.00", "X0123", 123.0),
    ("METRIC,TZ,000.000", "X12345", 12.345),
    (";FILE_FORMAT=3:3\nMETRIC,LZ", "X012345", 12.345),
    (";FILE_FORMAT=4:4\nMETRIC,TZ", "X12345", 1.2345),
    ("METRIC,LZ", "X00123", 1.23),                  # default 3.3: "00123" + "0" = 001.230
])
def test_metric_explicit_formats(header, x, value_mm):
    d = drl(f"M48\n{header}\nT1C0.3\n%\nT1\n{x}Y0\nM30\n")
    assert d.xy[0, 0] == pytest.approx(value_mm * MM)


def test_tools_in_body_repeat_and_units_switch():
    d = drl("M48\nMETRIC\n%\nT3C1.0\nX1.0Y1.0\nR3X2.0\nM30\n")
    np.testing.assert_allclose(d.xy[:, 0] / MM, [1, 3, 5, 7])
    assert (d.diameter == pytest.approx(1.0 * MM))


def test_plating_from_attributes_tools_and_names():
    d = drl("M48\n; #@! TF.FileFunction,NonPlated,1,2,NPTH\nMETRIC\nT1C3.0\n%\nT1\nX0Y0\nM30\n")
    assert not d.plated.any() and d.span == (1, 2)
    e = drl("M48\nMETRIC\nT1C3.0\n%\nT1\nX0Y0\nM30\n", name="fab/board-NPTH.drl")
    assert not e.plated.any() and e.span is None
    f = drl("M48\nMETRIC\nT1C3.0\n%\nT1\nX0Y0\nM30\n", name="fab/board-PTH.drl")
    assert f.plated.all()
    g = drl("M48\nMETRIC\n; #@! TA.AperFunction,Plated,PTH,ViaDrill\nT1C0.3\n"
            "; #@! TA.AperFunction,NonPlated,NPTH,ComponentDrill\nT2C3.0\n%\n"
            "T1\nX0Y0\nT2\nX5.0Y0\nX6.0Y0G85X8.0Y0\nM30\n")
    assert g.plated.tolist() == [True, False]
    assert g.slots[0].plated is False
    h = drl("M48\nMETRIC\n;TYPE=NON_PLATED\nT1C3.0\n%\nT1\nX0Y0\nM30\n")
    assert h.plated.tolist() == [False]


def test_end_of_program_and_registry(tmp_path):
    p = tmp_path / "b.drl"
    p.write_text("M48\nINCH,TZ\nT1C0.02\n%\nT1\nX1.0Y1.0\nM30\nX2.0Y2.0\n")
    d = read_drills(p)
    assert len(d.xy) == 1 and d.source == str(p)
    with pytest.raises(InputError, match="Gerber"):
        read_drills(io.StringIO("%FSLAX26Y26*%%MOMM*%M02*"))


@pytest.mark.parametrize("text, line, what", [
    ("M48\nMETRIC\nT1C0.3\n%\nT2\nX0Y0\n", 5, "tool T2 used before definition"),
    ("M48\nMETRIC\nT1C0.3\n%\nX0Y0\n", 5, "before a tool was selected"),
    ("M48\nT1C0.3\n%\n", 2, "before the units"),
    ("M48\nMETRIC\n%\nT1C0.3\nT1\nX1.0Y1.0\nG02X2.0Y2.0\n", 7, "routed arcs"),
    ("M48\nMETRIC\nT1\n%\n", 3, "has no diameter"),
    ("M48\nMETRIC\nT1C0.3\n%\nT1\nX1.0.0Y1\n", 6, "cannot interpret"),
    ("M48\nMETRIC,QZ\n%\n", 2, "unknown field 'QZ'"),
    ("M48\nMETRIC\nT1C0.3\n%\nT1\nZ99\n", 6, "unknown or unsupported command"),
])
def test_errors_name_file_and_line(text, line, what):
    with pytest.raises(InputError, match=rf"^t\.drl:{line}: .*{what}") as info:
        drl(text)
    assert "\n" not in str(info.value)


def test_fuzzed_files_raise_only_input_error():
    base = METRIC_FILE.replace("M30\nX99.0Y99.0\n", "R2X1.0Y1.0\nG93X1.0Y1.0\nX1.0Y1.0\nM30\n")
    drl(base)
    rng = random.Random(7)
    alphabet = "XYTCGMR0123456789.,;%-+\n"
    outcomes = {"ok": 0, "error": 0}
    for _ in range(400):
        data = list(base)
        for _ in range(rng.randint(1, 4)):
            k = rng.randrange(len(data))
            action = rng.random()
            if action < 0.4:
                del data[k:k + rng.randint(1, 6)]
            elif action < 0.7:
                data[k:k] = data[k:k + rng.randint(1, 12)]
            else:
                data[k] = rng.choice(alphabet) if rng.random() < 0.7 else chr(rng.randrange(256))
        try:
            drl("".join(data))
            outcomes["ok"] += 1
        except InputError as exc:
            assert re.match(r"t\.drl:\d+: \S", str(exc)) and "\n" not in str(exc), str(exc)
            outcomes["error"] += 1
    assert outcomes["ok"] > 0 and outcomes["error"] > 0


def test_mixed_plating_file_as_layout_tools_write_it():
    # Header in the style KiCad writes (from memory): per-tool TA comments, an oval hole routed.
    text = ("M48\n; DRILL file {test} date today\n; FORMAT={-:-/ absolute / metric / decimal}\n"
            "; #@! TF.FileFunction,MixedPlating,1,2\nFMAT,2\nMETRIC\n"
            "; #@! TA.AperFunction,Plated,PTH,ViaDrill\nT1C0.400\n"
            "; #@! TA.AperFunction,NonPlated,NPTH,ComponentDrill\nT2C3.200\n"
            "; #@! TA.AperFunction,Plated,PTH,ComponentDrill\nT3C1.000\n%\nG90\nG05\n"
            "T1\nX135.89Y-87.63\nT2\nX140.0Y-90.0\nT3\nG00X151.13Y-96.52\nM15\nG01X151.13Y-95.52\nM16\nG05\nT0\nM30\n")
    d = drl(text)
    assert d.span == (1, 2)
    assert d.plated.tolist() == [True, False]
    assert d.xy[0] == pytest.approx([135.89 * MM, -87.63 * MM])
    (slot,) = d.slots
    assert slot.plated and slot.diameter == pytest.approx(1.0 * MM)
    assert slot.end == pytest.approx((151.13 * MM, -95.52 * MM))
