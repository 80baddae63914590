"""The BEM's run-time: bempp-cl imported quietly, the kernels' first compile, and what ran them.

bemcheck assembles its matrices with its own numba kernels on the CPU
(:mod:`bemcheck.solvers.bem.assembly`); bempp-cl, which builds the grid and
the touching-pair quadrature, is set to numba as well.  There is no other
back end: :data:`BACKEND` is recorded with every solve, not chosen.

bempp-cl is imported lazily, here only, with its "Could not find Gmsh" print
kept out of our output: importing :mod:`bemcheck` never imports it.
"""

import contextlib
import io
import os
import signal
import threading

BACKEND = "numba"

_state = {"assembled": False}


def bempp():
    """bempp-cl's ``api`` module, imported quietly on first use.

    Returns
    -------
    module
        ``bempp_cl.api``.

    Notes
    -----
    Sets ``OMP_WAIT_POLICY=PASSIVE`` unless the environment sets it: numba's
    OpenMP threads otherwise spin while they wait, and when the cores are
    shared (other processes, parallel sweep workers) bempp-cl's assembly ran
    10 to 90 times slower here (1,280 triangles: 55 s instead of 6 s; 320:
    67 s instead of 0.7 s).  It must be set before numba first runs a parallel
    kernel, so call this before any other numba-parallel code.
    """
    os.environ.setdefault("OMP_WAIT_POLICY", "PASSIVE")
    with contextlib.redirect_stdout(io.StringIO()):
        import bempp_cl.api as api
    api.DEFAULT_DEVICE_INTERFACE = BACKEND
    return api


@contextlib.contextmanager
def first_solve_guard():
    """Hold Ctrl-C back during a process's first solve, while numba compiles the kernels.

    An interrupt that lands inside the compiler's callbacks is swallowed
    there (printed as an ignored exception), and the run would go on.  Held
    back, it is raised as soon as the first solve with bodies ends, before
    its answer is stored.  Later solves are not guarded.
    Only the main thread of a POSIX process can do this; elsewhere it does
    nothing.
    """
    if (
        _state["assembled"]
        or threading.current_thread() is not threading.main_thread()
        or not hasattr(signal, "pthread_sigmask")
    ):
        yield
        return
    # Ctrl-C is noted, not raised, while the kernels compile, and raised here
    # after the solve.  Blocking SIGINT in this thread is not enough: the
    # kernel may hand it to another thread (BLAS, numba workers), and Python
    # then runs its handler in this thread at the next bytecode, which may be
    # inside the compiler's callbacks or finalisers, where it is swallowed.
    interrupted = []
    previous = signal.signal(signal.SIGINT, lambda signum, frame: interrupted.append(signum))
    try:
        yield
    finally:
        if previous is not None:
            signal.signal(signal.SIGINT, previous)
        if interrupted:
            raise KeyboardInterrupt


def note_assembly():
    """Record that this process has assembled (and so compiled) the BEM kernels."""
    _state["assembled"] = True


def kernels_compiled():
    """Whether this process has compiled the BEM kernels already (by assembling once).

    Examples
    --------
    >>> kernels_compiled() in (True, False)
    True
    """
    return _state["assembled"]
