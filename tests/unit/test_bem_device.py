"""Device choice for bempp-cl: one switch, recorded; OpenCL tested where a runtime exists."""

import subprocess
import sys

import numpy as np
import pytest

from bemcheck.errors import EnvironmentProblem
from bemcheck.solvers import bem_device
from bemcheck.solvers.bem_surface import surface_from_mesh
from bemcheck.solvers.bem_system import assemble
from tests.support.icosphere import icosphere

HAVE_OPENCL = bem_device.opencl_available()


def test_numba_is_configured_and_recorded():
    assert bem_device.configure_device("numba") == "numba"
    assert bem_device.bempp().DEFAULT_DEVICE_INTERFACE == "numba"
    assert bem_device.current_device() == "numba"
    system = assemble(surface_from_mesh(icosphere(1.0, 1)), 1.0)
    assert system.device == "numba"


def test_auto_takes_opencl_only_when_present():
    assert bem_device.configure_device("auto") == ("opencl" if HAVE_OPENCL else "numba")
    bem_device.configure_device("numba")


def test_unknown_device_is_refused():
    with pytest.raises(ValueError, match="numba"):
        bem_device.configure_device("gpu")


@pytest.mark.skipif(HAVE_OPENCL, reason="an OpenCL CPU runtime is installed here")
def test_opencl_without_runtime_says_how_to_install():
    with pytest.raises(EnvironmentProblem, match="pocl-opencl-icd"):
        bem_device.configure_device("opencl")
    assert bem_device.current_device() == "numba"


@pytest.mark.skipif(not HAVE_OPENCL, reason="no OpenCL CPU runtime (pocl-opencl-icd + pyopencl) on this machine")
def test_opencl_and_numba_give_the_same_matrix():
    """The two kernels compute the same integrals: LU factors agree to 1e-10 (design.md
    measured 1e-14 on the raw matrices)."""
    surface = surface_from_mesh(icosphere(1.0, 2))
    bem_device.configure_device("numba")
    a = assemble(surface, 2.0)
    bem_device.configure_device("opencl")
    try:
        b = assemble(surface, 2.0)
    finally:
        bem_device.configure_device("numba")
    assert b.device == "opencl"
    np.testing.assert_allclose(b.lu[0], a.lu[0], rtol=0, atol=1e-10 * np.abs(a.lu[0]).max())


def test_import_is_quiet_and_lazy():
    """Importing the solver imports no bempp-cl; the first use prints nothing (bempp-cl
    prints "Could not find Gmsh" on import when no gmsh binary is on PATH)."""
    code = (
        "import sys\n"
        "import bemcheck.solvers.bem\n"
        "assert 'bempp_cl' not in sys.modules\n"
        "from bemcheck.solvers.bem_device import bempp\n"
        "bempp()\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=300)
    assert out.returncode == 0, out.stderr
    assert out.stdout == ""
