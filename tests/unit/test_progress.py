"""What a run says while it works: the first line within seconds, no long silence, an ETA from measured tasks.

The silence bound (a line at least every HEARTBEAT_S seconds) is common
practice, no source; the bounds below are generous so that a loaded machine
does not fail them.
"""

import io
import subprocess
import sys
import time

import pytest

import bemcheck
from bemcheck.run.progress import HEARTBEAT_S, Progress, SweepClock
from bemcheck.run.runner import harmonic_names
from bemcheck.run.sweep import Task, task_label

FIRST_LINE_BOUND_S = 30.0
SLACK_S = 5.0


class Terminal(io.StringIO):
    def isatty(self):
        return True


def _ticks(*values):
    it = iter(values)
    return lambda: next(it)


def test_eta_leaves_out_the_first_task_and_stored_ones():
    """First task 30 s (compiling), then 2 s each; 4 stored tasks cost nothing: with 6 of 12 done
    (4 stored, 2 computed after the first) the 6 left take 6 x 2 s."""
    c = SweepClock(12, clock=_ticks(0.0, 30.0, 32.0, 34.0))
    for _ in range(4):
        c.finished(stored=True)
    assert c.eta() == "ETA after the next task" and c.seconds_left() is None
    c.finished()
    assert c.seconds_left() is None  # only the compile-laden task is timed so far
    c.finished()
    c.finished()
    assert c.done == 7 and c.seconds_left() == pytest.approx(5 * 2.0)


def test_heartbeat_breaks_any_silence():
    out = io.StringIO()
    with Progress(out, heartbeat_s=0.3) as p:
        p.step("meshing band 0")
        time.sleep(1.5)
    lines = out.getvalue().splitlines()
    assert lines[0] == "meshing band 0"
    assert len(lines) >= 3 and all(line.startswith("  ... meshing band 0 (") for line in lines[1:])


def test_quiet_says_nothing_and_still_counts():
    out = io.StringIO()
    with Progress(out, quiet=True, heartbeat_s=0.1) as p:
        p.step("meshing")
        p.sweep(1)
        p.update(Task("k", 100.0, 0, 0.1), "x")
        time.sleep(0.3)
    assert out.getvalue() == "" and p.clock.done == 1


def test_each_task_says_what_it_is():
    case = bemcheck.load_case(bemcheck.example_path("demo"))
    names = harmonic_names(case)
    f2 = case.all_notes[0].harmonics[1]
    label = task_label(Task("k", f2, 0, 0.06, harmonic=True), names)
    assert label.startswith("harmonic 2 of note 'Bb3', 466.2 Hz")
    assert task_label(Task("k", 898.0, 0, 0.06, kind="check")).startswith("error check 898.0 Hz")


def test_on_a_terminal_the_lines_scroll_above_a_live_bar():
    out = Terminal()
    t = Task("k", 100.0, 0, 0.1)
    with Progress(out, heartbeat_s=0.2) as p:
        p.step("meshing 1 of 1")
        p.sweep(2)
        p.begin(t)
        p.update(t, "84 elements")
        p.update(t, "(stored)")
    text = out.getvalue()
    assert "meshing 1 of 1" in text
    assert "[1/2] solve 100.0 Hz (band 0): 84 elements" in text and "[2/2]" in text


def test_a_run_speaks_within_seconds_and_never_falls_silent(tmp_path):
    """`bemcheck run` on the demo: the first line comes within seconds (meshing, compiling
    and the first frequency take tens of seconds), and no gap between lines is much longer
    than HEARTBEAT_S while the kernels compile. The process is stopped after that."""
    argv = [
        sys.executable,
        "-m",
        "bemcheck",
        "run",
        str(bemcheck.example_path("demo")),
        "--out",
        str(tmp_path / "run"),
        "--mesh-cache",
        str(tmp_path / "cache"),
        "--no-report",
    ]
    start = time.monotonic()
    proc = subprocess.Popen(argv, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    stamps = []
    try:
        for line in proc.stderr:
            stamps.append((time.monotonic() - start, line.rstrip()))
            if stamps[-1][0] > stamps[0][0] + 25.0 or line.startswith("[ 2/"):
                break
    finally:
        proc.terminate()
        proc.wait(timeout=60)
        proc.stderr.close()
    assert stamps, "no progress line at all"
    assert stamps[0][0] < FIRST_LINE_BOUND_S, stamps[0]
    gaps = [b[0] - a[0] for a, b in zip(stamps, stamps[1:])]
    assert max(gaps) < HEARTBEAT_S + SLACK_S, stamps
    assert any("compiling the BEM kernels" in line for _, line in stamps)
    assert any(line.startswith("meshing band 1 of") for _, line in stamps)


def test_progress_threads_never_take_ctrl_c():
    """Threads inherit their creator's signal mask (POSIX.1-2017, pthread_create): the
    heartbeat must be started with SIGINT blocked, or a Ctrl-C held back in the main thread
    during the first solve would be taken by it."""
    import signal

    with Progress(io.StringIO(), heartbeat_s=60.0) as p:
        main_mask = signal.pthread_sigmask(signal.SIG_BLOCK, set())
        beat_mask = _mask_of(p.thread)
    assert signal.SIGINT not in main_mask  # the main thread keeps taking Ctrl-C
    assert signal.SIGINT in beat_mask


def _mask_of(thread):
    """The signal mask of a running thread, from /proc (Linux proc(5), SigBlk)."""
    import signal

    with open(f"/proc/self/task/{thread.native_id}/status") as fh:
        blk = next(int(line.split()[1], 16) for line in fh if line.startswith("SigBlk:"))
    return {s for s in signal.Signals if blk >> (s - 1) & 1}
