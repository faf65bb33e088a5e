"""Tests of fabrication-set scanning: layer assignment by X2 FileFunction, zip guards.

FileFunction values follow the Ucamco Gerber Layer Format Specification 2023.08, section
"File attributes" (Copper,L<n>,Top|Inr|Bot; Plated|NonPlated,<from>,<to>,PTH|NPTH|Blind...),
cited from memory. The KiCad-style file names are common practice.
"""
import zipfile

import pytest

from copperpath.geometry.errors import InputError
from copperpath.geometry.formats import fabrication


def copper(n, side, size, x2_as_comment=False):
    """Gerber text of one copper layer: a size x 1 mm rectangle (area = size mm^2)."""
    tf = f"G04 #@! TF.FileFunction,Copper,L{n},{side}*\n" if x2_as_comment else f"%TF.FileFunction,Copper,L{n},{side}*%\n"
    return f"%FSLAX36Y36*%\n%MOMM*%\n{tf}%ADD10R,{size}X1*%\nD10*\nX0Y0D03*\nM02*\n"


def drill(tf):
    return f"M48\n; #@! TF.FileFunction,{tf}\nMETRIC\nT1C0.3\n%\nT1\nX1.0Y1.0\nX2.0Y1.0\nM30\n"


FILES = {
    "board-F_Cu.gbr": copper(1, "Top", 1),
    "board-In1_Cu.gbr": copper(2, "Inr", 2, x2_as_comment=True),
    "board-In2_Cu.gbr": copper(3, "Inr", 3),
    "board-B_Cu.gbr": copper(4, "Bot", 4),
    "board-F_Mask.gbr": "%FSLAX36Y36*%\n%MOMM*%\n%TF.FileFunction,Soldermask,Top*%\nM02*\n",
    "board-PTH.drl": drill("Plated,1,4,PTH"),
    "board-NPTH.drl": drill("NonPlated,1,4,NPTH"),
    "sub/blind.drl": drill("Plated,1,2,Blind"),
    "README.txt": "made by hand\n",
}


def write_folder(root, files):
    for name, text in files.items():
        p = root / name
        p.parent.mkdir(parents=True, exist_ok=True)
        p.write_text(text)
    return root


def write_zip(path, files):
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as zf:
        for name, text in files.items():
            zf.writestr(name, text)
    return path


def check_assignment(fab):
    assert sorted(fab.copper) == [1, 2, 3, 4]
    for n in (1, 2, 3, 4):
        assert fab.copper[n].endswith(list(FILES)[n - 1])
        assert fab.read_copper(n).geometry.area == pytest.approx(n * 1e-6)
    spans = {d.name.rsplit("/", 1)[-1].rsplit("!", 1)[-1]: (d.span, d.plated) for d in fab.drills}
    assert spans == {"board-PTH.drl": ((1, 4), True), "board-NPTH.drl": ((1, 4), False),
                     "blind.drl": ((1, 2), True)}
    text = "\n".join(fab.lines)
    assert "skipped board-F_Mask.gbr" in text and "skipped README.txt" in text
    assert "L2 <- board-In1_Cu.gbr" in text
    drills = {d.span: fab.read_drills(d) for d in fab.drills}
    assert len(drills[(1, 4)].xy) == 2


def test_scan_folder_assigns_by_file_function(tmp_path):
    check_assignment(fabrication.scan(write_folder(tmp_path / "fab", FILES)))


def test_scan_zip_assigns_by_file_function(tmp_path):
    fab = fabrication.scan(write_zip(tmp_path / "fab.zip", FILES))
    check_assignment(fab)
    assert fab.copper[1] == f"{tmp_path / 'fab.zip'}!board-F_Cu.gbr"


def test_attributes_win_over_names(tmp_path):
    # File names say the opposite of the attributes; the attributes decide.
    files = {"x-F_Cu.gbr": copper(2, "Bot", 2), "x-B_Cu.gbr": copper(1, "Top", 1), "x-In1_Cu.gbr":
             "%FSLAX36Y36*%\n%MOMM*%\nM02*\n"}
    fab = fabrication.scan(write_folder(tmp_path, files))
    assert fab.copper[1].endswith("x-B_Cu.gbr") and fab.copper[2].endswith("x-F_Cu.gbr")
    assert any("skipped x-In1_Cu.gbr" in line for line in fab.lines)


def test_name_fallback_without_attributes(tmp_path):
    plain = "%FSLAX36Y36*%\n%MOMM*%\n%ADD10C,1*%\nD10*\nX0Y0D03*\nM02*\n"
    files = {"b-F_Cu.gbr": plain, "b-In1_Cu.gbr": plain, "b-B_Cu.gbr": plain, "b.gto": plain}
    fab = fabrication.scan(write_folder(tmp_path, files))
    assert {n: p.rsplit("/", 1)[-1] for n, p in fab.copper.items()} == {1: "b-F_Cu.gbr", 2: "b-In1_Cu.gbr", 3: "b-B_Cu.gbr"}
    assert any("by file name" in line for line in fab.lines)


def test_two_files_for_one_layer_rejected(tmp_path):
    files = {"a.gbr": copper(1, "Top", 1), "b.gbr": copper(1, "Top", 2)}
    with pytest.raises(InputError, match="two files claim copper layer L1"):
        fabrication.scan(write_folder(tmp_path, files))


def test_missing_layer_reported(tmp_path):
    fab = fabrication.scan(write_folder(tmp_path, {"a.gbr": copper(1, "Top", 1), "c.gbr": copper(3, "Bot", 1)}))
    assert any("no file for copper layer(s) L2" in line for line in fab.lines)


@pytest.mark.parametrize("member", ["../evil.gbr", "fab/../../evil.gbr", "/etc/evil.gbr", "C:/evil.gbr", "..\\evil.gbr"])
def test_zip_member_climbing_out_rejected(tmp_path, member):
    path = write_zip(tmp_path / "bad.zip", {"ok.gbr": copper(1, "Top", 1), member: copper(2, "Bot", 1)})
    with pytest.raises(InputError, match="refusing the archive") as info:
        fabrication.scan(path)
    assert "\n" not in str(info.value)


def test_zip_with_too_many_files_rejected(tmp_path):
    files = {f"f{k}.txt": "" for k in range(fabrication.MAX_FILES + 1)}
    with pytest.raises(InputError, match=f"more than the limit of {fabrication.MAX_FILES}"):
        fabrication.scan(write_zip(tmp_path / "many.zip", files))


def test_zip_too_large_uncompressed_rejected(tmp_path):
    path = write_zip(tmp_path / "bomb.zip", {"big.gbr": "G04 padding*\n" * 100_000})   # 1.3 MB, compresses well
    assert path.stat().st_size < 50_000
    with pytest.raises(InputError, match="bytes uncompressed, more than the limit of 1000000"):
        fabrication.scan(path, max_bytes=1_000_000)


def test_folder_limits_and_bad_sources(tmp_path):
    write_folder(tmp_path / "f", {f"f{k}.txt": "" for k in range(6)})
    with pytest.raises(InputError, match="more than 5 files"):
        fabrication.scan(tmp_path / "f", max_files=5)
    with pytest.raises(InputError, match="not found"):
        fabrication.scan(tmp_path / "nothing")
    (tmp_path / "x.txt").write_text("hi")
    with pytest.raises(InputError, match="folder or a .zip"):
        fabrication.scan(tmp_path / "x.txt")
    (tmp_path / "broken.zip").write_bytes(b"PK\x03\x04" + b"\x00" * 100)
    with pytest.raises(InputError):
        fabrication.scan(tmp_path / "broken.zip")
