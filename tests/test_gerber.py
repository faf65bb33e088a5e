"""Tests of the Gerber reader against hand-written files and analytic areas.

The Gerber text follows the Ucamco Gerber Layer Format Specification, revision 2023.08
(commands and semantics cited from memory). Areas are in mm^2; the reader works in metres.
Curves are inscribed polygons with sagitta <= chord (1 um default), so a curved area may be
smaller than the exact one by at most (curved perimeter) x chord, and larger by the same
where a curve bounds a hole.
"""
import io
import math
import random
import re
import time

import numpy as np
import pytest
from scipy import integrate

from copperpath.geometry.errors import InputError
from copperpath.geometry.formats import gerber, read_artwork

CHORD_MM = 1e-3   # default chord tolerance, in mm
HEAD = "%FSLAX36Y36*%\n%MOMM*%\n"


def art(body, head=HEAD, **kw):
    return gerber.read(io.StringIO(head + body + "\nM02*\n"), name="t.gbr", **kw)


def area(a):
    return a.geometry.area * 1e6


def mm(value):
    """Coordinate in the FSLAX36Y36 format (mm)."""
    return str(int(round(value * 1e6)))


def xy(x, y):
    return f"X{mm(x)}Y{mm(y)}"


def assert_area(a, exact, curved_perimeter):
    """Area within the chord bound: |A - A_exact| <= curved perimeter x chord (+ round-off)."""
    got = area(a)
    assert abs(got - exact) <= curved_perimeter * CHORD_MM + 1e-9, (got, exact)


# ---------------------------------------------------------------- reference formulas

def regular_polygon_area(r, n):
    """Area of a regular n-gon with circumradius r: (n/2) r^2 sin(2 pi / n) (elementary geometry)."""
    return 0.5 * n * r * r * math.sin(2 * math.pi / n)


def test_regular_polygon_reference():
    assert regular_polygon_area(1.0, 4) == pytest.approx(2.0)              # square, diagonal 2
    assert regular_polygon_area(1.0, 100000) == pytest.approx(math.pi, rel=1e-8)   # limit: circle


def thermal_area(outer, inner, gap):
    """Area of an annulus (diameters outer, inner) less a centred cross of bar width `gap`.

    Closed form: disk area less its intersection with the two bars, where a disk of radius R
    meets the strip |y| < h in 2 (h sqrt(R^2 - h^2) + R^2 asin(h / R)) and the two strips
    overlap in the square (2h)^2 (inside both disks when h sqrt(2) < inner radius).
    """
    h = gap / 2

    def in_cross(radius):
        strip = 2 * (h * math.sqrt(radius**2 - h**2) + radius**2 * math.asin(h / radius))
        return 2 * strip - 4 * h * h

    big, small = outer / 2, inner / 2
    return (math.pi * big**2 - in_cross(big)) - (math.pi * small**2 - in_cross(small))


def test_thermal_reference_against_quadrature():
    # At radius rho the cross covers the angle 8 asin(h / rho) (four arcs of each bar).
    outer, inner, gap = 2.0, 1.4, 0.3
    h = gap / 2
    numeric, _ = integrate.quad(lambda r: r * (2 * math.pi - 8 * math.asin(h / r)), inner / 2, outer / 2)
    assert thermal_area(outer, inner, gap) == pytest.approx(numeric, rel=1e-10)
    assert thermal_area(outer, inner, 1e-9) == pytest.approx(math.pi * (1 - 0.49), rel=1e-6)


# ---------------------------------------------------------------- standard apertures

def test_circle_flash_and_hole():
    a = art(f"%ADD10C,1*%\n%ADD11C,2X0.8*%\nD10*\n{xy(0, 0)}D03*\nD11*\n{xy(5, 0)}D03*")
    assert len(a.geometry.geoms) == 2
    assert_area(a, math.pi / 4 + math.pi * (1 - 0.16), math.pi * (1 + 2 + 0.8))


def test_rectangle_flash_exact_and_with_hole():
    a = art(f"%ADD10R,2X1*%\nD10*\n{xy(1, 2)}D03*")
    assert area(a) == pytest.approx(2.0, rel=1e-12)
    assert a.geometry.bounds == pytest.approx((0e-3, 1.5e-3, 2e-3, 2.5e-3))
    b = art(f"%ADD10R,2X1X0.5*%\nD10*\n{xy(0, 0)}D03*")
    assert_area(b, 2.0 - math.pi * 0.0625, math.pi * 0.5)
    assert len(b.geometry.geoms[0].interiors) == 1


def test_obround_flash_both_orientations():
    # Obround = rectangle of the straight part + a disk of the small size.
    for size in ("3X1", "1X3"):
        a = art(f"%ADD10O,{size}*%\nD10*\n{xy(0, 0)}D03*")
        assert_area(a, 2.0 + math.pi / 4, math.pi)
        w, h = (3, 1) if size == "3X1" else (1, 3)
        x0, y0, x1, y1 = np.array(a.geometry.bounds) * 1e3
        assert (x1 - x0, y1 - y0) == pytest.approx((w, h), abs=1e-9)


def test_polygon_flash_rotation_and_hole():
    a = art(f"%ADD10P,2X6*%\nD10*\n{xy(0, 0)}D03*")
    assert area(a) == pytest.approx(regular_polygon_area(1.0, 6), rel=1e-12)
    b = art(f"%ADD10P,2X5X90*%\nD10*\n{xy(0, 0)}D03*")       # first vertex on +y
    assert b.geometry.bounds[3] == pytest.approx(1e-3)
    assert b.geometry.bounds[1] == pytest.approx(-1e-3 * math.cos(math.pi / 5))
    c = art(f"%ADD10P,2X8X0X0.6*%\nD10*\n{xy(0, 0)}D03*")
    assert_area(c, regular_polygon_area(1.0, 8) - math.pi * 0.09, math.pi * 0.6)


# ---------------------------------------------------------------- draws and arcs

def test_round_draw_is_a_stadium():
    a = art(f"%ADD10C,0.5*%\nD10*\nG01*\n{xy(0, 0)}D02*\n{xy(10, 0)}D01*")
    assert_area(a, 10 * 0.5 + math.pi * 0.25**2, math.pi * 0.5)


def test_rectangle_draw_is_the_minkowski_sum():
    # Sweeping a convex P along a vector v adds |v| x (width of P across v) to area(P)
    # (mixed area of a polygon and a segment; Schneider 2014, Convex Bodies, sec. 5.1).
    def swept(w, h, vx, vy):
        length = math.hypot(vx, vy)
        width = abs(vy / length) * w + abs(vx / length) * h
        return w * h + length * width

    assert swept(1.0, 0.5, 3.0, 0.0) == pytest.approx(0.5 + 3 * 0.5)   # check: axis-aligned case
    a = art(f"%ADD10R,1X0.5*%\nD10*\n{xy(0, 0)}D02*\n{xy(3, 4)}D01*")
    assert area(a) == pytest.approx(swept(1.0, 0.5, 3.0, 4.0), rel=1e-12)


def annulus_sector(radius, width, angle):
    """Area of an annular sector of mid radius `radius`, width `width`, opening `angle` (rad)."""
    return 0.5 * angle * ((radius + width / 2) ** 2 - (radius - width / 2) ** 2)


@pytest.mark.parametrize("g, quarters", [("G03", 1), ("G02", 3)])
def test_multi_quadrant_arc_draw(g, quarters):
    r, w = 5.0, 0.4
    a = art(f"%ADD10C,{w}*%\nD10*\nG75*\n{xy(r, 0)}D02*\n{g}{xy(0, r)}I{mm(-r)}J0D01*")
    exact = annulus_sector(r, w, quarters * math.pi / 2) + math.pi * (w / 2) ** 2
    assert_area(a, exact, quarters * math.pi / 2 * 2 * r + math.pi * w)


def test_full_circle_draw_g75():
    r, w = 3.0, 0.2
    a = art(f"%ADD10C,{w}*%\nD10*\nG75*\n{xy(r, 0)}D02*\nG03{xy(r, 0)}I{mm(-r)}J0D01*")
    assert_area(a, annulus_sector(r, w, 2 * math.pi), 2 * math.pi * 2 * r)
    assert len(a.geometry.geoms[0].interiors) == 1


def test_single_quadrant_arc_g74_picks_the_centre():
    r, w = 5.0, 0.4
    # Clockwise from (0, r) to (r, 0); I and J are unsigned, the centre (0, 0) is inferred.
    a = art(f"%ADD10C,{w}*%\nD10*\nG74*\n{xy(0, r)}D02*\nG02{xy(r, 0)}I0J{mm(r)}D01*")
    assert_area(a, annulus_sector(r, w, math.pi / 2) + math.pi * (w / 2) ** 2, math.pi * r + math.pi * w)
    c = a.geometry.centroid
    assert c.x > 2e-3 and c.y > 2e-3           # the arc bulges away from the centre


def test_arc_chord_tolerance_is_respected():
    r = 20.0
    for chord in (1e-6, 1e-5):
        a = art(f"%ADD10C,0.1*%\nD10*\nG75*\n{xy(r, 0)}D02*\nG03{xy(r, 0)}I{mm(-r)}J0D01*", chord=chord)
        hole = a.geometry.geoms[0].interiors[0]
        dist = np.hypot(*np.array(hole.coords).T) * 1e3
        # Inner edge of the ring at r - 0.05 mm; vertices on it, chords inside by <= chord.
        assert dist.max() <= r - 0.05 + 1e-9
        mid = 0.5 * (np.array(hole.coords)[1:] + np.array(hole.coords)[:-1])
        assert (r - 0.05) - np.hypot(*mid.T).min() * 1e3 <= 2 * chord * 1e3 + 1e-9


# ---------------------------------------------------------------- regions and polarity

def rounded_square(size, radius, x0=0.0, y0=0.0):
    s, q = size, radius
    return (f"G36*\nG75*\nG01*\n{xy(x0 + q, y0)}D02*\n{xy(x0 + s - q, y0)}D01*\n"
            f"G03{xy(x0 + s, y0 + q)}I0J{mm(q)}D01*\nG01*\n{xy(x0 + s, y0 + s - q)}D01*\n"
            f"G03{xy(x0 + s - q, y0 + s)}I{mm(-q)}J0D01*\nG01*\n{xy(x0 + q, y0 + s)}D01*\n"
            f"G03{xy(x0, y0 + s - q)}I0J{mm(-q)}D01*\nG01*\n{xy(x0, y0 + q)}D01*\n"
            f"G03{xy(x0 + q, y0)}I{mm(q)}J0D01*\nG37*")


def test_region_with_arcs():
    a = art(rounded_square(10, 2))
    assert_area(a, 100 - (4 - math.pi) * 4, 2 * math.pi * 2)


def test_region_hole_by_cut_in_and_several_contours():
    ring = [(0, 0), (10, 0), (10, 10), (0, 10), (0, 5), (3, 5), (3, 7), (7, 7), (7, 3), (3, 3), (3, 5), (0, 5), (0, 0)]
    body = "G36*\nG01*\n" + f"{xy(*ring[0])}D02*\n" + "".join(f"{xy(*p)}D01*\n" for p in ring[1:])
    body += f"{xy(20, 0)}D02*\n{xy(22, 0)}D01*\n{xy(22, 2)}D01*\n{xy(20, 2)}D01*\n{xy(20, 0)}D01*\nG37*"
    a = art(body)
    assert area(a) == pytest.approx(100 - 16 + 4, rel=1e-12)
    assert sorted(len(p.interiors) for p in a.geometry.geoms) == [0, 1]


def test_clear_cuts_hole_then_dark_island_inside():
    body = (f"%ADD10C,1*%\n%ADD11R,4X4*%\n{rounded_square(10, 2)}\n%LPC*%\nD11*\n{xy(5, 5)}D03*\n"
            f"%LPD*%\nD10*\n{xy(5, 5)}D03*")
    a = art(body)
    assert len(a.geometry.geoms) == 2
    assert_area(a, 84 + 4 * math.pi - 16 + math.pi / 4, 4 * math.pi + math.pi)


def test_clear_erases_only_what_came_before():
    a = art(f"%ADD10R,2X2*%\n%ADD11R,1X1*%\n%LPC*%\nD11*\n{xy(0, 0)}D03*\n%LPD*%\nD10*\n{xy(0, 0)}D03*")
    assert area(a) == pytest.approx(4.0)
    b = art(f"%ADD10R,2X2*%\n%ADD11R,1X1*%\nD10*\n{xy(0, 0)}D03*\n%LPC*%\nD11*\n{xy(0, 0)}D03*\n"
            f"%LPD*%\nD10*\n{xy(10, 0)}D03*")
    assert area(b) == pytest.approx(3.0 + 4.0)


# ---------------------------------------------------------------- step and repeat, transforms, blocks

def test_step_and_repeat_copies():
    a = art(f"%ADD10R,1X1*%\n%SRX3Y2I5.0J4.0*%\nD10*\n{xy(0, 0)}D03*\n%SR*%")
    assert len(a.geometry.geoms) == 6
    assert area(a) == pytest.approx(6.0)
    centres = sorted((round(p.centroid.x * 1e3, 6), round(p.centroid.y * 1e3, 6)) for p in a.geometry.geoms)
    assert centres == [(x, y) for x in (0, 5, 10) for y in (0, 4)]


def test_step_and_repeat_with_clear_objects():
    body = f"%ADD10R,2X2*%\n%ADD11C,1*%\n%SRX2Y1I5J0*%\nD10*\n{xy(0, 0)}D03*\n%LPC*%\nD11*\n{xy(0, 0)}D03*\n%LPD*%\n%SR*%"
    a = art(body)
    assert len(a.geometry.geoms) == 2
    assert_area(a, 2 * (4 - math.pi / 4), 2 * math.pi)


def test_rotation_mirror_and_scale_of_apertures():
    a = art(f"%ADD10R,2X1*%\n%LR30*%\nD10*\n{xy(0, 0)}D03*")
    x0, y0, x1, y1 = np.array(a.geometry.bounds) * 1e3
    c, s = math.cos(math.pi / 6), math.sin(math.pi / 6)
    assert (x1 - x0, y1 - y0) == pytest.approx((2 * c + s, 2 * s + c))
    assert area(a) == pytest.approx(2.0)
    tri = "%AMTRI*4,1,3,0,0,2,0,0,1,0,0,0*%\n%ADD12TRI*%\n"
    b = art(tri + f"%LMX*%\nD12*\n{xy(0, 0)}D03*")
    assert b.geometry.bounds == pytest.approx((-2e-3, 0, 0, 1e-3))
    c = art(tri + f"%LMY*%\n%LR90*%\n%LS2*%\nD12*\n{xy(0, 0)}D03*")
    # mirror y: (2,0),(0,-1); rotate 90: (0,2),(1,0); scale 2: (0,4),(2,0)
    assert c.geometry.bounds == pytest.approx((0, 0, 2e-3, 4e-3))
    assert area(c) == pytest.approx(4.0)


def test_scaled_round_draw():
    a = art(f"%ADD10C,0.5*%\n%LS2*%\nD10*\n{xy(0, 0)}D02*\n{xy(10, 0)}D01*")
    assert_area(a, 10 * 1.0 + math.pi * 0.25, math.pi)


def test_block_aperture_with_clear_inside():
    body = (f"%ADD10R,2X2*%\n%ADD11R,1X1*%\n%ABD20*%\nD10*\n{xy(0, 0)}D03*\n%LPC*%\nD11*\n{xy(0, 0)}D03*\n"
            f"%LPD*%\n%AB*%\nD20*\n{xy(10, 0)}D03*\n{xy(20, 0)}D03*")
    a = art(body)
    assert area(a) == pytest.approx(2 * 3.0)
    assert a.geometry.bounds[0] == pytest.approx(9e-3)


# ---------------------------------------------------------------- macros

def macro_area(definition, params="", extra=""):
    return art(f"%AMM*{definition}*%\n%ADD10M{',' + params if params else ''}*%\n{extra}D10*\n{xy(0, 0)}D03*")


def test_macro_circle_with_exposure_off():
    a = macro_area("0 annulus*\n1,1,2,0,0*\n1,0,1,0,0")
    assert_area(a, math.pi * (1 - 0.25), 3 * math.pi)


def test_macro_outline_polygon_and_lines():
    assert area(macro_area("4,1,3,0,0,2,0,0,1,0,0,0")) == pytest.approx(1.0)
    assert area(macro_area("5,1,8,0,0,2,22.5")) == pytest.approx(regular_polygon_area(1, 8))
    v = macro_area("20,1,0.5,0,0,3,4,0")
    assert area(v) == pytest.approx(0.5 * 5)
    c = macro_area("21,1,2,1,1,1,45")
    assert area(c) == pytest.approx(2.0)
    assert (c.geometry.centroid.x, c.geometry.centroid.y) == pytest.approx((0, math.sqrt(2) * 1e-3))


def test_macro_thermal_is_analytic():
    a = macro_area("7,0,0,2,1.4,0.3,45")
    assert_area(a, thermal_area(2.0, 1.4, 0.3), math.pi * 3.4)
    assert len(a.geometry.geoms) == 4


def test_macro_variables_and_arithmetic():
    # $1 = width, $2 = height; $3 = 2 x $1; centre at -($2 / 2 + 1).
    a = macro_area("$3=$1x2*\n21,1,$3,$2,0,-($2/2+1),0*\n1,1,$1-(0.5x$1),0,-1x-3", "1.5X2")
    rect = 3.0 * 2.0
    disk = math.pi * 0.75**2 / 4
    assert_area(a, rect + disk, math.pi * 0.75)
    ys = sorted(p.centroid.y * 1e3 for p in a.geometry.geoms)
    assert ys == pytest.approx([-2.0, 3.0], abs=1e-3)


def test_macro_with_all_primitives_together():
    body = "1,1,0.5,5,0*\n4,1,3,0,0,2,0,0,1,0,0,0*\n5,1,6,10,0,2,0*\n7,20,0,2,1.4,0.3,0*\n20,1,0.5,0,10,3,14,0*\n21,1,2,1,30,0,0"
    a = macro_area(body)
    exact = (math.pi * 0.0625 + 1.0 + regular_polygon_area(1, 6) + thermal_area(2, 1.4, 0.3) + 2.5 + 2.0)
    assert_area(a, exact, math.pi * (0.5 + 3.4))


# ---------------------------------------------------------------- formats, units, attributes

def test_leading_and_trailing_zero_omission_agree():
    lead = "%FSLAX24Y24*%\n%MOIN*%\n"
    trail = "%FSTAX24Y24*%\n%MOIN*%\n"
    a = art("%ADD10R,0.1X0.1*%\nD10*\nX15000Y5000D03*", head=lead)
    b = art("%ADD10R,0.1X0.1*%\nD10*\nX015Y005D03*", head=trail)
    for x in (a, b):
        assert (x.geometry.centroid.x, x.geometry.centroid.y) == pytest.approx((1.5 * 0.0254, 0.5 * 0.0254))
        assert x.units == "inch"


def test_inch_and_metric_give_the_same_copper():
    a = art("%ADD10C,0.1*%\nD10*\nX010000Y0D02*\nX020000Y0D01*", head="%FSLAX25Y25*%\n%MOIN*%\n")
    b = art(f"%ADD10C,2.54*%\nD10*\n{xy(2.54, 0)}D02*\n{xy(5.08, 0)}D01*")
    assert area(a) == pytest.approx(area(b), rel=1e-9)
    assert_area(a, 2.54 * 2.54 + math.pi * 1.27**2, math.pi * 2.54)


def test_x2_file_attributes():
    a = art("%TF.FileFunction,Copper,L2,Inr*%\n%TF.Part,Single*%\nG04 #@! TF.SameCoordinates,Original*\n"
            "%TA.AperFunction,SMDPad*%\n%ADD10C,1*%\n%TD*%\nD10*\nX0Y0D03*")
    assert a.file_attributes["FileFunction"] == ("Copper", "L2", "Inr")
    assert a.file_function == ("Copper", "L2", "Inr")
    assert a.file_attributes["Part"] == ("Single",)
    assert a.file_attributes["SameCoordinates"] == ("Original",)


def test_deprecated_codes_tolerated():
    body = "%IPPOS*%\n%ASAXBY*%\n%OFA0B0*%\n%SFA1B1*%\n%ADD10C,1*%\nG54D10*\nG90*\nG01X0Y0D03*\nX5000000D03*"
    a = art(body, head="%FSLAX36Y36*%\nG71*\n")
    assert len(a.geometry.geoms) == 2 and a.units == "mm"


def test_empty_file_and_zero_size_aperture():
    a = art("%ADD10C,0*%\nD10*\nX0Y0D02*\nX1000Y0D01*")
    assert a.geometry.is_empty


def test_read_artwork_registry_and_path(tmp_path):
    p = tmp_path / "board-L1.gbr"
    p.write_text(HEAD + "%ADD10R,1X1*%\nD10*\nX0Y0D03*\nM02*\n")
    assert read_artwork(p).geometry.area == pytest.approx(1e-6)
    with pytest.raises(InputError, match="Excellon"):
        read_artwork(io.StringIO("M48\nMETRIC\nT1C0.3\n%\nM30\n"))


# ---------------------------------------------------------------- errors

@pytest.mark.parametrize("body, line, what", [
    ("%ADD10C,1*%\nD12*\nX0Y0D03*", 4, "aperture D12 used before definition"),
    ("%ADD10C,1*%\nX0Y0D03*", 4, "before any aperture was selected"),
    ("%ADD10FOO,1*%", 3, "macro 'FOO' used before definition"),
    ("%ADD10R,1*%", 3, "type R takes 2 to 3 parameters"),
    ("%ADD10C,1*%\nD10*\nG36*\nX0Y0D03*\nG37*", 6, "flash \\(D03\\) inside a region"),
    ("G36*\nX0Y0D02*\nX1Y0D01*", 6, "not closed by G37"),
    ("%AMT*7,0,0,1,2,0.1,0*%\n%ADD10T*%", 4, "outer diameter > inner diameter"),
    ("%AMT*1,1,1,(0,0*%", 3, "missing '\\)'"),
    ("%AMT*99,1,1*%", 3, "unknown macro primitive"),
    ("%ADD10C,1*%\nD10*\nX0Y0D03", 5, "cannot parse 'X0Y0D03M02'"),
    ("%ADD10C,1*%\nD10*\nX0Y0D03*\n%LPD*", 6, "must end with '\\*'"),
    ("%LPX*%", 3, "expected %LPD"),
    ("%ADD10C,1*%\nD10*\nG91*", 5, "incremental"),
    ("%AMT*1,1,1,0,0*%\n%ADD10T*%\nD10*\nX0Y0D02*\nX1Y0D01*", 7, "draw \\(D01\\) with aperture D10"),
    ("%ADD10C,1*%\nD10*\nG74*\nX1000000Y0D02*\nG03X-1000000Y0I1000000J0D01*", 7, "more than 90 degrees"),
])
def test_errors_name_file_and_line(body, line, what):
    with pytest.raises(InputError, match=rf"^t\.gbr:{line}: .*{what}") as info:
        art(body)
    assert "\n" not in str(info.value)


def test_coordinates_before_format():
    with pytest.raises(InputError, match=r"^t\.gbr:1: coordinate data before the format"):
        art("X0Y0D02*", head="")


def test_fuzzed_files_raise_only_input_error():
    base = (HEAD + "%TF.FileFunction,Copper,L1,Top*%\n%AMT*7,0,0,2,1.4,0.3,0*1,0,0.2,0,0*%\n%ADD10C,0.5*%\n"
            "%ADD11R,1X2*%\n%ADD12O,1X2X0.3*%\n%ADD13P,2X6*%\n%ADD14T*%\n%LR15*%\nD11*\nX0Y0D03*\n%LR0*%\n"
            f"D10*\nG01*\n{xy(0, 0)}D02*\n{xy(5, 5)}D01*\nG75*\nG03{xy(0, 10)}I{mm(-5)}J0D01*\n"
            f"{rounded_square(4, 1, 10, 10)}\n%LPC*%\nD12*\n{xy(12, 12)}D03*\n%LPD*%\n%SRX2Y2I20J20*%\n"
            f"D13*\n{xy(30, 0)}D03*\nD14*\n{xy(30, 5)}D03*\n%SR*%\nG74*\nD10*\n{xy(0, 20)}D02*\n"
            f"G02{xy(2, 22)}I{mm(2)}J0D01*\nM02*\n")
    gerber.read(io.StringIO(base))
    rng = random.Random(20240601)
    alphabet = "%*XYIJDGM0123456789,.-+$xC\n"
    outcomes = {"ok": 0, "error": 0}
    start = time.perf_counter()
    for _ in range(300):
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
            gerber.read(io.StringIO("".join(data)), name="f.gbr")
            outcomes["ok"] += 1
        except InputError as exc:
            assert re.match(r"f\.gbr:\d+: \S", str(exc)) and "\n" not in str(exc), str(exc)
            outcomes["error"] += 1
    assert outcomes["ok"] > 0 and outcomes["error"] > 0
    assert time.perf_counter() - start < 20


def test_rounded_rectangle_macro_as_layout_tools_write_it():
    # Macro text in the style KiCad writes (comment primitives holding '$'), from memory.
    macro = ("%AMRoundRect*\n0 Rectangle with rounded corners*\n0 $1 Rounding radius*\n"
             "0 $2 $3 $4 $5 $6 $7 $8 $9 X,Y pos of 4 corners*\n"
             "4,1,4,$2,$3,$4,$5,$6,$7,$8,$9,$2,$3,0*\n"
             "1,1,$1+$1,$2,$3*\n1,1,$1+$1,$4,$5*\n1,1,$1+$1,$6,$7*\n1,1,$1+$1,$8,$9*\n"
             "20,1,$1+$1,$2,$3,$4,$5,0*\n20,1,$1+$1,$4,$5,$6,$7,0*\n"
             "20,1,$1+$1,$6,$7,$8,$9,0*\n20,1,$1+$1,$8,$9,$2,$3,0*%\n")
    ad = "%ADD10RoundRect,0.25X-0.45X0.2625X-0.45X-0.2625X0.45X-0.2625X0.45X0.2625X0*%\n"
    a = art(macro + "%TA.AperFunction,SMDPad,CuDef*%\n" + ad + "%TD*%\nD10*\n%TO.P,R1,1*%\nX0Y0D03*\n%TD*%")
    r = 0.25
    # Rectangle through the corner centres grown by r: (w + 2r)(h + 2r) - (4 - pi) r^2.
    assert_area(a, 1.4 * 1.025 - (4 - math.pi) * r * r, 2 * math.pi * r)
    assert np.array(a.geometry.bounds) * 1e3 == pytest.approx([-0.7, -0.5125, 0.7, 0.5125], abs=1e-9)
