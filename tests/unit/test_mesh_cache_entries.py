"""Mesh cache entries that cannot be trusted are misses, never errors.

An entry cut short, overwritten with garbage, emptied, replaced by a folder,
or a valid entry copied over another key's, is read as a miss: the body is
meshed again and the entry replaced.  Entries record their key; writes are
flushed with fsync before the rename (POSIX.1-2017, fsync and rename: a
rename is atomic, and only fsync puts the data on disk before it).
"""

import os
import shutil

import numpy as np
import pytest

from bemcheck.mesh import bodies, cache, mesh_scene
from tests.unit.test_mesh_scene import H, ball, scene


def _damage(kind, entry, other):
    if kind == "truncated":
        data = entry.read_bytes()
        entry.write_bytes(data[: len(data) // 2])
    elif kind == "garbage":
        entry.write_bytes(b"\x00garbage\xff" * 100)
    elif kind == "empty":
        entry.write_bytes(b"")
    elif kind == "folder":
        entry.unlink()
        entry.mkdir()
    elif kind == "foreign":
        shutil.copyfile(other, entry)
    elif kind == "bit flipped":
        raw = bytearray(entry.read_bytes())
        raw[len(raw) // 3] ^= 0x10
        entry.write_bytes(bytes(raw))


@pytest.mark.filterwarnings("ignore::bemcheck.mesh.checks.MeshNotice")
@pytest.mark.parametrize("kind", ["truncated", "garbage", "empty", "folder", "foreign", "bit flipped"])
def test_damaged_or_foreign_entry_is_a_miss(kind, tmp_path, monkeypatch):
    small, large = ball("a", (0, 0, 0)), ball("a", (0, 0, 0), 0.08)
    first = mesh_scene(scene([small]), H, tmp_path)
    entries = {p.name for p in tmp_path.glob("*.npz")}
    mesh_scene(scene([large]), H, tmp_path)
    (entry,) = [tmp_path / n for n in entries]
    (other,) = [p for p in tmp_path.glob("*.npz") if p.name not in entries]
    _damage(kind, entry, other)
    made = []
    real = bodies._run_script
    monkeypatch.setattr(bodies, "_run_script", lambda *a: made.append(a) or real(*a))
    again = mesh_scene(scene([small]), H, tmp_path)
    if kind != "folder":  # a folder cannot be replaced: a warning, the run goes on
        assert cache.load(tmp_path, entry.stem) is not None  # replaced by a good entry
    assert len(made) == 1
    np.testing.assert_array_equal(again.triangles, first.triangles)
    np.testing.assert_array_equal(again.vertices, first.vertices)


def test_entries_record_their_key_and_are_flushed(tmp_path, monkeypatch):
    synced = []
    real = os.fsync
    monkeypatch.setattr(os, "fsync", lambda fd: synced.append(fd) or real(fd))
    cache.store(tmp_path, "abc", {"x": np.arange(3)})
    assert len(synced) == 1
    assert list(cache.load(tmp_path, "abc")) == ["x"]
    shutil.copyfile(tmp_path / "abc.npz", tmp_path / "abd.npz")
    assert cache.load(tmp_path, "abd") is None
    with np.load(tmp_path / "abc.npz") as z:
        assert str(z["__key__"]) == "abc"
    assert not list(tmp_path.glob("*.tmp"))
