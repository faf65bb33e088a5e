"""Reader limits (copperpath.geometry.limits) on inputs that are not plain files or that expand: special
files in fabrication folders, zip members that decompress beyond their declared size, and a
command-line run of such inputs (exit status 2, one line).

The limits are our own choices (DEVELOPERS.md, "Reader limits"); the file formats follow the
Ucamco Gerber Layer Format Specification 2023.08 and the Excellon conventions of IPC-NC-349,
both cited from memory.
"""
from __future__ import annotations

import io
import os
import struct
import threading
import zipfile
import zlib

import pytest

from copperpath.geometry.case import load_case
from copperpath.geometry.errors import InputError
from copperpath.geometry.formats import excellon, fabrication, gerber
from copperpath.geometry.limits import MAX_GERBER_OBJECTS, read_regular
from copperpath.solver.cli import main
from tests.bad_cases import GOOD, write_case

COPPER_L1 = "%TF.FileFunction,Copper,L1,Top*%\n%FSLAX46Y46*%\n%MOMM*%\n%ADD10R,10X1*%\nD10*\nX5000000Y500000D03*\nM02*\n"
FAB_CASE = GOOD + '\n[fabrication]\nsource = "fab"\n'


def _special_folder(root):
    """A fabrication folder with one copper file and every kind of entry that is not a file."""
    fab = root / "fab"
    fab.mkdir()
    (fab / "top.gbr").write_text(COPPER_L1)
    os.mkfifo(fab / "pipe.gbr")
    os.symlink(fab / "nowhere.gbr", fab / "dangling.gbr")
    os.symlink(fab / "loop_b.gbr", fab / "loop_a.gbr")
    os.symlink(fab / "loop_a.gbr", fab / "loop_b.gbr")
    os.symlink("/dev/zero", fab / "zero.gbr")
    (fab / "notes.txt").write_text("made by hand\n")
    os.symlink(fab / "notes.txt", fab / "alias.txt")           # a link to a regular file is read
    os.symlink(root, fab / "up")                                # a linked folder is not followed
    return fab


def _in_thread(fn, timeout=30):
    """Run ``fn`` and fail (instead of hanging the suite) if it takes longer than ``timeout``."""
    box = {}

    def run():
        try:
            box["value"] = fn()
        except BaseException as exc:          # noqa: BLE001 -- handed to the test
            box["error"] = exc
    t = threading.Thread(target=run, daemon=True)
    t.start()
    t.join(timeout)
    assert not t.is_alive(), f"still running after {timeout} s (a hang)"
    if "error" in box:
        raise box["error"]
    return box["value"]


def test_fabrication_folder_skips_every_entry_that_is_not_a_regular_file(tmp_path):
    fab = _in_thread(lambda: fabrication.scan(_special_folder(tmp_path)))
    lines = "\n".join(fab.lines)
    assert "skipped pipe.gbr: a FIFO, not a regular file" in lines
    assert "skipped dangling.gbr: a symbolic link that dangles or loops" in lines
    assert "skipped loop_a.gbr: a symbolic link that dangles or loops" in lines
    assert "skipped zero.gbr: a symbolic link to a character device, not a regular file" in lines
    assert "skipped up: a symbolic link to a folder (not followed)" in lines
    assert "skipped alias.txt: neither Gerber nor Excellon" in lines
    assert fab.copper == {1: str(tmp_path / "fab" / "top.gbr")}


def test_case_with_special_files_in_its_fabrication_folder_loads(tmp_path):
    _special_folder(tmp_path)
    case = _in_thread(lambda: load_case(write_case(tmp_path, FAB_CASE)))
    assert any("a FIFO" in n for n in case.notes)


@pytest.mark.parametrize("make, words", [
    (lambda p: os.mkfifo(p), "not a regular file (a FIFO)"),
    (lambda p: os.symlink("/dev/zero", p), "not a regular file (a character device)"),
    (lambda p: p.mkdir(), "not a regular file (a folder)"),
    (lambda p: os.symlink(p, p), "cannot read the file"),
])
def test_artwork_that_is_not_a_regular_file_is_refused_without_hanging(tmp_path, make, words):
    make(tmp_path / "top.gbr")
    text = GOOD.replace("thickness = 0.035", 'thickness = 0.035\nartwork = "top.gbr"', 1)
    path = write_case(tmp_path, text)
    if not (tmp_path / "top.gbr").exists() and not os.path.islink(tmp_path / "top.gbr"):
        pytest.skip("could not create the special file")
    with pytest.raises(InputError) as info:
        _in_thread(lambda: load_case(path))
    assert "top.gbr" in str(info.value) and (words in str(info.value) or "does not exist" in str(info.value))


def test_case_file_that_is_a_fifo_exits_2(tmp_path, capsys):
    os.mkfifo(tmp_path / "case.toml")
    status = _in_thread(lambda: main(["inspect", str(tmp_path / "case.toml")]))
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2 and len(err) == 1 and "not a regular file (a FIFO)" in err[0]


def test_read_regular_stops_at_the_limit(tmp_path):
    (tmp_path / "f").write_bytes(b"x" * 1001)
    assert read_regular(tmp_path / "f", max_bytes=1001) == b"x" * 1001
    with pytest.raises(InputError, match="1001 bytes, more than the limit of 1000"):
        read_regular(tmp_path / "f", max_bytes=1000)


def _lying_zip(path, name, data, declared):
    """A zip whose member declares ``declared`` uncompressed bytes but inflates to ``len(data)``.

    The local header and the central directory both carry the false size (and a CRC that
    matches nothing); the deflate stream is the true one (PKWARE APPNOTE 6.3, sections 4.3.7
    and 4.3.12, from memory).
    """
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as zf:
        zf.writestr(name, data)
    raw = bytearray(path.read_bytes())
    size = struct.pack("<I", declared)
    local = raw.find(b"PK\x03\x04")
    raw[local + 22:local + 26] = size
    central = raw.find(b"PK\x01\x02")
    raw[central + 24:central + 28] = size
    path.write_bytes(bytes(raw))
    return path


def test_zip_member_that_decompresses_beyond_its_declared_size_stops_at_the_limit(tmp_path):
    data = b"G04 padding*\n" * 200_000                       # 2.6 MB, deflates to a few kB
    path = _lying_zip(tmp_path / "bomb.zip", "top.gbr", data, declared=1000)
    with pytest.raises(InputError) as info:
        fabrication.scan(path, max_bytes=100_000)
    msg = str(info.value)
    assert "bomb.zip" in msg and "\n" not in msg
    assert "decompresses to more than it declares" in msg or "cannot read the archive" in msg


def test_zip_total_within_the_limit_is_read_and_beyond_it_refused(tmp_path):
    path = tmp_path / "fab.zip"
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as zf:
        zf.writestr("top.gbr", COPPER_L1)
        zf.writestr("pad.txt", "x" * 50_000)
    assert fabrication.scan(path, max_bytes=60_000).copper == {1: f"{path}!top.gbr"}
    with pytest.raises(InputError, match="more than the limit of 40000"):
        fabrication.scan(path, max_bytes=40_000)


def test_zip_symlink_member_is_skipped(tmp_path):
    path = tmp_path / "fab.zip"
    with zipfile.ZipFile(path, "w") as zf:
        zf.writestr("top.gbr", COPPER_L1)
        link = zipfile.ZipInfo("link.gbr")
        link.create_system = 3
        link.external_attr = (0o120777 << 16)
        zf.writestr(link, "/dev/zero")
    fab = fabrication.scan(path)
    assert any("skipped link.gbr: not a regular file" in line for line in fab.lines)
    assert fab.copper == {1: f"{path}!top.gbr"}


def test_zlib_bomb_never_reads_past_the_limit(tmp_path):
    """A member that is honest about a size above the limit is refused before inflating."""
    path = tmp_path / "big.zip"
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as zf:
        zf.writestr("a.gbr", b"\0" * 3_000_000)
    assert len(zlib.compress(b"\0" * 3_000_000)) < 10_000
    with pytest.raises(InputError, match="3000000 bytes uncompressed, more than the limit of 1000000"):
        fabrication.scan(path, max_bytes=1_000_000)


def test_gerber_object_limit_counts_flashes_and_copies():
    head = "%FSLAX46Y46*%\n%MOMM*%\n%ADD10C,0.01*%\nD10*\n"
    n_inside = MAX_GERBER_OBJECTS // 100_000 + 1                     # copies x objects just above
    text = head + "%SRX1000Y100I0.02J0.02*%\n" + "X0Y0D03*\n" * n_inside + "%SR*%\nM02*\n"
    with pytest.raises(InputError, match=f"more than {MAX_GERBER_OBJECTS} graphics objects"):
        gerber.read(io.StringIO(text), name="t.gbr")


def test_gerber_step_and_repeat_beyond_the_extent_is_refused():
    text = "%FSLAX46Y46*%\n%MOMM*%\n%ADD10C,0.1*%\nD10*\n%SRX2Y1I3000J0*%\nX0Y0D03*\n%SR*%\nM02*\n"
    with pytest.raises(InputError, match="beyond the board extent"):
        gerber.read(io.StringIO(text), name="t.gbr")


@pytest.mark.parametrize("fmt", ["3:400", "12:3", "0:0"])
def test_excellon_digit_formats_outside_0_to_9_are_refused(fmt):
    text = f"M48\n;FILE_FORMAT={fmt}\nMETRIC,TZ\nT1C0.3\n%\nT1\nX1000Y500\nM30\n"
    with pytest.raises(InputError, match="digit format"):
        excellon.read(io.StringIO(text), name="t.drl")


def test_excellon_trailing_zero_format_reads_the_true_positions():
    """TZ with 4:4 digits: X10000 is 1.0000 mm from the right (not 0, not 10000 mm)."""
    d = excellon.read(io.StringIO("M48\n;FILE_FORMAT=4:4\nMETRIC,TZ\nT1C0.3\n%\nT1\nX10000Y25000\nM30\n"))
    assert d.xy.tolist() == [[pytest.approx(1e-3), pytest.approx(2.5e-3)]]


def test_cli_refuses_an_expanding_drill_file_with_one_line(tmp_path, capsys):
    text = GOOD + '\n[[layer]]\nname = "L2"\nz = -1.0\nthickness = 0.035\n\n[[drill]]\nfile = "v.drl"\n'
    drl = "M48\nMETRIC\nT1C0.3\n%\nT1\nX1.0Y0.5\n" + "R100000X0.0Y0.0\n" * 3 + "M30\n"
    path = write_case(tmp_path, text, {"v.drl": drl})
    status = main(["inspect", str(path)])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2 and len(err) == 1 and "more than 200000 drill hits" in err[0]


def test_gerber_vertex_limit_counts_the_copies_of_large_apertures():
    """3 flashes of a 100 mm disk (about 500 chords at 1 um) copied 100,000 times: 1.5e8 vertices."""
    text = ("%FSLAX46Y46*%\n%MOMM*%\n%ADD10C,100*%\nD10*\n%SRX1000Y100I0.001J0.001*%\n"
            "X0Y0D03*\nX1000Y0D03*\nX2000Y0D03*\n%SR*%\nM02*\n")
    with pytest.raises(InputError, match="more than 100000000 polygon vertices"):
        gerber.read(io.StringIO(text), name="t.gbr")


def test_drill_file_with_more_holes_than_the_via_limit(tmp_path, monkeypatch):
    from copperpath.geometry.formats import board
    monkeypatch.setattr(board, "MAX_VIAS", 2)
    text = GOOD + '\n[[layer]]\nname = "L2"\nz = -1.0\nthickness = 0.035\n\n[[drill]]\nfile = "v.drl"\n'
    path = write_case(tmp_path, text, {"v.drl": "M48\nMETRIC\nT1C0.3\n%\nT1\nX1.0Y0.5\nX2.0Y0.5\nX3.0Y0.5\nM30\n"})
    with pytest.raises(InputError, match="v.drl: 3 plated holes and slots, more than the limit of 2 vias"):
        load_case(path)


def test_case_file_above_the_size_limit(tmp_path):
    path = tmp_path / "case.toml"
    path.write_bytes(GOOD.encode() + b"#" * (4 * 2**20))
    with pytest.raises(InputError, match="more than the limit of 4194304"):
        load_case(path)


def test_a_via_outside_any_copper_is_reported(tmp_path):
    text = GOOD + '\n[[layer]]\nname = "L2"\nz = -1.0\nthickness = 0.035\n\n[[via]]\nname = "v"\nat = [50, 50]\ndrill = 0.3\n'
    case = load_case(write_case(tmp_path, text))
    assert [w for w in case.warnings if "via 'v' at (50, 50) mm touches no copper" in w]


def test_window_along_a_copper_edge_keeps_only_the_polygons(tmp_path):
    """Found by fuzzing: the window's edge on a copper edge left a line beside the polygons,
    and the next overlay (adding a via pad) raised GEOS "mixed-dimension"."""
    text = ('[[layer]]\nname = "L1"\nz = 0.0\nthickness = 0.035\n\n[[layer]]\nname = "L2"\nz = -1.0\n'
            'thickness = 0.035\n\n[[copper]]\nlayer = "L1"\nrect = [0, 0, 4.5, 1.5]\n\n[[copper]]\nlayer = "L1"\n'
            'rect = [5, 0, 9, 1.5]\n\n[window]\nrect = [4.5, -1, 10, 2]\n\n[[via]]\nat = [6, 0.75]\ndrill = 0.3\n')
    case = load_case(write_case(tmp_path, text))
    assert case.layout.copper["L1"].geom_type == "MultiPolygon"
    assert case.layout.vias[0].connects == ("L1",)
