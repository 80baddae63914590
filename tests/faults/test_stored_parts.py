"""Stored parts prove what they are before they are used.

A part that is cut short, filled with garbage, emptied, or a valid part of
another task copied over it, is reported in one line (file, frequency, why)
and computed again; the result equals, bit for bit, that of a run that never
met a damaged part.  The check is a SHA-256 checksum of the arrays (FIPS
180-4, Secure Hash Standard) and the task key each part records.

A sweep with no bodies: the BEM path answers the free field (see
tests/verification/test_run_without_bodies.py), so the sweep machinery runs
without the solver's compile time.
"""

import shutil

import numpy as np
import pytest

import bemcheck
from bemcheck.cli import main
from bemcheck.run.store import PARTS, PartStore
from tests.support.cases import FREE_CASE


def _run(tmp_path, name, capsys):
    case = tmp_path / "case.toml"
    case.write_text(FREE_CASE)
    out = tmp_path / name
    code = main(["run", str(case), "--out", str(out), "--model", "both", "--no-report"])
    return code, capsys.readouterr().err, out


def _damage(parts):
    """Truncate, overwrite with garbage, empty, and copy a foreign part over four parts; return their names."""
    files = sorted(parts.glob("*.npz"))
    assert len(files) >= 5
    truncated, garbage, empty, foreign, donor = files[:5]
    data = truncated.read_bytes()
    truncated.write_bytes(data[: len(data) // 2])
    garbage.write_bytes(b"\x00not a part\xff" * 200)
    empty.write_bytes(b"")
    shutil.copyfile(donor, foreign)
    return {"truncated": truncated, "garbage": garbage, "empty": empty, "foreign": foreign}


def test_damaged_and_foreign_parts_are_reported_and_recomputed(tmp_path, capsys):
    code, err, clean = _run(tmp_path, "clean", capsys)
    assert code == 0, err
    code, err, out = _run(tmp_path, "out", capsys)
    assert code == 0, err
    damaged = _damage(out / PARTS)
    code, err, _ = _run(tmp_path, "out", capsys)
    assert code == 0, err
    assert "Traceback" not in err
    warned = [line for line in err.splitlines() if line.startswith("bemcheck: warning: ")]
    assert len(warned) == 4, "\n".join(warned)
    why = {
        "truncated": "not a readable part",
        "garbage": "not a readable part",
        "empty": "an empty file",
        "foreign": "the answer of another task",
    }
    for name, path in damaged.items():
        (line,) = [w for w in warned if str(path) in w]
        assert why[name] in line and " Hz is " in line and "computed again" in line, line
    progress = [line for line in err.splitlines() if line.startswith("[")]
    assert sum("(stored)" not in line for line in progress) == 4  # only the four were solved again
    a, b = bemcheck.load_results(clean), bemcheck.load_results(out)
    for name in a.data_vars:
        np.testing.assert_array_equal(a[name].values, b[name].values, err_msg=name)
    code, err, _ = _run(tmp_path, "out", capsys)  # replaced: all good now
    assert code == 0 and "warning" not in err


def test_a_part_records_its_key_and_checksum(tmp_path):
    store = PartStore(tmp_path)
    store.save("k1", {"a": np.arange(4.0)}, {"n": 4})
    arrays, meta = store.load("k1")
    np.testing.assert_array_equal(arrays["a"], np.arange(4.0))
    assert meta == {"n": 4} and store.has("k1") and store.problem("k1") is None
    shutil.copyfile(store.path("k1"), store.path("k2"))
    assert not store.has("k2") and "another task" in store.problem("k2")
    # one flipped bit inside the stored array's bytes, the zip container left intact
    raw = bytearray(store.path("k1").read_bytes())
    at = raw.find(np.arange(4.0).tobytes())
    raw[at + 9] ^= 0x01
    store.path("k1").write_bytes(bytes(raw))
    assert not store.has("k1")
    with pytest.raises(bemcheck.BemcheckInputError, match="k1.npz: stored part is"):
        store.load("k1")
