"""The sweep on a real Dask cluster: a scheduler and two workers on 127.0.0.1, one killed mid-sweep."""

import functools
import os
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

import numpy as np
import pytest

import bemcheck
from bemcheck.run.runner import run_case
from tests.faults.test_sweep_resume import BANDS, case
from tests.support.image_source import image_task, slow_image_task

ROOT = Path(__file__).resolve().parents[2]
DASK = Path(sys.executable).with_name("dask")


def _spawn(args, log):
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    return subprocess.Popen(
        [str(DASK), *args], cwd=ROOT, env=env, stdout=log, stderr=subprocess.STDOUT, start_new_session=True
    )


@pytest.fixture
def cluster(tmp_path):
    if not DASK.exists():
        pytest.skip("the dask command is not installed beside this Python")
    sched_file = tmp_path / "scheduler.json"
    log = open(tmp_path / "dask.log", "w")
    procs = [
        _spawn(
            ["scheduler", "--host", "127.0.0.1", "--port", "0", "--no-dashboard", "--scheduler-file", str(sched_file)],
            log,
        )
    ]
    deadline = time.monotonic() + 60
    while not sched_file.exists():
        if time.monotonic() > deadline:
            pytest.fail("the dask scheduler did not start: " + (tmp_path / "dask.log").read_text())
        time.sleep(0.2)
    import json

    address = json.loads(sched_file.read_text())["address"]
    workers = [
        _spawn(
            ["worker", address, "--host", "127.0.0.1", "--nthreads", "1", "--no-dashboard", "--death-timeout", "60"],
            log,
        )
        for _ in range(2)
    ]
    procs += workers
    from dask.distributed import Client

    with Client(address, timeout="30s") as client:
        client.wait_for_workers(2, timeout=60)
    try:
        yield address, workers
    finally:
        for p in procs:
            if p.poll() is None:
                os.killpg(p.pid, signal.SIGTERM)
        for p in procs:
            try:
                p.wait(timeout=20)
            except subprocess.TimeoutExpired:
                os.killpg(p.pid, signal.SIGKILL)
        log.close()


def test_sweep_on_dask_survives_a_killed_worker(cluster, tmp_path):
    address, workers = cluster
    c = case()
    local = run_case(c, tmp_path / "local", solve=functools.partial(image_task, c), bands=BANDS, quiet=True)
    parts = tmp_path / "dask" / "parts"

    def kill_one():
        deadline = time.monotonic() + 60
        while time.monotonic() < deadline:
            if parts.exists() and len(list(parts.glob("*.npz"))) >= 2:
                os.killpg(workers[0].pid, signal.SIGKILL)
                return
            time.sleep(0.05)

    killer = threading.Thread(target=kill_one)
    killer.start()
    run_case(
        c,
        tmp_path / "dask",
        solve=functools.partial(slow_image_task, c, delay=0.4),
        bands=BANDS,
        quiet=True,
        scheduler=address,
    )
    killer.join()
    assert workers[0].poll() is not None, "the worker was not killed during the sweep"
    a = bemcheck.load_results(local.folder)
    b = bemcheck.load_results(tmp_path / "dask")
    for name in a.data_vars:
        np.testing.assert_array_equal(a[name].values, b[name].values, err_msg=name)
