"""What a run says while it works: its steps, the sweep with an ETA, and a heartbeat against silence.

On a terminal the steps scroll above a live bar drawn by ``rich``; on any
other stream (a pipe, a log file) every message is one plain line.  Either
way a line comes at least every :data:`HEARTBEAT_S` seconds, so a long mesh,
the kernels' compilation or a report figure never looks like a hang.
"""

import contextlib
import logging
import signal
import sys
import threading
import time

from bemcheck.run.sweep import task_label

# Longest silence a run allows itself [s] (common practice, no source: a
# user starts to wonder after a few seconds).
HEARTBEAT_S = 5.0
# Compiling bemcheck's kernels, once in every process that solves [s]:
# bench/RESULTS.md measured 17.4 s for a first frequency against 0.5 s for
# the next on 2 cores, so nearly all of it is compilation.
COMPILE_HINT_S = 17.0


def _eta_text(seconds):
    if seconds < 90:
        return f"ETA {seconds:.0f} s"
    if seconds < 5400:
        return f"ETA {seconds / 60:.0f} min"
    return f"ETA {seconds / 3600:.1f} h"


@contextlib.contextmanager
def _threads_without_sigint():
    """Threads started inside never receive Ctrl-C: they inherit a mask that blocks SIGINT.

    While :func:`bemcheck.solvers.bem.runtime.first_solve_guard` blocks
    SIGINT in the main thread, the kernel would hand the signal to any
    other thread that accepts it, and Python would raise it in the main
    thread inside the compiler after all.  Blocked everywhere else, it stays
    pending until the guard lets it through.
    """
    if threading.current_thread() is not threading.main_thread() or not hasattr(signal, "pthread_sigmask"):
        yield
        return
    previous = signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, previous)


class SweepClock:
    """Estimated time left in a sweep, from the measured gaps between finished tasks.

    The first computed task is left out: it carries the process's one-off
    costs (compiling the kernels, meshing), which would make the estimate
    many times too long.  Tasks found stored cost nothing and are not timed.

    Parameters
    ----------
    total : int
        Tasks in the sweep.
    clock : callable
        Seconds, monotonic (``time.monotonic``).

    Examples
    --------
    >>> t = iter([0.0, 20.0, 21.0, 22.0])
    >>> c = SweepClock(10, clock=lambda: next(t))
    >>> c.finished(); c.finished(); c.finished()  # 20 s with compiling, then 1 s each
    >>> c.seconds_left()
    7.0
    """

    def __init__(self, total, clock=time.monotonic):
        self.total = total
        self.done = 0
        self.clock = clock
        self.gaps = []
        self.last = clock()
        self.computed = 0

    def finished(self, stored=False):
        """Count one finished task (``stored``: found in the run folder, not computed)."""
        self.done += 1
        if stored:
            return
        now = self.clock()
        if self.computed:
            self.gaps.append(now - self.last)
        self.computed += 1
        self.last = now

    def seconds_left(self):
        """Seconds to go [s], or None until a task after the first has been timed."""
        if not self.gaps:
            return None
        return sum(self.gaps) / len(self.gaps) * (self.total - self.done)

    def eta(self):
        """The estimate as words: ``"ETA 12 s"``, or what it waits for."""
        left = self.seconds_left()
        if self.done >= self.total:
            return "done"
        if left is None:
            return "ETA after the next task"
        return _eta_text(left)


class Progress:
    """The run's messages: steps, one line per sweep task with an ETA, a heartbeat.

    Use as a context manager: the heartbeat thread and the live bar live
    inside it.  When :mod:`logging` for ``bemcheck`` is enabled at INFO
    (``bemcheck run --verbose``) every line stays plain, so that each task's
    details follow its line.

    Parameters
    ----------
    stream : file-like, optional
        Where to write (default ``sys.stderr``).
    quiet : bool
        Say nothing.
    heartbeat_s : float
        Longest silence [s].
    label : callable, optional
        ``label(task) -> str`` says what a task is (default
        :func:`bemcheck.run.sweep.task_label`).

    Examples
    --------
    >>> import io
    >>> out = io.StringIO()
    >>> with Progress(out) as p:
    ...     p.step("meshing band 1 of 1")
    >>> out.getvalue()
    'meshing band 1 of 1\\n'
    """

    def __init__(self, stream=None, quiet=False, heartbeat_s=HEARTBEAT_S, label=None):

        self.stream = stream or sys.stderr
        self.quiet = quiet
        self.heartbeat_s = heartbeat_s
        self.label = label or task_label
        self.clock = None
        self.doing = "starting"
        self.since = time.monotonic()
        self.said = self.since
        self.lock = threading.Lock()
        self.stop = threading.Event()
        self.thread = None
        self.live = None
        verbose = logging.getLogger("bemcheck").isEnabledFor(logging.INFO)
        self.terminal = not quiet and not verbose and hasattr(self.stream, "isatty") and self.stream.isatty()

    def __enter__(self):
        if self.quiet:
            return self
        with _threads_without_sigint():
            if self.terminal:
                self._start_live()
            self.thread = threading.Thread(target=self._beat, name="bemcheck-heartbeat", daemon=True)
            self.thread.start()
        return self

    def __exit__(self, *exc):
        self.stop.set()
        if self.thread is not None:
            self.thread.join()
        if self.live is not None:
            self.live.stop()
        return False

    def _start_live(self):
        from rich.console import Console
        from rich.progress import BarColumn, MofNCompleteColumn, SpinnerColumn, TextColumn, TimeElapsedColumn
        from rich.progress import Progress as Bar

        console = Console(file=self.stream, highlight=False)
        self.live = Bar(
            SpinnerColumn(),
            TextColumn("{task.description}"),
            BarColumn(),
            MofNCompleteColumn(),
            TextColumn("{task.fields[eta]}"),
            TimeElapsedColumn(),
            console=console,
            transient=True,
        )
        self.bar = self.live.add_task(self.doing, total=None, eta="")
        self.live.start()

    def _say(self, line):
        with self.lock:
            self.said = time.monotonic()
            if self.live is not None:
                self.live.console.print(line, markup=False)
            else:
                self.stream.write(line + "\n")
                self.stream.flush()

    def _beat(self):
        while not self.stop.wait(0.5):
            now = time.monotonic()
            if self.live is not None:
                continue  # the live bar's clock keeps ticking by itself
            if now - self.said >= self.heartbeat_s:
                self._say(f"  ... {self.doing} ({now - self.since:.0f} s)")

    def step(self, text):
        """Say that the run now does ``text`` (a line of its own)."""
        if self.quiet:
            return
        self.doing, self.since = text, time.monotonic()
        if self.live is not None:
            self.live.update(self.bar, description=text, total=None, completed=0, eta="")
        self._say(text)

    def sweep(self, total):
        """Begin a sweep of ``total`` tasks; its ETA starts from now."""
        self.clock = SweepClock(total)
        if self.quiet:
            return
        self.doing, self.since = f"solving 1 of {total}", time.monotonic()
        if self.live is not None:
            self.live.update(self.bar, description="sweep", total=total, completed=0, eta="")

    def begin(self, task):
        """Say which task runs now (known in a serial sweep only)."""
        if self.quiet or self.clock is None:
            return
        self.doing, self.since = (
            f"{self.label(task)}, task {self.clock.done + 1} of {self.clock.total}",
            time.monotonic(),
        )
        if self.live is not None:
            self.live.update(self.bar, description=self.label(task))

    def update(self, task, info=""):
        """One task finished (``info`` "(stored)" when found in the run folder)."""
        stored = info == "(stored)"
        self.clock.finished(stored=stored)
        if self.quiet:
            return
        c = self.clock
        eta = c.eta()
        first = c.computed == 1 and not stored
        note = " (first in this process: includes compiling)" if first else ""
        width = len(str(c.total))
        self._say(f"[{c.done:{width}d}/{c.total}] {self.label(task)}: {info}{note}; {eta}")
        self.doing, self.since = f"sweep, {c.done} of {c.total} done", time.monotonic()
        if self.live is not None:
            self.live.update(self.bar, completed=c.done, eta=eta)
