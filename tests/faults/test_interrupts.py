"""Interrupted and overlapping runs, and numbers that must never be silently wrong.

Real `bemcheck run` processes are killed while the run folder is watched,
so each signal lands at a known stage; the rerun must give what an
uninterrupted run gives, bit for bit (every task is a pure function of its
inputs and is stored by an atomic rename).

External facts relied on: SIGKILL cannot be caught or ignored, SIGINT
raises KeyboardInterrupt in Python's main thread (POSIX.1-2017 <signal.h>;
Python library reference, "signal"); rename() replaces its target
atomically (POSIX.1-2017, rename()); a shell reports death by signal n as
exit status 128 + n, so 130 for SIGINT (Bash reference manual, "Exit Status").

The BEM case is one 0.2 m box (84 triangles, 156 in the self-check mesh)
at three frequencies in one band: after numba's compile (about a minute
per process here) each solve takes about a second.
"""

import math
import signal
import subprocess
import sys
import time
from importlib.metadata import version
from pathlib import Path

import numpy as np
import pytest

import bemcheck
from bemcheck.case import load_case
from bemcheck.cli import main
from bemcheck.run import tasks as bem_tasks
from bemcheck.run.runner import case_hash
from bemcheck.run.store import LOCK, PARTS, LockOwner
from tests.support.cases import BOX_BODY, CIRCLE_30, case_text

BOX_CASE = case_text(
    "Interrupted box (invented test case)",
    "list = [200.0, 300.0, 400.0]",
    mesh="elements_per_wavelength = 6\nband_octaves = 4",
    bodies=BOX_BODY,
    observers=CIRCLE_30 + 'points = [ { name = "ear", at = [0.0, 1.0, 0.0] } ]\n',
)

# No bodies: the BEM path answers the free field without a solver compile,
# so a sweep of 50 tasks (49 frequencies and a self-check) takes seconds and
# its writes are what there is to interrupt.
FREE_CASE = case_text(
    "Interrupted free sweep (invented test case, no bodies)",
    "start = 100.0\nstop = 1600.0\nper_octave = 12",
    mesh="band_octaves = 8",
)

RESUME_HINT = "run the same command again to resume"
WAIT = 600.0  # seconds; a generous bound on any one run on a loaded machine


def _run_argv(case, out, cache):
    return [
        sys.executable,
        "-m",
        "bemcheck",
        "run",
        str(case),
        "--out",
        str(out),
        "--mesh-cache",
        str(cache),
        "--no-report",
    ]


def _start(case, out, cache):
    return subprocess.Popen(_run_argv(case, out, cache), stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)


def _finish(proc, timeout=WAIT):
    out, err = proc.communicate(timeout=timeout)
    return proc.returncode, out, err


def _wait_for(condition, proc, timeout=WAIT, poll=0.002):
    """Poll ``condition()`` until true (True) or the process ended first (False)."""
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        if condition():
            return True
        if proc.poll() is not None:
            return condition()
        time.sleep(poll)
    raise AssertionError("timed out waiting for the run to reach the stage")


def _npz(folder):
    parts = Path(folder) / PARTS
    return sorted(parts.glob("*.npz")) if parts.is_dir() else []


def _temporaries(folder):
    folder = Path(folder)
    return list(folder.glob(".*.part")) + list((folder / PARTS).glob(".*.part"))


def _holds_lock(folder, proc):
    try:
        owner = LockOwner.parse((Path(folder) / LOCK).read_text())
    except OSError:
        return False
    return owner is not None and owner.pid == proc.pid


def _assert_same_results(a_folder, b_folder):
    a, b = bemcheck.load_results(a_folder), bemcheck.load_results(b_folder)
    assert set(a.data_vars) == set(b.data_vars)
    for name in a.data_vars:
        np.testing.assert_array_equal(a[name].values, b[name].values, err_msg=name)


class Background:
    """An uninterrupted run started at once and awaited only when its results are needed."""

    def __init__(self, case, out, cache):
        self.case, self.out = case, out
        self.proc = _start(case, out, cache)
        self._done = None

    def result(self):
        if self._done is None:
            self._done = _finish(self.proc)
        code, _, err = self._done
        assert code == 0, err
        return self.out


@pytest.fixture(scope="module")
def box(tmp_path_factory):
    """The box case and its uninterrupted reference run, running beside the tests that need it."""
    root = tmp_path_factory.mktemp("box")
    case = root / "box.toml"
    case.write_text(BOX_CASE)
    reference = Background(case, root / "reference", root / "reference-cache")
    yield case, reference
    if reference.proc.poll() is None:
        reference.proc.kill()
        reference.proc.wait()


def test_a_second_run_into_the_same_folder_is_refused(box, tmp_path):
    """While the reference run holds its folder, a second run into it stops at
    once with exit 2 and a message, and writes nothing."""
    case, reference = box
    assert _wait_for(lambda: _holds_lock(reference.out, reference.proc), reference.proc)

    def names():
        return {p.name for p in reference.out.iterdir() if not p.name.endswith(".part")}

    before = names()
    code, _, err = _finish(_start(case, reference.out, tmp_path / "cache"), timeout=120)
    assert code == 2, err
    assert "another bemcheck run is writing into this folder" in err and str(reference.out) in err
    assert "Traceback" not in err
    assert reference.proc.poll() is None, "the first run ended before the second was refused"
    assert _holds_lock(reference.out, reference.proc)
    assert names() <= before | {PARTS, "results.nc", "summary.json"}  # the first run's own
    assert not (tmp_path / "cache").exists()  # it never reached meshing


def test_killed_while_meshing_and_solving_then_resumed_to_the_same_numbers(box, tmp_path):
    """One run folder, three interruptions in turn, then a plain rerun:

    1. SIGKILL as soon as the sweep has started, before the box's mesh is
       stored (retried until it lands there; gmsh takes a fraction of a second);
    2. SIGINT 1 s after the mesh is stored, during the first solve (numba's
       compile): exit 130, the resume hint, no lock left;
    3. SIGKILL when the first task's answer appears, during the second solve;
    4. a rerun: results equal the uninterrupted run's in every variable.
    """
    case, reference = box
    out, cache = tmp_path / "cut", tmp_path / "cache"
    meshed = lambda: any(cache.glob("*.npz"))  # noqa: E731 - a condition to poll

    for _ in range(3):
        proc = _start(case, out, cache)
        assert _wait_for(lambda: (out / PARTS).is_dir(), proc)
        proc.kill()
        assert _finish(proc)[0] == -signal.SIGKILL
        if not meshed():
            break
    assert not meshed(), "three kills in a row landed after the mesh was stored"
    assert not _npz(out)

    proc = _start(case, out, cache)
    assert _wait_for(meshed, proc)
    time.sleep(1.0)
    assert proc.poll() is None and not _npz(out), "the first solve ended within 1 s"
    sent = time.monotonic()
    proc.send_signal(signal.SIGINT)
    code, _, err = _finish(proc)
    latency = time.monotonic() - sent
    assert code == 130, err
    assert RESUME_HINT in err and "Traceback" not in err
    assert not (out / LOCK).exists() and not _temporaries(out)
    assert meshed() and not _npz(out)
    print(f"SIGINT during the first solve: stopped {latency:.2f} s after the signal")

    proc = _start(case, out, cache)
    assert _wait_for(lambda: bool(_npz(out)), proc)
    proc.kill()
    assert _finish(proc)[0] == -signal.SIGKILL
    stored = len(_npz(out))
    assert 1 <= stored < 4 and not (out / "results.nc").exists()

    code, _, err = _finish(_start(case, out, cache))
    assert code == 0, err
    assert err.count("(stored)") == stored  # resumed, not recomputed
    assert not (out / LOCK).exists() and not _temporaries(out)
    _assert_same_results(reference.result(), out)


def test_killed_during_writes_then_resumed(tmp_path):
    """SIGKILL the moment a temporary ``.part`` file is seen, run after run, until
    three kills have landed inside a write; the rerun removes the temporaries,
    keeps every stored task and gives the uninterrupted run's numbers."""
    case = tmp_path / "free.toml"
    case.write_text(FREE_CASE)
    out, cache = tmp_path / "cut", tmp_path / "cache"
    code, _, err = _finish(_start(case, tmp_path / "whole", cache))
    assert code == 0, err
    landed, attempts, where = 0, 0, []
    while landed < 3 and attempts < 12:
        attempts += 1
        old = set(_temporaries(out))  # the rerun removes these when it takes the lock
        proc = _start(case, out, cache)
        if not _wait_for(lambda old=old: bool(set(_temporaries(out)) - old), proc, poll=0.0002):
            assert _finish(proc)[0] == 0  # the run ended between two polls
            continue
        proc.kill()
        assert _finish(proc)[0] == -signal.SIGKILL
        cut = set(_temporaries(out)) - old  # its temporary outlived it: killed mid-write
        landed += bool(cut)
        where += ["results" if p.name.startswith(".results") else "a task" for p in cut]
    print(f"kills inside a write: {landed} of {attempts} ({', '.join(where)})")
    assert landed >= 1
    code, _, err = _finish(_start(case, out, cache))
    assert code == 0, err
    assert not _temporaries(out) and not (out / LOCK).exists()
    _assert_same_results(tmp_path / "whole", out)


def test_sigint_stops_cleanly_and_the_rerun_completes(tmp_path):
    """Ctrl-C in the middle of a sweep: exit 130, the resume hint, no lock, no
    temporary, no results; the same command then completes."""
    case = tmp_path / "free.toml"
    case.write_text(FREE_CASE)
    out, cache = tmp_path / "out", tmp_path / "cache"
    proc = _start(case, out, cache)
    assert _wait_for(lambda: len(_npz(out)) >= 3, proc)
    proc.send_signal(signal.SIGINT)
    code, _, err = _finish(proc)
    assert code == 130, err
    assert RESUME_HINT in err and "Traceback" not in err
    assert not (out / LOCK).exists() and not _temporaries(out) and not (out / "results.nc").exists()
    stored = len(_npz(out))
    code, _, err = _finish(_start(case, out, cache))
    assert code == 0, err
    assert err.count("(stored)") == stored


def test_results_record_versions_device_and_case_hash(box):
    """A real BEM run's results.nc names the software that made it (each version as
    importlib.metadata reports it), the device, and the case's fingerprint."""
    case, reference = box
    attrs = bemcheck.load_results(reference.result()).attrs
    for attr, dist in (
        ("bemcheck_version", "bemcheck"),
        ("bempp_cl_version", "bempp-cl"),
        ("gmsh_version", "gmsh"),
        ("numpy_version", "numpy"),
        ("scipy_version", "scipy"),
    ):
        assert attrs[attr] == version(dist), attr
    assert attrs["device"] == "numba"
    assert attrs["case_hash"] == case_hash(load_case(case))
    assert attrs["case_text"] == BOX_CASE


def test_a_nan_answer_is_never_stored_nor_written(tmp_path, monkeypatch, capsys):
    """A solve that returns NaN (a solver fault): exit 1 with the log's path, the
    task is not stored (a rerun solves it again), no results.nc."""
    case = tmp_path / "free.toml"
    case.write_text(FREE_CASE)
    out = tmp_path / "out"
    real = bem_tasks.bem_task

    def broken(case, task, **kwargs):
        arrays, meta = real(case, task, **kwargs)
        if task.frequency > 1000.0:
            arrays = {**arrays, "far_field": arrays["far_field"] * np.nan}
        return arrays, meta

    monkeypatch.setattr(bem_tasks, "bem_task", broken)
    assert main(["run", str(case), "--out", str(out), "--model", "both", "--no-report", "--quiet"]) == 1
    err = capsys.readouterr().err
    assert "internal failure" in err and "Traceback" not in err
    log = Path(err.split("the traceback is in ")[1].split()[0])
    assert "holds NaN or inf; nothing was stored" in log.read_text()
    log.unlink()
    kept = _npz(out)
    assert 0 < len(kept) < 50 and not (out / "results.nc").exists() and not _temporaries(out)
    for path in kept:
        with np.load(path) as z:
            assert all(
                np.isfinite(z[k]).all() for k in z.files if not k.startswith("__")
            )  # __meta__, __key__, __checksum__: text


def test_nearly_coincident_controls_are_warned_and_regularised(tmp_path, capsys):
    """Two control monopoles 2 µm apart act as one: the optimum is warned about,
    regularised, finite, and equals the one-control optimum
    W_min / W_p = 1 - sinc²(kd) (Nelson, Curtis, Elliott & Bullmore 1987,
    J. Sound Vib. 116(3) 397-414, for a primary and one control d apart;
    the equation number, 3.7, from memory)."""
    text = FREE_CASE.replace(
        "at = [-0.3, 0.0, 0.0]",
        'at = [-0.3, 0.0, 0.0]\n[[source]]\nname = "c2"\nrole = "control"\nat = [-0.3, 2e-6, 0.0]',
    )
    text = text.replace("start = 100.0\nstop = 1600.0\nper_octave = 12", "list = [100.0, 200.0]")
    case = tmp_path / "twins.toml"
    case.write_text(text)
    out = tmp_path / "out"
    assert main(["run", str(case), "--out", str(out), "--model", "both", "--no-report", "--quiet"]) == 0
    err = capsys.readouterr().err
    assert "bemcheck: warning:" in err and "nearly degenerate" in err and "regularised" in err
    ds = bemcheck.load_results(out)
    for name, var in ds.data_vars.items():
        if np.issubdtype(var.dtype, np.number):
            assert np.isfinite(var.values).all(), name
    k = 2 * math.pi * ds["frequency"].values / 343.0
    kd = k * 0.6
    expected = -10 * np.log10(1 - (np.sin(kd) / kd) ** 2)
    np.testing.assert_allclose(ds["attenuation_free_db"].values, expected, rtol=1e-6)
    np.testing.assert_allclose(ds["attenuation_bem_db"].values, expected, rtol=1e-6)
