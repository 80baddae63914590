"""A sweep: per-frequency tasks, run here or on a Dask cluster, stored as they finish, resumable.

Each task's answer is stored atomically (:class:`~bemcheck.run.store.PartStore`)
the moment it arrives; rerunning the same command skips stored tasks, so a
run killed at any point loses at most the tasks in flight, and the resumed
result is the same bit for bit (each task is a pure function of its inputs).
"""

import dataclasses
import hashlib
import json
import logging
import os
import sys
import time
from concurrent.futures import ProcessPoolExecutor, as_completed
from dataclasses import dataclass

from bemcheck.run.tasks import PART_FORMAT

# The self-check solve at each band's top frequency is made on a mesh this
# many times finer everywhere (the figure; P1 errors fall as h², so
# the difference estimates the coarse mesh's error to within about a factor 1.8).
SELF_CHECK_REFINE = 1.5

# What `bemcheck run --verbose` shows beyond the progress lines (each task's
# mesh, timings, device and stored file) goes to this logger at INFO.
log = logging.getLogger(__name__)

# Threads each local worker may use: the workers share the cores, so BLAS
# and numba must not each spread over all of them.
_THREAD_VARS = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "NUMBA_NUM_THREADS")


@dataclass(frozen=True)
class Task:
    """One BEM solve: ``frequency`` [Hz] on the mesh of ``element_size`` [m].

    ``refine`` marks the self-check solve at a band's top frequency on the
    band's mesh refined SELF_CHECK_REFINE times everywhere; ``harmonic`` a solve at a played note's harmonic for the
    before-build check.
    """

    key: str
    frequency: float
    band: int
    element_size: float
    refine: bool = False
    harmonic: bool = False


def physics_fingerprint(case):
    """Hash of what a BEM answer depends on: medium, bodies, source positions, observers.

    Tolerances, control objective and strengths are left out: changing them
    recomputes nothing.
    """
    parts = {
        "medium": dataclasses.asdict(case.medium),
        "bodies": [dataclasses.asdict(b) for b in case.bodies],
        "sources": [(s.name, s.position, s.radiator, s.on) for s in case.sources],
        "observers": dataclasses.asdict(case.observers),
    }
    h = hashlib.sha256(json.dumps(parts, sort_keys=True, default=str).encode())
    for b in case.bodies:
        if b.kind == "file":
            try:
                h.update(b.shape.path.read_bytes())
            except OSError:
                pass
    return h.hexdigest()


def plan_tasks(case, bands, harmonics=()):
    """Tasks for every frequency, one finer self-check solve at each band's top, and the harmonics.

    Parameters
    ----------
    case : Case
    bands : sequence of Band
        With ``index``, ``f_low``, ``f_high`` [Hz] and ``element_size`` [m].
    harmonics : sequence of float
        Frequencies of played notes' harmonics [Hz]; those inside a band are
        solved on that band's mesh, the others left to the free-field model.

    Returns
    -------
    list of Task
    """
    base = physics_fingerprint(case)

    def key(f, h, refine):
        scale = SELF_CHECK_REFINE if refine else 1.0
        # PART_FORMAT: parts stored in another layout get other keys, never misread.
        return hashlib.sha256(f"{base}|{f!r}|{h!r}|{scale!r}|{PART_FORMAT}".encode()).hexdigest()[:24]

    tasks = []
    for f in case.frequencies:
        band = next(b for b in bands if b.f_low <= f <= b.f_high)
        tasks.append(Task(key(f, band.element_size, False), f, band.index, band.element_size))
    for band in bands:
        top = max(f for f in case.frequencies if band.f_low <= f <= band.f_high)
        tasks.append(Task(key(top, band.element_size, True), top, band.index, band.element_size, refine=True))
    solved = set(case.frequencies)
    for f in sorted(set(harmonics) - solved):
        band = next((b for b in bands if b.f_low <= f <= b.f_high), None)
        if band is not None:
            tasks.append(Task(key(f, band.element_size, False), f, band.index, band.element_size, harmonic=True))
    return tasks


class Progress:
    """One line per finished task on a stream (a live line on a terminal), with an ETA.

    When :data:`log` is enabled for INFO (``bemcheck run --verbose``) every
    line stays on the screen, so that each task's details follow its line.
    """

    def __init__(self, total, stream=None, quiet=False):
        self.total = total
        self.done = 0
        self.stream = stream or sys.stderr
        self.quiet = quiet
        self.start = time.monotonic()
        self.live = hasattr(self.stream, "isatty") and self.stream.isatty() and not log.isEnabledFor(logging.INFO)

    def update(self, task, info=""):
        self.done += 1
        if self.quiet:
            return
        elapsed = time.monotonic() - self.start
        eta = elapsed / self.done * (self.total - self.done)
        what = "self-check" if task.refine else "solve"
        line = f"[{self.done}/{self.total}] {what} {task.frequency:8.1f} Hz band {task.band} {info} ETA {eta:5.0f} s"
        self.stream.write(("\r" + line.ljust(100)) if self.live else line + "\n")
        if self.live and self.done == self.total:
            self.stream.write("\n")
        self.stream.flush()


def _pin_threads(n):
    for var in _THREAD_VARS:
        os.environ[var] = str(n)


def execute(tasks, solve, store, *, workers=1, scheduler=None, progress=None):
    """Run the tasks not yet in ``store`` and store each answer as it arrives.

    Parameters
    ----------
    tasks : sequence of Task
    solve : callable
        ``solve(task) -> (arrays: dict, meta: dict)``; must be picklable
        (a module-level function or a functools.partial of one) for
        ``workers > 1`` or a scheduler.
    store : PartStore
    workers : int
        Local worker processes; 1 runs in this process (warm compile caches).
    scheduler : str, optional
        Address of a Dask distributed scheduler; the tasks run on its workers
        and a task lost with a dying worker is run again elsewhere.
    progress : Progress, optional

    Returns
    -------
    int
        Number of tasks computed (not found in the store).
    """
    todo = [t for t in tasks if not store.has(t.key)]
    if progress is not None:
        for t in tasks:
            if store.has(t.key):
                progress.update(t, "(stored)")
                if log.isEnabledFor(logging.INFO):
                    log.info("%s", describe_task(t, store.meta(t.key), store.path(t.key), stored=True))

    def finish(task, answer):
        arrays, meta = answer
        store.save(task.key, arrays, meta)
        if progress is not None:
            progress.update(task, meta.get("summary", ""))
        if log.isEnabledFor(logging.INFO):
            log.info("%s", describe_task(task, meta, store.path(task.key)))

    if not todo:
        return 0
    if scheduler:
        _execute_dask(todo, solve, scheduler, finish)
    elif workers <= 1:
        for t in todo:
            finish(t, solve(t))
    else:
        import multiprocessing

        threads = max(1, (os.cpu_count() or 1) // workers)
        ctx = multiprocessing.get_context("spawn")
        with ProcessPoolExecutor(workers, mp_context=ctx, initializer=_pin_threads, initargs=(threads,)) as pool:
            futures = {pool.submit(solve, t): t for t in todo}
            for fut in as_completed(futures):
                finish(futures[fut], fut.result())
    return len(todo)


def _execute_dask(todo, solve, address, finish):
    from dask.distributed import Client
    from dask.distributed import as_completed as dask_completed

    with Client(address, timeout="30s") as client:
        futures = {client.submit(solve, t, key=f"bemcheck-{t.key}", pure=False, retries=3): t for t in todo}
        for fut in dask_completed(list(futures)):
            finish(futures[fut], fut.result())


def describe_task(task, meta, path, stored=False):
    """What ``--verbose`` says about one finished task: mesh, timings, device, where it is stored.

    Parameters
    ----------
    task : Task
    meta : dict
        The task's metadata as :func:`bemcheck.run.tasks.bem_task` makes it
        (``elements``, ``unknowns``, ``element_size`` [m],
        ``elements_per_wavelength``, ``device``, ``seconds``, ``timings``
        [s]); keys a solver left out are left out here.
    path : Path
        The task's stored file.
    stored : bool
        Found stored by an earlier run rather than computed now.

    Returns
    -------
    str
        Indented lines, no trailing newline.

    Examples
    --------
    >>> t = Task("k", 400.0, 0, 0.1)
    >>> print(describe_task(t, {"elements": 84, "unknowns": 44, "element_size": 0.1, "elements_per_wavelength": 8.6,
    ...                         "device": "numba", "seconds": 2.0, "timings": {"assembly": 1.5, "lu": 0.1}}, "p/k.npz"))
        mesh: 84 elements, 44 unknowns, largest edge 100.0 mm, 8.6 elements per wavelength
        time: assembly 1.50 s, lu 0.10 s, other (meshing, set-up) 0.40 s; 2.00 s in all on numba
        stored: p/k.npz
    """
    lines = []
    elements = meta.get("elements")
    if elements == 0:
        lines.append("mesh: none (no bodies: the BEM answers the free field)")
    elif elements is not None:
        what = [f"{elements} elements"]
        if meta.get("unknowns") is not None:
            what.append(f"{meta['unknowns']} unknowns")
        if meta.get("element_size"):
            what.append(f"largest edge {1e3 * meta['element_size']:.1f} mm")
        if meta.get("elements_per_wavelength"):
            what.append(f"{meta['elements_per_wavelength']:.1f} elements per wavelength")
        lines.append("mesh: " + ", ".join(what) + (" (self-check, finer)" if task.refine else ""))
    timings = meta.get("timings") or {}
    seconds = meta.get("seconds")
    if timings or seconds is not None:
        parts = [f"{name} {value:.2f} s" for name, value in timings.items()]
        if seconds is not None and timings and seconds > sum(timings.values()):
            parts.append(f"other (meshing, set-up) {seconds - sum(timings.values()):.2f} s")
        line = "time: " + ", ".join(parts)
        if seconds is not None:
            line += ("; " if parts else "") + f"{seconds:.2f} s in all"
        if meta.get("device") not in (None, "", "none"):
            line += f" on {meta['device']}"
        lines.append(line)
    lines.append(f"{'stored earlier' if stored else 'stored'}: {path}")
    return "\n".join("    " + line for line in lines)
