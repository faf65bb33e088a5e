"""X2 object attributes in the Gerber reader: nets and pads (copperpath.geometry.formats.x2).

Semantics from the Gerber Layer Format Specification (Ucamco, revision 2023.08, section 5,
from memory): ``%TO`` sets an object attribute for the objects that follow, ``%TD`` deletes
all (or the named one), ``.N`` is the net, ``.P`` the pad (refdes, number, function), ``.C``
the component; field values may hold ``\\uXXXX`` escapes.
"""
import io

import pytest

from copperpath.geometry.formats import gerber

HEAD = "%FSLAX46Y46*%\n%MOMM*%\n%ADD10R,1X1*%\n%ADD11C,0.5*%\n"


def _read(body, **kw):
    return gerber.read(io.StringIO(HEAD + body + "M02*\n"), **kw)


def test_nets_and_pads_follow_to_and_td():
    art = _read(
        "D10*\n%TO.P,U1,1,VIN*%\n%TO.N,VCC*%\nX0Y0D03*\n"          # pad U1.1 on VCC: 1 mm^2
        "%TO.P,U1,2*%\n%TO.N,Net\\u002C1*%\nX5000000Y0D03*\n%TD*%\n"  # U1.2 on "Net,1"
        "D11*\n%TO.N,VCC*%\nX0Y0D02*\nX0Y10000000D01*\n%TD.N*%\n"      # a VCC track, 10 mm x 0.5
        "X20000000Y0D02*\nX30000000Y0D01*\n"                           # untagged track
        "%TO.C,R7*%\nD10*\nX40000000Y0D03*\n%TD*%\n")
    assert set(art.pads) == {"U1.1", "U1.2"}
    assert (art.pads["U1.1"].net, art.pads["U1.1"].function) == ("VCC", "VIN")
    assert art.pads["U1.2"].net == "Net,1" and art.pads["U1.2"].function == ""
    assert art.pads["U1.1"].geometry.area == pytest.approx(1e-6, rel=1e-9)
    assert set(art.nets) == {"VCC", "Net,1"}
    # VCC: the 1 mm pad and a 10 mm x 0.5 mm track with round ends, overlapping on the pad
    track = 10e-3 * 0.5e-3 + 3.14159265 * 0.25e-3 ** 2
    assert art.nets["VCC"].area == pytest.approx(1e-6 + track - 0.5e-3 * 0.5e-3 - 3.14159265 * 0.25e-3 ** 2 / 2,
                                                 rel=1e-3)
    assert art.components == ("R7", "U1") and art.object_attributes


def test_clip_and_clear_polarity():
    body = ("D10*\n%TO.N,A*%\nX0Y0D03*\nX10000000Y0D03*\n%TD*%\n"
            "%LPC*%\nX10000000Y0D03*\n%LPD*%\n")                      # the second A square erased
    art = _read(body)
    assert art.nets["A"].area == pytest.approx(1e-6, rel=1e-9)
    clipped = _read(body, clip=(-1e-3, -1e-3, 0.0, 1e-3))
    assert clipped.nets["A"].area == pytest.approx(0.5e-6, rel=1e-9)   # half of it inside
    assert not _read("D10*\nX0Y0D03*\n").object_attributes
