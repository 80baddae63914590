"""The run folder's lock: who holds it, and when a lock left behind may be taken over.

External facts relied on: field 22 of /proc/<pid>/stat is the process's
start time in clock ticks after boot (Linux man-pages, proc(5)); psutil
computes a process's creation time from the same field and the boot time
(psutil documentation, Process.create_time), so it is an independent
reading of what the lock records; kill(pid, 0) tests for a process without
signalling it (POSIX.1-2017, kill()).
"""

import json
import os
import socket
import subprocess
import sys
import time

import pytest

from bemcheck import example_path as bemcheck_example
from bemcheck.cli import main
from bemcheck.errors import BemcheckInputError
from bemcheck.run import store
from bemcheck.run.store import LOCK, LockOwner, RunLock, process_start

needs_proc = pytest.mark.skipif(not os.path.exists(f"/proc/{os.getpid()}/stat"), reason="no /proc on this system")


def _lock_text(folder):
    return json.loads((folder / LOCK).read_text())


def _write_owner(folder, **fields):
    owner = {
        "pid": os.getppid(),
        "host": socket.gethostname(),
        "started": process_start(os.getppid()),
        "boot": store.boot_id(),
        "command": "run",
        "since": time.time(),
    }
    owner.update(fields)
    (folder / LOCK).write_text(json.dumps(owner))


@needs_proc
def test_the_lock_names_this_process_as_psutil_sees_it(tmp_path):
    psutil = pytest.importorskip("psutil")
    with RunLock(tmp_path, command="mesh"):
        held = _lock_text(tmp_path)
    assert held["pid"] == os.getpid() and held["host"] == socket.gethostname() and held["command"] == "mesh"
    ticks = os.sysconf("SC_CLK_TCK")
    created = psutil.boot_time() + int(held["started"]) / ticks
    # psutil rounds the boot time to whole seconds on Linux: allow one second and one tick
    assert abs(created - psutil.Process().create_time()) <= 1.0 + 1.0 / ticks
    assert not (tmp_path / LOCK).exists()


@needs_proc
def test_a_reused_process_id_is_not_taken_for_the_holder(tmp_path):
    """The lock names a live process (pytest's parent, not a bemcheck run) but with
    another start time: the holder is gone and its id reused, so the lock is taken over."""
    parent = os.getppid()
    assert process_start(parent) is not None
    _write_owner(tmp_path, started=str(int(process_start(parent)) + 1))
    with RunLock(tmp_path):
        assert _lock_text(tmp_path)["pid"] == os.getpid()
    assert not (tmp_path / LOCK).exists()


@needs_proc
def test_a_live_holder_with_its_own_start_time_is_respected(tmp_path, capsys):
    """Same live process, its true start time: the folder is busy; `bemcheck run` refuses
    with exit 2, names the holder and writes nothing."""
    _write_owner(tmp_path)
    before = (tmp_path / LOCK).read_text()
    case = _free_case(tmp_path)
    assert main(["run", str(case), "--out", str(tmp_path), "--model", "free", "--no-report"]) == 2
    err = capsys.readouterr().err
    assert "another bemcheck run is writing into this folder" in err
    assert f"process {os.getppid()} on {socket.gethostname()}" in err and "Traceback" not in err
    assert (tmp_path / LOCK).read_text() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted([LOCK, case.name])


@needs_proc
def test_a_killed_holder_not_yet_reaped_is_gone(tmp_path):
    """A run killed while its parent has not yet waited for it stays a zombie: kill(pid, 0)
    still succeeds and its start time is unchanged, yet it writes nothing more."""
    child = subprocess.Popen([sys.executable, "-c", "pass"])
    try:
        end = time.monotonic() + 60
        while store._stat_fields(child.pid)[0] != "Z":
            assert time.monotonic() < end, "the child never ended"
            time.sleep(0.01)
        os.kill(child.pid, 0)  # still answers
        _write_owner(tmp_path, pid=child.pid, started=process_start(child.pid))
        with RunLock(tmp_path):
            assert _lock_text(tmp_path)["pid"] == os.getpid()
    finally:
        child.wait()


def test_a_lock_from_another_host_is_respected(tmp_path):
    """Processes of another machine cannot be seen from here: never take its lock,
    even when the process id is free here."""
    _write_owner(tmp_path, pid=999999999, host="elsewhere.invalid", started="1", boot="x")
    with pytest.raises(BemcheckInputError, match="process 999999999 on elsewhere.invalid"):
        with RunLock(tmp_path):
            pass
    assert (tmp_path / LOCK).exists()


@needs_proc
def test_a_lock_from_before_a_restart_is_stale(tmp_path):
    if store.boot_id() is None:
        pytest.skip("no boot id on this system")
    _write_owner(tmp_path, boot="00000000-0000-0000-0000-000000000000")
    with RunLock(tmp_path):
        assert _lock_text(tmp_path)["pid"] == os.getpid()


def test_without_proc_the_process_id_decides(tmp_path, monkeypatch):
    """Where /proc is missing, a live process id is taken for the holder (it cannot be
    ruled out) and a dead one is not."""
    monkeypatch.setattr(store, "process_start", lambda pid: None)
    monkeypatch.setattr(store, "boot_id", lambda: None)
    owner = LockOwner.me("run")
    assert owner.started is None and owner.boot is None
    (tmp_path / LOCK).write_text(json.dumps({"pid": os.getppid(), "host": socket.gethostname()}))
    with pytest.raises(BemcheckInputError, match="another bemcheck run"):
        with RunLock(tmp_path):
            pass
    dead = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"], capture_output=True, text=True)
    (tmp_path / LOCK).write_text(json.dumps({"pid": int(dead.stdout), "host": socket.gethostname()}))
    with RunLock(tmp_path):
        pass


def test_an_empty_lock_is_young_then_stale(tmp_path):
    """An empty lock file is a holder between creating and writing it, unless it is
    older than LOCK_GRACE_S: then a run was killed in between."""
    (tmp_path / LOCK).write_text("")
    with pytest.raises(BemcheckInputError):
        with RunLock(tmp_path):
            pass
    old = time.time() - 2 * store.LOCK_GRACE_S
    os.utime(tmp_path / LOCK, (old, old))
    with RunLock(tmp_path):
        assert _lock_text(tmp_path)["pid"] == os.getpid()


def test_releasing_never_removes_another_runs_lock(tmp_path):
    lock = RunLock(tmp_path)
    lock.__enter__()
    other = json.dumps({"pid": 1, "host": "elsewhere.invalid"})
    (tmp_path / LOCK).write_text(other)
    lock.__exit__(None, None, None)
    assert (tmp_path / LOCK).read_text() == other


def test_a_lock_replaced_after_it_was_judged_stale_is_put_back(tmp_path):
    """Two runs find the same stale lock; the first replaces it with its own before
    the second renames it away: the second must give the first's lock back."""
    fresh = json.dumps({"pid": os.getpid(), "host": socket.gethostname()})
    (tmp_path / LOCK).write_text(fresh)
    RunLock(tmp_path)._take_over(seen="999999999")
    assert (tmp_path / LOCK).read_text() == fresh
    assert sorted(p.name for p in tmp_path.iterdir()) == [LOCK]


def _free_case(folder):
    case = folder / "free.toml"
    case.write_text(
        '[case]\ntitle = "Lock test (invented, no bodies)"\n[frequencies]\nlist = [100.0]\n'
        '[[source]]\nname = "p"\nrole = "primary"\nat = [0.3, 0.0, 0.0]\nstrength = 1e-3\n'
        '[[source]]\nname = "c"\nrole = "control"\nat = [-0.3, 0.0, 0.0]\n'
        '[observers]\nfar_field = { plane = "xy", step_deg = 30.0 }\n'
    )
    return case


def test_a_lock_that_is_a_folder_is_refused_and_left_alone(tmp_path, capsys):
    """A folder named like the lock file (bemcheck never makes one): exit 2 naming it,
    the folder and its contents untouched, no `.bemcheck.lock.stale-PID` left behind."""
    (tmp_path / LOCK).mkdir()
    (tmp_path / LOCK / "note").write_text("someone's file\n")
    old = time.time() - 3600.0
    os.utime(tmp_path / LOCK, (old, old))  # long past the grace for an unwritten lock
    with pytest.raises(BemcheckInputError, match="a folder where bemcheck keeps its lock file"):
        with RunLock(tmp_path):
            pass
    assert sorted(p.name for p in tmp_path.iterdir()) == [LOCK]
    assert (tmp_path / LOCK / "note").read_text() == "someone's file\n"
    case = tmp_path / "case.toml"
    case.write_text(open(bemcheck_example("free-pair")).read())
    code = main(["run", str(case), "--out", str(tmp_path), "--model", "free", "--no-report"])
    err = capsys.readouterr().err
    assert code == 2 and str(tmp_path / LOCK) in err and "Traceback" not in err
    assert not [p for p in tmp_path.iterdir() if ".stale-" in p.name]


@pytest.mark.parametrize("pid", ["99999999999999999999", '{"pid": 1e300}', '{"pid": -7}', '{"pid": 4294967296}'])
def test_an_absurd_process_id_in_a_lock_is_not_a_holder(pid, tmp_path):
    """No pid_t is negative or above 2^31 - 1 (POSIX.1-2017 <sys/types.h>, a signed
    integer type; 32 bits on Linux, from memory): such a lock names no process.  Once
    older than the grace for an unwritten lock it is taken over (it used to end in
    OverflowError from kill(), exit 1)."""
    assert LockOwner.parse(pid) is None
    (tmp_path / LOCK).write_text(pid)
    old = time.time() - 2 * store.LOCK_GRACE_S
    os.utime(tmp_path / LOCK, (old, old))
    with RunLock(tmp_path):
        assert _lock_text(tmp_path)["pid"] == os.getpid()
    assert list(tmp_path.iterdir()) == []
