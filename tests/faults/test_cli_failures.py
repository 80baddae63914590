"""The command line when things go wrong around it: no place for the failure log, two
writers into one folder.

External facts relied on: a process whose file-size limit (RLIMIT_FSIZE) is
reached gets EFBIG from write() when SIGXFSZ is ignored (POSIX.1-2017,
setrlimit() and write()); a path through a regular file fails with ENOTDIR
for every user, root included (POSIX.1-2017, open()); Python's tempfile
creates files in ``tempfile.tempdir`` when it is set (Python library
reference, "tempfile").
"""

import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import pytest

import bemcheck.cli.examples
from bemcheck.cli import main
from bemcheck.run.store import LOCK, LockOwner, RunLock
from tests.support.cases import BOX_BODY, case_text

BOX_CASE = case_text(
    "Box meshed in three bands (invented test case)",
    "list = [500.0, 1000.0, 2000.0]",
    mesh="elements_per_wavelength = 10\nband_octaves = 1",
    bodies=BOX_BODY,
)

# A command that fails inside bemcheck (not bad input): exit 1 and a log.
_BROKEN = "the case hash went missing (a bug planted by the test)"


def _break_examples(monkeypatch):
    def broken(args, out):
        raise RuntimeError(_BROKEN)

    monkeypatch.setattr(bemcheck.cli.examples, "execute", broken)


def test_internal_failure_keeps_the_traceback_in_a_log(tmp_path, monkeypatch, capsys):
    _break_examples(monkeypatch)
    monkeypatch.setattr(tempfile, "tempdir", str(tmp_path))
    assert main(["examples"]) == 1
    err = capsys.readouterr().err
    log = Path(err.split("the traceback is in ")[1].split()[0])
    assert log.parent == tmp_path and "Traceback" not in err
    text = log.read_text()
    assert text.startswith("Traceback") and _BROKEN in text


def test_unwritable_temporary_folder_prints_the_last_line_instead(tmp_path, monkeypatch, capsys):
    """TMPDIR names a folder that cannot exist (its parent is a file): still exit 1,
    the error's last line, a word that the log could not be written, no traceback."""
    blocker = tmp_path / "file"
    blocker.write_text("not a folder")
    monkeypatch.setenv("TMPDIR", str(blocker / "tmp"))
    monkeypatch.setattr(tempfile, "tempdir", str(blocker / "tmp"))
    _break_examples(monkeypatch)
    assert main(["examples"]) == 1
    err = capsys.readouterr().err
    assert f"internal failure: RuntimeError: {_BROKEN}" in err
    assert "the traceback could not be written to a log" in err and str(blocker / "tmp") in err
    assert "Traceback" not in err


def test_full_temporary_folder_leaves_no_cut_short_log(tmp_path):
    """The log's write runs into the file-size limit (as on a full disk): exit 1, the
    last line printed, and no half-written log left in TMPDIR."""
    logs = tmp_path / "tmp"
    logs.mkdir()
    script = (
        "import resource, signal, sys, bemcheck.cli.app as cli\n"
        "signal.signal(signal.SIGXFSZ, signal.SIG_IGN)\n"
        "def broken(args, out):\n"
        f"    raise RuntimeError({_BROKEN!r} + ' ' + 'x' * 4000)\n"
        "cli.examples.execute = broken\n"
        "resource.setrlimit(resource.RLIMIT_FSIZE, (512, 512))\n"
        "sys.exit(cli.main(['examples']))\n"
    )
    proc = subprocess.run(
        [sys.executable, "-c", script],
        capture_output=True,
        text=True,
        timeout=300,
        env={**os.environ, "TMPDIR": str(logs)},
    )
    assert proc.returncode == 1, proc.stderr
    assert f"internal failure: RuntimeError: {_BROKEN}" in proc.stderr
    assert "the traceback could not be written to a log" in proc.stderr and "Traceback" not in proc.stderr
    assert list(logs.iterdir()) == []


def _case(tmp_path):
    case = tmp_path / "box.toml"
    case.write_text(BOX_CASE)
    return case


def test_mesh_into_a_folder_another_command_holds_is_refused(tmp_path, capsys):
    case, out = _case(tmp_path), tmp_path / "out"
    out.mkdir()
    with RunLock(out):
        assert main(["mesh", str(case), "--out", str(out), "--mesh-cache", str(tmp_path / "cache")]) == 2
    err = capsys.readouterr().err
    assert "another bemcheck run is writing into this folder" in err and "bemcheck run, process" in err
    assert sorted(p.name for p in out.iterdir()) == []
    assert not (tmp_path / "cache").exists()  # refused before meshing
    assert main(["mesh", str(case), "--out", str(out), "--mesh-cache", str(tmp_path / "cache")]) == 0
    assert len(list(out.glob("*.msh"))) == 3 and not (out / LOCK).exists()


def test_two_concurrent_mesh_commands_one_is_refused(tmp_path, capsys):
    """A real `bemcheck mesh` process holds its folder while it meshes; a second one
    into the same folder is refused with exit 2 and leaves the first's files whole."""
    case, out = _case(tmp_path), tmp_path / "out"
    argv = ["mesh", str(case), "--out", str(out), "--mesh-cache", str(tmp_path / "cache")]
    for _ in range(5):
        first = subprocess.Popen(
            [sys.executable, "-m", "bemcheck", *argv], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True
        )
        seen = False
        end = time.monotonic() + 300
        while first.poll() is None and time.monotonic() < end:
            try:
                owner = LockOwner.parse((out / LOCK).read_text())
            except OSError:
                owner = None
            if owner is not None and owner.pid == first.pid:
                seen = True
                break
            time.sleep(0.001)
        if seen:
            code = main(argv)
            still_held = first.poll() is None
            _, err_first = first.communicate(timeout=300)
            if not still_held:
                continue  # the first ended while the second looked: not a concurrent pair
            break
        first.communicate(timeout=300)
    else:
        pytest.fail("the first mesh command never held its lock while a second looked")
    assert code == 2
    err = capsys.readouterr().err
    assert "another bemcheck run is writing into this folder" in err
    assert f"bemcheck mesh, process {first.pid}" in err and "Traceback" not in err
    assert first.returncode == 0, err_first
    assert len(list(out.glob("*.msh"))) == 3 and not (out / LOCK).exists() and not list(out.glob(".*.part"))
