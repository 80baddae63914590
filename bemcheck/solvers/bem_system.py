"""The Burton–Miller system for rigid bodies, assembled and factorised once per frequency.

Exterior Helmholtz problem, exp(-iωt), total surface pressure u in the
continuous P1 space.  With K the double layer, K' its adjoint, V the single
layer, W the hypersingular operator (bempp-cl's sign: W = -∂/∂n DL) and g the
prescribed normal derivative ∂p/∂n = iωρ v_n (zero on rigid parts):

    (½I - K + ηW) u = u_inc + η ∂u_inc/∂n - [V + η(½I + K')] g,   η = i/k

(Burton & Miller 1971, Proc. R. Soc. Lond. A 323, 201-210; the sign of η
for bempp-cl's operators was measured on a rigid sphere, see
/work/shared/design.md).  Outside, p = p_inc + DL(u) - SL(g).

The matrix is assembled by :mod:`bemcheck.solvers.bem_assembly` (regular
pairs in one fused pass, touching pairs by bempp-cl's singular quadrature);
V and K' for prescribed velocities come from bempp-cl; the mass matrices and
all right-hand sides are built with numpy.
"""

import time
import warnings
from dataclasses import dataclass

import numpy as np
from numba.core.errors import NumbaPerformanceWarning
from scipy.linalg import lu_factor, lu_solve
from scipy.sparse import coo_matrix

from bemcheck.solvers.bem_assembly import burton_miller_matrix
from bemcheck.solvers.bem_device import bempp, current_device


@dataclass(frozen=True, eq=False)
class System:
    """One frequency's factorised Burton–Miller matrix.

    Attributes
    ----------
    k : float
        Wavenumber [rad/m].
    coupling : complex
        η of the combination.
    lu : tuple
        ``scipy.linalg.lu_factor`` of the (nv, nv) Galerkin matrix.
    surface : Surface
    grid, p1 : bempp-cl objects
        Kept to assemble the velocity operators on the same grid.
    device : str
        ``"numba"`` or ``"opencl"``.
    seconds : dict
        Wall time [s] of ``"assembly"`` and ``"lu"``.
    """

    k: float
    coupling: complex
    lu: tuple
    surface: object
    grid: object
    p1: object
    device: str
    seconds: dict

    def solve(self, rhs):
        """Solve for all right-hand sides at once: (nv, S) -> (nv, S) surface pressures."""
        return lu_solve(self.lu, rhs, check_finite=False)


def _grid(surface):
    api = bempp()
    grid = api.Grid(
        surface.vertices.T.copy(),
        surface.triangles.T.astype(np.uint32),
        surface.domains.astype(np.uint32),
    )
    p1 = api.function_space(grid, "P", 1)
    if not np.array_equal(p1.local2global, surface.triangles):
        raise RuntimeError("bempp-cl numbered the P1 unknowns unlike the mesh vertices; this version is not supported")
    return grid, p1


def _dense(operator):
    with warnings.catch_warnings():
        # numba's notes on non-contiguous arrays inside bempp-cl: not ours to act on.
        warnings.simplefilter("ignore", NumbaPerformanceWarning)
        return operator.weak_form().to_dense()


def assemble(surface, k, coupling=None):
    """Assemble and LU-factorise the Burton–Miller matrix of ``surface`` at wavenumber ``k``.

    Parameters
    ----------
    surface : Surface
        Closed outward-oriented bodies, at least one triangle.
    k : float
        Wavenumber [rad/m], > 0.
    coupling : complex, optional
        η; default i/k.  η = 0 gives the plain equation, which fails at the
        interior eigenfrequencies (for studies only).

    Returns
    -------
    System
    """
    device = current_device()
    eta = 1j / k if coupling is None else complex(coupling)
    t0 = time.perf_counter()
    grid, p1 = _grid(surface)
    a = burton_miller_matrix(surface, p1, k, eta, device)
    t1 = time.perf_counter()
    lu = lu_factor(a, overwrite_a=True, check_finite=False)
    t2 = time.perf_counter()
    return System(k, eta, lu, surface, grid, p1, device, {"assembly": t1 - t0, "lu": t2 - t1})


def velocity_rhs(system, support, g):
    """Right-hand sides of prescribed normal derivatives: -[V + η(½I + K')] g.

    Parameters
    ----------
    system : System
    support : (n_sup,) array_like of int
        Sorted triangle indices where some g is non-zero.
    g : (n_sup, V) array_like of complex
        ∂p/∂n = iωρ v_n on each support triangle, one column per source [Pa/m].

    Returns
    -------
    (nv, V) ndarray of complex
    """
    api = bempp()
    surface = system.surface
    support = np.asarray(support, dtype=int)
    dp0 = api.function_space(system.grid, "DP", 0, support_elements=support)
    helm = api.operators.boundary.helmholtz
    opts = {"assembler": "dense", "device_interface": system.device, "precision": "double"}
    op = _dense(helm.single_layer(dp0, system.p1, system.p1, system.k, **opts))
    if system.coupling != 0:
        op += system.coupling * _dense(helm.adjoint_double_layer(dp0, system.p1, system.p1, system.k, **opts))
        op += system.coupling * 0.5 * mixed_mass(surface, support).toarray()
    return -(op @ np.asarray(g))


def mixed_mass(surface, support):
    """∫ φ_v χ_t dS = A_t / 3 for vertex v of triangle t: sparse (nv, n_sup) [m^2]."""
    support = np.asarray(support, dtype=int)
    rows = surface.triangles[support].reshape(-1)
    cols = np.repeat(np.arange(len(support)), 3)
    vals = np.repeat(surface.areas[support] / 3.0, 3)
    return coo_matrix((vals, (rows, cols)), shape=(surface.n_vertices, len(support))).tocsr()
