"""A distributed sweep fails in bounded time, with a message, and keeps what it finished.

* an address that is not one, a closed port, a socket that accepts and says
  nothing, and a server answering something else than Dask's protocol: exit 2
  naming the address, within the stated timeout (the test only checks that
  the command returned, not how fast);
* a scheduler killed mid-sweep: a message that the finished tasks are kept
  and how to resume; the resumed run computes only the rest and equals a run
  that was never interrupted, bit for bit;
* a scheduler without workers: one line that the sweep waits for workers;
  it finishes once a worker joins.

Dask's "identity" operation answers {"type": "Scheduler", ...} on a scheduler
(Dask distributed documentation, "Foundations": every server handles
"identity").  A closed port refuses connections (ECONNREFUSED, POSIX.1-2017
connect()).
"""

import functools
import json
import os
import signal
import socket
import subprocess
import sys
import threading
import time
import warnings

import numpy as np
import pytest

import bemcheck
from bemcheck.cli import main
from bemcheck.run import sweep
from bemcheck.run.runner import run_case
from bemcheck.run.sweep import plan_tasks
from tests.faults.test_sweep_dask import DASK, _spawn
from tests.faults.test_sweep_resume import BANDS, case
from tests.support.cases import FREE_CASE
from tests.support.image_source import image_task, slow_image_task
from tests.unit.test_bad_input_catalogue import assert_nothing_half_written

# Generous bound for a command that should end within SCHEDULER_TIMEOUT_S: a hang detector, not a speed target.
HANG_S = 120.0


def _listener(reply):
    """A local server that accepts connections and answers ``reply`` (nothing if None); its address and socket."""
    srv = socket.socket()
    srv.bind(("127.0.0.1", 0))
    srv.listen(8)
    held = []

    def serve():
        while True:
            try:
                conn, _ = srv.accept()
            except OSError:
                return
            held.append(conn)
            if reply is not None:
                try:
                    conn.recv(100)
                    conn.sendall(reply)
                except OSError:
                    pass

    threading.Thread(target=serve, daemon=True).start()
    return f"tcp://127.0.0.1:{srv.getsockname()[1]}", srv


def _closed_port():
    s = socket.socket()
    s.bind(("127.0.0.1", 0))
    port = s.getsockname()[1]
    s.close()
    return f"tcp://127.0.0.1:{port}", None


ADDRESSES = {
    "not an address": lambda: ("foo", None),
    "closed port": _closed_port,
    "silent listener": lambda: _listener(None),
    "web server": lambda: _listener(b"HTTP/1.0 400 Bad Request\r\nContent-Length: 0\r\n\r\n" * 8),
}


@pytest.mark.parametrize("kind", list(ADDRESSES))
def test_no_scheduler_there_is_refused_in_bounded_time(kind, tmp_path, capsys, monkeypatch):
    monkeypatch.setattr(sweep, "SCHEDULER_TIMEOUT_S", 2.0)
    address, server = ADDRESSES[kind]()
    case_file = tmp_path / "case.toml"
    case_file.write_text(FREE_CASE)
    out = tmp_path / "out"
    code = []
    argv = ["run", str(case_file), "--out", str(out), "--model", "both", "--no-report", "--scheduler", address]
    runner = threading.Thread(target=lambda: code.append(main(argv)), daemon=True)
    runner.start()
    runner.join(HANG_S)
    if server is not None:
        server.close()
    assert code == [2], f"{kind}: still running after {HANG_S} s" if not code else code
    err = capsys.readouterr().err
    assert "Traceback" not in err
    assert f"bemcheck: error: --scheduler {address}: " in err, err
    assert_nothing_half_written(tmp_path, out)


def _scheduler(tmp_path, log):
    sched_file = tmp_path / "scheduler.json"
    proc = _spawn(
        ["scheduler", "--host", "127.0.0.1", "--port", "0", "--no-dashboard", "--scheduler-file", str(sched_file)], log
    )
    deadline = time.monotonic() + 60
    while not sched_file.exists():
        assert time.monotonic() < deadline, "the dask scheduler did not start"
        time.sleep(0.2)
    return proc, json.loads(sched_file.read_text())["address"]


def _worker(address, log):
    return _spawn(
        ["worker", address, "--host", "127.0.0.1", "--nthreads", "1", "--no-dashboard", "--death-timeout", "20"], log
    )


@pytest.fixture
def processes(tmp_path):
    if not DASK.exists():
        pytest.skip("the dask command is not installed beside this Python")
    started = []
    with open(tmp_path / "dask.log", "w") as log:
        yield started, log
        for p in started:
            if p.poll() is None:
                os.killpg(p.pid, signal.SIGTERM)
        for p in started:
            try:
                p.wait(timeout=20)
            except Exception:
                os.killpg(p.pid, signal.SIGKILL)


def test_a_scheduler_lost_mid_sweep_keeps_the_finished_tasks(processes, tmp_path):
    started, log = processes
    sched, address = _scheduler(tmp_path, log)
    started += [sched, _worker(address, log)]
    c = case()
    local = run_case(c, tmp_path / "local", solve=functools.partial(image_task, c), bands=BANDS, quiet=True)
    parts = tmp_path / "dask" / "parts"

    def kill_scheduler():
        deadline = time.monotonic() + 120
        while time.monotonic() < deadline:
            if parts.exists() and len(list(parts.glob("*.npz"))) >= 2:
                os.killpg(sched.pid, signal.SIGKILL)
                return
            time.sleep(0.05)

    killer = threading.Thread(target=kill_scheduler)
    killer.start()
    with pytest.raises(sweep.SchedulerUnavailable) as lost:
        run_case(
            c,
            tmp_path / "dask",
            solve=functools.partial(slow_image_task, c, delay=0.5),
            bands=BANDS,
            quiet=True,
            scheduler=address,
        )
    killer.join()
    message = str(lost.value)
    assert address in message and "lost mid-sweep" in message and "kept in" in message
    assert str(parts) in message and "run the same command to resume" in message
    kept = len(list(parts.glob("*.npz")))
    total = len(plan_tasks(c, BANDS))
    assert 2 <= kept < total
    calls = []
    run_case(c, tmp_path / "dask", solve=functools.partial(image_task, c, calls=calls), bands=BANDS, quiet=True)
    assert len(calls) == total - kept  # resumed, nothing twice
    a, b = bemcheck.load_results(local.folder), bemcheck.load_results(tmp_path / "dask")
    for name in a.data_vars:
        np.testing.assert_array_equal(a[name].values, b[name].values, err_msg=name)


def test_without_workers_the_sweep_says_it_waits(processes, tmp_path, monkeypatch):
    started, log = processes
    sched, address = _scheduler(tmp_path, log)
    started.append(sched)
    monkeypatch.setattr(sweep, "NO_WORKERS_S", 1.0)
    monkeypatch.setattr(sweep, "POLL_S", 0.2)
    c = case()
    seen, errors = [], []

    def sweep_run():
        try:
            with warnings.catch_warnings(record=True) as caught:
                warnings.simplefilter("always", sweep.SweepNotice)
                run_case(
                    c,
                    tmp_path / "dask",
                    solve=functools.partial(image_task, c),
                    bands=BANDS,
                    quiet=True,
                    scheduler=address,
                )
            seen.extend(str(w.message) for w in caught if issubclass(w.category, sweep.SweepNotice))
        except BaseException as exc:  # handed to the test's thread
            errors.append(exc)

    runner = threading.Thread(target=sweep_run, daemon=True)
    runner.start()
    time.sleep(4.0)  # well past NO_WORKERS_S with no worker
    assert runner.is_alive() and not errors, errors  # it waits rather than failing
    started.append(_worker(address, log))
    runner.join(HANG_S)
    assert not runner.is_alive() and not errors, errors
    assert len(seen) == 1 and "no Dask worker" in seen[0] and "waits for workers" in seen[0], seen
    assert address in seen[0] and (tmp_path / "dask" / "results.nc").is_file()


def test_the_command_tells_a_lost_scheduler_in_one_message(processes, tmp_path):
    """`bemcheck run --scheduler` as a user runs it, its scheduler stopped while the sweep waits for
    a worker: exit 2 with the one message saying where the finished tasks are and how to resume,
    and no traceback (Dask's client logged its connection tracebacks on stderr before)."""
    started, log = processes
    sched, address = _scheduler(tmp_path, log)
    started.append(sched)
    case_file = tmp_path / "case.toml"
    case_file.write_text(FREE_CASE)
    out = tmp_path / "out"
    argv = [sys.executable, "-m", "bemcheck", "run", str(case_file), "--out", str(out), "--no-report"]
    run = subprocess.Popen(
        [*argv, "--scheduler", address], cwd=tmp_path, stderr=subprocess.PIPE, text=True, start_new_session=True
    )
    started.append(run)
    deadline = time.monotonic() + HANG_S
    while not (out / "parts").is_dir() and time.monotonic() < deadline:  # the sweep has begun
        time.sleep(0.2)
    time.sleep(3.0)
    os.killpg(sched.pid, signal.SIGKILL)
    err = run.communicate(timeout=HANG_S)[1]
    assert run.returncode == 2, err
    assert "Traceback" not in err, err
    assert f"--scheduler {address}: the scheduler was lost mid-sweep" in err and "to resume" in err, err
