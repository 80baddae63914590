"""Device choice: one switch, recorded; numba is the only device."""

import subprocess
import sys

import pytest

from bemcheck.solvers.bem import device as bem_device
from bemcheck.solvers.bem.surface import surface_from_mesh
from bemcheck.solvers.bem.system import assemble
from tests.support.icosphere import icosphere


def test_numba_is_configured_and_recorded():
    assert bem_device.configure_device("numba") == "numba"
    assert bem_device.bempp().DEFAULT_DEVICE_INTERFACE == "numba"
    assert bem_device.current_device() == "numba"
    system = assemble(surface_from_mesh(icosphere(1.0, 1)), 1.0)
    assert system.device == "numba"


def test_auto_is_numba():
    assert bem_device.configure_device("auto") == "numba"


@pytest.mark.parametrize("choice", ["gpu", "opencl"])
def test_other_devices_are_refused(choice):
    with pytest.raises(ValueError, match="numba"):
        bem_device.configure_device(choice)


def test_import_is_quiet_and_lazy():
    """Importing the solver imports no bempp-cl; the first use prints nothing (bempp-cl
    prints "Could not find Gmsh" on import when no gmsh binary is on PATH)."""
    code = (
        "import sys\n"
        "import bemcheck.solvers.bem.solve\n"
        "assert 'bempp_cl' not in sys.modules\n"
        "from bemcheck.solvers.bem.device import bempp\n"
        "bempp()\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=300)
    assert out.returncode == 0, out.stderr
    assert out.stdout == ""


def test_a_solve_too_large_for_the_memory_is_refused_before_allocating():
    """2 dense N x N complex arrays at 16 bytes per entry: N = 40,000 needs 47.7 GiB."""
    from bemcheck.errors import BemcheckInputError
    from bemcheck.solvers.bem.system import check_memory

    with pytest.raises(BemcheckInputError, match=r"40,000 unknowns needs about 47.7 GiB.*24.0 GiB"):
        check_memory(40_000, available=24 * 1024**3)
    check_memory(20_000, available=24 * 1024**3)      # 11.9 GiB: fits
