"""Where bempp-cl runs its kernels: the one place that chooses and records it.

bempp-cl can assemble with OpenCL (needs a CPU OpenCL runtime such as
Debian's ``pocl-opencl-icd`` plus the ``pyopencl`` package) or with numba.
OpenCL is much faster for the hypersingular operator; numba always works.
The matrices agree to about 1e-14 (measured, see /work/shared/design.md).

bempp-cl is imported lazily, here only, with its "Could not find Gmsh" print
kept out of our output: importing :mod:`bemcheck` never imports it.
"""

import contextlib
import io
import os

from bemcheck.errors import EnvironmentProblem

DEVICES = ("auto", "numba", "opencl")

_state = {"device": None}

_OPENCL_HINT = (
    "a CPU OpenCL runtime for bempp-cl: install it with "
    "`sudo apt-get install pocl-opencl-icd` and `pip install pyopencl`, "
    "or choose the numba device"
)


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
    return api


def opencl_available():
    """Whether bempp-cl found an OpenCL CPU runtime at import.

    A runtime that is found but crashes on use cannot be caught here; choose
    ``"numba"`` explicitly on such a machine.

    Returns
    -------
    bool
    """
    return bool(getattr(bempp(), "CPU_OPENCL_DRIVER_FOUND", False))


def configure_device(choice="auto"):
    """Choose the device bempp-cl assembles on, for the whole process.

    Parameters
    ----------
    choice : {"auto", "numba", "opencl"}
        ``"auto"`` takes OpenCL when a CPU runtime is present, numba otherwise.

    Returns
    -------
    str
        The device now in use, ``"numba"`` or ``"opencl"``.

    Raises
    ------
    ValueError
        For a choice not in :data:`DEVICES`.
    EnvironmentProblem
        For ``"opencl"`` on a machine without a CPU OpenCL runtime.

    Examples
    --------
    >>> configure_device("numba")
    'numba'
    """
    if choice not in DEVICES:
        raise ValueError(f"device: expected one of {', '.join(DEVICES)}, got {choice!r}")
    api = bempp()
    if choice == "auto":
        device = "opencl" if opencl_available() else "numba"
    elif choice == "opencl" and not opencl_available():
        raise EnvironmentProblem(f"device 'opencl' asked for, but bempp-cl found no {_OPENCL_HINT}")
    else:
        device = choice
    api.DEFAULT_DEVICE_INTERFACE = device
    _state["device"] = device
    return device


def current_device():
    """The configured device; configures ``"auto"`` on first call.

    Returns
    -------
    str
        ``"numba"`` or ``"opencl"``.
    """
    if _state["device"] is None:
        return configure_device("auto")
    return _state["device"]
