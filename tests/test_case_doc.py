"""docs/case-file.md documents every key the case reader accepts, and its examples load.

The accepted keys are taken from the reader itself (``TOP_KEYS``, ``TABLE_KEYS``,
``INLINE_KEYS`` of :mod:`copperpath.geometry.case`), not copied by hand.
"""
import re
import shutil
from pathlib import Path

import pytest

from copperpath.geometry import case as reader
from copperpath.geometry.errors import InputError

ROOT = Path(__file__).resolve().parents[1]
DOC = (ROOT / "docs" / "case-file.md").read_text(encoding="utf-8")
BLOCKS = re.findall(r"```toml\n(.*?)```", DOC, flags=re.S)


def _sections():
    """Heading -> text of each ``## `` section."""
    parts = re.split(r"^## ", DOC, flags=re.M)
    return {p.split("\n", 1)[0]: p for p in parts[1:]}


def _keys_in(text):
    """Keys named in the first column of the section's tables (``| `a`, `b` | ...``)."""
    found = set()
    for line in text.splitlines():
        if line.startswith("| `"):
            found |= set(re.findall(r"`([a-z_]+)`", line.split("|")[1]))
    return found


def _section_of(table):
    heads = [h for h in _sections() if f"[{table}]" in h or f"[[{table}]]" in h]
    assert heads, f"docs/case-file.md has no section for [{table}] / [[{table}]]"
    return _sections()[heads[0]]


def test_every_top_level_key_is_documented():
    documented = _keys_in(_sections()["Top level"])
    tables = set(reader.ARRAY_TABLES) | set(reader.SINGLE_TABLES)
    missing = [k for k in reader.TOP_KEYS if k not in tables and k not in documented]
    assert not missing, f"top-level keys the reader accepts but the doc's table omits: {missing}"
    for table in tables:
        _section_of(table)


@pytest.mark.parametrize("table", sorted(reader.TABLE_KEYS))
def test_every_table_key_is_documented(table):
    section = _section_of(table)
    documented = _keys_in(section)
    missing = [k for k in reader.TABLE_KEYS[table] if k not in documented]
    assert not missing, f"[{table}] keys the reader accepts but the doc does not list: {missing}"


def test_every_inline_key_and_remove_is_documented():
    for table, keys in reader.INLINE_KEYS.items():
        for k in keys:
            assert f"{k} =" in DOC, f"inline table '{table}' key '{k}' is not shown in the doc"
    assert "remove" in _keys_in(_sections()["Variants: `extends` and `remove`"])


def test_reader_rejects_an_undocumented_key(tmp_path):
    # The doc's claim that the key lists are complete rests on unknown keys being refused.
    base = tmp_path / "base.toml"
    base.write_text(BLOCKS[0] + '\n[solver]\nprecision = 3\n', encoding="utf-8")
    with pytest.raises(InputError, match="unknown key 'precision'"):
        reader.load_case(base)


@pytest.mark.parametrize("k", range(len(BLOCKS)))
def test_examples_load_with_the_reader(tmp_path, k):
    assert len(BLOCKS) >= 10
    (tmp_path / "base.toml").write_text(BLOCKS[0], encoding="utf-8")
    text = BLOCKS[k]
    m = re.match(r"# files: (\S+)", text)
    if m:
        src = ROOT / m.group(1)
        shutil.copytree(src, tmp_path / src.name)
    path = tmp_path / f"example{k}.toml"
    path.write_text(text, encoding="utf-8")
    case = reader.load_case(path)
    assert case.ports, "every example is a complete case with a port"


def test_default_mesh_stated_for_the_base_example(tmp_path):
    # The [mesh] section states the sizes mesh_defaults derives for the base example.
    path = tmp_path / "base.toml"
    path.write_text(BLOCKS[0], encoding="utf-8")
    mesh = reader.load_case(path).mesh
    assert "`min_edge` 0.2 mm, `max_edge` 2 mm" in DOC
    assert mesh.min_edge == pytest.approx(0.2e-3) and mesh.max_edge == pytest.approx(2e-3)
