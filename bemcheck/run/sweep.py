"""A sweep: per-frequency tasks, run here or on a Dask cluster, stored as they finish, resumable.

Each task's answer is stored atomically (:class:`~bemcheck.run.store.PartStore`)
the moment it arrives; rerunning the same command skips stored tasks, so a
run killed at any point loses at most the tasks in flight, and the resumed
result is the same bit for bit (each task is a pure function of its inputs).
"""

import contextlib
import dataclasses
import hashlib
import json
import logging
import os
import time
import warnings
from concurrent.futures import ProcessPoolExecutor, as_completed
from dataclasses import dataclass

from bemcheck.case.shapes import hash_body_files
from bemcheck.errors import BemcheckInputError
from bemcheck.run.store import PART_FORMAT

# Kinds of task.  SOLVE: a case frequency (or a played harmonic) on its
# band's mesh, with every body that carries a source also solved alone (from
# the diagonal blocks of the same matrix) to tell the source model from the
# diffraction by the other bodies.  CHECK: the same frequency on a second mesh
# whose sizes differ from the band's by a known ratio, for the numerical
# error estimate at that frequency (bemcheck.compare.errors).
SOLVE, CHECK = "solve", "check"

# What `bemcheck run --verbose` shows beyond the progress lines (each task's
# mesh, timings, device and stored file) goes to this logger at INFO.
log = logging.getLogger(__name__)

# A Dask scheduler must answer within this time [s], or the run stops with a message.
SCHEDULER_TIMEOUT_S = 10.0
# With no Dask worker for this long [s], a line says that the sweep waits for workers.
NO_WORKERS_S = 30.0
# How often a Dask sweep looks at its workers while no task finishes [s].
POLL_S = 1.0

# Threads each local worker may use: the workers share the cores, so BLAS
# and numba must not each spread over all of them.
_THREAD_VARS = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "NUMBA_NUM_THREADS")


@dataclass(frozen=True)
class Task:
    """One BEM solve: ``frequency`` [Hz] on the mesh of ``element_size`` [m].

    ``kind`` is SOLVE or CHECK (the second mesh of the error estimate);
    ``harmonic`` marks a SOLVE at a played note's harmonic for the
    before-build check.
    """

    key: str
    frequency: float
    band: int
    element_size: float
    kind: str = SOLVE
    harmonic: bool = False


def physics_fingerprint(case):
    """Hash of what a BEM answer depends on: medium, bodies, source positions, observers.

    Tolerances, control objective and strengths are left out: changing them
    recomputes nothing.
    """
    parts = {
        "medium": dataclasses.asdict(case.medium),
        "bodies": [{"kind": b.kind, **dataclasses.asdict(b)} for b in case.bodies],
        "sources": [(s.name, s.position, s.radiator, s.on) for s in case.sources],
        "observers": dataclasses.asdict(case.observers),
    }
    if case.floor is not None:  # only then: the keys of a case without a floor stay as they were
        parts["floor"] = case.floor.z
    return hash_body_files(
        hashlib.sha256(json.dumps(parts, sort_keys=True, default=str).encode()), case.bodies
    ).hexdigest()


def bodies_with_sources(case):
    """Names of the bodies that carry a source (a piston face or a point placed ``on`` it), in case order."""
    carried = {s.on for s in case.sources if s.on is not None}
    return [b.name for b in case.bodies if b.name in carried]


def plan_tasks(case, bands, harmonics=(), frequencies=None):
    """The tasks of a sweep: every frequency, its error-estimate solve, its single-body solves, the harmonics.

    Parameters
    ----------
    case : Case
    bands : sequence of Band
        With ``index``, ``f_low``, ``f_high`` [Hz] and ``element_size`` [m],
        planned from all the case's frequencies, so that a frequency's tasks
        do not depend on which others are run.
    harmonics : sequence of float
        Frequencies of played notes' harmonics [Hz]; those inside a band are
        solved on that band's mesh, the others left to the free-field model.
    frequencies : sequence of float, optional
        The case frequencies to run (default: all of them).

    Returns
    -------
    list of Task
    """
    base = physics_fingerprint(case)

    def task(f, band, kind=SOLVE, harmonic=False):
        # PART_FORMAT: parts stored in another layout get other keys, never misread.
        text = f"{base}|{f!r}|{band.element_size!r}|{kind}|{PART_FORMAT}"
        key = hashlib.sha256(text.encode()).hexdigest()[:24]
        return Task(key, f, band.index, band.element_size, kind, harmonic)

    run = case.frequencies if frequencies is None else frequencies
    tasks = []
    for f in run:
        band = next(b for b in bands if b.f_low <= f <= b.f_high)
        tasks.append(task(f, band))
        if case.bodies:
            tasks.append(task(f, band, CHECK))
    for f in sorted(set(harmonics) - set(run)):
        band = next((b for b in bands if b.f_low <= f <= b.f_high), None)
        if band is not None:
            tasks.append(task(f, band, harmonic=True))
    return tasks


def task_kind(task):
    """What kind of task, in a word or two: "solve", "error check", "harmonic"."""
    if task.kind == CHECK:
        return "error check"
    return "harmonic" if task.harmonic else "solve"


def task_label(task, harmonics=None):
    """What ``task`` is, in a few words, for the progress lines.

    Parameters
    ----------
    task : Task
    harmonics : dict, optional
        Frequency [Hz] -> which note's harmonic it is (``"harmonic 2 of A4"``).

    Returns
    -------
    str

    Examples
    --------
    >>> task_label(Task("k", 400.0, 0, 0.1))
    'solve 400.0 Hz (band 0)'
    >>> task_label(Task("k", 898.0, 0, 0.1, kind=CHECK))
    'error check 898.0 Hz (band 0, second mesh)'
    >>> task_label(Task("k", 440.0, 0, 0.1, harmonic=True), {440.0: "harmonic 2 of A4"})
    'harmonic 2 of A4, 440.0 Hz (band 0)'
    """
    where = f"{task.frequency:.1f} Hz (band {task.band}"
    if task.kind == CHECK:
        return f"{task_kind(task)} {where}, second mesh)"
    if task.harmonic:
        name = (harmonics or {}).get(task.frequency, "harmonic of a played note")
        return f"{name}, {where})"
    return f"{task_kind(task)} {where})"


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
    good = store.verified(tasks, task_label)  # a damaged or foreign part is reported and computed again
    todo = [t for t in tasks if t.key not in good]
    if progress is not None:
        for t in tasks:
            if t.key in good:
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
        _execute_dask(todo, solve, scheduler, finish, store.dir)
    elif workers <= 1:
        for t in todo:
            if progress is not None:
                progress.begin(t)
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


class SchedulerUnavailable(BemcheckInputError):
    """The Dask scheduler given cannot be reached, is not a Dask scheduler, or was lost mid-sweep."""


class SweepNotice(UserWarning):
    """Something the user should know while a sweep runs (it goes on)."""


async def _identity(address):
    """What the server at ``address`` says it is (Dask's "identity" operation)."""
    from distributed.comm import connect

    comm = await connect(address, timeout=SCHEDULER_TIMEOUT_S)
    try:
        await comm.write({"op": "identity"})
        return await comm.read()
    finally:
        comm.abort()


def check_scheduler(address):
    """Refuse, within SCHEDULER_TIMEOUT_S, an address where no Dask scheduler answers.

    Something else listening there (a web server, a silent socket) can make
    Dask's own connection wait for ever or read a garbage length; the whole
    exchange is bounded here.

    Raises
    ------
    SchedulerUnavailable
    """
    import asyncio

    where = f"--scheduler {address}"
    try:
        answer = asyncio.run(asyncio.wait_for(_identity(address), SCHEDULER_TIMEOUT_S + 1.0))
    except ValueError as exc:
        raise SchedulerUnavailable(f"{where}: not an address ({exc}); expected tcp://HOST:PORT") from None
    except TimeoutError:
        raise SchedulerUnavailable(
            f"{where}: no answer as a Dask scheduler within {SCHEDULER_TIMEOUT_S:g} s; "
            "expected the address `dask scheduler` prints"
        ) from None
    except OSError as exc:
        raise SchedulerUnavailable(
            f"{where}: cannot connect within {SCHEDULER_TIMEOUT_S:g} s ({exc}); expected "
            "a running Dask scheduler (`dask scheduler` prints its address)"
        ) from None
    except Exception as exc:  # what something that is not Dask answers breaks Dask's reader in many ways
        answer = f"{type(exc).__name__}"
    if not isinstance(answer, dict) or answer.get("type") != "Scheduler":
        raise SchedulerUnavailable(
            f"{where}: something answers there, but not as a Dask scheduler does; expected "
            "the address `dask scheduler` prints"
        )


@contextlib.contextmanager
def _dask_logs_quiet():
    """Dask's own stderr handler shows only CRITICAL records while the sweep runs.

    A lost scheduler makes Dask's client log its connection tracebacks at
    ERROR before the sweep can say, in one line, what happened and how to
    resume (SchedulerUnavailable); those tracebacks are not for the user.
    """
    handlers = logging.getLogger("distributed").handlers
    levels = [h.level for h in handlers]
    for h in handlers:
        h.setLevel(logging.CRITICAL)
    try:
        yield
    finally:
        for h, level in zip(handlers, levels, strict=True):
            h.setLevel(level)


def _execute_dask(todo, solve, address, finish, parts):
    from dask.distributed import Client, wait

    check_scheduler(address)
    finished = 0

    def lost(why):
        return SchedulerUnavailable(
            f"--scheduler {address}: the scheduler was lost mid-sweep ({why}); the {finished} task(s) finished in "
            f"this run, and every earlier one, are kept in {parts}: start the scheduler and its workers again "
            "(or leave out --scheduler) and run the same command to resume"
        )

    with _dask_logs_quiet(), Client(address, timeout=f"{SCHEDULER_TIMEOUT_S:g}s") as client:
        futures = {client.submit(solve, t, key=f"bemcheck-{t.key}", pure=False, retries=3): t for t in todo}
        pending, idle_since, told = set(futures), time.monotonic(), False
        while pending:
            try:
                done, pending = wait(pending, timeout=POLL_S, return_when="FIRST_COMPLETED")
            except TimeoutError:
                done = set()
            except Exception as exc:  # Dask cancels every future when the scheduler's connection is lost
                raise lost(str(exc).splitlines()[0] if str(exc) else type(exc).__name__) from None
            for fut in done:
                if fut.status == "cancelled":
                    raise lost("its tasks were cancelled")
                finish(futures[fut], fut.result())
                finished += 1
            if done or _workers(client) > 0:
                idle_since, told = time.monotonic(), False
            elif not told and time.monotonic() - idle_since > NO_WORKERS_S:
                warnings.warn(
                    f"no Dask worker at {address} for {NO_WORKERS_S:g} s: the sweep waits for workers "
                    f"(start them with `dask worker {address}`; Ctrl-C keeps what is finished)",
                    SweepNotice,
                    stacklevel=2,
                )
                told = True


def _workers(client):
    """Workers the scheduler knows now (0 if it cannot say)."""
    try:
        return len(client.scheduler_info().get("workers", {}))
    except Exception:  # a scheduler going away: the next wait says so
        return 0


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
        lines.append("mesh: " + ", ".join(what) + (f" ({task_kind(task)})" if task.kind != SOLVE else ""))
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
