"""The BEM's run-time: numba is the one back end, set in bempp-cl and recorded with every solve."""

import subprocess
import sys

import pytest

from bemcheck.errors import BemcheckInputError
from bemcheck.solvers.bem import runtime
from bemcheck.solvers.bem.surface import surface_from_mesh
from bemcheck.solvers.bem.system import assemble, check_memory
from tests.support.icosphere import icosphere


def test_numba_is_set_and_recorded():
    assert runtime.bempp().DEFAULT_DEVICE_INTERFACE == "numba"
    system = assemble(surface_from_mesh(icosphere(1.0, 1)), 1.0)
    assert system.device == runtime.BACKEND == "numba"


def test_import_is_quiet_and_lazy():
    """Importing the solver imports no bempp-cl; the first use prints nothing (bempp-cl
    prints "Could not find Gmsh" on import when no gmsh binary is on PATH)."""
    code = (
        "import sys\n"
        "import bemcheck.solvers.bem.solve\n"
        "assert 'bempp_cl' not in sys.modules\n"
        "from bemcheck.solvers.bem.runtime import bempp\n"
        "bempp()\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=300)
    assert out.returncode == 0, out.stderr
    assert out.stdout == ""


def test_a_solve_too_large_for_the_memory_is_refused_before_allocating():
    """2 dense N x N complex arrays at 16 bytes per entry: N = 40,000 needs 47.7 GiB."""
    with pytest.raises(BemcheckInputError, match=r"40,000 unknowns needs about 47.7 GiB.*24.0 GiB"):
        check_memory(40_000, available=24 * 1024**3)
    check_memory(20_000, available=24 * 1024**3)  # 11.9 GiB: fits
